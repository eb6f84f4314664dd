"""Conservation, limits, determinism and the uniqueness of the split
(docs/method.md, "The balance").

The balances are recomputed here from the published result tables (flows in t/h,
enthalpies in kJ/kg) and from the model as written, with the enthalpies the tables do
not carry (flash steam, make-up, condensate returns, deaerator outlet and vent) taken
from CoolProp's IF97 backend (``if97_ref``). The closure required is 1e-6 relative
(docs/method.md, "The balance"), against the throughput of each balance.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

import if97_ref as ref
from conftest import DATA, DEMO
from helpers import (LETDOWN_L1, boiler, equip, external_water, headers, kg_s,
                     model as model_from_text, solve, user)
from steamnet import properties as props
from steamnet.model.load import load_model
from steamnet.solve import solve_case
from steamnet.sweep import solve_cases
from table_balances import deaerator_balance, header_balances, plant_water

CLOSE = 1e-6          # docs/method.md, "The balance"

NETWORKS = [(DEMO, ["summer", "winter", "winter-TG1-trip"]),
            (DATA / "two_header.toml", ["winter", "summer"]),
            (DATA / "three_level.toml", ["normal", "high", "excess LP"])]
CASES = [(path, case) for path, cases in NETWORKS for case in cases]
IDS = [f"{p.stem}:{c}" for p, c in CASES]


@pytest.fixture(scope="module")
def solved():
    """Every case of every network, solved once for this module (results are frozen)."""
    out = {}
    for path, cases in NETWORKS:
        m = load_model(path)
        study = solve_cases(m, cases)
        for c in cases:
            out[(path, c)] = (m.for_case(c), study.case(c))
    return out


# ------------------------------------------------------------------ the closures
@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_every_header_closes_mass_and_energy(solved, path, case):
    m, r = solved[(path, case)]
    assert r.ok, r.message
    for name, (m_in, m_out, e_in, e_out, e_scale) in header_balances(m, r).items():
        assert abs(m_in - m_out) <= CLOSE * m_in, (name, m_in, m_out)
        # sum of inflow enthalpy flows - heat loss = outflow x header enthalpy
        assert abs(e_in - e_out) <= CLOSE * e_scale, (name, e_in, e_out)


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_deaerator_closes(solved, path, case):
    m, r = solved[(path, case)]
    m_in, m_out, e_in, e_out = deaerator_balance(m, r)
    assert abs(m_in - m_out) <= CLOSE * m_in
    assert abs(e_in - e_out) <= CLOSE * e_in


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_plant_water_balance_closes(solved, path, case):
    m, r = solved[(path, case)]
    w_in, w_out = plant_water(m, r)
    assert w_in > 0
    assert abs(w_in - w_out) <= CLOSE * w_in, (w_in, w_out)
    assert math.isclose(r.water["water_in_kg_s"], w_in, rel_tol=CLOSE)


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_reported_residuals_are_within_the_closure(solved, path, case):
    _, r = solved[(path, case)]
    for key in ("mass_residual_rel", "energy_residual_rel", "water_residual_rel"):
        assert 0.0 <= r.summary[key] <= CLOSE
    hd = r.headers
    assert (hd.mass_residual_t_h.abs() <= CLOSE * hd.inflow_t_h).all()


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_no_negative_flow(solved, path, case):
    _, r = solved[(path, case)]
    for df in (r.equipment, r.headers, r.streams):
        for col in [c for c in df.columns if c.endswith("_t_h") and not
                    c.startswith(("min_", "max_", "mass_residual"))]:
            vals = df[col].dropna()
            assert (vals >= 0.0).all(), (col, vals[vals < 0].tolist())
    assert all(v >= 0 for k, v in r.water.items()
               if k.endswith("_kg_s") and "residual" not in k)


def _check_range(label, value, lo, hi, rel=1e-9):
    if lo is not None:
        assert value >= lo * (1 - rel) - 1e-12, f"{label} {value} below its minimum {lo}"
    if hi is not None:
        assert value <= hi * (1 + rel) + 1e-12, f"{label} {value} above its maximum {hi}"


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_every_limit_respected(solved, path, case):
    m, r = solved[(path, case)]
    eq = r.equipment.set_index("item")
    # table, mode when not running, mode in which the minimum applies, min, max field
    simple = [("boiler", "off", "swing", "min_steam", "max_steam"),
              ("steam_transfer", "off", "swing", "min_flow", "max_flow"),
              ("letdown", "closed", "auto", "min_flow", "max_flow")]
    for table, off, swing, lo, hi in simple:
        for n, it in m.table(table).items():
            if it.in_service and it.mode != off:
                _check_range(n, kg_s(eq.loc[n, "flow_t_h"]),
                             getattr(it, lo) if it.mode == swing else None, getattr(it, hi))
    for n, t in m.table("turbine").items():
        if t.in_service and t.mode != "tripped":
            _check_range(n, kg_s(eq.loc[n, "flow_t_h"]), t.min_flow, t.max_flow)
        else:                                   # a tripped turbine passes nothing
            assert eq.loc[n, "flow_t_h"] == 0.0 and eq.loc[n, "service"] != "in service"
    for n, t in m.table("extraction_turbine").items():
        if not t.in_service or t.mode == "tripped":
            continue
        _check_range(n, kg_s(eq.loc[n, "flow_t_h"]), t.min_flow, t.max_flow)
        _check_range(f"{n} exhaust", kg_s(eq.loc[n, "exhaust_t_h"]), t.min_exhaust_flow,
                     t.max_exhaust_flow)
        for e in t.extractions:
            _check_range(f"{n}/{e.header}", kg_s(eq.loc[f"{n}/{e.header}", "flow_t_h"]),
                         e.min_flow if e.mode == "swing" else None, e.max_flow)
    for n, v in m.table("vent").items():
        if v.in_service:
            _check_range(n, kg_s(eq.loc[n, "flow_t_h"]), 0.0, v.max_flow)


@pytest.mark.parametrize("path,case", CASES, ids=IDS)
def test_vent_only_for_excess(solved, path, case):
    """Steam is vented only when every supplier that the header's controller moves is
    at its minimum (docs/model-file.md, "How the balance closes")."""
    m, r = solved[(path, case)]
    eq = r.equipment.set_index("item")
    for n, v in m.table("vent").items():
        if eq.loc[n, "flow_t_h"] <= 0:
            continue
        for s_name, s in m.table("letdown").items():
            if s.outlet == v.header and s.mode == "auto" and s.in_service:
                assert kg_s(eq.loc[s_name, "flow_t_h"]) <= s.min_flow + 1e-12
        for t_name, t in m.table("turbine").items():
            if t.outlet == v.header and t.mode == "swing" and t.in_service:
                assert kg_s(eq.loc[t_name, "flow_t_h"]) <= t.min_flow + 1e-12
        for x_name, t in m.table("steam_transfer").items():
            if t.header == v.header and t.mode == "swing" and t.direction == "export":
                assert kg_s(eq.loc[x_name, "flow_t_h"]) >= t.max_flow * (1 - 1e-12)


def test_excess_case_vents_what_the_export_cannot_take(solved):
    m, r = solved[(DATA / "three_level.toml", "excess LP")]
    assert equip(r, "LP vent").flow_t_h > 0
    assert equip(r, "Neighbour export").limit == "at maximum"


# --------------------------------------------------------------- determinism
def _frames(study):
    return [(c.case, c.headers, c.equipment, c.streams, c.water) for c in study.cases]


@pytest.mark.parametrize("path", [DEMO, DATA / "three_level.toml"], ids=lambda p: p.stem)
def test_results_identical_run_to_run(path):
    m = load_model(path)
    props.clear_cache()                  # first run evaluates every state afresh
    a = _frames(solve_cases(m))
    b = _frames(solve_cases(load_model(path)))    # second run: cached states
    assert len(a) == len(b)
    for (ca, ha, ea, sa, wa), (cb, hb, eb, sb, wb) in zip(a, b):
        assert ca == cb
        pd.testing.assert_frame_equal(ha, hb, check_exact=True)
        pd.testing.assert_frame_equal(ea, eb, check_exact=True)
        pd.testing.assert_frame_equal(sa, sb, check_exact=True)
        assert wa == wb


def test_warm_start_equals_cold_start():
    m = load_model(DEMO)
    warm = solve_cases(m, warm_start=True)
    cold = solve_cases(m, warm_start=False)
    for cw, cc in zip(warm.cases, cold.cases):
        assert cw.status == cc.status == "solved"
        for a, b in ((cw.headers, cc.headers), (cw.equipment, cc.equipment)):
            # residual columns are round-off (about 1e-11 kW) and are not compared
            num = [c for c in a.columns if pd.api.types.is_float_dtype(a[c])
                   and "residual" not in c]
            np.testing.assert_allclose(a[num].to_numpy(float), b[num].to_numpy(float),
                                       rtol=1e-9, atol=1e-12)


def test_warm_start_from_a_different_case_converges_to_the_same_answer():
    """Start the trip case from the summer case's enthalpies and modes."""
    m = load_model(DEMO)
    summer = solve_case(m, "summer")
    start = {"h": summer.solution.h, "modes": summer.solution.modes}
    warm = solve_case(m, "winter-TG1-trip", start=start)
    cold = solve_case(m, "winter-TG1-trip")
    np.testing.assert_allclose(warm.equipment.flow_t_h, cold.equipment.flow_t_h,
                               rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(warm.headers.h_kj_kg, cold.headers.h_kj_kg, rtol=1e-9)


# ------------------------------------------------------------- the unique split
def _station(name: str, placing: str, approach: str) -> str:
    return f"""
[[letdown]]
name = "{name}"
inlet = "HP"
outlet = "LP"
{placing}
[letdown.desuperheater]
spray_supply = "FW"
approach = "{approach}"
"""


def parallel(a: str, b: str, limit: str) -> str:
    """Two let-down stations A and B in parallel from HP to LP."""
    return (headers(hp="30 bar(g)", lp="5 bar(g)", lp_loss="50 kW", site="Parallel")
            + external_water(p="40 bar(g)") + boiler(t="380 degC")
            + _station("A", a, "15 K") + _station("B", b, "25 K")
            + user("U", "LP", 'demand = "25 t/h"') + f"""
[[case]]
name = "low"
changes = {{ "user.U.demand" = "8 t/h" }}
[[case]]
name = "at the limit"
changes = {{ "user.U.demand" = "{limit}" }}
[[case]]
name = "high"
changes = {{ "user.U.demand" = "40 t/h" }}
""")


def test_parallel_stations_split_by_shares():
    text = parallel(a='priority = 1\nshare = "60 %"',
                           b='priority = 1\nshare = "40 %"', limit="20 t/h")
    for case in ("low", "high"):
        r = solve(text, case)
        a, b = kg_s(equip(r, "A").flow_t_h), kg_s(equip(r, "B").flow_t_h)
        assert a > 0 and b > 0
        assert math.isclose(a / (a + b), 0.6, rel_tol=1e-12)
        assert math.isclose(b / (a + b), 0.4, rel_tol=1e-12)


def test_parallel_stations_in_sequence():
    """Priority 1 then 2: the second takes over only when the first is at max_flow.

    A at its maximum steam flow delivers a_max (1 + r_A) to LP, with the spray ratio
    r_A = (h_HP - h_set) / (h_set - h_w) from CoolProp; the cases straddle that demand."""
    a_max = 10.0                                   # t/h
    h_hp = ref.h_pt(30e5 + 101325, 380 + 273.15)
    p_lp = 5e5 + 101325
    h_set = ref.h_pt(p_lp, ref.sat(p_lp).t + 15.0)
    h_w = ref.liquid_h(40e5 + 101325, 105 + 273.15)
    r_a = (h_hp - h_set) / (h_set - h_w)
    limit = a_max * (1 + r_a)
    below, above = 0.999 * limit, 1.001 * limit
    text = parallel(a=f'priority = 1\nmax_flow = "{a_max} t/h"', b="priority = 2",
                           limit=f"{above!r} t/h")
    m = model_from_text(text)
    study = solve_cases(m)
    just_below = solve_case(m.with_changes({"user.U.demand": f"{below!r} t/h"}))
    low, mid, high = (study.case(c) for c in ("low", "at the limit", "high"))
    for r in (low, just_below, mid, high):
        assert r.ok, r.message
    # below its maximum the first station carries everything
    for r in (low, just_below):
        assert equip(r, "B").flow_t_h == 0.0
        assert equip(r, "A").limit == ""
    assert math.isclose(equip(just_below, "A").flow_t_h, 0.999 * a_max, rel_tol=1e-9)
    # at its maximum, the second one takes the rest
    for r in (mid, high):
        assert math.isclose(equip(r, "A").flow_t_h, a_max, rel_tol=1e-12)
        assert equip(r, "A").limit == "at maximum"
        assert equip(r, "B").flow_t_h > 0
    assert math.isclose(equip(mid, "B").steam_out_t_h, above - limit, rel_tol=1e-6)
    # what A cannot pass, B passes: the LP header still closes
    for r in (low, just_below, mid, high):
        total_out = equip(r, "A").steam_out_t_h + equip(r, "B").steam_out_t_h
        assert math.isclose(total_out, equip(r, "U").flow_t_h, rel_tol=1e-12)


def test_swing_boilers_share_load_by_set_fractions():
    text = (headers(site="Two boilers") + external_water()
            + boiler(extra='share = "70 %"') + """
[[boiler]]
name = "B2"
header = "HP"
steam_temperature = "390 degC"
feedwater = "FW"
efficiency = "86 %"
share = "30 %"
""" + user("U", "HP", 'demand = "30 t/h"') + LETDOWN_L1
            + user("U-LP", "LP", 'demand = "7 t/h"'))
    r = solve(text)
    b1, b2 = equip(r, "B1").flow_t_h, equip(r, "B2").flow_t_h
    assert math.isclose(b1 + b2, 37.0, rel_tol=1e-12)
    assert math.isclose(b1, 0.7 * 37.0, rel_tol=1e-12)
    assert math.isclose(b2, 0.3 * 37.0, rel_tol=1e-12)

