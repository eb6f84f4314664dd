"""The cheapest dispatch (docs/howto-optimise.md) against references outside the optimiser.

(1) A backpressure turbine in parallel with a let-down into a header of duty users: by
    the header's energy balance the boiler steam is (Q + W) / (h_s - h_f), W the
    turbine's enthalpy drop times its flow, so the cost is linear in the turbine flow
    and the optimum is a vertex: the turbine at its maximum when its power is worth
    more than the fuel of the extra steam, p_el eta_g > p_f (h_s - h_fw) /
    (eta_b (h_s - h_f)), else at its minimum. Every enthalpy is recomputed here from
    CoolProp's IF97 backend; both sides of the break-even price are checked, and the
    optimal cost against the closed form.
(2) A plant of four free flows: the optimum against a brute-force grid over them, each
    grid point balanced by the ordinary solver with its flows fixed (an independent
    method), within the grid's resolution.
(3) The shadow prices (the programme's duals) against a finite difference of the
    optimal cost per added t/h on each header.
(4) The optimum re-solved by the ordinary balance with every moved flow fixed gives the
    same flows and breaks no limit of the model file; an infeasible case says so.
(5) A boiler that may stop: the mixed-integer programme stops it where the cheaper one
    alone can carry the load (closed form: all the steam from the cheaper boiler).
"""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from click.testing import CliRunner

import if97_ref as ref
from helpers import barg, degc, model, plant_head, t_h
from steamnet.cli import main
from steamnet.model.schema import SI
from steamnet.solve import solve_case
from steamnet.studies.optimise import optimise

PRICE_FUEL = 10.0 / 1e9            # 10 EUR/GJ in EUR/J


# -------------------------------------------------------- (1) closed-form break-even
def _plant(name: str, headers: str, body: str, electricity: float | None = None):
    """A test plant: helpers.plant_head (site, fuel at 10 EUR/GJ, HP at 40 bar(g),
    external feedwater BFW at 50 bar(g) and 105 degC), then ``body``; with an
    electricity price [EUR/MWh]."""
    m = model(plant_head(name, headers) + body)
    if electricity is not None:
        m = m.with_changes({"prices.electricity": f"{electricity!r} EUR/MWh"})
    return m


_LP = """
[[header]]
name = "LP"
pressure = "4 bar(g)"
"""

PARALLEL = """
[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
efficiency = "90 %"
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
generator_efficiency = "96 %"
mode = "swing"
priority = 1
min_flow = "5 t/h"
max_flow = "20 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
priority = 2
[[user]]
name = "Heater"
header = "LP"
duty = "30 MW"
"""


def _break_even():
    """The electricity price [EUR/J] at which the turbine's power pays the fuel of the
    steam it takes out of the heat (CoolProp IF97 states)."""
    h_s = ref.h_pt(barg(40), degc(400))
    h_fw = ref.liquid_h(barg(50), degc(105))
    h_f = ref.sat(barg(4)).hf
    return PRICE_FUEL * (h_s - h_fw) / (0.90 * (h_s - h_f)) / 0.96, h_s, h_fw, h_f


def _closed_form_cost(m_t: float, p_el: float) -> float:
    """Cost per hour [EUR/h] with the turbine at ``m_t`` [kg/s]."""
    _, h_s, h_fw, h_f = _break_even()
    s_in = ref.s_pt(barg(40), degc(400))
    dh = 0.70 * (h_s - ref.h_ps(barg(4), s_in))          # isentropic efficiency
    w = m_t * dh
    steam = (30e6 + w) / (h_s - h_f)                      # LP energy balance
    fuel = steam * (h_s - h_fw) / 0.90
    return (fuel * PRICE_FUEL - p_el * 0.96 * w) * 3600


@pytest.mark.parametrize("side", [1.05, 0.95])
def test_turbine_against_letdown_both_sides_of_break_even(side):
    p_star = _break_even()[0]
    p_el = side * p_star
    res = optimise(_plant("Break-even bench", _LP, PARALLEL, p_el * 3.6e9))
    o = res.cases[0]
    assert o.status == "optimal", o.message
    flows = {d["item"]: d["optimal_t_h"] for d in o.dispatch}
    expect = 20.0 if side > 1 else 5.0                     # the vertex of the closed form
    assert flows["T1"] == pytest.approx(expect, abs=1e-4)
    # cost against the closed form; 1e-6 relative: two IF97 implementations and the
    # balance's closure
    assert o.optimal_cost_per_h == pytest.approx(_closed_form_cost(t_h(expect), p_el),
                                                 rel=1e-6)
    assert any(b["item"] == "turbine 'T1'" and b["limit"] == ("max_flow" if side > 1
                                                              else "min_flow")
               for b in o.binding)


# ------------------------------------------------------------- (2) brute-force grid
GRID_HEADERS = """
[[header]]
name = "MP"
pressure = "12 bar(g)"
[[header]]
name = "LP"
pressure = "3 bar(g)"
heat_loss = "150 kW"
"""
GRID_PLANT = """
[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
efficiency = "90 %"
[[boiler]]
name = "B2"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
efficiency = "85 %"
fuel_price = "6 EUR/GJ"
mode = "fixed"
steam = "15 t/h"
min_steam = "10 t/h"
max_steam = "25 t/h"
dispatchable = true
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "72 %"
mode = "fixed_flow"
flow = "10 t/h"
max_flow = "18 t/h"
dispatchable = true
[[turbine]]
name = "T2"
inlet = "HP"
outlet = "MP"
isentropic_efficiency = "65 %"
mode = "fixed_flow"
flow = "4 t/h"
max_flow = "9 t/h"
dispatchable = true
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "MP"
[[letdown]]
name = "L2"
inlet = "MP"
outlet = "LP"
mode = "fixed_flow"
flow = "3 t/h"
max_flow = "6 t/h"
dispatchable = true
[letdown.desuperheater]
spray_supply = "BFW"
approach = "10 K"
[[letdown]]
name = "L3"
inlet = "HP"
outlet = "LP"
[[user]]
name = "MP users"
header = "MP"
demand = "22 t/h"
[[user]]
name = "LP heat"
header = "LP"
duty = "25 MW"
[[user]]
name = "LP users"
header = "LP"
demand = "8 t/h"
"""

#: The free flows of the grid plant and their ranges [t/h] (from GRID_PLANT).
GRID = {("boiler", "B2", "steam"): (10.0, 25.0), ("turbine", "T1", "flow"): (0.0, 18.0),
        ("turbine", "T2", "flow"): (0.0, 9.0), ("letdown", "L2", "flow"): (0.0, 6.0)}
_FIXED_MODE = {"boiler": "fixed", "turbine": "fixed_flow", "letdown": "fixed_flow"}


def test_optimum_against_brute_force_grid():
    m = _plant("Grid bench", GRID_HEADERS, GRID_PLANT, 110.0)
    res = optimise(m)
    o = res.cases[0]
    assert o.status == "optimal", o.message
    steps = 4                                              # 5 points per flow
    best = (np.inf, None)
    costs = []
    for point in itertools.product(*[np.linspace(a, b, steps + 1) for a, b in
                                     GRID.values()]):
        ch = {}
        for (table, item, fld), v in zip(GRID, point):
            ch[f"{table}.{item}.mode"] = _FIXED_MODE[table]
            ch[f"{table}.{item}.{fld}"] = SI(t_h(v))
        r = solve_case(m.with_changes(ch), None)
        if r.status != "solved":
            continue
        c = r.summary["cost_per_h"]
        costs.append(c)
        if c < best[0]:
            best = (c, point)
    assert len(costs) > 100                               # most grid points balance
    # the optimum is no dearer than any balanced grid point (1e-7 relative: the
    # closure of two balances) ...
    assert o.optimal_cost_per_h <= best[0] * (1 + 1e-7)
    # ... and within the grid's resolution of the best one: a step of every free flow
    # changes the cost by at most the largest difference between neighbouring points
    # along one flow, over the grid
    assert best[0] - o.optimal_cost_per_h <= 0.05 * best[0]
    flows = {d["item"]: d["optimal_t_h"] for d in o.dispatch}
    for (table, item, _), v, (a, b) in zip(GRID, best[1], GRID.values()):
        assert abs(flows[item] - v) <= (b - a) / steps + 1e-6, item


# ----------------------------------------------------- (3) duals against differences
def test_shadow_prices_against_finite_difference():
    m = _plant("Grid bench", GRID_HEADERS, GRID_PLANT, 110.0)
    o = optimise(m).cases[0]
    step = 0.2                                             # t/h
    for hdr, dual in o.shadow_per_t.items():
        m2 = m.with_item("user", {"name": "step", "header": hdr,
                                  "demand": f"{step} t/h"})
        o2 = optimise(m2).cases[0]
        assert o2.status == "optimal", o2.message
        fd = (o2.optimal_cost_per_h - o.optimal_cost_per_h) / step   # EUR per t
        # The dual is the slope at fixed enthalpies. The difference also holds how the
        # step moves them: the added steam reaches a header of duty and demand users
        # (LP) at another enthalpy than its mix, which shifts the energy the other
        # users carry (about 1 % here). Headers without duty users: 1e-3.
        rel = 2e-2 if hdr == "LP" else 1e-3
        assert dual == pytest.approx(fd, rel=rel, abs=0.05), hdr


# ------------------------------------------- (4) the optimum re-solved, infeasible
def test_optimum_resolved_with_fixed_flows_and_within_limits():
    m = _plant("Grid bench", GRID_HEADERS, GRID_PLANT, 110.0)
    o = optimise(m).cases[0]
    flows = {d["item"]: d["optimal_t_h"] for d in o.dispatch}
    ch = {}
    for (table, item, fld) in GRID:                       # fixed by hand, not by the
        ch[f"{table}.{item}.mode"] = _FIXED_MODE[table]   # optimiser's own changes
        ch[f"{table}.{item}.{fld}"] = SI(t_h(flows[item]))
    r = solve_case(m.with_changes(ch), None)
    assert r.status == "solved", r.message
    eq = r.equipment.set_index("item")
    for item, f in flows.items():
        assert eq.loc[item, "flow_t_h"] == pytest.approx(f, abs=1e-6), item
    assert r.summary["cost_per_h"] == pytest.approx(o.optimal_cost_per_h, rel=1e-9)
    # the limits of the model file (GRID_PLANT), read here, not from the optimiser
    assert 10.0 - 1e-9 <= flows["B2"] <= 25.0 + 1e-9
    assert 0.0 - 1e-9 <= flows["T1"] <= 18.0 + 1e-9
    assert 0.0 - 1e-9 <= flows["T2"] <= 9.0 + 1e-9
    assert 0.0 - 1e-9 <= flows["L2"] <= 6.0 + 1e-9
    for item in ("B1", "L1", "L3"):                        # the elements that hold
        assert eq.loc[item, "flow_t_h"] >= -1e-9, item    # the headers
    bal = o.optimum.findings
    assert not bal and o.optimum.status == "solved"


def test_infeasible_case_says_so():
    text = GRID_PLANT + """
[[case]]
name = "too much"
[case.changes]
"boiler.B1.max_steam" = "20 t/h"
"""
    res = optimise(_plant("Grid bench", GRID_HEADERS, text, 110.0), ["too much"])
    o = res.cases[0]
    assert o.status == "infeasible"
    assert "header 'HP' short" in o.message
    assert o.optimum is None and not len(res.study.cases)


def test_cli_infeasible_exit_code(tmp_path):
    text = plant_head("Grid bench", GRID_HEADERS) + GRID_PLANT + """
[[case]]
name = "too much"
[case.changes]
"boiler.B1.max_steam" = "20 t/h"
"""
    f = tmp_path / "plant.toml"
    f.write_text(text, encoding="utf-8")
    r = CliRunner().invoke(main, ["optimise", str(f), "--quiet"])
    assert r.exit_code == 1, r.output
    assert "case 'too much': infeasible: no dispatch meets every limit" in r.output
    assert r.output.strip().splitlines()[-1].startswith("verdict: 1 case(s) do not "
                                                        "balance ('too much')")


# ------------------------------------------------------------ (5) a boiler stops
STOP_PLANT = """
[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "380 degC"
feedwater = "BFW"
efficiency = "90 %"
fuel_price = "6 EUR/GJ"
max_steam = "30 t/h"
priority = 2
[[boiler]]
name = "B2"
header = "HP"
steam_temperature = "380 degC"
feedwater = "BFW"
efficiency = "90 %"
min_steam = "10 t/h"
max_steam = "40 t/h"
priority = 1
can_stop = true
[[user]]
name = "U1"
header = "HP"
demand = "25 t/h"
"""


def test_boiler_stops_where_the_cheaper_one_carries_the_load():
    o = optimise(_plant("Stop bench", "", STOP_PLANT)).cases[0]
    assert o.status == "optimal", o.message
    flows = {d["item"]: d["optimal_t_h"] for d in o.dispatch}
    assert flows["B2"] == 0.0 and flows["B1"] == pytest.approx(25.0, abs=1e-6)
    assert o.stopped == ("B2",)
    # closed form: 25 t/h from B1 at 6 EUR/GJ, fuel = m (h_s - h_fw) / efficiency
    h_s = ref.h_pt(barg(40), degc(380))
    h_fw = ref.liquid_h(barg(50), degc(105))
    cost = t_h(25) * (h_s - h_fw) / 0.90 * 6e-9 * 3600
    assert o.optimal_cost_per_h == pytest.approx(cost, rel=1e-6)
    # the control philosophy runs B2 first (priority 1) down to B1's share
    assert o.control_cost_per_h > o.optimal_cost_per_h
    # without can_stop B2 stays at its minimum, 10 t/h
    o2 = optimise(_plant("Stop bench", "", STOP_PLANT.replace(
        "can_stop = true", "dispatchable = true"))).cases[0]
    flows2 = {d["item"]: d["optimal_t_h"] for d in o2.dispatch}
    assert flows2["B2"] == pytest.approx(10.0, abs=1e-6)
    assert flows2["B1"] == pytest.approx(15.0, abs=1e-6)


# ------------------------------------------------------------------ workbook, months
def test_profile_workbook_has_the_dispatch_sheets_and_the_monthly_chart(tmp_path):
    import zipfile

    from openpyxl import load_workbook

    from conftest import DEMO, ROOT
    from steamnet.model.load import load_model
    from steamnet.studies import read_case_table
    from steamnet.workbook.dispatch import write_optimise_workbook
    m = load_model(DEMO)
    cs = read_case_table(ROOT / "cases" / "orlewick_hourly.csv", m, base="winter")
    names = list(cs)
    at = names.index("2025-01-31 23:00")                  # the last hour of January
    res = optimise(m, cs.select(names[at:at + 3]))
    assert list(res.monthly["month"]) == ["2025-01", "2025-02"]
    assert list(res.monthly["hours"]) == [1, 2]
    t = res.table
    assert res.monthly["saving"].sum() == pytest.approx(t["saving_per_h"].sum(), rel=1e-12)
    path = write_optimise_workbook(tmp_path / "best.xlsx", res)
    wb = load_workbook(path, read_only=True)
    for sheet in ("Cheapest dispatch", "Dispatch moves", "Dispatch limits",
                  "Shadow prices", "Saving per month", "Findings"):
        assert sheet in wb.sheetnames, sheet
    # the first sheet answers and the findings come next; the dispatch sheets stand
    # with the studies' sheets
    assert wb.sheetnames[:2] == ["Cover", "Findings"]
    assert wb.sheetnames.index("Saving per month") > wb.sheetnames.index("Findings")
    with zipfile.ZipFile(path) as z:
        charts = [z.read(n).decode() for n in z.namelist()
                  if n.startswith("xl/charts/chart")]
    assert any("Saving per month" in c for c in charts)


def test_optimum_has_the_findings_of_its_balance_written_as_a_case():
    """One verdict per balance: the findings of the demo's summer optimum are those
    `steamnet stations` gives for the same dispatch written as a case of the model
    file (the bark boiler and PRV-ML fixed at the optimum's flows, the rest by the
    control philosophy)."""
    from conftest import DEMO
    from steamnet.evaluate import evaluate
    from steamnet.model.load import load_model
    from steamnet.sweep import solve_cases
    m = load_model(DEMO)
    res = optimise(m, ["summer"])
    flows = {d["item"]: d["optimal_t_h"] for d in res.cases[0].dispatch}
    text = DEMO.read_text(encoding="utf-8") + f"""
[[case]]
name = "summer written"
based_on = "summer"
[case.changes]
"boiler.B1-bark.steam" = "{flows['B1-bark']!r} t/h"
"letdown.PRV-ML.mode" = "fixed_flow"
"letdown.PRV-ML.flow" = "{flows['PRV-ML']!r} t/h"
"""
    from steamnet.model.load import loads_model
    written = loads_model(text, source="written.toml")
    study = solve_cases(written, ["summer written"], station_checks=True)
    got = study.cases[0]
    assert got.summary["cost_per_h"] == pytest.approx(
        res.cases[0].optimal_cost_per_h, rel=1e-6)
    eq = got.equipment.set_index("item")
    for item, f in flows.items():
        assert eq.loc[item, "flow_t_h"] == pytest.approx(f, abs=1e-4), item

    def problems(findings, case):
        f = findings[(findings["case"] == case) & (findings["status"] != "ok")]
        return set(zip(f["item"], f["check"], f["status"]))
    assert problems(res.evaluation.findings, "summer") == \
        problems(evaluate(study).findings, "summer written")


def test_profile_gives_the_same_answers_in_two_workers():
    """The sweep's chunks do not depend on the workers (docs/performance.md), and each
    hour starts only from the hour before within its chunk: the same table, exactly."""
    from conftest import DEMO, ROOT
    from steamnet.model.load import load_model
    from steamnet.studies import read_case_table
    m = load_model(DEMO)
    cs = read_case_table(ROOT / "cases" / "orlewick_hourly.csv", m, base="winter")
    cs = cs.select(list(cs)[:30])                         # two chunks of the sweep
    one = optimise(m, cs).table
    two = optimise(m, cs, workers=2).table
    assert one.equals(two)


def test_letdown_valve_travel_fail_limit_is_a_bound():
    """Below the break-even price the let-down would carry all it can; its valve may
    open only to the fail limit of its travel (95 %, docs/checks/letdown_valve_travel.md):
    with a linear characteristic, Kv = 0.95 Kv_rated. The flow at that Kv is computed
    here with fluids' IEC 60534-2-1 gas sizing (size_control_valve_g) from CoolProp
    IF97 inlet properties; the required Kv is proportional to the flow at a given
    inlet state."""
    from fluids.control_valve import size_control_valve_g
    from CoolProp.CoolProp import PropsSI
    rated = 80.0                                            # m3/h
    valve = f"""
[letdown.valve]
rated_coefficient = "{rated} Kv"
characteristic = "linear"
xt = 0.70
fl = 0.90
"""
    body = PARALLEL.replace('priority = 2\n', 'priority = 2\n' + valve, 1)
    p_star = _break_even()[0]
    o = optimise(_plant("Travel bench", _LP, body, 0.9 * p_star * 3.6e9)).cases[0]
    assert o.status == "optimal", o.message
    p1, p2, t1 = barg(40), barg(4), degc(400)
    f = "IF97::Water"
    cp, cv, rho = (PropsSI(k, "P", p1, "T", t1, f) for k in ("CPMASS", "CVMASS", "D"))
    r_w = 8.314462618 / 0.01801528                          # J/(kg K), CODATA R / M
    z = p1 / (rho * r_w * t1)
    rho_n = 101325.0 / (r_w * 273.15)                       # the standard's reference
    # (the viscosity enters only with diameters, through the Reynolds factor)
    kv_per_kg_s = size_control_valve_g(t1, 18.01528, 2.5e-5, cp / cv, z, p1, p2,
                                       1.0 / rho_n, FL=0.90, xT=0.70)
    m_cap = 0.95 * rated / kv_per_kg_s                      # kg/s
    flows = {d["item"]: d["optimal_t_h"] for d in o.dispatch}
    # 1e-6 relative: two IF97 implementations and the balance's closure
    assert flows["L1"] == pytest.approx(m_cap * 3.6, rel=1e-6)
    assert any(b["item"] == "letdown 'L1'" and b["limit"] == "valve_travel_fail_high"
               for b in o.binding)
    assert flows["T1"] > 5.0                                # above its minimum now


def test_cost_parts_add_up_with_carbon_and_export_above_the_site_demand():
    """The case summary's cost parts add up to its cost when the fuel has a CO2 price
    and the power generated exceeds the site's demand (the rest sold at the export
    price): CO2 part = fuel duty x emission factor x carbon price, power credit = demand
    x electricity price + the excess x export price (docs/results.md, summary)."""
    body = PARALLEL.replace('mode = "swing"\npriority = 1\nmin_flow = "5 t/h"\n'
                            'max_flow = "20 t/h"', 'mode = "fixed_flow"\nflow = "20 t/h"')
    body = body.replace('efficiency = "90 %"\n', 'efficiency = "90 %"\n'
                        'emission_factor = "56 kg/GJ"\n', 1)
    m = _plant("cost parts (written for this test)", _LP, body, electricity=100.0)
    m = m.with_changes({"prices.carbon": "80 EUR/t", "prices.electricity_export":
                        "40 EUR/MWh", "site.power_demand": "0.5 MW"})
    s = solve_case(m).summary
    gen_mw = s["power_generated_mw"]
    assert gen_mw > 0.5                                   # the test reaches the export
    # 56 kg/GJ x 80 EUR/t = 4.48 EUR/GJ of fuel; MW x 3.6 = GJ/h
    assert s["carbon_cost_per_h"] == pytest.approx(s["fuel_mw"] * 3.6 * 56e-3 * 80,
                                                   rel=1e-12)
    assert s["power_credit_per_h"] == pytest.approx(0.5 * 100 + (gen_mw - 0.5) * 40,
                                                    rel=1e-12)
    parts = (s["fuel_cost_per_h"] + s["carbon_cost_per_h"] + s["water_cost_per_h"]
             + s["import_cost_per_h"] + s["power_bought_per_h"]
             - s["export_credit_per_h"] - s["power_credit_per_h"])
    assert s["cost_per_h"] == pytest.approx(parts, rel=1e-12)


def test_trial_balances_and_quick_models_leave_the_answers_as_they_were(monkeypatch):
    """The speed paths of the rounds (docs/performance.md, "Fourth round") against the
    plain method on the demo's first 30 hours: a round's balance solved only in full
    (no trial at looser tolerances) and every fixed-dispatch model made and validated
    by Model.with_changes gives the same table, exactly; and the fast paths were
    taken (rounds rejected on their trial, models made from items validated before)."""
    from conftest import DEMO, ROOT
    from steamnet.model.load import load_model
    from steamnet.studies import optimise as opt
    from steamnet.studies import read_case_table
    m = load_model(DEMO)
    cs = read_case_table(ROOT / "cases" / "orlewick_hourly.csv", m, base="winter")
    cs = cs.select(list(cs)[:30])
    taken = {"rejected on trial": 0, "quick models": 0}
    from steamnet.model.stations import station_data
    resolve, quick = opt._resolve, opt.DispatchModels._with_flows
    model = opt.DispatchModels.model

    def counting_resolve(*a, **k):
        r = resolve(*a, **k)
        taken["rejected on trial"] += r is None
        return r

    def counting_quick(self, base, changes):
        got = quick(self, base, changes)
        if got is not None:
            taken["quick models"] += 1
            full = base.with_changes(changes)
            assert got.items == full.items and got.raw == full.raw
        return got

    def checking_model(self, base, changes, origin):
        got = model(self, base, changes, origin)
        assert got.stations == station_data(got)     # the station data it shares
        return got
    with monkeypatch.context() as mp:
        mp.setattr(opt, "_resolve", counting_resolve)
        mp.setattr(opt.DispatchModels, "_with_flows", counting_quick)
        mp.setattr(opt.DispatchModels, "model", checking_model)
        fast = optimise(m, cs).table
    assert taken["rejected on trial"] > 10 and taken["quick models"] > 10, taken
    with monkeypatch.context() as mp:
        mp.setattr(opt, "_resolve",                         # no trial balance
                   lambda *a, above=None, **k: resolve(*a, **k))
        mp.setattr(opt.DispatchModels, "_with_flows", lambda self, base, ch: None)
        plain = optimise(m, cs).table
    assert fast.equals(plain)
