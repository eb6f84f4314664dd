"""Control valve sizing by IEC 60534-2-1 and travel from an inherent characteristic.

The sizing equations of IEC 60534-2-1:2011 are not written again here: they come from
``fluids.control_valve`` (``size_control_valve_g`` and ``size_control_valve_l``). This
module turns a steam or water :class:`~steamnet.properties.State` into the inputs that
``fluids`` expects, calls it with ``full_output=True`` and always returns one
:class:`ValveSizing`, never a float or a dict.

Two layers:

* :func:`size_gas_valve` and :func:`size_liquid_valve` take the fluid properties
  directly (density or molar mass, viscosity, heat capacity ratio, compressibility), so
  the worked examples of the standard, which are not for steam, can be checked;
* :func:`size_steam_valve` and :func:`size_water_valve` take a mass flow and an inlet
  state from :mod:`steamnet.properties` and call the layer above.

Warnings
--------
FL, xT and Fd depend on the valve style, the trim and the travel. Take them from the
valve maker's data at the travel in question; typical textbook figures can be wrong by
a factor of two for a given valve. The result supports a study; it is not a valve
selection.

References
----------
.. [1] IEC 60534-2-1:2011, Industrial-process control valves - Part 2-1: Flow capacity -
   Sizing equations for fluid flow under installed conditions (also ISA-75.01.01-2007).
.. [2] IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation 1997 for
   the Thermodynamic Properties of Water and Steam.
.. [3] C. Bell et al., fluids: Fluid dynamics component of Chemical Engineering Design
   Library (ChEDL), ``fluids.control_valve``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from enum import Enum

from fluids import control_valve as _cv
from fluids.constants import R as _R_MOLAR

from .. import properties as _props
from ..errors import ModelError

__all__ = [
    "Characteristic", "ValveSizing", "size_gas_valve", "size_liquid_valve",
    "size_steam_valve", "size_water_valve", "kv_to_cv", "cv_to_kv", "valve_travel",
    "MW_WATER", "R_WATER", "T_NORMAL", "P_NORMAL",
]

#: Molar mass of water [g/mol] (from standard atomic weights; common value).
MW_WATER = 18.01528
#: Specific gas constant of water [J/(kg K)]: the molar gas constant that ``fluids``
#: uses over the molar mass above, so that the density ``fluids`` rebuilds from
#: (T, MW, Z) equals the IF97 density. It differs from IF97's 461.526 J/(kg K) by
#: less than 1e-5 relative.
R_WATER = _R_MOLAR / (MW_WATER * 1e-3)
#: Reference conditions of the volumetric gas flow in IEC 60534-2-1 Eq. (8a) with N9
#: for 0 degC, as ``fluids.control_valve.size_control_valve_g`` expects [K], [Pa].
T_NORMAL = 273.15
P_NORMAL = 101325.0
#: Critical pressure of water [Pa] (IAPWS R7-97(2012), Eq. 3).
P_CRIT_WATER = _props.P_CRIT


class Characteristic(str, Enum):
    """Inherent flow characteristic of a control valve (IEC 60534-1 terms)."""

    LINEAR = "linear"
    EQUAL_PERCENTAGE = "equal_percentage"


@dataclass(frozen=True, slots=True)
class ValveSizing:
    """Result of one IEC 60534-2-1 sizing.

    Attributes
    ----------
    kv : float
        Required flow coefficient Kv [m3/h]
    cv : float
        Required flow coefficient Cv [US gal/min]
    choked : bool
        True when the flow is choked (compressible) or choked by flashing or
        cavitation (liquid)
    laminar : bool
        True when the valve Reynolds number puts the flow in the laminar or
        transitional regime (Rev <= 10 000)
    basis : str
        How the figure was obtained, e.g. ``"IEC 60534-2-1, compressible, choked"``
    notes : tuple of str
        Anything the caller should know: assumptions made, iterations that did not
        converge inside ``fluids``
    """

    kv: float
    cv: float
    choked: bool
    laminar: bool
    basis: str
    notes: tuple[str, ...] = ()


# ----------------------------------------------------------------------- conversions
def kv_to_cv(kv: float) -> float:
    """Convert a flow coefficient Kv to Cv (via ``fluids``).

    Parameters
    ----------
    kv : float
        Flow coefficient Kv (water flow at 1 bar pressure drop) [m3/h]

    Returns
    -------
    cv : float
        Flow coefficient Cv (water flow at 1 psi pressure drop) [US gal/min]

    >>> round(kv_to_cv(1.0), 4)
    1.1561
    """
    return float(_cv.Kv_to_Cv(kv))


def cv_to_kv(cv: float) -> float:
    """Convert a flow coefficient Cv to Kv (via ``fluids``).

    Parameters
    ----------
    cv : float
        Flow coefficient Cv (water flow at 1 psi pressure drop) [US gal/min]

    Returns
    -------
    kv : float
        Flow coefficient Kv (water flow at 1 bar pressure drop) [m3/h]
    """
    return float(_cv.Cv_to_Kv(cv))


# ----------------------------------------------------------------------------- travel
def valve_travel(kv_required: float, kv_rated: float,
                 characteristic: Characteristic | str,
                 rangeability: float | None = None) -> float:
    """Travel at which a valve passes the required flow coefficient.

    .. math::
        \\text{linear:}\\quad \\frac{K_v}{K_{v,rated}} = h \\qquad
        \\text{equal percentage:}\\quad \\frac{K_v}{K_{v,rated}} = R^{\\,h-1}

    Parameters
    ----------
    kv_required : float
        Required flow coefficient [m3/h]
    kv_rated : float
        Rated flow coefficient at full travel [m3/h]
    characteristic : Characteristic or str
        Inherent characteristic, ``"linear"`` or ``"equal_percentage"`` [-]
    rangeability : float, optional
        Inherent rangeability R = Kv_rated / Kv at zero travel of the ideal
        equal-percentage curve; needed for equal percentage only [-]

    Returns
    -------
    travel : float
        Relative travel h, 0 closed to 1 fully open; above 1 when the rated
        coefficient is too small [-]. For equal percentage a required coefficient
        below Kv_rated / R lies under the curve's range and gives 0.

    Notes
    -----
    The inherent characteristic holds at constant pressure drop; the installed
    characteristic also depends on the piping. This is the usual first estimate.

    >>> valve_travel(50.0, 100.0, "linear")
    0.5
    >>> round(valve_travel(10.0, 100.0, "equal_percentage", 50.0), 4)
    0.4114
    """
    char = Characteristic(characteristic)
    if not (kv_rated > 0 and math.isfinite(kv_rated)):
        raise ModelError(f"rated Kv must be a positive number, got {kv_rated!r}")
    if not (kv_required >= 0 and math.isfinite(kv_required)):
        raise ModelError(f"required Kv must be zero or positive, got {kv_required!r}")
    ratio = kv_required / kv_rated
    if char is Characteristic.LINEAR:
        return ratio
    if rangeability is None or not rangeability > 1:
        raise ModelError("an equal-percentage characteristic needs a rangeability above "
                         f"1, got {rangeability!r}")
    if ratio <= 1.0 / rangeability:
        return 0.0
    return 1.0 + math.log(ratio) / math.log(rangeability)


# ----------------------------------------------------------------------- inner layer
def _diameters(d_valve, d_pipe_in, d_pipe_out, fd):
    """(D1, D2, d, Fd, note) for ``fluids``: all three diameters or none."""
    if d_valve is None:
        if d_pipe_in is not None or d_pipe_out is not None:
            raise ModelError("pipe diameters need the valve diameter d_valve as well")
        return None, None, None, 1.0, "no diameters given: turbulent flow assumed, " \
            "no piping geometry factor"
    if fd is None:
        raise ModelError("the valve style modifier fd is needed when diameters are "
                         "given (for the valve Reynolds number)")
    d1 = d_valve if d_pipe_in is None else d_pipe_in
    d2 = d_valve if d_pipe_out is None else d_pipe_out
    for name, val in (("d_valve", d_valve), ("d_pipe_in", d1), ("d_pipe_out", d2)):
        if not (val > 0 and math.isfinite(val)):
            raise ModelError(f"{name} must be a positive diameter in m, got {val!r}")
    note = "with attached fittings" if (d1 != d_valve or d2 != d_valve) else \
        "no attached fittings"
    return d1, d2, d_valve, fd, note


def _check_pressures(p_in, p_out):
    if not (p_in > 0 and p_out > 0 and math.isfinite(p_in) and math.isfinite(p_out)):
        raise ModelError(f"pressures must be positive, got p_in={p_in!r} Pa, "
                         f"p_out={p_out!r} Pa")
    if p_out >= p_in:
        raise ModelError(f"no pressure drop across the valve: p_in={p_in / 1e5:.4g} bar, "
                         f"p_out={p_out / 1e5:.4g} bar")


def _result(out: dict, kind: str, note: str) -> ValveSizing:
    kv = float(out["Kv"])
    choked = bool(out["choked"])
    laminar = bool(out.get("laminar", False))
    parts = ["IEC 60534-2-1", kind, "choked" if choked else "non-choked"]
    if laminar:
        parts.append("laminar or transitional")
    notes = [note]
    if "warning" in out:
        notes.append(f"fluids: {out['warning']}")
        parts.append("piping-factor iteration not converged")
    return ValveSizing(kv=kv, cv=kv_to_cv(kv), choked=choked, laminar=laminar,
                       basis=", ".join(parts), notes=tuple(notes))


def _prelude(p_in, p_out, q, kind, d_valve, d_pipe_in, d_pipe_out, fd):
    """Checks common to both sizings: (zero-flow result or None, diameters)."""
    _check_pressures(p_in, p_out)
    if not (q >= 0 and math.isfinite(q)):
        raise ModelError(f"flow must be zero or positive, got {q!r} m3/s")
    diameters = _diameters(d_valve, d_pipe_in, d_pipe_out, fd)
    if q == 0:
        return ValveSizing(kv=0.0, cv=0.0, choked=False, laminar=False,
                           basis=f"IEC 60534-2-1, {kind}, no flow"), diameters
    return None, diameters


def size_gas_valve(p_in: float, p_out: float, q_normal: float, *, t_in: float,
                   mw: float, mu: float, gamma: float, z: float, fl: float | None,
                   xt: float, fd: float | None = None, d_valve: float | None = None,
                   d_pipe_in: float | None = None,
                   d_pipe_out: float | None = None) -> ValveSizing:
    """Required flow coefficient of a valve passing a gas or vapour, IEC 60534-2-1.

    Thin layer over ``fluids.control_valve.size_control_valve_g`` that takes the gas
    properties directly.

    Parameters
    ----------
    p_in : float
        Absolute pressure upstream of the valve (and of any reducer) [Pa]
    p_out : float
        Absolute pressure downstream of the valve (and of any expander) [Pa]
    q_normal : float
        Volumetric flow at 273.15 K and 101.325 kPa [m3/s]
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
        Liquid pressure recovery factor of the valve without fittings; used for the
        Reynolds number only, so it may be None when no diameters are given [-]
    xt : float
        Pressure differential ratio factor of the valve without fittings at choked
        flow [-]
    fd : float, optional
        Valve style modifier; required when diameters are given [-]
    d_valve : float, optional
        Valve nominal diameter [m]
    d_pipe_in : float, optional
        Upstream pipe inside diameter; defaults to ``d_valve`` [m]
    d_pipe_out : float, optional
        Downstream pipe inside diameter; defaults to ``d_valve`` [m]

    Returns
    -------
    sizing : ValveSizing
        Required Kv [m3/h] and Cv [US gal/min], choked flag and basis [-]
    """
    zero, (d1, d2, d, fd_used, note) = _prelude(
        p_in, p_out, q_normal, "compressible", d_valve, d_pipe_in, d_pipe_out, fd)
    if zero:
        return zero
    if d is not None and fl is None:
        raise ModelError("the liquid pressure recovery factor fl is needed when "
                         "diameters are given (for the valve Reynolds number)")
    # IEC 60534-2-1:2011 Eqs. (8a)/(14a), with (11a)/(17a) for fittings, via fluids.
    # fluids reads FL only for the valve Reynolds number, which it works out only when
    # diameters are given (and then fl is given, above): without them the FL passed is
    # never used, so any placeholder serves.
    out = _cv.size_control_valve_g(
        T=t_in, MW=mw, mu=mu, gamma=gamma, Z=z, P1=p_in, P2=p_out, Q=q_normal,
        D1=d1, D2=d2, d=d, FL=0.9 if fl is None else fl, Fd=fd_used, xT=xt,
        full_output=True)
    return _result(out, "compressible", note)


def size_liquid_valve(p_in: float, p_out: float, q: float, *, rho: float, mu: float,
                      p_sat: float, p_crit: float, fl: float, fd: float | None = None,
                      d_valve: float | None = None, d_pipe_in: float | None = None,
                      d_pipe_out: float | None = None) -> ValveSizing:
    """Required flow coefficient of a valve passing a liquid, IEC 60534-2-1.

    Thin layer over ``fluids.control_valve.size_control_valve_l`` that takes the
    liquid properties directly.

    Parameters
    ----------
    p_in : float
        Absolute pressure upstream of the valve (and of any reducer) [Pa]
    p_out : float
        Absolute pressure downstream of the valve (and of any expander) [Pa]
    q : float
        Volumetric flow at inlet conditions [m3/s]
    rho : float
        Density at inlet conditions [kg/m3]
    mu : float
        Dynamic viscosity at inlet conditions [Pa s]
    p_sat : float
        Vapour pressure of the liquid at inlet temperature [Pa]
    p_crit : float
        Critical pressure of the liquid [Pa]
    fl : float
        Liquid pressure recovery factor of the valve without fittings [-]
    fd : float, optional
        Valve style modifier; required when diameters are given [-]
    d_valve : float, optional
        Valve nominal diameter [m]
    d_pipe_in : float, optional
        Upstream pipe inside diameter; defaults to ``d_valve`` [m]
    d_pipe_out : float, optional
        Downstream pipe inside diameter; defaults to ``d_valve`` [m]

    Returns
    -------
    sizing : ValveSizing
        Required Kv [m3/h] and Cv [US gal/min], choked flag and basis [-]
    """
    zero, (d1, d2, d, fd_used, note) = _prelude(
        p_in, p_out, q, "liquid", d_valve, d_pipe_in, d_pipe_out, fd)
    if zero:
        return zero
    # IEC 60534-2-1:2011 Eqs. (1)/(3), with (4)/(5) for fittings, via fluids.
    out = _cv.size_control_valve_l(
        rho=rho, Psat=p_sat, Pc=p_crit, mu=mu, P1=p_in, P2=p_out, Q=q, D1=d1, D2=d2,
        d=d, FL=fl, Fd=fd_used, full_output=True)
    return _result(out, "liquid", note)


# ----------------------------------------------------------------------- steam layer
def size_steam_valve(p_in: float, p_out: float, m_dot: float, state_in: _props.State,
                     *, fl: float | None, xt: float, fd: float | None = None,
                     d_valve: float | None = None, d_pipe_in: float | None = None,
                     d_pipe_out: float | None = None) -> ValveSizing:
    """Required flow coefficient of a let-down valve passing superheated steam.

    The inlet state gives gamma = cp / cv, Z = p v / (R T) with R of water
    (:data:`R_WATER`) and the viscosity (IAPWS R12-08 via :func:`properties.viscosity`).
    The mass flow is turned into the volumetric flow at 273.15 K and 101.325 kPa of
    an ideal gas of molar mass 18.01528 g/mol, which is the reference state of the
    N9 constant that ``fluids`` uses; with that reference Eq. (8a) of the standard is
    the same as its mass-flow form (8b).

    Parameters
    ----------
    p_in : float
        Absolute pressure upstream of the valve [Pa]
    p_out : float
        Absolute pressure downstream of the valve [Pa]
    m_dot : float
        Steam mass flow [kg/s]
    state_in : State
        Inlet steam state from :mod:`steamnet.properties`, at ``p_in`` [-]
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
    sizing : ValveSizing
        Required Kv [m3/h] and Cv [US gal/min], choked flag and basis [-]

    Raises
    ------
    ModelError
        Wet or liquid inlet: the compressible equations of the standard need a
        single-phase vapour.
    """
    if state_in.phase != "vapour":
        what = f"wet (quality {state_in.x:.4f})" if state_in.is_wet else state_in.phase
        raise ModelError(
            f"let-down valve inlet steam is {what} at {state_in.p / 1e5:.4g} bar(a); "
            "IEC 60534-2-1 compressible sizing needs superheated (single-phase) steam")
    if abs(state_in.p - p_in) > 1e-6 * p_in:
        raise ModelError(f"state_in is at {state_in.p:.6g} Pa but p_in is {p_in:.6g} Pa")
    if m_dot < 0:
        raise ModelError(f"steam flow must not be negative, got {m_dot!r} kg/s")
    gamma = state_in.cp / state_in.cv
    z = p_in * state_in.v / (R_WATER * state_in.t)
    rho_normal = P_NORMAL / (R_WATER * T_NORMAL)       # ideal gas at the reference
    return size_gas_valve(
        p_in, p_out, m_dot / rho_normal, t_in=state_in.t, mw=MW_WATER,
        mu=_props.viscosity(state_in), gamma=gamma, z=z, fl=fl, xt=xt, fd=fd,
        d_valve=d_valve, d_pipe_in=d_pipe_in, d_pipe_out=d_pipe_out)


def size_water_valve(p_in: float, p_out: float, m_dot: float, state_in: _props.State,
                     *, fl: float, fd: float | None = None, d_valve: float | None = None,
                     d_pipe_in: float | None = None,
                     d_pipe_out: float | None = None) -> ValveSizing:
    """Required flow coefficient of a spray water (or any water) control valve.

    Density and viscosity come from the inlet state, the vapour pressure is
    Psat(T_in) by IF97 Eq. 30 and the critical pressure is 22.064 MPa.

    Parameters
    ----------
    p_in : float
        Absolute pressure upstream of the valve [Pa]
    p_out : float
        Absolute pressure downstream of the valve [Pa]
    m_dot : float
        Water mass flow [kg/s]
    state_in : State
        Inlet water state from :mod:`steamnet.properties`, liquid, at ``p_in`` [-]
    fl : float
        Liquid pressure recovery factor [-]
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
    sizing : ValveSizing
        Required Kv [m3/h] and Cv [US gal/min], choked flag and basis [-]

    Raises
    ------
    ModelError
        Inlet not a liquid.
    """
    if state_in.phase != "liquid":
        raise ModelError(f"water valve inlet is {state_in.phase} at "
                         f"{state_in.p / 1e5:.4g} bar(a), {state_in.t - 273.15:.1f} degC; "
                         "liquid sizing needs subcooled water")
    if m_dot < 0:
        raise ModelError(f"water flow must not be negative, got {m_dot!r} kg/s")
    return size_liquid_valve(
        p_in, p_out, m_dot / state_in.rho, rho=state_in.rho,
        mu=_props.viscosity(state_in), p_sat=_props.p_sat(state_in.t),
        p_crit=P_CRIT_WATER, fl=fl, fd=fd, d_valve=d_valve, d_pipe_in=d_pipe_in,
        d_pipe_out=d_pipe_out)
