"""Trip screening (docs/howto-trips.md).

The trip of a backpressure turbine is checked against a hand balance of the tripped
plant recomputed here from raw properties of CoolProp's IF97 backend (IAPWS-IF97), with
the closed-form equipment balances of docs/method.md, "Equipment equations": desuperheater spray
ratio, boiler feedwater = steam / (1 - blowdown), deaerator mass and energy balances.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from conftest import DEMO
from steamnet.model.load import load_model, loads_model
from steamnet.solve import solve_case
from steamnet.studies import trip_screening

CP = pytest.importorskip("CoolProp.CoolProp")
C0 = 273.15
P_ATM = 101325.0
T_H = 3.6

NET = """
format_version = 1
[site]
name = "Trip test"
makeup_temperature = "15 degC"
[prices]
fuel = "8 EUR/GJ"
[[header]]
name = "HP"
pressure = "40 bar(g)"
[[header]]
name = "LP"
pressure = "4 bar(g)"
[[water_supply]]
name = "BFW"
source = "deaerator"
pressure = "50 bar(g)"
[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
blowdown = "2 %"
efficiency = "90 %"
max_steam = "120 t/h"
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "fixed_flow"
flow = "25 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
max_flow = "60 t/h"
[letdown.desuperheater]
spray_supply = "BFW"
approach = "15 K"
max_spray = "8 t/h"
rated_max_steam = "55 t/h"
[[user]]
name = "U1"
header = "LP"
demand = "40 t/h"
condensate_return = "50 %"
condensate_temperature = "90 degC"
[[user]]
name = "U2"
header = "HP"
demand = "5 t/h"
[[vent]]
name = "LPV"
header = "LP"
[[deaerator]]
name = "DA"
header = "LP"
pressure = "0.3 bar(g)"
"""


def H(**kw):
    """Specific enthalpy [J/kg] from CoolProp's IF97 backend."""
    (k1, v1), (k2, v2) = kw.items()
    return CP.PropsSI("H", k1, v1, k2, v2, "IF97::Water")


def hand_trip_balance() -> dict:
    """The plant with T1 tripped, balanced by hand (flows in kg/s)."""
    p_hp, p_lp, p_da = 40e5 + P_ATM, 4e5 + P_ATM, 0.3e5 + P_ATM
    bd = 0.02
    u1, u2 = 40 / T_H, 5 / T_H
    ret = 0.5 * u1
    h_b = H(P=p_hp, T=400 + C0)                       # HP header = boiler outlet
    t_set = CP.PropsSI("T", "P", p_lp, "Q", 1, "IF97::Water") + 15.0
    h_set = H(P=p_lp, T=t_set)                        # desuperheater outlet
    h_fw = H(P=p_da, Q=0)                              # saturated water leaving the DA
    h_w = h_fw                                         # spray and feedwater, no pump data
    h_mk = H(P=p_da, T=15 + C0)
    h_ret = H(P=p_da, T=90 + C0)
    r = (h_b - h_set) / (h_set - h_w)                  # spray per kg of steam
    h_lp = h_set                                       # LP is fed by L1 alone
    # unknowns: boiler steam B, let-down steam L, DA steam D, make-up M
    # HP:  B - L = u2
    # LP:  L (1 + r) - D = u1
    # DA mass:   D + M - B/(1-bd) - L r = -ret
    # DA energy: D h_lp + M h_mk - (B/(1-bd) + L r) h_fw = -ret h_ret
    a = np.array([[1, -1, 0, 0],
                  [0, 1 + r, -1, 0],
                  [-1 / (1 - bd), -r, 1, 1],
                  [-h_fw / (1 - bd), -r * h_fw, h_lp, h_mk]])
    b = np.array([u2, u1, -ret, -ret * h_ret])
    B, L, D, M = np.linalg.solve(a, b)
    return {"boiler": B, "letdown": L, "spray": L * r, "da": D, "makeup": M}


def test_backpressure_trip_matches_a_hand_balance():
    model = loads_model(NET, source="trip-test.toml")
    df = trip_screening(model)
    row = df[(df["trip"] == "T1") & (df["station"] == "L1")].iloc[0]
    hand = hand_trip_balance()
    assert row["status"] == "solved"
    assert row["steam_t_h"] == pytest.approx(hand["letdown"] * T_H, rel=1e-5)
    assert row["spray_t_h"] == pytest.approx(hand["spray"] * T_H, rel=1e-5)
    # the let-down rises by the turbine's former flow, corrected for the changed
    # deaerator steam and spray (LP mass balance before and after the trip)
    before = solve_case(model)
    d0 = before.summary["da_steam_t_h"]
    rise = row["trip_flow_t_h"] + (hand["da"] * T_H - d0) - row["spray_change_t_h"]
    assert row["steam_change_t_h"] == pytest.approx(rise, abs=1e-3)
    assert row["trip_flow_t_h"] == pytest.approx(25.0, rel=1e-9)
    # use of the limits, against the values in the model text
    assert row["steam_use_percent"] == pytest.approx(100 * row["steam_t_h"] / 60)
    assert row["spray_use_percent"] == pytest.approx(100 * row["spray_t_h"] / 8)
    assert row["rated_steam_use_percent"] == pytest.approx(100 * row["steam_t_h"] / 55)
    assert row["worst_use_percent"] == max(row["steam_use_percent"],
                                           row["spray_use_percent"],
                                           row["rated_steam_use_percent"])


def test_trip_that_leaves_the_plant_short_is_a_finding_not_a_crash():
    # with a smaller let-down the tripped turbine's steam cannot reach LP
    text = NET.replace('max_flow = "60 t/h"', 'max_flow = "30 t/h"')
    df = trip_screening(loads_model(text))
    f = df[(df["trip"] == "T1") & (df["row"] == "finding")]
    assert len(f) == 1
    f = f.iloc[0]
    assert f["status"] == "infeasible" and f["header"] == "LP" and f["side"] == "short"
    assert f["amount_t_h"] > 0 and "short of steam" in f["message"]
    assert df.index[df["row"] == "finding"].max() < df.index[df["row"] == "station"].min()


@pytest.fixture(scope="module")
def demo_trips():
    return trip_screening(load_model(DEMO), boilers=True)


def test_demo_trip_of_tg1_equals_the_model_files_trip_case(demo_trips):
    """Independent path: the demo file's own case 'winter-TG1-trip' is TG1 tripped in
    winter; the screening's trip of TG1 in winter must give the same station flows."""
    ref = solve_case(load_model(DEMO), "winter-TG1-trip").equipment
    got = demo_trips[(demo_trips["case"] == "winter") & (demo_trips["trip"] == "TG1")]
    for st in ("PRV-HM", "PRV-HL", "PRV-ML", "PRV-LL"):
        r = ref[ref["item"] == st].iloc[0]
        g = got[got["station"] == st].iloc[0]
        assert g["steam_t_h"] == pytest.approx(r["flow_t_h"], rel=1e-9, abs=1e-9)
        assert g["spray_t_h"] == pytest.approx(r["spray_t_h"], rel=1e-9, abs=1e-9)


def test_demo_screening_covers_every_running_unit_and_sorts_worst_first(demo_trips):
    m = load_model(DEMO)
    for case in ("summer", "winter"):
        trips = set(demo_trips[demo_trips["case"] == case]["trip"])
        # every turbine and boiler of the demo runs in summer and winter
        assert trips == set(m.table("turbine")) | set(m.table("extraction_turbine")) \
            | set(m.table("boiler"))
    st = demo_trips[(demo_trips["row"] == "station") & (demo_trips["status"] == "solved")]
    worst = st["worst_use_percent"].to_numpy()
    assert np.all(np.diff(worst) <= 1e-12)
    # the swing boiler off leaves nothing to hold HP: a finding naming HP
    f = demo_trips[(demo_trips["trip"] == "B2-gas") & (demo_trips["row"] == "finding")]
    assert len(f) == 3 and set(f["header"]) == {"HP"}
    assert not math.isnan(demo_trips["steam_change_t_h"].dropna().iloc[0])


def test_trip_that_leaves_a_header_unreachable_is_an_invalid_finding():
    """Without the let-down, the turbine is the only way steam reaches LP: its trip
    leaves LP's users with no path from a boiler, which validation rejects; the trip
    is reported as an 'invalid' finding that cannot balance, not an error of the
    study (common practice, no source: every user needs a steam path)."""
    start = NET.index("[[letdown]]")
    net = NET[:start] + NET[NET.index("[[user]]"):]
    net = net.replace('demand = "40 t/h"', 'demand = "15 t/h"')  # T1's 25 t/h suffice
    m = loads_model(net, source="no-letdown.toml")
    assert solve_case(m).ok
    df = trip_screening(m)
    assert len(df) == 1
    row = df.iloc[0]
    assert (row["trip"], row["status"], row["row"], row["verdict"]) == \
        ("T1", "invalid", "finding", "cannot balance")
    assert "no path from any boiler" in row["message"]
    assert row["message"].startswith("after the trip: ")


def _counting_pools(monkeypatch):
    """Count the process pools the sweeps start (so a test knows workers ran)."""
    from steamnet import sweep
    started = []

    class Counting(sweep.ProcessPoolExecutor):
        def __init__(self, *a, **k):
            started.append(k.get("max_workers"))
            super().__init__(*a, **k)
    monkeypatch.setattr(sweep, "ProcessPoolExecutor", Counting)
    return started


def test_screening_in_two_workers_equals_serial(tmp_path, monkeypatch):
    """The screening runs as two sweeps (the hours, then the trips unit by unit); over
    48 hours (two chunks of hours, six of trips) two processes give the same table,
    cell for cell, as one."""
    import pandas as pd
    from conftest import ROOT
    from steamnet.studies import read_case_table
    lines = (ROOT / "cases" / "orlewick_hourly.csv").read_text().splitlines()[:49]
    p = tmp_path / "two-days.csv"
    p.write_text("\n".join(lines) + "\n")
    m = load_model(DEMO)
    cs = read_case_table(p, m, base="winter")
    serial = trip_screening(m, cs)
    started = _counting_pools(monkeypatch)
    par = trip_screening(m, cs, workers=2)
    assert started == [2, 2]                   # both sweeps ran in worker processes
    assert len(serial) == 48 * 3 * 4           # every hour, 3 trips, 4 stations
    pd.testing.assert_frame_equal(par, serial, check_exact=True)


def test_screening_solves_a_case_set_on_its_own_model():
    """A case set made on a changed model is screened on that model (as its cases
    are built), whatever model is passed beside it."""
    import pandas as pd
    from steamnet.studies import model_case_set
    m = load_model(DEMO)
    # the PM1 dryers down to 5 t/h (no case of the file changes them)
    m2 = m.with_changes({"user.PM1 dryer section.demand": "5 t/h"})
    cs = model_case_set(m2, ["winter"])
    got = trip_screening(m, cs)
    pd.testing.assert_frame_equal(got, trip_screening(m2, cs), check_exact=True)
    on_m = trip_screening(m, model_case_set(m, ["winter"]))
    # the dryers draw 27 t/h less (32 t/h in cases/orlewick.toml, 5 t/h here), so the
    # let-downs that feed LP pass less in the trips; 10 t/h is a margin well inside it
    assert got["steam_t_h"].sum() < on_m["steam_t_h"].sum() - 10.0     # [t/h]


def test_gain_spread_across_normal_and_tripped_operation_is_checked():
    """A station that runs at a small flow normally and takes the whole trip: the
    screening checks the control gain spread across its untripped and tripped points,
    as ``stations`` does on the same balances written as two cases.

    The gain to spray flow is (h_w - h_out) / (cp_out (m_s + m_w)) (docs/checks/, gain
    spread); with the same header states on both sides only the flows differ, so the
    spread is the post-trip steam over the normal steam (closed form: the spray ratio r
    is the same at both points). The post-trip flow comes from the hand balance above;
    warn above 3:1 (common practice, no source)."""
    from steamnet.evaluate import evaluate
    from steamnet.studies.trips import screen_trips
    from steamnet.sweep import solve_cases
    net = NET.replace('flow = "25 t/h"', 'flow = "40 t/h"')
    screening = screen_trips(loads_model(net))
    f = screening.findings
    spread = f[(f["check"] == "gain_spread_spray") & (f["item"] == "L1")]
    assert len(spread) == 1, f[["trip", "item", "check", "status"]]
    row = spread.iloc[0]
    assert row["status"] == "warn" and row["trip"] == "every case and trip"
    normal = solve_case(loads_model(net))
    eq = normal.equipment.set_index("item")
    l_normal = float(eq.loc["L1", "flow_t_h"]) / T_H
    l_trip = hand_trip_balance()["letdown"]
    # the hand balance holds to about 1e-6 relative against IF97 in steamnet (above)
    assert row["value"] == pytest.approx(l_trip / l_normal, rel=1e-5)
    # the same two balances as cases of a model file: stations gives the same verdict
    as_cases = net + """
[[case]]
name = "normal"
[[case]]
name = "T1 tripped"
[case.changes]
"turbine.T1.mode" = "tripped"
"""
    m = loads_model(as_cases)
    ev = evaluate(solve_cases(m, station_checks=True))
    g = ev.findings[(ev.findings["check"] == "gain_spread_spray")
                    & (ev.findings["item"] == "L1")].iloc[0]
    assert g["status"] == row["status"]
    assert g["value"] == pytest.approx(row["value"], rel=1e-12)
