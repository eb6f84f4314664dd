"""The marginal cost of steam from the duals of the control philosophy's programme
(steamnet.solver.duals, docs/howto-marginal-cost.md), against references outside it.

(a) The dual against the finite difference of the ordinary balance (an independent
    method: the case balanced again with 1 t/h more drawn), on the small plants of the
    tests and on tests/data/parallel_cost.toml (a swing boiler, a backpressure turbine
    in parallel with a desuperheating let-down). The dual holds the header enthalpies;
    the tolerance is the share of the tonne's energy that the shift of the enthalpies
    between the two balances moves (derived beside the check).
(b) One header with a swing boiler: the dual is the fuel of a kilogram of steam,
    fuel price x (h_steam - h_fw) / efficiency, recomputed from IAPWS-IF97 with the
    iapws package (not steamnet's own implementation).
(c) The range: a swing boiler 0.5 t/h below its maximum gives a range of 0.5 t/h
    (closed form: maximum less steam, the header without losses), and the method falls
    back to the finite difference.
(d) The console, the JSON export and the workbook show the new columns with units.
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from conftest import DATA
from helpers import P_ATM
from steamnet.cli import main
from steamnet.model.load import load_model
from steamnet.solve import solve_case
from steamnet.studies import marginal_steam_cost
from steamnet.studies.common import solve, warm, with_user
from steamnet.studies.marginal import AGREEMENT, DUAL, FINITE_DIFFERENCE

iapws = pytest.importorskip("iapws")

PLANTS = ["one_header.toml", "letdown_cost.toml", "two_header.toml", "three_level.toml",
          "parallel_cost.toml"]
STEP = 1.0                                   # t/h, the study's default


def _hf(p_pa: float) -> float:
    """Saturated liquid enthalpy [kJ/kg] at p, IAPWS-IF97 (iapws)."""
    return iapws.IAPWS97(P=p_pa / 1e6, x=0).h


def _shift_bound(m, base, h: str) -> float:
    """Relative size of what the dual leaves out, from the two balances: the step moves
    each header's mixed enthalpy by dh_k, which changes the energy of the F_k leaving
    it by F_k |dh_k|; against the at least min_k (h_k - h_f,k) a tonne added on any
    header carries above saturated liquid, that is a share
    sum_k F_k |dh_k| / (step x min_k (h_k - h_f,k)) of the tonne's cost. Enthalpies
    from the headers tables, h_f from iapws."""
    r = solve(with_user(m, h, demand=STEP / 3.6, name="probe"), start=warm(base))
    assert r.ok, r.message
    a = base.headers.set_index("header")
    b = r.headers.set_index("header")
    moved = sum(a.at[k, "inflow_t_h"] * abs(b.at[k, "h_kj_kg"] - a.at[k, "h_kj_kg"])
                for k in a.index)
    carried = min(a.at[k, "h_kj_kg"] - _hf(m.headers[k].pressure) for k in a.index)
    return moved / (STEP * carried)


@pytest.mark.parametrize("plant", PLANTS)
def test_dual_against_finite_difference(plant):
    m = load_model(DATA / plant)
    df = marginal_steam_cost(m)
    checked = 0
    for r in df.itertuples():
        if r.status != "solved" or not r.dual_range_t_h >= STEP:
            continue
        base = solve_case(m, None if r.case == "base" else r.case)
        bound = _shift_bound(m.for_case(r.case) if r.case != "base" else m, base,
                             r.header)
        fd = r.finite_difference_per_t
        # the bound, plus the LP's and the balance's own tolerances (1e-9 relative)
        # and a cent per 1000 t for figures near nought
        assert abs(r.dual_marginal_cost_per_t - fd) <= bound * abs(fd) + 1e-9 * abs(fd) \
            + 1e-5, (r.case, r.header, bound)
        # the method's rule
        agrees = abs(r.dual_marginal_cost_per_t - fd) <= max(AGREEMENT * abs(fd), 0.01)
        assert r.method == (DUAL if agrees else FINITE_DIFFERENCE)
        shown = r.dual_marginal_cost_per_t if agrees else fd
        assert r.marginal_cost_per_t == pytest.approx(shown, rel=1e-12)
        parts = r.fuel_part_per_t + r.water_part_per_t + r.power_part_per_t \
            + r.other_part_per_t
        assert parts == pytest.approx(r.marginal_cost_per_t, rel=1e-9, abs=1e-9)
        checked += 1
    assert checked >= 1


def test_parallel_plant_dual_and_difference_where_the_enthalpies_do_not_move():
    """With the turbine swinging, LP is fed by the turbine alone: the step does not move
    its enthalpy and the two methods agree to the balance's tolerance; with the
    let-down swinging beside the turbine at its maximum, LP's mix moves towards the
    let-down's outlet and the dual, which holds it, is dearer (the bound of (a)
    covers the difference)."""
    df = marginal_steam_cost(load_model(DATA / "parallel_cost.toml")).set_index(
        ["case", "header"])
    r = df.loc[("turbine moving", "LP")]
    assert r.dual_marginal_cost_per_t == pytest.approx(r.finite_difference_per_t,
                                                       rel=1e-9)
    assert r.method == DUAL and "turbine 'T1' at its maximum" in r.dual_limit
    r = df.loc[("letdown moving", "LP")]
    assert r.dual_marginal_cost_per_t > r.finite_difference_per_t * (1 + AGREEMENT)
    assert r.method == FINITE_DIFFERENCE and "enthalpies" in r.message


def _one(demand: float, fuel: float = 10.0):
    """tests/data/one_header.toml (one header, a swing boiler B1 of at most 80 t/h on
    external feedwater at 40 bar(g) and 105 degC, steam at 30 bar(g) and 380 degC,
    87 %) without blowdown and water price, the user U1 at ``demand`` t/h."""
    return load_model(DATA / "one_header.toml").with_changes({
        "boiler.B1.blowdown": "0 %", "prices.makeup_water": "0 EUR/t",
        "prices.fuel": f"{fuel} EUR/GJ", "user.U1.demand": f"{demand} t/h"})


def test_one_header_dual_in_closed_form():
    p, t_s = 30e5 + P_ATM, 380 + 273.15
    h_s = iapws.IAPWS97(P=p / 1e6, T=t_s).h                       # kJ/kg
    h_fw = iapws.IAPWS97(P=(40e5 + P_ATM) / 1e6, T=105 + 273.15).h
    expected = 10 / 1e6 * (h_s - h_fw) / 0.87 * 1000             # EUR/GJ -> EUR/kJ; per t
    r = marginal_steam_cost(_one(30)).iloc[0]
    # two IF97 implementations agree to about 1e-6 relative (DEVELOPERS.md)
    assert r.dual_marginal_cost_per_t == pytest.approx(expected, rel=1e-6)
    assert r.method == DUAL and r.marginal_cost_per_t == r.dual_marginal_cost_per_t
    assert r.fuel_part_per_t == pytest.approx(expected, rel=1e-6)
    assert r.dual_range_t_h == pytest.approx(80 - 30, rel=1e-9)   # max less steam


def test_range_half_a_tonne_below_the_maximum_falls_back():
    """B1 at 79.5 t/h of its 80: the dual holds for 0.5 t/h; the 1 t/h step runs into
    the dearer B2 (fuel at 12 EUR/GJ), so the method is the finite difference, whose
    figure mixes the two boilers half and half (closed form, iapws states)."""
    m = _one(79.5).with_item("boiler", {
        "name": "B2", "header": "HP", "steam_temperature": "380 degC",
        "feedwater": "EXT", "efficiency": "87 %", "max_steam": "50 t/h",
        "mode": "swing", "priority": 2, "fuel_price": "12 EUR/GJ"})
    r = marginal_steam_cost(m).iloc[0]
    assert r.dual_range_t_h == pytest.approx(0.5, abs=1e-6)
    assert "boiler 'B1' at its maximum" in r.dual_limit
    assert r.method == FINITE_DIFFERENCE
    assert r.marginal_cost_per_t == r.finite_difference_per_t
    assert "limit is met within the step" in r.message
    assert "B1" in r.limit_in_step
    h_s = iapws.IAPWS97(P=(30e5 + P_ATM) / 1e6, T=380 + 273.15).h
    h_fw = iapws.IAPWS97(P=(40e5 + P_ATM) / 1e6, T=105 + 273.15).h
    per_t = (h_s - h_fw) / 0.87 * 1000 / 1e6                     # GJ per t of steam
    assert r.dual_marginal_cost_per_t == pytest.approx(10 * per_t, rel=1e-6)
    assert r.finite_difference_per_t == pytest.approx((0.5 * 10 + 0.5 * 12) * per_t,
                                                      rel=1e-6)


# ----------------------------------------------------------- (d) what the user sees
def test_console_json_and_workbook_show_the_dual_columns(tmp_path):
    out = tmp_path / "m.json"
    res = CliRunner().invoke(main, ["marginal", str(DATA / "parallel_cost.toml"),
                                    "--json", str(out), "--quiet"])
    assert res.exit_code in (0, 1), res.output
    res = CliRunner().invoke(main, ["marginal", str(DATA / "parallel_cost.toml")])
    head = next(line for line in res.output.splitlines() if "marginal EUR/t" in line)
    for words in ("method", "finite difference EUR/t", "dual EUR/t", "dual holds t/h"):
        assert words in head, words
    assert "finite difference" in res.output.split(head)[1] and \
        " dual " in res.output.split(head)[1]
    rows = json.loads(out.read_text())["studies"]["marginal_cost"]["rows"]
    for key in ("method", "finite_difference_per_t", "dual_marginal_cost_per_t",
                "dual_range_t_h", "dual_limit"):
        assert key in rows[0], key
    from steamnet.workbook.run import Run
    from steamnet.workbook.writer import build_tables
    from steamnet import solve_cases
    m = load_model(DATA / "parallel_cost.toml")
    df = marginal_steam_cost(m)
    study = solve_cases(m)
    tables = build_tables(Run(study, None, None, {"Marginal steam cost": df}))
    t = next(x for x in tables if x.name == "Marginal steam cost")
    headings = [c.heading for c in t.columns]
    for h in ("Marginal cost [EUR/t]", "Method", "Finite difference [EUR/t]",
              "Dual marginal cost [EUR/t]", "Dual range [t/h]", "Dual limit"):
        assert h in headings, (h, headings)
