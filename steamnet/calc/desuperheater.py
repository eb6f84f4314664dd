"""Spray desuperheater: energy balance, control gains and evaporation distance.

Pure functions in SI units. The outlet enthalpy comes from the caller (usually
h(P_out, T_set) from :mod:`steamnet.properties`); nothing here calls the property
layer.

Warnings
--------
Unevaporated spray water causes water hammer, thermal shock and erosion. These
functions give the steady-state balance only; whether the water evaporates in the
available pipe length depends on the nozzle, the velocity and the approach to
saturation, for which the maker's data govern.

References
----------
.. [1] IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation 1997 for
   the Thermodynamic Properties of Water and Steam (the enthalpies).
.. [2] docs/method.md, "Equipment equations" (desuperheater balance), and
   docs/checks/gain_spread_spray.md (control gain); the 1/(steam + spray) dependence of
   the gain follows from the energy balance and is common practice, no source.
"""

from __future__ import annotations

import math

from ..errors import ModelError

__all__ = ["spray_water_flow", "gain_per_spray", "gain_per_ratio",
           "evaporation_distance", "mixed_enthalpy", "mix"]


def _finite(**values: float) -> None:
    for name, val in values.items():
        if not math.isfinite(val):
            raise ModelError(f"{name} must be a finite number, got {val!r}")


def spray_ratio(h_steam: float, h_out: float, h_water: float) -> float:
    """Spray water per unit steam that brings steam at ``h_steam`` to ``h_out``.

    .. math:: R = \\frac{\\dot m_w}{\\dot m_s} = \\frac{h_s - h_{out}}{h_{out} - h_w}

    The one home of the desuperheater's energy balance: the solver and the checks both
    call it. No guard here (the callers hold h_steam > h_out > h_water).

    Parameters
    ----------
    h_steam : float
        Specific enthalpy of the entering steam [J/kg]
    h_out : float
        Specific enthalpy wanted at the outlet [J/kg]
    h_water : float
        Specific enthalpy of the spray water [J/kg]

    Returns
    -------
    float
        Spray-to-steam mass ratio [-]

    Examples
    --------
    >>> round(spray_ratio(3.2e6, 2.9e6, 0.4e6), 12)
    0.12
    """
    return (h_steam - h_out) / (h_out - h_water)


def mixed_enthalpy(flows, enthalpies, heat_loss: float = 0.0) -> float:
    """Specific enthalpy of streams mixed adiabatically, less a heat loss.

    .. math:: h = \\frac{\\sum_i \\dot m_i h_i - \\dot Q_{loss}}{\\sum_i \\dot m_i}

    With the steam and the spray water as the two streams and no loss, the outlet of a
    spray desuperheater, h = (m_s h_s + m_w h_w) / (m_s + m_w); with a header's
    inflows and heat loss, the header's enthalpy.

    Parameters
    ----------
    flows : sequence of float
        Mass flows of the streams, each zero or positive, not all zero [kg/s]
    enthalpies : sequence of float
        Specific enthalpy of each stream [J/kg]
    heat_loss : float
        Heat lost by the mixture [W]

    Returns
    -------
    float
        Specific enthalpy of the mixture [J/kg]

    Raises
    ------
    ModelError
        A negative or non-finite flow, no flow at all, or flows and enthalpies of
        different lengths.

    Examples
    --------
    10 kg/s of steam at 3.0 MJ/kg with 1 kg/s of water at 0.4 MJ/kg:

    >>> round(mixed_enthalpy([10.0, 1.0], [3.0e6, 0.4e6]), 3)
    2763636.364
    """
    flows, enthalpies = list(flows), list(enthalpies)
    if len(flows) != len(enthalpies):
        raise ModelError(f"{len(flows)} flows but {len(enthalpies)} enthalpies")
    _finite(heat_loss=heat_loss, **{f"flow {i}": m for i, m in enumerate(flows)},
            **{f"enthalpy {i}": h for i, h in enumerate(enthalpies)})
    if any(m < 0 for m in flows) or not sum(flows) > 0:
        raise ModelError(f"mixing needs flows zero or positive and not all zero, got "
                         f"{flows!r} kg/s")
    return mix(flows, enthalpies, heat_loss)


def mix(flows: list[float], enthalpies: list[float], heat_loss: float = 0.0) -> float:
    """:func:`mixed_enthalpy` without its input checks, for callers whose flows are
    known to be zero or positive and not all zero (the solver's header mixing)."""
    return (sum(m * h for m, h in zip(flows, enthalpies)) - heat_loss) / sum(flows)


def spray_water_flow(m_steam: float, h_steam: float, h_out: float,
                     h_water: float) -> float:
    """Spray water flow that brings a steam flow to an outlet enthalpy.

    Mass and energy balance of a spray attemperator:

    .. math::
        \\dot m_w = \\dot m_s \\frac{h_s - h_{out}}{h_{out} - h_w}

    Parameters
    ----------
    m_steam : float
        Steam mass flow entering the desuperheater [kg/s]
    h_steam : float
        Specific enthalpy of the entering steam [J/kg]
    h_out : float
        Specific enthalpy wanted at the outlet [J/kg]
    h_water : float
        Specific enthalpy of the spray water [J/kg]

    Returns
    -------
    m_water : float
        Spray water flow [kg/s]; 0 when h_steam <= h_out (no spray needed: the
        outlet is then at h_steam, and below the setpoint if h_steam < h_out)

    Raises
    ------
    ModelError
        Negative steam flow, or spray water not colder than the outlet
        (h_water >= h_out) while spray is needed.

    Examples
    --------
    >>> spray_water_flow(10.0, 3.2e6, 2.9e6, 0.4e6)
    1.2
    """
    _finite(m_steam=m_steam, h_steam=h_steam, h_out=h_out, h_water=h_water)
    if m_steam < 0:
        raise ModelError(f"steam flow must not be negative, got {m_steam!r} kg/s")
    if h_steam <= h_out or m_steam == 0:
        return 0.0
    if h_water >= h_out:
        raise ModelError(
            f"spray water enthalpy {h_water / 1e3:.1f} kJ/kg is not below the outlet "
            f"enthalpy {h_out / 1e3:.1f} kJ/kg: the water cannot cool the steam")
    return m_steam * spray_ratio(h_steam, h_out, h_water)


def gain_per_spray(h_water: float, h_out: float, cp_out: float, m_steam: float,
                   m_spray: float) -> float:
    """Gain of outlet temperature to spray flow, dT_out / dm_w.

    From h_out = (m_s h_s + m_w h_w) / (m_s + m_w) at fixed steam flow and enthalpy:

    .. math::
        \\frac{\\partial T_{out}}{\\partial \\dot m_w} =
        \\frac{h_w - h_{out}}{c_{p,out} (\\dot m_s + \\dot m_w)}

    Parameters
    ----------
    h_water : float
        Specific enthalpy of the spray water [J/kg]
    h_out : float
        Specific enthalpy at the outlet [J/kg]
    cp_out : float
        Isobaric heat capacity of the outlet steam [J/(kg K)]
    m_steam : float
        Steam mass flow [kg/s]
    m_spray : float
        Spray water flow [kg/s]

    Returns
    -------
    gain : float
        dT_out / dm_w, negative (more water, colder outlet) [K/(kg/s)]

    Notes
    -----
    The gain falls as 1 / (steam + spray flow): the gain at low flow is many times the
    gain at full flow, so a loop tuned at full flow becomes aggressive at minimum flow
    (common practice, no source).
    """
    _finite(h_water=h_water, h_out=h_out, cp_out=cp_out, m_steam=m_steam,
            m_spray=m_spray)
    total = m_steam + m_spray
    if not (cp_out > 0 and total > 0 and m_steam >= 0 and m_spray >= 0):
        raise ModelError("gain_per_spray needs cp_out > 0 and a positive total flow, "
                         f"got cp_out={cp_out!r}, m_steam={m_steam!r}, "
                         f"m_spray={m_spray!r}")
    return (h_water - h_out) / (cp_out * total)


def gain_per_ratio(h_water: float, h_steam: float, cp_out: float,
                   ratio: float) -> float:
    """Gain of outlet temperature to the spray/steam ratio, dT_out / dR.

    With R = m_w / m_s, h_out = (h_s + R h_w) / (1 + R), so

    .. math::
        \\frac{\\partial T_{out}}{\\partial R} =
        \\frac{h_w - h_s}{c_{p,out} (1 + R)^2}

    which does not depend on the flow itself: spraying in ratio to steam flow keeps
    the loop gain nearly constant.

    Parameters
    ----------
    h_water : float
        Specific enthalpy of the spray water [J/kg]
    h_steam : float
        Specific enthalpy of the entering steam [J/kg]
    cp_out : float
        Isobaric heat capacity of the outlet steam [J/(kg K)]
    ratio : float
        Spray to steam mass flow ratio R [-]

    Returns
    -------
    gain : float
        dT_out / dR, negative [K per unit ratio]
    """
    _finite(h_water=h_water, h_steam=h_steam, cp_out=cp_out, ratio=ratio)
    if not (cp_out > 0 and ratio >= 0):
        raise ModelError(f"gain_per_ratio needs cp_out > 0 and ratio >= 0, got "
                         f"cp_out={cp_out!r}, ratio={ratio!r}")
    return (h_water - h_steam) / (cp_out * (1.0 + ratio) ** 2)


def evaporation_distance(velocity: float, time: float) -> float:
    """Pipe length the steam travels while the spray evaporates.

    .. math::
        L = u \\, t_{evap}

    Parameters
    ----------
    velocity : float
        Mean steam velocity in the outlet pipe [m/s]
    time : float
        Evaporation time of the spray [s]

    Returns
    -------
    distance : float
        Straight run needed before the temperature element [m]

    >>> evaporation_distance(30.0, 0.2)
    6.0
    """
    _finite(velocity=velocity, time=time)
    if velocity < 0 or time < 0:
        raise ModelError(f"velocity and time must not be negative, got {velocity!r} "
                         f"m/s, {time!r} s")
    return velocity * time
