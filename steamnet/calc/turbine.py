"""Turbine power from flows and enthalpy drops, SI units.

The expansion line of each section (isentropic efficiency or Willans line) is evaluated
with the steam properties in :func:`steamnet.solver.network.expansion`; these functions
take its enthalpy drops.

References
----------
.. [1] The turbine equations of docs/method.md ("Equipment equations"): shaft power =
   flow x enthalpy drop, summed over the sections of an extraction turbine, each
   section carrying the flow left after the extractions above it.
"""

from __future__ import annotations

from typing import Sequence

__all__ = ["section_flows", "internal_power"]


def section_flows(m_in: float, extractions: Sequence[float]) -> list[float]:
    """Flow through each section of an extraction turbine [kg/s].

    Parameters
    ----------
    m_in : float
        Throttle (inlet) flow [kg/s]
    extractions : sequence of float
        Extraction flows in the order of the sections, highest pressure first [kg/s]

    Returns
    -------
    list of float
        ``len(extractions) + 1`` flows: the first section's, then each after an
        extraction; the last is the exhaust flow [kg/s]

    Examples
    --------
    >>> section_flows(30.0, [10.0, 5.0])
    [30.0, 20.0, 15.0]
    """
    flows = [m_in]
    for m in extractions:
        flows.append(flows[-1] - m)
    return flows


def internal_power(flows: Sequence[float], drops: Sequence[float]) -> float:
    """Power the steam gives up in the blading, before mechanical losses [W].

    .. math:: P = \\sum_j \\dot m_j \\, \\Delta h_j

    Parameters
    ----------
    flows : sequence of float
        Flow through each section [kg/s]
    drops : sequence of float
        Enthalpy drop of each section, inlet minus outlet [J/kg]

    Returns
    -------
    float
        Internal power [W]; times the mechanical (and generator) efficiency it is the
        power delivered

    Examples
    --------
    >>> internal_power([30.0, 20.0], [200e3, 150e3]) / 1e6
    9.0
    """
    return sum(f * d for f, d in zip(flows, drops))
