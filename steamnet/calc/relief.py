"""Relief cover of a failed-open let-down: valve flow at full opening, relief capacity.

Two pieces, SI units at the interface:

* the flow a control valve passes at a given flow coefficient: IEC 60534-2-1 solved for
  the flow, by running the sizing of :mod:`steamnet.calc.valve` (which calls
  ``fluids.control_valve.size_control_valve_g``) backwards, choked flow included
  (:func:`gas_valve_flow`, :func:`steam_valve_flow`);
* the relieving capacity of a steam safety valve from its orifice by the API 520 Part I
  steam equation, through ``fluids.safety_valve.API520_A_steam`` with its superheat
  (KSH, ``API520_SH``) and high-pressure (KN, ``API520_N``) correction factors
  (:func:`steam_relief_capacity`), and the orifice areas of the standard letter
  designations (:func:`orifice_area`).

Warnings
--------
A let-down valve that sticks open must be covered by relief capacity downstream. These
functions support a study; the relief valves' certified capacities, the valve makers'
data, the pressure vessel and piping codes and the relief-device standards in force at
the site govern, and relief systems are designed by licensed engineers.

References
----------
.. [1] IEC 60534-2-1:2011, Industrial-process control valves - Part 2-1: Flow capacity -
   Sizing equations for fluid flow under installed conditions.
.. [2] API Standard 520, Sizing, Selection, and Installation of Pressure-relieving
   Devices, Part I - Sizing and Selection (the steam equation, its KN and KSH factors).
.. [3] API Standard 526, Flanged Steel Pressure-relief Valves (orifice letters and
   effective areas).
.. [4] C. Bell et al., fluids: ``fluids.safety_valve`` and ``fluids.control_valve``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fluids import safety_valve as _sv
from scipy.optimize import brentq

from .. import properties as _props
from ..errors import ModelError
from .valve import (P_NORMAL, R_WATER, T_NORMAL, ValveSizing, size_gas_valve,
                    size_steam_valve)

__all__ = ["ValveFlow", "ReliefCapacity", "gas_valve_flow", "steam_valve_flow",
           "steam_relief_capacity", "orifice_area", "relieving_pressure",
           "ORIFICE_LETTERS", "API520_EDITION"]

#: Orifice letter designations of API 526 with their effective areas [m2] (as
#: ``fluids.safety_valve`` tabulates them).
ORIFICE_LETTERS = dict(zip(_sv.API526_letters, _sv.API526_A))
#: The edition of API 520 Part I whose superheat table is used (fluids' '10E').
API520_EDITION = "10E"


@dataclass(frozen=True, slots=True)
class ValveFlow:
    """Flow through a valve at a given flow coefficient.

    Attributes
    ----------
    flow : float
        Mass flow [kg/s] (:func:`steam_valve_flow`) or volumetric flow at 273.15 K and
        101.325 kPa [m3/s] (:func:`gas_valve_flow`)
    choked : bool
        True when the flow is choked (independent of the outlet pressure) [-]
    sizing : ValveSizing
        The forward sizing at that flow, whose Kv is the given one [-]
    """

    flow: float
    choked: bool
    sizing: ValveSizing


@dataclass(frozen=True, slots=True)
class ReliefCapacity:
    """Relieving capacity of one steam safety valve.

    Attributes
    ----------
    flow : float
        Relieving capacity [kg/s]
    kn : float
        High-pressure (Napier) correction factor KN [-]
    ksh : float
        Superheat correction factor KSH [-]
    basis : str
        How the figure was obtained [-]
    """

    flow: float
    kn: float
    ksh: float
    basis: str


# ------------------------------------------------------------------ valve flow
def _invert(forward, kv: float, q_guess: float) -> tuple[float, ValveSizing]:
    """The flow q at which ``forward(q).kv`` equals ``kv``.

    Without diameters the sizing equation is proportional to the flow, so one
    evaluation at ``q_guess`` gives it; with diameters (Reynolds number, piping
    factor) the flow is refined by Brent's method on a bracket around that estimate.
    """
    ref = forward(q_guess)
    q = q_guess * kv / ref.kv
    at = forward(q)
    if abs(at.kv - kv) <= 1e-10 * kv:
        return q, at
    lo, hi = 0.5 * q, 2.0 * q
    while forward(lo).kv > kv:
        lo *= 0.5
    while forward(hi).kv < kv:
        hi *= 2.0
    q = brentq(lambda f: forward(f).kv - kv, lo, hi, xtol=1e-14 * q, rtol=1e-12,
               maxiter=200)
    return q, forward(q)


def _check_kv(kv: float) -> None:
    if not (kv > 0 and math.isfinite(kv)):
        raise ModelError(f"the flow coefficient must be a positive number, got {kv!r}")


def gas_valve_flow(kv: float, p_in: float, p_out: float, *, t_in: float, mw: float,
                   mu: float, gamma: float, z: float, fl: float | None, xt: float,
                   fd: float | None = None, d_valve: float | None = None,
                   d_pipe_in: float | None = None,
                   d_pipe_out: float | None = None) -> ValveFlow:
    """Gas flow a valve of flow coefficient ``kv`` passes, IEC 60534-2-1 backwards.

    The flow for which :func:`steamnet.calc.valve.size_gas_valve` returns ``kv``.
    Above the choking pressure ratio (x >= Fgamma xT, or xTP with fittings) the
    flow no longer depends on ``p_out``.

    Parameters
    ----------
    kv : float
        Flow coefficient of the valve at the opening in question [m3/h]
    p_in : float
        Absolute pressure upstream of the valve (and of any reducer) [Pa]
    p_out : float
        Absolute pressure downstream of the valve (and of any expander) [Pa]
    t_in : float
        Inlet temperature [K]
    mw : float
        Molar mass of the gas [g/mol]
    mu : float
        Dynamic viscosity at inlet conditions [Pa s]
    gamma : float
        Ratio of specific heats at inlet conditions [-]
    z : float
        Compressibility factor at inlet conditions [-]
    fl : float or None
        Liquid pressure recovery factor; needed only with diameters [-]
    xt : float
        Pressure differential ratio factor at choked flow [-]
    fd : float, optional
        Valve style modifier; needed with diameters [-]
    d_valve : float, optional
        Valve nominal diameter [m]
    d_pipe_in : float, optional
        Upstream pipe inside diameter; defaults to ``d_valve`` [m]
    d_pipe_out : float, optional
        Downstream pipe inside diameter; defaults to ``d_valve`` [m]

    Returns
    -------
    flow : ValveFlow
        Volumetric flow at 273.15 K and 101.325 kPa [m3/s], choked flag, and the
        forward sizing at that flow [-]
    """
    _check_kv(kv)

    def forward(q):
        return size_gas_valve(p_in, p_out, q, t_in=t_in, mw=mw, mu=mu, gamma=gamma,
                              z=z, fl=fl, xt=xt, fd=fd, d_valve=d_valve,
                              d_pipe_in=d_pipe_in, d_pipe_out=d_pipe_out)

    # a first guess of the right order: the choked ideal-gas flow of Eq. (8a)
    q0 = max(kv / 3600.0 * p_in / 1e5 * 10.0, 1e-6)
    q, sizing = _invert(forward, kv, q0)
    return ValveFlow(flow=q, choked=sizing.choked, sizing=sizing)


def steam_valve_flow(kv: float, p_in: float, p_out: float, state_in: _props.State, *,
                     fl: float | None, xt: float, fd: float | None = None,
                     d_valve: float | None = None, d_pipe_in: float | None = None,
                     d_pipe_out: float | None = None) -> ValveFlow:
    """Steam mass flow a valve of flow coefficient ``kv`` passes (IEC 60534-2-1).

    The flow for which :func:`steamnet.calc.valve.size_steam_valve` returns ``kv``;
    the inlet properties are taken from ``state_in`` as there.

    Parameters
    ----------
    kv : float
        Flow coefficient at the opening in question, e.g. the rated Kv for a valve
        stuck fully open [m3/h]
    p_in : float
        Absolute pressure upstream of the valve [Pa]
    p_out : float
        Absolute pressure downstream of the valve [Pa]
    state_in : State
        Inlet steam state, superheated, at ``p_in`` [-]
    fl : float or None
        Liquid pressure recovery factor; needed only with diameters [-]
    xt : float
        Pressure differential ratio factor at choked flow [-]
    fd : float, optional
        Valve style modifier; needed with diameters [-]
    d_valve : float, optional
        Valve nominal diameter [m]
    d_pipe_in : float, optional
        Upstream pipe inside diameter [m]
    d_pipe_out : float, optional
        Downstream pipe inside diameter [m]

    Returns
    -------
    flow : ValveFlow
        Steam mass flow [kg/s], choked flag, and the forward sizing at that flow [-]

    Raises
    ------
    ModelError
        Wet inlet steam, no pressure drop, a flow coefficient that is not positive.
    """
    _check_kv(kv)

    def forward(m):
        return size_steam_valve(p_in, p_out, m, state_in, fl=fl, xt=xt, fd=fd,
                                d_valve=d_valve, d_pipe_in=d_pipe_in,
                                d_pipe_out=d_pipe_out)

    rho_normal = P_NORMAL / (R_WATER * T_NORMAL)
    m0 = max(kv / 3600.0 * p_in / 1e5 * 10.0 * rho_normal, 1e-6)
    m, sizing = _invert(forward, kv, m0)
    return ValveFlow(flow=m, choked=sizing.choked, sizing=sizing)


# ------------------------------------------------------------- relief capacity
def relieving_pressure(p_set: float, overpressure: float, p_atm: float) -> float:
    """Relieving pressure: set pressure plus the allowed overpressure.

    .. math::
        P_1 = p_{set} + \\Delta_{over} (p_{set} - p_{atm})

    Parameters
    ----------
    p_set : float
        Absolute set pressure [Pa]
    overpressure : float
        Allowed overpressure (accumulation) as a fraction of the gauge set
        pressure [-]
    p_atm : float
        Local atmospheric pressure [Pa]

    Returns
    -------
    p1 : float
        Absolute relieving pressure [Pa]

    >>> relieving_pressure(11.01325e5, 0.10, 1.01325e5)
    1201325.0
    """
    if not (p_set > p_atm and math.isfinite(p_set)):
        raise ModelError(f"set pressure must be above atmospheric, got {p_set!r} Pa")
    if not (0 <= overpressure < 1):
        raise ModelError(f"overpressure must lie in [0, 1), got {overpressure!r}")
    return p_set + overpressure * (p_set - p_atm)


def orifice_area(letter: str) -> float:
    """Effective orifice area of an API 526 letter designation (D to T).

    Parameters
    ----------
    letter : str
        Orifice letter, e.g. ``"J"`` [-]

    Returns
    -------
    area : float
        Effective discharge area [m2]

    >>> round(orifice_area("J") / 0.0254**2, 3)
    1.287
    """
    try:
        return float(ORIFICE_LETTERS[letter.strip().upper()])
    except (KeyError, AttributeError):
        raise ModelError(f"unknown orifice letter {letter!r}; API 526 letters: "
                         + ", ".join(ORIFICE_LETTERS)) from None


def steam_relief_capacity(area: float, p_relieving: float, t_relieving: float, *,
                          kd: float, kb: float = 1.0, kc: float = 1.0) -> ReliefCapacity:
    """Relieving capacity of a steam safety valve from its orifice, API 520 Part I.

    The steam sizing equation of API 520 Part I in SI units,

    .. math::
        A = \\frac{190.5\\, W}{P_1 K_d K_b K_c K_N K_{SH}}

    (A in mm2, W in kg/h, P1 in kPa(a)), is linear in W, so the capacity is the area
    over the area ``fluids.safety_valve.API520_A_steam`` requires per unit flow; that
    function applies KN (``API520_N``, above 10 339 kPa) and KSH (``API520_SH``,
    10th-edition table; 1 for saturated steam).

    Parameters
    ----------
    area : float
        Effective discharge area of the orifice [m2]
    p_relieving : float
        Absolute relieving pressure: set pressure plus overpressure [Pa]
    t_relieving : float
        Steam temperature at the valve inlet at relief; the saturation temperature
        for saturated steam [K]
    kd : float
        Effective coefficient of discharge [-]
    kb : float, optional
        Backpressure correction factor (1 for a conventional valve discharging to
        atmosphere) [-]
    kc : float, optional
        Combination correction factor (1 without an upstream rupture disc) [-]

    Returns
    -------
    capacity : ReliefCapacity
        Relieving capacity [kg/s], KN and KSH [-], basis [-]

    Raises
    ------
    ModelError
        A factor or area that is not positive, or a state outside the equation's
        range (above 22.06 MPa or 649 degC).
    """
    for name, val in (("area", area), ("kd", kd), ("kb", kb), ("kc", kc)):
        if not (val > 0 and math.isfinite(val)):
            raise ModelError(f"{name} must be a positive number, got {val!r}")
    try:
        kn = float(_sv.API520_N(p_relieving))
        ksh = float(_sv.API520_SH(t_relieving, p_relieving, API520_EDITION))
        per_kg_s = float(_sv.API520_A_steam(1.0, t_relieving, p_relieving, Kd=kd, Kb=kb,
                                            Kc=kc, edition=API520_EDITION))
    except ValueError as exc:
        raise ModelError(f"API 520 steam equation: {exc}") from None
    flow = area / per_kg_s
    basis = (f"API 520 Part I steam equation, A {area * 1e6:.0f} mm2, P1 "
             f"{p_relieving / 1e5:.4g} bar(a), Kd {kd:g}, Kb {kb:g}, Kc {kc:g}, "
             f"KN {kn:.4f}, KSH {ksh:.4f}")
    return ReliefCapacity(flow=flow, kn=kn, ksh=ksh, basis=basis)

