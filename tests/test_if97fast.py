"""The fast basic equations of steamnet._if97fast against iapws's, and the property layer
built on them against the same layer run on iapws's equations.

iapws (an independent implementation of IAPWS R7-97(2012)) is the reference; the
verification tables of the release are checked in test_properties.py.

Tolerance: 1e-12 relative. h and s pass through zero near the triple point (IF97 sets
u = s = 0 for the saturated liquid there, from memory), so they are compared relative to
max(|value|, R T) and max(|value|, R). cv of region 1 is ill-conditioned near 623 K and
16-20 MPa: its second derivative g_pipi is a sum of terms some 8000 times larger than the
sum, so any double-precision evaluation (iapws's included) is a few 1e-12 off the exact
value there; its tolerance adds 4 ulps times that condition number.
"""

from __future__ import annotations

import math
import random

import pytest
from iapws import iapws97 as if97

from steamnet import _if97fast as fast
from steamnet import properties as prop

EPS = 2.220446049250313e-16
R = 461.526       # J/(kg K), IAPWS R7-97(2012) Eq. (1)
P_623 = if97._PSat_T(623.15) * 1e6
N_POINTS = 4000


def _iapws(region, t, p):
    d = (if97._Region1 if region == 1 else if97._Region2)(t, p * 1e-6)
    return d["h"] * 1e3, d["s"] * 1e3, d["v"], d["cp"] * 1e3, d["cv"] * 1e3


def _cond_gpipi(t, p):
    """Condition number of region 1's g_pipi sum: sum |terms| / |sum|."""
    pi, tau = p / 16.53e6, 1386.0 / t
    terms = [n * i * (i - 1) * (7.1 - pi) ** (i - 2) * (tau - 1.222) ** j
             for i, j, n in fast._TABLE_2 if i >= 2]
    return sum(abs(x) for x in terms) / abs(sum(terms))


def _random_points(region, n, seed):
    """(T, p) spread over the region: p log-uniform, T uniform within the region."""
    rng = random.Random(seed)
    out = []
    while len(out) < n:
        p = 10 ** rng.uniform(math.log10(612.0), 8.0)
        if region == 1:
            t_hi = if97._TSat_P(p * 1e-6) if p < P_623 else 623.15
            out.append((rng.uniform(273.15, t_hi), p))
        else:
            t_lo = if97._TSat_P(p * 1e-6) if p < P_623 else if97._t_P(p * 1e-6)
            out.append((rng.uniform(t_lo, 1073.15), p))
    return out


def _assert_close(got, ref, t, cv_extra=0.0, where=""):
    scales = (R * t, R, 0.0, 0.0, 0.0)
    for k, (g, r, sc) in enumerate(zip(got, ref, scales)):
        tol = 1e-12 + (cv_extra if k == 4 else 0.0)
        assert abs(g - r) <= tol * max(abs(r), sc), \
            f"{where} {'h s v cp cv'.split()[k]}: {g!r} vs {r!r}"


@pytest.mark.parametrize("region", [1, 2])
def test_basic_equations_match_iapws(region):
    func = fast.region1 if region == 1 else fast.region2
    for t, p in _random_points(region, N_POINTS, seed=region):
        got = func(t, p)
        extra = 4 * EPS * _cond_gpipi(t, p) if region == 1 else 0.0
        _assert_close(got, _iapws(region, t, p), t, extra, where=f"region {region} {t} K {p} Pa")
        # the light evaluation used by Newton steps is the full one, to the last bit
        assert func(t, p, False) == (got[0], got[1], got[3])


def test_condition_allowance_is_needed_only_in_the_corner():
    """The cv allowance is not a blanket one: away from 600-623.15 K above 10 MPa the
    condition number of g_pipi stays small."""
    assert _cond_gpipi(400.0, 1e6) < 10 and _cond_gpipi(550.0, 10e6) < 100
    assert _cond_gpipi(620.0, 17e6) > 1000


# -------------------------------------------------- the property layer, end to end
def _iapws_hook(region):
    def f(t, p, full=True):
        h, s, v, cp, cv = _iapws(region, t, p)
        return (h, s, v, cp, cv) if full else (h, s, cp)
    return f


def _plant_inputs(n, seed=11):
    """(P,T), (P,h) and (P,s) inputs over 0.01-200 bar: liquid, vapour and wet."""
    rng = random.Random(seed)
    pts = []
    for _ in range(n):
        p = 10 ** rng.uniform(3.0, math.log10(200e5))
        t = rng.uniform(274.0, 1070.0)
        if p < 220e5 and abs(t - prop.t_sat(p)) < 1e-2:
            continue
        st = prop.state_pt(p, t)
        pts.append(("pt", p, t))
        pts.append(("ph", p, st.h))
        pts.append(("ps", p, st.s))
        if p < 200e5:
            sat = prop.saturation(p)
            pts.append(("ph", p, sat.hf + rng.random() * sat.hfg))
    return pts


def _evaluate(pts):
    prop.clear_cache()
    f = {"pt": prop.state_pt, "ph": prop.state_ph, "ps": prop.state_ps}
    return [f[k](p, y) for k, p, y in pts]


def test_property_layer_unchanged_on_iapws_equations(monkeypatch):
    """Every state, through the fast equations and through iapws's (the wrapper's former
    engine) with the rest of the wrapper unchanged, agrees to 1e-12."""
    pts = _plant_inputs(700)
    fast_states = _evaluate(pts)
    monkeypatch.setattr(prop, "_R1", _iapws_hook(1))
    monkeypatch.setattr(prop, "_R2", _iapws_hook(2))
    ref_states = _evaluate(pts)
    monkeypatch.undo()
    prop.clear_cache()
    regions = set()
    for (kind, p, y), a, b in zip(pts, fast_states, ref_states):
        regions.add(a.region)
        assert (a.region, a.phase, a.p) == (b.region, b.phase, b.p)
        assert abs(a.t - b.t) <= 1e-12 * b.t, (kind, p, y)
        extra = 4 * EPS * _cond_gpipi(b.t, p) if b.region == 1 else 0.0
        if b.is_wet:
            assert abs(a.x - b.x) <= 1e-12
            _assert_close((a.h, a.s, a.v), (b.h, b.s, b.v), b.t, where=kind)
        else:
            _assert_close((a.h, a.s, a.v, a.cp, a.cv), (b.h, b.s, b.v, b.cp, b.cv), b.t,
                          extra, where=f"{kind} {p} {y}")
    assert {1, 2, 4} <= regions


def test_region_bounds_hold_at_every_pressure():
    """The pressure-independent bounds of properties._CEIL_1 and _FLOOR_2 rest on h and s
    of region 1 at 273.15 K rising with pressure, and of region 2 at 1073.15 K falling,
    up to 16.5 MPa; checked here with iapws's equations on a fine pressure grid."""
    ps = [10 ** (math.log10(612.0) + k * (math.log10(P_623) - math.log10(612.0)) / 2000)
          for k in range(2001)]
    h1 = [if97._Region1(273.15, p * 1e-6)["h"] * 1e3 for p in ps]
    s1 = [if97._Region1(273.15, p * 1e-6)["s"] * 1e3 for p in ps]
    h2 = [if97._Region2(1073.15, p * 1e-6)["h"] * 1e3 for p in ps]
    s2 = [if97._Region2(1073.15, p * 1e-6)["s"] * 1e3 for p in ps]
    for seq, sign in ((h1, 1), (s1, 1), (h2, -1), (s2, -1)):
        assert all(sign * (b - a) > 0 for a, b in zip(seq, seq[1:]))
    tol = 1e-12
    assert max(h1) <= prop._CEIL_1["h"] + tol * R * 273.15
    assert max(s1) <= prop._CEIL_1["s"] + tol * R
    assert min(h2) >= prop._FLOOR_2["h"] * (1 - tol)
    assert min(s2) >= prop._FLOOR_2["s"] * (1 - tol)
