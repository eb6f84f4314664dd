"""Feedwater pump work, SI units.

References
----------
.. [1] The pump equation of docs/method.md ("Equipment equations"): the work of an
   incompressible liquid raised by dp, v dp / efficiency (common practice, no source).
"""

from __future__ import annotations

__all__ = ["pump_work"]


def pump_work(v: float, dp: float, efficiency: float) -> float:
    """Specific work of a pump [J/kg].

    .. math:: w = \\frac{v \\, \\Delta p}{\\eta}

    Parameters
    ----------
    v : float
        Specific volume of the liquid at the pump inlet [m3/kg]
    dp : float
        Pressure rise [Pa]
    efficiency : float
        Pump efficiency [-]

    Returns
    -------
    float
        Work per kg pumped, added to the liquid's enthalpy [J/kg]

    Examples
    --------
    >>> round(pump_work(0.00106, 50e5, 0.75), 3)      # 1.06 L/kg raised by 50 bar
    7066.667
    """
    return v * dp / efficiency
