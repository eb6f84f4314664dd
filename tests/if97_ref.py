"""Reference water and steam properties for the balance tests, independent of iapws.

Every value comes from CoolProp's IF97 backend (``PropsSI(..., 'IF97::Water')``), an
independent implementation of IAPWS R7-97(2012). Only its *forward* calls are used:
(P, T) in the single-phase regions and (P, Q) on the saturation line. The states fixed by
(P, h) or (P, s) are found here by inverting the forward equations with a bracketed root
search (or by the lever rule inside the dome), because CoolProp's IF97 (P, h) and (P, s)
calls use the IF97 backward equations directly, which agree with the forward equations
only to about 1 mK (IAPWS R7-97(2012), sections 5.2.3 and 6.3.3: "numerical consistency"
of the backward equations), i.e. about 1e-6 relative in enthalpy; inverting the forward
equations leaves only round-off.

Units are SI throughout: Pa, K, J/kg, J/(kg K), m3/kg.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

from CoolProp.CoolProp import PropsSI
from scipy.optimize import brentq

FLUID = "IF97::Water"
#: Upper temperature of IF97 region 2 [K] (IAPWS R7-97(2012), section 4).
T_MAX_R2 = 1073.15
#: Lowest temperature of IF97 region 1 [K] (IAPWS R7-97(2012), section 4).
T_MIN = 273.15


def _p(out: str, a: str, va: float, b: str, vb: float) -> float:
    return float(PropsSI(out, a, va, b, vb, FLUID))


@dataclass(frozen=True)
class Sat:
    """Saturated liquid and vapour at one pressure (CoolProp IF97)."""

    p: float
    t: float
    hf: float
    hg: float
    sf: float
    sg: float
    vf: float

    @property
    def hfg(self) -> float:
        return self.hg - self.hf


@lru_cache(maxsize=None)
def sat(p: float) -> Sat:
    """Saturation at pressure ``p`` [Pa] (IF97 region 4 with regions 1 and 2)."""
    return Sat(p=p, t=_p("T", "P", p, "Q", 0.0),
               hf=_p("H", "P", p, "Q", 0.0), hg=_p("H", "P", p, "Q", 1.0),
               sf=_p("S", "P", p, "Q", 0.0), sg=_p("S", "P", p, "Q", 1.0),
               vf=1.0 / _p("D", "P", p, "Q", 0.0))


@lru_cache(maxsize=None)
def h_pt(p: float, t: float) -> float:
    """Specific enthalpy [J/kg] at (p [Pa], t [K]), single phase."""
    return _p("H", "P", p, "T", t)


@lru_cache(maxsize=None)
def s_pt(p: float, t: float) -> float:
    """Specific entropy [J/(kg K)] at (p [Pa], t [K]), single phase."""
    return _p("S", "P", p, "T", t)


def _bracket(p: float, h_or_s: float, key: str) -> tuple[float, float]:
    """Temperature bracket of the single-phase branch that holds the value."""
    st = sat(p)
    lo_val = st.hf if key == "h" else st.sf
    if h_or_s <= lo_val:
        return T_MIN + 1e-6, st.t - 1e-9
    return st.t + 1e-9, T_MAX_R2


def _t_from(p: float, target: float, key: str) -> float:
    f = h_pt if key == "h" else s_pt
    a, b = _bracket(p, target, key)
    return brentq(lambda t: f(p, t) - target, a, b, xtol=1e-12, rtol=1e-15, maxiter=200)


def is_wet_h(p: float, h: float) -> bool:
    st = sat(p)
    return st.hf < h < st.hg


def t_ph(p: float, h: float) -> float:
    """Temperature [K] at (p, h); saturation temperature inside the dome."""
    if is_wet_h(p, h):
        return sat(p).t
    return _t_from(p, h, "h")


def quality_ph(p: float, h: float) -> float:
    """Vapour quality [-] at (p, h) inside the dome (lever rule)."""
    st = sat(p)
    return (h - st.hf) / st.hfg


def h_ps(p: float, s: float) -> float:
    """Enthalpy [J/kg] at (p, s): the end of an isentropic expansion."""
    st = sat(p)
    if st.sf < s < st.sg:
        x = (s - st.sf) / (st.sg - st.sf)
        return st.hf + x * st.hfg
    return h_pt(p, _t_from(p, s, "s"))


def s_ph(p: float, h: float) -> float:
    """Entropy [J/(kg K)] at (p, h)."""
    st = sat(p)
    if st.hf < h < st.hg:
        x = (h - st.hf) / st.hfg
        return st.sf + x * (st.sg - st.sf)
    return s_pt(p, _t_from(p, h, "h"))


def liquid_h(p: float, t: float) -> float:
    """Enthalpy [J/kg] of compressed liquid at (p, t); t must be below saturation."""
    assert t < sat(p).t, "not a liquid state at this pressure"
    return h_pt(p, t)
