"""Infeasible cases: the smallest set of header imbalances (docs/method.md, infeasible
cases).

References: a closed-form mass balance of a small plant of our own, with the steam
enthalpies from CoolProp's IF97 backend, and the flow an added swing import takes in
the same case; over random networks, the limits each reported item carries in its own
equipment table row.
"""

from __future__ import annotations

import math

import pytest
from CoolProp.CoolProp import PropsSI
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from helpers import (KG_S_PER_T_H, barg, degc, equip, hp_boiler, plant_head, row,
                     solve, t_h)
from steamnet import loads_model, solve_case

try:                                           # the generator may move to testing/
    from steamnet.testing.synth import min_items, random_model_text
except ImportError:
    from steamnet.synth import min_items, random_model_text

IF97 = "IF97::Water"

# Three headers in series. The boilers have spare capacity; the only way into LP is the
# let-down from MP, which has a maximum of 10 t/h. LP draws a fixed 9 t/h and a duty of
# 1.5 MW, more than 10 t/h: only LP is short.
PLANT = plant_head("slack test plant (written for this test)", """
[[header]]
name = "MP"
pressure = "12 bar(g)"
[[header]]
name = "LP"
pressure = "3 bar(g)"
""") + hp_boiler("B1", "60 t/h", 1) + hp_boiler("B2", "60 t/h", 2) + """
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "MP"
[[letdown]]
name = "L2"
inlet = "MP"
outlet = "LP"
max_flow = "10 t/h"
[[user]]
name = "U-HP"
header = "HP"
demand = "20 t/h"
[[user]]
name = "U-MP"
header = "MP"
demand = "15 t/h"
[[user]]
name = "U-LP"
header = "LP"
demand = "9 t/h"
[[user]]
name = "U-LPduty"
header = "LP"
duty = "1.5 MW"
"""

IMPORT = """
[[steam_transfer]]
name = "IMP"
header = "LP"
direction = "import"
mode = "swing"
priority = 2
steam_temperature = "200 degC"
"""

P_HP, P_LP = barg(40.0), barg(3.0)
M_LD, M_DEM, Q = t_h(10.0), t_h(9.0), 1.5e6


def test_only_the_short_lowest_header_is_named_with_the_import_flow():
    r = solve(PLANT, expect="infeasible")
    imbalances = [f for f in r.findings if f["side"] in ("short", "long")]
    assert [(f["header"], f["side"]) for f in imbalances] == [("LP", "short")]
    f = imbalances[0]
    assert f["limits"] == ["letdown 'L2' at its maximum 10.00 t/h"]
    # Closed form: no heat loss and no spray, so the LP steam is the boiler steam
    # throttled twice (h_out = h_in), h = h(40 bar(g), 400 degC) from CoolProp; the duty
    # user takes Q / (h - h_f(LP)); LP lacks fixed + duty users - the let-down maximum.
    h_lp = PropsSI("H", "P", P_HP, "T", degc(400.0), IF97)
    hf_lp = PropsSI("H", "P", P_LP, "Q", 0, IF97)
    short = M_DEM + Q / (h_lp - hf_lp) - M_LD
    # two IF97 implementations agree to about 1e-6 relative in h (docs/method.md)
    assert f["amount_kg_s"] == pytest.approx(short, rel=1e-5)
    # The reported flows are within limits and the LP mass residual is the slack.
    assert equip(r, "L2")["flow_t_h"] == pytest.approx(10.0, rel=1e-12)
    for b in ("B1", "B2"):
        assert equip(r, b)["flow_t_h"] <= 60.0 * (1 + 1e-12)
    assert row(r.headers, "header", "LP")["mass_residual_t_h"] == pytest.approx(
        -short / KG_S_PER_T_H, rel=1e-5)
    assert all(abs(row(r.headers, "header", h)["mass_residual_t_h"]) < 1e-6
               for h in ("HP", "MP"))

    # The same case with a swing import on LP balances; the import takes the shortfall.
    ri = solve(PLANT + IMPORT)
    m_imp = equip(ri, "IMP")["flow_t_h"] * KG_S_PER_T_H
    # It differs from the slack only because the import's steam (200 degC, CoolProp)
    # changes the LP enthalpy, and with it the duty user's flow: the slack is taken at
    # h_lp, the import case at the mix hb of the let-down and the import. Closed form of
    # that difference, plus the 1e-5 relative of the two IF97 implementations:
    h_imp = PropsSI("H", "P", P_LP, "T", degc(200.0), IF97)
    hb = (M_LD * h_lp + m_imp * h_imp) / (M_LD + m_imp)
    gap = abs(Q / (h_lp - hf_lp) - Q / (hb - hf_lp))
    assert abs(f["amount_kg_s"] - m_imp) <= gap + 1e-5 * m_imp
    assert gap < 0.05 * m_imp         # the comparison is not empty: the two are close


# ------------------------------------------------------------ random networks
def _raised(text: str, factor: float) -> str:
    """The model text with every user's demand and duty times ``factor``."""
    import re

    def scale(m):
        return f'{m.group(1)} = "{float(m.group(2)) * factor:.6g} {m.group(3)}"'
    return re.sub(r'^(demand|duty) = "([0-9.eE+-]+) (t/h|MW)"', scale, text, flags=re.M)


def beyond_own_limits(r) -> list[str]:
    """Rows of the equipment table whose flow is outside their own min_t_h/max_t_h
    columns (the item's limits as the table states them)."""
    eq = r.equipment
    bad = []
    for _, e in eq.iterrows():
        flow = e["flow_t_h"]
        hi = e.get("max_t_h", math.nan)
        lo = e.get("min_t_h", math.nan)
        # 1e-9 relative: a flow at its limit is the limit itself, to rounding
        if isinstance(hi, float) and not math.isnan(hi) and flow > hi * (1 + 1e-9) + 1e-9:
            bad.append(f"{e['item']}: {flow} t/h above its maximum {hi}")
        if isinstance(lo, float) and not math.isnan(lo) and flow < lo * (1 - 1e-9) - 1e-9:
            bad.append(f"{e['item']}: {flow} t/h below its minimum {lo}")
    return bad


@settings(max_examples=40, deadline=None, derandomize=True, database=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(st.integers(0, 2**32 - 1), st.integers(1, 6), st.integers(0, 20),
       st.sampled_from([1.5, 2.5, 4.0]))
def test_infeasible_cases_report_no_element_beyond_its_limits(seed, nh, extra, factor):
    text = _raised(random_model_text(seed, nh, min_items(nh) + extra, n_cases=0), factor)
    r = solve_case(loads_model(text, source=f"raised({seed}, {nh}, {factor}).toml"))
    assert r.status in ("solved", "infeasible"), r.message
    if r.status == "infeasible":
        assert beyond_own_limits(r) == [], r.message


# HP is held by one boiler of 30 t/h; LP by a backpressure turbine first and a spray
# let-down second. The least imbalance runs the let-down (its spray adds mass, so each
# kilogram of LP steam needs less HP steam); the control sequence runs the turbine.
SEQUENCE_PLANT = plant_head("sequence test plant (written for this test)", """
[[header]]
name = "LP"
pressure = "3 bar(g)"
""") + hp_boiler("B1", "30 t/h", 1) + """
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "swing"
priority = 1
max_flow = "100 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
mode = "auto"
priority = 2
[letdown.desuperheater]
spray_supply = "BFW"
approach = "10 K"
[[user]]
name = "U-HP"
header = "HP"
demand = "5 t/h"
[[user]]
name = "U-LP"
header = "LP"
demand = "40 t/h"
"""


def test_shortfall_under_the_control_sequence_is_given_beside_the_least_one():
    r = solve(SEQUENCE_PLANT, expect="infeasible")
    (f,) = [f for f in r.findings if f["side"] in ("short", "long")]
    assert (f["header"], f["side"]) == ("HP", "short")
    # Closed form of the least imbalance: the let-down carries LP, L (1 + r) = 40 t/h,
    # r = (h_HP - h_set) / (h_set - h_w) (desuperheater energy balance, docs/method.md),
    # h_HP = h(40 bar(g), 400 degC), h_set = h(3 bar(g), Tsat + 10 K), h_w = h(50 bar(g),
    # 105 degC), all from CoolProp's IF97 backend; HP lacks 5 + L - 30 t/h.
    h_hp = PropsSI("H", "P", P_HP, "T", degc(400.0), IF97)
    t_set = PropsSI("T", "P", P_LP, "Q", 1, IF97) + 10.0
    h_set = PropsSI("H", "P", P_LP, "T", t_set, IF97)
    h_w = PropsSI("H", "P", barg(50.0), "T", degc(105.0), IF97)
    ratio = (h_hp - h_set) / (h_set - h_w)
    least = t_h(5.0) + t_h(40.0) / (1 + ratio) - t_h(30.0)
    # two IF97 implementations agree to about 1e-6 relative in h (docs/method.md)
    assert f["amount_kg_s"] == pytest.approx(least, rel=1e-5)
    # Under the sequence the turbine carries all of LP: 5 + 40 - 30 = 15 t/h (mass
    # balance alone), and that is what a swing import on HP takes in the same case.
    assert f["amount_in_sequence_kg_s"] == pytest.approx(t_h(15.0), rel=1e-9)
    assert "order of their control sequences" in f["message"]
    assert "15.00 t/h" in f["message"]
    ri = solve(SEQUENCE_PLANT + IMPORT.replace('header = "LP"', 'header = "HP"')
               .replace('steam_temperature = "200 degC"', 'steam_temperature = "400 degC"'))
    assert equip(ri, "IMP")["flow_t_h"] == pytest.approx(15.0, rel=1e-9)
    assert beyond_own_limits(r) == []
