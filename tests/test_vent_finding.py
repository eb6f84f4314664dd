"""Steam vented is always reported as a finding (docs/checks/steam_vented.md).

Closed form: with no deaerator and no spray, a fixed turbine flow into LP above the LP
users' demand leaves the rest through the vent (LP mass balance).
"""

from __future__ import annotations

import pytest

from helpers import hp_boiler, plant_head
from steamnet import loads_model
from steamnet.evaluate import evaluate
from steamnet.sweep import solve_cases

PLANT = plant_head("vent test plant (written for this test)", """
[[header]]
name = "LP"
pressure = "3 bar(g)"
""") + hp_boiler("B1", "80 t/h") + """
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "fixed_flow"
flow = "30 t/h"
[[user]]
name = "U-LP"
header = "LP"
demand = "22 t/h"
[[vent]]
name = "V-LP"
header = "LP"
"""


def test_vented_steam_is_a_finding_with_its_amount():
    ev = evaluate(solve_cases(loads_model(PLANT), station_checks=True))
    rows = ev.findings[ev.findings["check"] == "steam_vented"]
    assert list(rows["item"]) == ["V-LP"]
    # 30 t/h in, 22 t/h used: 8 t/h vented (mass balance); the row's value is in t/h
    assert rows.iloc[0]["value"] == pytest.approx(8.0, rel=1e-9)
