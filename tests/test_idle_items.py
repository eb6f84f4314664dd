"""An item that does not run in a case (tripped, off, closed, out of service) keeps its
row in the equipment and stream tables, at zero flow, with its ``service`` saying why
(docs/results.md); the balance of the running items is unchanged by it."""

from __future__ import annotations

import dataclasses
import math

from helpers import (LETDOWN_L1, boiler, equip, external_water, headers, kg_s, solve,
                     stream, t_h, user)
from steamnet.testing import check_case

NET = (headers() + external_water() + boiler() + user("U-HP", "HP", 'demand = "5 t/h"')
       + """
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "tripped"

[[letdown]]
name = "L2"
inlet = "HP"
outlet = "LP"
mode = "closed"
[letdown.desuperheater]
spray_supply = "FW"
approach = "10 K"

[[boiler]]
name = "B2"
header = "HP"
steam_temperature = "400 degC"
feedwater = "FW"
efficiency = "90 %"
in_service = false
""" + LETDOWN_L1 + user("U-LP", "LP", 'demand = "25 t/h"')
       + user("U-off", "LP", 'demand = "7 t/h"\nin_service = false'))


def test_idle_items_keep_their_rows_at_zero_flow():
    r = solve(NET)
    for item, service in [("T1", "tripped"), ("L2", "closed"), ("B2", "out of service"),
                          ("U-off", "out of service")]:
        row = equip(r, item)
        assert row.flow_t_h == 0.0
        assert row.service == service
    assert equip(r, "T1").power_kw == 0.0 and equip(r, "T1").shaft_power_kw == 0.0
    assert equip(r, "L2").spray_t_h == 0.0
    assert equip(r, "B2").fuel_mw == 0.0
    assert equip(r, "L1").service == "in service"
    # rows in the order of the model file within each table: B2 after B1
    items = list(r.equipment["item"])
    assert items.index("B2") == items.index("B1") + 1
    assert items.index("L2") < items.index("L1")
    # their streams too, at zero flow and without a state
    for name in ("T1 exhaust", "L2 spray", "L2 outlet", "B2 steam", "B2 feedwater"):
        s = stream(r, name)
        assert s.flow_t_h == 0.0 and math.isnan(s.h_kj_kg)
    # the running balance: with the turbine tripped and L2 closed, L1 passes all the LP
    # steam (users by demand, no heat loss, no spray: a plain mass balance)
    assert math.isclose(kg_s(equip(r, "L1").flow_t_h), t_h(25), rel_tol=1e-12)
    assert math.isclose(kg_s(equip(r, "B1").flow_t_h), t_h(30), rel_tol=1e-12)


def test_consistency_check_reads_idle_rows():
    """The public check passes the idle rows, and catches one that carries flow."""
    from helpers import model
    m = model(NET)
    r = solve(NET)
    assert check_case(m, r) == []
    eq = r.equipment.copy()
    eq.loc[eq["item"] == "T1", "flow_t_h"] = 3.0
    bad = dataclasses.replace(r, equipment=eq)
    assert any("T1" in p and "tripped" in p for p in check_case(m, bad))
