"""Boiler balance: feedwater, blowdown, duty and fuel, SI units.

References
----------
.. [1] The boiler balance of docs/method.md ("Equipment equations"): feedwater = steam +
   blowdown, blowdown leaving as saturated liquid at drum pressure, fuel = duty /
   efficiency (common practice, no source).
"""

from __future__ import annotations

from typing import NamedTuple

__all__ = ["BoilerBalance", "boiler_balance"]


class BoilerBalance(NamedTuple):
    """Flows and heat of one boiler [kg/s], [W]."""

    feedwater: float
    blowdown: float
    duty: float
    fuel: float


def boiler_balance(m_steam: float, blowdown_fraction: float, h_steam: float,
                   h_blowdown: float, h_feedwater: float,
                   efficiency: float | None) -> BoilerBalance:
    """Feedwater, blowdown, heat duty and fuel of a boiler raising ``m_steam``.

    .. math::
        \\dot m_{fw} = \\frac{\\dot m_s}{1 - b}, \\quad
        \\dot m_{bd} = \\dot m_{fw} - \\dot m_s, \\quad
        Q = \\dot m_s (h_s - h_{fw}) + \\dot m_{bd} (h_{bd} - h_{fw}), \\quad
        F = Q / \\eta

    Parameters
    ----------
    m_steam : float
        Steam raised [kg/s]
    blowdown_fraction : float
        Blowdown as a fraction of the feedwater, b [-]
    h_steam : float
        Enthalpy of the steam leaving the boiler [J/kg]
    h_blowdown : float
        Enthalpy of the blowdown (saturated liquid at drum pressure) [J/kg]
    h_feedwater : float
        Enthalpy of the feedwater [J/kg]
    efficiency : float or None
        Boiler efficiency, heat to the water over fuel heat [-]; a waste-heat boiler
        without one has no fuel (0)

    Returns
    -------
    BoilerBalance
        feedwater [kg/s], blowdown [kg/s], duty [W], fuel [W]

    Examples
    --------
    >>> b = boiler_balance(10.0, 0.02, 3.2e6, 1.1e6, 0.5e6, 0.9)
    >>> round(b.feedwater, 6), round(b.blowdown, 6)
    (10.204082, 0.204082)
    >>> round(b.fuel / 1e6, 4)      # (10 * 2.7e6 + 0.204082 * 0.6e6) / 0.9
    30.1361
    """
    fw = m_steam / (1 - blowdown_fraction)
    bd = fw - m_steam
    duty = m_steam * (h_steam - h_feedwater) + bd * (h_blowdown - h_feedwater)
    return BoilerBalance(fw, bd, duty, duty / efficiency if efficiency else 0.0)
