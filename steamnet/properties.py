"""Water and steam properties: the one door to IAPWS-IF97.

Every property call of steamnet goes through this module. It wraps the region and
backward functions of the ``iapws`` package (IAPWS R7-97(2012), the revised release on
the industrial formulation IF97) and

* takes and returns SI units (Pa, K, J/kg, J/(kg K), m3/kg), converting to the MPa and
  kJ/kg of ``iapws`` here and nowhere else;
* calls the region functions rather than building full ``IAPWS97`` objects, which also
  compute transport properties the balance does not need;
* makes (P, h) and (P, s) states consistent with the forward equations: the backward
  equations of IF97 are accurate to about 10 mK, so the temperature they give is refined
  by Newton steps on the forward equation until h (or s) matches the input;
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

from .errors import PropertyRangeError

__all__ = [
    "State", "Saturation", "state_pt", "state_ph", "state_ps", "saturation", "t_sat",
    "p_sat", "h_pt", "viscosity", "stats", "reset_stats", "clear_cache",
    "P_MIN", "P_MAX", "T_MIN", "T_MAX", "P_CRIT", "T_CRIT",
]

#: Range of IAPWS-IF97 regions 1-4 used here [Pa], [K] (IAPWS R7-97(2012), section 4).
P_MIN = 611.212677            # triple-point pressure rounded as in iapws, Pa
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


def clear_cache() -> None:
    """Empty every property cache (for benchmarks that measure the uncached cost)."""
    for f in (_sat, _pt, _ph, _ps, _tsat, _psat):
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


def _from_region(d: dict, region: int, phase: str) -> State:
    return State(p=float(d["P"]) / _MPA, t=float(d["T"]), h=float(d["h"]) * _KJ,
                 s=float(d["s"]) * _KJ, v=float(d["v"]), cp=float(d["cp"]) * _KJ,
                 cv=float(d["cv"]) * _KJ, x=math.nan, phase=phase, region=region)


def _single_phase(t: float, p: float) -> State:
    """State from (T, P) off the saturation line, by the region of IF97 it falls in."""
    region = _if97._Bound_TP(t, p * _MPA)
    if region == 1:
        phase = "liquid" if p < P_CRIT else "supercritical"   # as state_ph and state_ps
        return _from_region(_if97._Region1(t, p * _MPA), 1, phase)
    if region == 2:
        phase = "vapour" if p < P_CRIT else "supercritical"
        return _from_region(_if97._Region2(t, p * _MPA), 2, phase)
    if region in (3, 5):
        # Rare in plant steam systems: use the full object of iapws for these regions.
        st = _if97.IAPWS97(T=t, P=p * _MPA)
        phase = "supercritical" if p >= P_CRIT else ("liquid" if st.x == 0 else "vapour")
        return State(p=p, t=t, h=st.h * _KJ, s=st.s * _KJ, v=st.v, cp=st.cp * _KJ,
                     cv=st.cv * _KJ, x=math.nan, phase=phase, region=int(region))
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
        liq = _if97._Region1(t, p * _MPA)
        vap = _if97._Region2(t, p * _MPA)
        return Saturation(p=p, t=float(t), hf=float(liq["h"]) * _KJ,
                          hg=float(vap["h"]) * _KJ, sf=float(liq["s"]) * _KJ,
                          sg=float(vap["s"]) * _KJ, vf=float(liq["v"]),
                          vg=float(vap["v"]))
    liq = _if97.IAPWS97(P=p * _MPA, x=0.0)
    vap = _if97.IAPWS97(P=p * _MPA, x=1.0)
    return Saturation(p=p, t=t, hf=liq.h * _KJ, hg=vap.h * _KJ, sf=liq.s * _KJ,
                      sg=vap.s * _KJ, vf=liq.v, vg=vap.v)


def saturation(p: float) -> Saturation:
    """Saturated liquid and vapour at pressure ``p`` [Pa].

    >>> round(saturation(1e5).t - 273.15, 2)   # IAPWS R7-97(2012), Table 35: 372.755919 K
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


# ---------------------------------------------------------------------------- (P, h)
def _refine_t(p: float, t: float, target: float, key: str, region: int) -> dict:
    """Newton steps on the forward equation so that h(T, p) or s(T, p) hits ``target``."""
    f = _if97._Region1 if region == 1 else _if97._Region2
    pm = p * _MPA
    d = f(t, pm)
    for _ in range(8):
        if key == "h":
            err = target - d["h"]
            dt = err / d["cp"]
        else:
            err = target - d["s"]
            dt = err * d["T"] / d["cp"]
        # Apply even the last, small step: stopping before it left h (or s) off the
        # input by up to 1e-9 relative. After it the error is of order dt**2.
        t = t + dt
        d = f(t, pm)
        if abs(dt) < 1e-10 * t:
            break
    return d


@lru_cache(maxsize=65536)
@_timed
def _ph(p: float, h: float) -> State:
    pm, hk = p * _MPA, h / _KJ
    if p < _P_623:
        sat = _sat(p)
        if sat.hf < h < sat.hg:
            x = (h - sat.hf) / sat.hfg
            return State(p=p, t=sat.t, h=h, s=sat.sf + x * (sat.sg - sat.sf),
                         v=sat.vf + x * (sat.vg - sat.vf), cp=math.nan, cv=math.nan,
                         x=x, phase="wet", region=4)
        if h <= sat.hf:
            if hk < _if97._Region1(T_MIN, pm)["h"]:
                raise PropertyRangeError(f"{_fmt(p, h=h)} is below the enthalpy of water "
                                         "at 273.15 K: outside IAPWS-IF97")
            t0 = _if97._Backward1_T_Ph(pm, hk)
            t0 = min(t0, sat.t)
            d = _refine_t(p, t0, hk, "h", 1)
            return _from_region(d, 1, "liquid")
        h25 = _if97._Region2(1073.15, pm)["h"]
        if hk <= h25:
            t0 = max(_if97._Backward2_T_Ph(pm, hk), sat.t)
            d = _refine_t(p, t0, hk, "h", 2)
            return _from_region(d, 2, "vapour")
    region = _if97._Bound_Ph(pm, hk)
    if region is None:
        raise PropertyRangeError(f"{_fmt(p, h=h)} is outside IAPWS-IF97 regions 1-5")
    if region == 1:
        d = _refine_t(p, _if97._Backward1_T_Ph(pm, hk), hk, "h", 1)
        return _from_region(d, 1, "liquid" if p < P_CRIT else "supercritical")
    if region == 2:
        d = _refine_t(p, _if97._Backward2_T_Ph(pm, hk), hk, "h", 2)
        return _from_region(d, 2, "vapour" if p < P_CRIT else "supercritical")
    st = _if97.IAPWS97(P=pm, h=hk)
    if region == 4:
        return State(p=p, t=st.T, h=h, s=st.s * _KJ, v=st.v, cp=math.nan, cv=math.nan,
                     x=st.x, phase="wet", region=4)
    phase = "supercritical" if p >= P_CRIT else ("vapour" if st.x == 1 else "liquid")
    return State(p=p, t=st.T, h=st.h * _KJ, s=st.s * _KJ, v=st.v, cp=st.cp * _KJ,
                 cv=st.cv * _KJ, x=math.nan, phase=phase, region=int(region))


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
    pm, sk = p * _MPA, s / _KJ
    if p < _P_623:
        sat = _sat(p)
        if sat.sf < s < sat.sg:
            x = (s - sat.sf) / (sat.sg - sat.sf)
            return State(p=p, t=sat.t, h=sat.hf + x * sat.hfg, s=s,
                         v=sat.vf + x * (sat.vg - sat.vf), cp=math.nan, cv=math.nan,
                         x=x, phase="wet", region=4)
    region = _if97._Bound_Ps(pm, sk)
    if region is None:
        raise PropertyRangeError(f"{_fmt(p, s=s)} is outside IAPWS-IF97 regions 1-5")
    if region == 1:
        d = _refine_t(p, _if97._Backward1_T_Ps(pm, sk), sk, "s", 1)
        return _from_region(d, 1, "liquid" if p < P_CRIT else "supercritical")
    if region == 2:
        d = _refine_t(p, _if97._Backward2_T_Ps(pm, sk), sk, "s", 2)
        return _from_region(d, 2, "vapour" if p < P_CRIT else "supercritical")
    st = _if97.IAPWS97(P=pm, s=sk)
    if region == 4:
        return State(p=p, t=st.T, h=st.h * _KJ, s=s, v=st.v, cp=math.nan, cv=math.nan,
                     x=st.x, phase="wet", region=4)
    phase = "supercritical" if p >= P_CRIT else ("vapour" if st.x == 1 else "liquid")
    return State(p=p, t=st.T, h=st.h * _KJ, s=st.s * _KJ, v=st.v, cp=st.cp * _KJ,
                 cv=st.cv * _KJ, x=math.nan, phase=phase, region=int(region))


def state_ps(p: float, s: float) -> State:
    """State from pressure [Pa] and specific entropy [J/(kg K)]; wet states carry ``x``."""
    _check_p(p, s=s)
    if not math.isfinite(s):
        raise PropertyRangeError(f"{_fmt(p)}: entropy is not a finite number")
    return _ps(float(p), float(s))


# ------------------------------------------------------------------------- transport
def viscosity(st: State) -> float:
    """Dynamic viscosity [Pa s] of a single-phase state (IAPWS R12-08, via iapws)."""
    if st.is_wet:
        raise PropertyRangeError(f"{_fmt(st.p, h=st.h)}: viscosity of wet steam is not "
                                 "defined")
    return float(_if97._Viscosity(st.rho, st.t))
