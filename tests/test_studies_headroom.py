"""Headroom per header (docs/howto-headroom.md).

Checks: (1) networks whose headroom follows from a header mass balance in closed form;
(2) on the demo plant, for every header of every case, the reported headroom added as a
user keeps the case feasible and within every limit, and 0.2 t/h more makes it
infeasible or brings the named limit to its value. The limits are read here from the
model's items and the balance's equipment table, not from the study's own code.
"""

from __future__ import annotations

import math

import pytest

import if97_ref as ref
from conftest import DATA, DEMO
from steamnet.model.load import load_model, loads_model
from steamnet.model.schema import SI
from steamnet.solve import solve_case
from steamnet.studies import header_headroom

T_H = 3.6
TOL = 1e-6          # t/h

ONE_HEADER = (DATA / "one_header.toml").read_text()

VENTING = ONE_HEADER + """
[[header]]
name = "LP"
pressure = "4 bar(g)"
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "fixed_flow"
flow = "20 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
[[user]]
name = "U3"
header = "LP"
demand = "15 t/h"
[[vent]]
name = "LPV"
header = "LP"
"""


def test_swing_boiler_maximum_closed_form():
    # HP mass balance: boiler steam = users, so the boiler (80 t/h) meets its maximum
    # after 80 - 30 = 50 t/h more; the headroom is the last 0.1 t/h step below that
    df = header_headroom(loads_model(ONE_HEADER))
    r = df.iloc[0]
    assert 49.9 - 1e-9 <= r["first_limit_t_h"] < 50.0
    # nothing else can supply HP: the case stops balancing there too
    # (at exactly 50 t/h the boiler sits at its maximum and the case still balances)
    assert 49.9 - 1e-9 <= r["headroom_t_h"] <= 50.0 + 1e-9 and r["ends_with"] == "balance"
    assert (r["binding_table"], r["binding_item"], r["binding_kind"]) == \
        ("boiler", "B1", "max_steam")
    assert r["binding_limit_t_h"] == pytest.approx(80.0)


def test_vent_closing_closed_form():
    # LP mass balance: T1 brings 20 t/h, U3 takes 15 t/h, so 5 t/h is vented until
    # 5 t/h more is drawn; then the vent closes
    df = header_headroom(loads_model(VENTING), headers=["LP"])
    r = df.iloc[0]
    assert 4.9 - 1e-9 <= r["first_limit_t_h"] < 5.0
    # a vent closing is a change of mode, not a limit of the plant: the headline goes on
    assert r["headroom_t_h"] > r["first_limit_t_h"]
    assert (r["binding_item"], r["binding_kind"]) == ("LPV", "closes")


def test_cap_and_accuracy_are_respected():
    df = header_headroom(loads_model(ONE_HEADER), max_added="10 t/h", accuracy="0.5 t/h")
    r = df.iloc[0]
    assert r["capped"] and r["headroom_t_h"] == pytest.approx(10.0)
    assert r["binding_kind"] == "none below the cap"


# ------------------------------------------------------------------ demo plant
def limit_values(model, result) -> list[tuple[str, float, float, bool]]:
    """(name, value, limit, upper) of every limit of the demo's moving elements, read
    from the items and the equipment table (t/h)."""
    eq = result.equipment
    eq = eq[eq["service"] == "in service"].set_index("item")   # idle items move nothing
    out = []

    def add(name, value, limit, upper=True):
        if limit is not None and math.isfinite(limit):
            out.append((name, float(value), limit * T_H, upper))
    for n, b in model.table("boiler").items():
        if b.mode == "swing" and n in eq.index:
            add(f"boiler.{n}.max_steam", eq.at[n, "flow_t_h"], b.max_steam)
    for n, t in model.table("turbine").items():
        if t.mode in ("swing", "fixed_power", "pump") and n in eq.index:
            add(f"turbine.{n}.max_flow", eq.at[n, "flow_t_h"], t.max_flow)
            if t.min_flow > 0:
                add(f"turbine.{n}.min_flow", eq.at[n, "flow_t_h"], t.min_flow, False)
    for n, t in model.table("extraction_turbine").items():
        if n not in eq.index:
            continue
        add(f"extraction_turbine.{n}.max_flow", eq.at[n, "flow_t_h"], t.max_flow)
        add(f"extraction_turbine.{n}.max_exhaust_flow", eq.at[n, "exhaust_t_h"],
            t.max_exhaust_flow)
        add(f"extraction_turbine.{n}.min_exhaust_flow", eq.at[n, "exhaust_t_h"],
            t.min_exhaust_flow, False)
        for e in t.extractions:
            add(f"extraction.{n}/{e.header}.max_flow", eq.at[f"{n}/{e.header}", "flow_t_h"],
                e.max_flow)
    for n, s in model.table("letdown").items():
        if n not in eq.index:
            continue
        add(f"letdown.{n}.max_flow", eq.at[n, "flow_t_h"], s.max_flow)
        d = s.desuperheater
        if d is not None:
            add(f"letdown.{n}.max_spray", eq.at[n, "spray_t_h"], d.max_spray)
            add(f"letdown.{n}.rated_max_steam", eq.at[n, "flow_t_h"], d.rated_max_steam)
    for n, v in model.table("vent").items():
        add(f"vent.{n}.max_flow", eq.at[n, "flow_t_h"], v.max_flow)
    return out


def with_added(model_case, header, t_h):
    m = model_case.with_item("user", {"name": "test added", "header": header,
                                      "demand": SI(t_h / T_H)})
    return m, solve_case(m)


@pytest.fixture(scope="module")
def demo():
    model = load_model(DEMO)
    return model, header_headroom(model)


def test_demo_headroom_rows(demo):
    model, df = demo
    assert len(df) == 3 * 4
    assert list(df["headroom_t_h"]) == sorted(df["headroom_t_h"])
    assert not df["capped"].any()


def test_demo_reported_headroom_keeps_every_limit_and_0_2_more_binds(demo):
    model, df = demo
    for r in df.itertuples():
        mc = model.for_case(r.case)
        base = solve_case(mc)
        base_lim = {n: (v, lim, up) for n, v, lim, up in limit_values(mc, base)}
        m_at, at = with_added(mc, r.header, r.first_limit_t_h)
        assert at.status == "solved", (r.case, r.header, at.message)
        for name, v, lim, up in limit_values(m_at, at):
            bv, _, _ = base_lim[name]
            already = (bv >= lim - TOL) if up else (bv <= lim + TOL)
            if not already:       # a limit with margin in the case keeps some margin
                assert (v < lim) if up else (v > lim), (r.case, r.header, name, v, lim)
        m_more, more = with_added(mc, r.header, r.first_limit_t_h + 0.2)
        if more.status == "infeasible":
            continue
        named = f"{r.binding_table}.{r.binding_item}.{r.binding_kind}"
        if r.binding_kind == "closes":
            v = more.equipment.set_index("item").at[r.binding_item, "flow_t_h"]
            assert v <= TOL, (r.case, r.header, named, v)
            continue
        lims = {n: (v, lim, up) for n, v, lim, up in limit_values(m_more, more)}
        v, lim, up = lims[named]
        assert (v >= lim - TOL) if up else (v <= lim + TOL), (r.case, r.header, named, v)


def test_balance_headroom_is_where_the_balance_fails():
    """balance_headroom_t_h: the case still balances with that much added, and fails
    with one accuracy step more (the sequences have run out)."""
    import steamnet as _sn
    from steamnet.studies.headroom import header_headroom as _hh
    from steamnet.studies.common import with_user as _wu
    from conftest import DEMO as _DEMO
    m = _sn.load_model(_DEMO)
    df = _hh(m, ["winter"], headers=["LLP"])
    row = df.iloc[0]
    assert row["balance_headroom_t_h"] >= row["headroom_t_h"]
    mw = m.for_case("winter")
    ok = _sn.solve_case(_wu(mw, "LLP", demand=row["balance_headroom_t_h"] / 3.6,
                            name="probe", condensate_return=0.0,
                            condensate_temperature=None, origin="test"))
    bad = _sn.solve_case(_wu(mw, "LLP", demand=(row["balance_headroom_t_h"] + 0.2) / 3.6,
                             name="probe", condensate_return=0.0,
                             condensate_temperature=None, origin="test"))
    assert ok.status == "solved" and bad.status == "infeasible"


# ----------------------------------------------- the headline: balance and checks
THREE_HEADER = """
format_version = 1
[site]
name = "Headroom closed-form plant (test data)"
makeup_temperature = "15 degC"
[[header]]
name = "HP"
pressure = "40 bar(g)"
[[header]]
name = "MP"
pressure = "10 bar(g)"
[[header]]
name = "LP"
pressure = "3 bar(g)"
[[water_supply]]
name = "BFW"
source = "external"
pressure = "60 bar(g)"
temperature = "105 degC"
[[boiler]]
name = "B"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
blowdown = "0 %"
efficiency = "90 %"
max_steam = "60 t/h"
[[letdown]]
name = "HM"
inlet = "HP"
outlet = "MP"
[letdown.desuperheater]
spray_supply = "BFW"
outlet_temperature = "200 degC"
[[letdown]]
name = "ML"
inlet = "MP"
outlet = "LP"
[[user]]
name = "U-HP"
header = "HP"
demand = "10 t/h"
[[user]]
name = "U-MP"
header = "MP"
demand = "15 t/h"
[[user]]
name = "U-LP"
header = "LP"
demand = "5 t/h"
"""


def test_headline_headroom_closed_form_from_spray_ratio_and_boiler_maximum():
    """Demand added on LP passes MP -> LP by throttling and HP -> MP through the
    desuperheater, which adds spray R = (h_B - h_set) / (h_set - h_w) per unit steam; so
    boiler = U_HP + (U_MP + U_LP + d) / (1 + R) reaches its 60 t/h maximum at
    d = (60 - 10)(1 + R) - 20 [t/h] (closed form; enthalpies from CoolProp's IF97
    backend). No check of this plant can fail before that (no valve or nozzle data: not
    assessed), so the headline is that figure, within the 0.1 t/h asked for."""
    bar = 1e5
    p_atm = 101325.0
    h_b = ref.h_pt(40 * bar + p_atm, 400 + 273.15)
    h_set = ref.h_pt(10 * bar + p_atm, 200 + 273.15)
    h_w = ref.liquid_h(60 * bar + p_atm, 105 + 273.15)
    r = (h_b - h_set) / (h_set - h_w)
    expected = (60 - 10) * (1 + r) - 20
    df = header_headroom(loads_model(THREE_HEADER), headers=["LP"], accuracy="0.1 t/h")
    row = df.iloc[0]
    assert expected - 0.1 - 1e-6 <= row["headroom_t_h"] <= expected + 1e-6
    assert row["ends_with"] == "balance" and row["ends_item"] == "HP"
    assert row["balance_headroom_t_h"] == pytest.approx(row["headroom_t_h"], abs=0.1)
