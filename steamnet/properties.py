"""Water and steam properties: the one door to IAPWS-IF97.

Every property call of steamnet goes through this module. It evaluates the basic
equations of regions 1 and 2 with :mod:`steamnet._if97fast` and takes the backward,
saturation and region 3 and 5 functions of the ``iapws`` package (IAPWS R7-97(2012), the
revised release on the industrial formulation IF97), and

* takes and returns SI units (Pa, K, J/kg, J/(kg K), m3/kg), converting to the MPa and
  kJ/kg of ``iapws`` here and nowhere else;
* forms only h, s, v, cp and cv in regions 1, 2 and 4 (up to 16.5 MPa for region 4),
  in plain floats: no full ``IAPWS97`` object, which also computes transport properties
  the balance does not need, and no numpy call per term;
* makes (P, h) and (P, s) states consistent with the forward equations: the backward
  equations of IF97 are consistent with them only to 10-25 mK, so the temperature they
  give is refined by Newton steps on the forward equation until h (or s) matches the
  input;
* caches every state by its exact inputs, so a solve asks for each distinct state once;
* reports wet states with their quality ``x`` and raises :class:`PropertyRangeError`
  for states outside IF97's range (the caller adds the equipment name).

References
----------
.. [1] IAPWS R7-97(2012), Revised Release on the IAPWS Industrial Formulation 1997 for
   the Thermodynamic Properties of Water and Steam.
.. [2] IAPWS SR3-03(2014), Revised Supplementary Release on Backward Equations for the
   Functions T(p,h), v(p,h) and T(p,s), v(p,s) for Region 3.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from functools import lru_cache

from iapws import iapws97 as _if97

from . import _if97fast as _fast
from .errors import PropertyRangeError

__all__ = [
    "State", "Saturation", "state_pt", "state_ph", "state_ps", "saturation", "t_sat",
    "p_sat", "h_pt", "viscosity", "stats", "reset_stats", "add_stats", "clear_cache",
    "P_MIN", "P_MAX", "T_MIN", "T_MAX", "P_CRIT", "T_CRIT",
]

#: Range of IAPWS-IF97 regions 1-4 used here [Pa], [K] (IAPWS R7-97(2012), section 4).
P_MIN = 611.212677            # Psat(273.15 K), the lowest pressure of IF97, Pa
P_MAX = 100e6                 # Pa
T_MIN = 273.15                # K
T_MAX = 1073.15               # K, upper limit of region 2
#: Critical point, IAPWS R7-97(2012) Eqs. (2)-(3)... as tabulated there [Pa], [K].
P_CRIT = 22.064e6
T_CRIT = 647.096
#: Boundary of region 3 below which region 4 has a closed form: Psat(623.15 K) [Pa].
_P_623 = _if97._PSat_T(623.15) * 1e6

_MPA = 1e-6
_KJ = 1e3

#: Basic equations of regions 1 and 2: (T [K], p [Pa], full) -> (h, s, v, cp, cv), or
#: (h, s, cp) when not full. Module attributes so that a test can put iapws's in place.
_R1 = _fast.region1
_R2 = _fast.region2


@dataclass(frozen=True, slots=True)
class State:
    """One water or steam state, SI units.

    Attributes
    ----------
    p : float
        Pressure [Pa]
    t : float
        Temperature [K]
    h : float
        Specific enthalpy [J/kg]
    s : float
        Specific entropy [J/(kg K)]
    v : float
        Specific volume [m3/kg]
    cp : float
        Isobaric heat capacity [J/(kg K)]; NaN for wet steam
    cv : float
        Isochoric heat capacity [J/(kg K)]; NaN for wet steam
    x : float
        Vapour quality [-] for wet steam (0..1); NaN for single-phase states
    phase : str
        ``"liquid"``, ``"vapour"``, ``"wet"`` or ``"supercritical"``
    region : int
        IAPWS-IF97 region (1 to 5)
    """

    p: float
    t: float
    h: float
    s: float
    v: float
    cp: float
    cv: float
    x: float
    phase: str
    region: int

    @property
    def rho(self) -> float:
        """Density [kg/m3]."""
        return 1.0 / self.v

    @property
    def is_wet(self) -> bool:
        """True for a two-phase state."""
        return self.phase == "wet"


@dataclass(frozen=True, slots=True)
class Saturation:
    """Saturated liquid and vapour at one pressure, SI units.

    Attributes
    ----------
    p, t : float
        Saturation pressure [Pa] and temperature [K]
    hf, hg : float
        Enthalpy of saturated liquid and vapour [J/kg]
    sf, sg : float
        Entropy of saturated liquid and vapour [J/(kg K)]
    vf, vg : float
        Specific volume of saturated liquid and vapour [m3/kg]
    """

    p: float
    t: float
    hf: float
    hg: float
    sf: float
    sg: float
    vf: float
    vg: float

    @property
    def hfg(self) -> float:
        """Latent heat [J/kg]."""
        return self.hg - self.hf


# --------------------------------------------------------------------------- counters
_STATS = {"evaluations": 0, "seconds": 0.0}
_DEPTH = [0]      # nesting of timed evaluations: only the outermost one adds its time


def stats() -> dict:
    """Count and time of uncached property evaluations since the last reset."""
    return dict(_STATS)


def reset_stats() -> None:
    """Zero the evaluation counters."""
    _STATS["evaluations"] = 0
    _STATS["seconds"] = 0.0


def add_stats(other: dict) -> None:
    """Add counts from elsewhere (the workers of a parallel sweep) to the counters."""
    _STATS["evaluations"] += other["evaluations"]
    _STATS["seconds"] += other["seconds"]


def clear_cache() -> None:
    """Empty every property cache (for benchmarks that measure the uncached cost)."""
    for f in (_sat, _pt, _ph, _ps, _tsat, _psat, _viscosity):
        f.cache_clear()


def _timed(func):
    def wrapper(*args):
        t0 = time.perf_counter()
        _DEPTH[0] += 1
        try:
            return func(*args)
        finally:
            _DEPTH[0] -= 1
            _STATS["evaluations"] += 1
            if not _DEPTH[0]:
                _STATS["seconds"] += time.perf_counter() - t0
    wrapper.__name__ = func.__name__
    wrapper.__doc__ = func.__doc__
    return wrapper


def _fmt(p: float, **kw) -> str:
    parts = [f"p={p * _MPA:.6g} MPa"]
    for k, val in kw.items():
        if k == "t":
            parts.append(f"T={val:.6g} K")
        elif k == "h":
            parts.append(f"h={val / _KJ:.6g} kJ/kg")
        elif k == "s":
            parts.append(f"s={val / _KJ:.6g} kJ/(kg K)")
    return ", ".join(parts)


def _check_p(p: float, **kw) -> None:
    if not (math.isfinite(p) and P_MIN <= p <= P_MAX):
        raise PropertyRangeError(
            f"{_fmt(p, **kw)} is outside IAPWS-IF97 (pressure from {P_MIN * _MPA:.6g} "
            f"to {P_MAX * _MPA:g} MPa)")


def _phase12(p: float, region: int) -> str:
    """Phase label of a region 1 or 2 state: no liquid or vapour above the critical
    pressure."""
    if p >= P_CRIT:
        return "supercritical"
    return "liquid" if region == 1 else "vapour"


def _state12(p: float, t: float, region: int) -> State:
    """Single-phase state of region 1 or 2 from the fast basic equations."""
    h, s, v, cp, cv = (_R1 if region == 1 else _R2)(t, p)
    return State(p=p, t=t, h=h, s=s, v=v, cp=cp, cv=cv, x=math.nan,
                 phase=_phase12(p, region), region=region)


def _from_object(st, p: float, region: int) -> State:
    """Single-phase state from a full ``IAPWS97`` object (regions 3 and 5)."""
    phase = "supercritical" if p >= P_CRIT else ("vapour" if st.x == 1 else "liquid")
    return State(p=p, t=float(st.T), h=float(st.h) * _KJ, s=float(st.s) * _KJ,
                 v=float(st.v), cp=float(st.cp) * _KJ, cv=float(st.cv) * _KJ, x=math.nan,
                 phase=phase, region=int(region))


def _single_phase(t: float, p: float) -> State:
    """State from (T, P) off the saturation line, by the region of IF97 it falls in."""
    region = _if97._Bound_TP(t, p * _MPA)
    if region in (1, 2):
        return _state12(p, t, region)
    if region in (3, 5):
        # Rare in plant steam systems: use the full object of iapws for these regions.
        return _from_object(_if97.IAPWS97(T=t, P=p * _MPA), p, region)
    raise PropertyRangeError(f"{_fmt(p, t=t)} is outside IAPWS-IF97 regions 1-5")


# ----------------------------------------------------------------------- saturation
@lru_cache(maxsize=4096)
@_timed
def _tsat(p: float) -> float:
    return _if97._TSat_P(p * _MPA)


@lru_cache(maxsize=4096)
@_timed
def _psat(t: float) -> float:
    return _if97._PSat_T(t) / _MPA


@lru_cache(maxsize=4096)
@_timed
def _sat(p: float) -> Saturation:
    t = _if97._TSat_P(p * _MPA)
    if p <= _P_623:
        hf, sf, vf, _, _ = _R1(t, p)
        hg, sg, vg, _, _ = _R2(t, p)
        return Saturation(p=p, t=float(t), hf=hf, hg=hg, sf=sf, sg=sg, vf=vf, vg=vg)
    liq = _if97.IAPWS97(P=p * _MPA, x=0.0)
    vap = _if97.IAPWS97(P=p * _MPA, x=1.0)
    return Saturation(p=p, t=t, hf=liq.h * _KJ, hg=vap.h * _KJ, sf=liq.s * _KJ,
                      sg=vap.s * _KJ, vf=liq.v, vg=vap.v)


def saturation(p: float) -> Saturation:
    """Saturated liquid and vapour at pressure ``p`` [Pa].

    >>> round(saturation(1e5).t - 273.15, 2)   # IAPWS R7-97(2012), Table 36: 372.755919 K
    99.61
    """
    _check_p(p)
    if p >= P_CRIT:
        raise PropertyRangeError(f"{_fmt(p)} is at or above the critical pressure: "
                                 "no saturation")
    return _sat(float(p))


def t_sat(p: float) -> float:
    """Saturation temperature [K] at pressure ``p`` [Pa] (IF97 Eq. 31)."""
    _check_p(p)
    if p >= P_CRIT:
        raise PropertyRangeError(f"{_fmt(p)} is at or above the critical pressure: "
                                 "no saturation")
    return _tsat(float(p))


def p_sat(t: float) -> float:
    """Saturation pressure [Pa] at temperature ``t`` [K] (IF97 Eq. 30)."""
    if not (T_MIN <= t <= T_CRIT):
        raise PropertyRangeError(f"T={t:.6g} K has no saturation pressure (273.15 K to "
                                 f"{T_CRIT} K)")
    return _psat(float(t))


# ---------------------------------------------------------------------------- (P, T)
@lru_cache(maxsize=65536)
@_timed
def _pt(p: float, t: float) -> State:
    return _single_phase(t, p)


def state_pt(p: float, t: float) -> State:
    """State from pressure [Pa] and temperature [K].

    A temperature on the saturation line (within 1 mK) does not fix the state; that is an
    error: give the enthalpy or the quality instead.
    """
    _check_p(p, t=t)
    if not (math.isfinite(t) and T_MIN <= t <= (2273.15 if p <= 50e6 else T_MAX)):
        raise PropertyRangeError(f"{_fmt(p, t=t)} is outside IAPWS-IF97 (temperature "
                                 "from 273.15 K to 1073.15 K, 2273.15 K up to 50 MPa)")
    if p < P_CRIT and abs(t - t_sat(p)) < 1e-3:
        raise PropertyRangeError(f"{_fmt(p, t=t)} lies on the saturation line: the "
                                 "state needs an enthalpy or a quality")
    return _pt(float(p), float(t))


def h_pt(p: float, t: float) -> float:
    """Specific enthalpy [J/kg] from pressure [Pa] and temperature [K]."""
    return state_pt(p, t).h


# ------------------------------------------------------------------- (P, h) and (P, s)
_BACKWARD = {("h", 1): _if97._Backward1_T_Ph, ("h", 2): _if97._Backward2_T_Ph,
             ("s", 1): _if97._Backward1_T_Ps, ("s", 2): _if97._Backward2_T_Ps}
_NAME = {"h": "enthalpy", "s": "entropy"}
_KEY = {"h": 0, "s": 1}       # index in the light result (h, s, cp) of _R1 and _R2

# Bounds of regions 1 and 2 below 16.5 MPa that hold at every such pressure, so that
# most states need not evaluate the bound at their own pressure: at 273.15 K, h and s of
# region 1 rise with pressure (water expands on cooling there, so (dh/dp)_T =
# v (1 - T alpha) > 0 and (ds/dp)_T = -v alpha > 0); at 1073.15 K, h and s of region 2
# fall with pressure. tests/test_if97fast.py checks both on a fine pressure grid.
_CEIL_1 = dict(zip("hs", _fast.region1(T_MIN, _P_623, False)))
_FLOOR_2 = dict(zip("hs", _fast.region2(T_MAX, _P_623, False)))


def _below_273(p: float, y: float, key: str) -> PropertyRangeError:
    return PropertyRangeError(f"{_fmt(p, **{key: y})} is below the {_NAME[key]} of water "
                              "at 273.15 K: outside IAPWS-IF97")


def _region12(p: float, y: float, key: str, sat: Saturation | None) -> int | None:
    """Region 1 or 2 of a single-phase (P, h) or (P, s) state, or None where iapws's
    region functions must decide (regions 3 to 5 or outside IF97). The bounds are those
    of iapws's ``_Bound_Ph`` and ``_Bound_Ps``, evaluated with the fast equations."""
    k = _KEY[key]
    if sat is not None:                       # below 16.5 MPa, off the wet region
        if y <= (sat.hf if key == "h" else sat.sf):
            if y >= _CEIL_1[key] or y >= _R1(T_MIN, p, False)[k]:
                return 1
            raise _below_273(p, y, key)
        if y <= _FLOOR_2[key] or y <= _R2(T_MAX, p, False)[k]:
            return 2
        return None
    if y < _R1(T_MIN, p, False)[k]:
        raise _below_273(p, y, key)
    if y <= _R1(623.15, p, False)[k]:
        return 1
    t23 = _if97._t_P(p * _MPA)                # boundary of regions 2 and 3, Eq. (6)
    if _R2(t23, p, False)[k] <= y <= _R2(T_MAX, p, False)[k]:
        return 2
    return None


def _refine_t(p: float, t: float, target: float, key: str, region: int) -> float:
    """Newton steps on the forward equation so that h(T, p) or s(T, p) hits ``target``."""
    f = _R1 if region == 1 else _R2
    for _ in range(8):
        h, s, cp = f(t, p, False)
        dt = (target - h) / cp if key == "h" else (target - s) * t / cp
        # Apply even the last, small step: stopping before it left h (or s) off the
        # input by up to 1e-9 relative. After it the error is of order dt**2.
        t = t + dt
        if abs(dt) < 1e-10 * t:
            break
    return t


def _solve12(p: float, y: float, key: str, region: int, sat: Saturation | None) -> State:
    """Region 1 or 2 state from (P, h) or (P, s): the backward equation of IF97 as the
    start, on the right side of the saturation line, then Newton steps."""
    t0 = float(_BACKWARD[key, region](p * _MPA, y / _KJ))   # numpy scalar -> float
    if sat is not None:
        t0 = min(t0, sat.t) if region == 1 else max(t0, sat.t)
    return _state12(p, _refine_t(p, t0, y, key, region), region)


def _state_p_and(p: float, y: float, key: str) -> State:
    """State from pressure and enthalpy (``key="h"``) or entropy (``key="s"``)."""
    sat = None
    if p < _P_623:
        sat = _sat(p)
        lo, hi = (sat.hf, sat.hg) if key == "h" else (sat.sf, sat.sg)
        if lo < y < hi:
            x = (y - lo) / (hi - lo)
            h = y if key == "h" else sat.hf + x * sat.hfg
            s = y if key == "s" else sat.sf + x * (sat.sg - sat.sf)
            return State(p=p, t=sat.t, h=h, s=s, v=sat.vf + x * (sat.vg - sat.vf),
                         cp=math.nan, cv=math.nan, x=x, phase="wet", region=4)
    region = _region12(p, y, key, sat)
    if region:
        return _solve12(p, y, key, region, sat)
    pm, yk = p * _MPA, y / _KJ
    region = (_if97._Bound_Ph if key == "h" else _if97._Bound_Ps)(pm, yk)
    if region is None:
        raise PropertyRangeError(f"{_fmt(p, **{key: y})} is outside IAPWS-IF97 "
                                 "regions 1-5")
    if region in (1, 2):
        return _solve12(p, y, key, region, sat)
    st = _if97.IAPWS97(P=pm, **{key: yk})
    if region == 4:
        return State(p=p, t=float(st.T), h=y if key == "h" else float(st.h) * _KJ,
                     s=y if key == "s" else float(st.s) * _KJ, v=float(st.v),
                     cp=math.nan, cv=math.nan, x=float(st.x), phase="wet", region=4)
    return _from_object(st, p, region)


@lru_cache(maxsize=65536)
@_timed
def _ph(p: float, h: float) -> State:
    return _state_p_and(p, h, "h")


def state_ph(p: float, h: float) -> State:
    """State from pressure [Pa] and specific enthalpy [J/kg]; wet states carry ``x``.

    >>> st = state_ph(1e6, 2.0e6)        # inside the dome at 10 bar
    >>> st.phase, round(st.x, 3)
    ('wet', 0.614)
    """
    _check_p(p, h=h)
    if not math.isfinite(h):
        raise PropertyRangeError(f"{_fmt(p)}: enthalpy is not a finite number")
    return _ph(float(p), float(h))


# ---------------------------------------------------------------------------- (P, s)
@lru_cache(maxsize=65536)
@_timed
def _ps(p: float, s: float) -> State:
    return _state_p_and(p, s, "s")


def state_ps(p: float, s: float) -> State:
    """State from pressure [Pa] and specific entropy [J/(kg K)]; wet states carry ``x``."""
    _check_p(p, s=s)
    if not math.isfinite(s):
        raise PropertyRangeError(f"{_fmt(p)}: entropy is not a finite number")
    return _ps(float(p), float(s))


# ------------------------------------------------------------------------- transport
@lru_cache(maxsize=65536)
@_timed
def _viscosity(rho: float, t: float) -> float:
    return float(_if97._Viscosity(rho, t))


def viscosity(st: State) -> float:
    """Dynamic viscosity [Pa s] of a single-phase state (IAPWS R12-08, via iapws);
    cached and counted like the other evaluations."""
    if st.is_wet:
        raise PropertyRangeError(f"{_fmt(st.p, h=st.h)}: viscosity of wet steam is not "
                                 "defined")
    return _viscosity(float(st.rho), float(st.t))


@lru_cache(maxsize=65536)
@_timed
def _speed_of_sound(p: float, t: float) -> float:
    return float(_if97.IAPWS97(P=p / 1e6, T=t).w)


def speed_of_sound(st: State) -> float:
    """Speed of sound [m/s] of a single-phase state (IAPWS-IF97, via iapws); cached
    and counted like the other evaluations."""
    if st.is_wet:
        raise PropertyRangeError(f"{_fmt(st.p, h=st.h)}: speed of sound of wet steam is "
                                 "not used here")
    return _speed_of_sound(float(st.p), float(st.t))
