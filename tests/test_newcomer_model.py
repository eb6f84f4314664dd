"""A newcomer's first model: three headers written as the model
file reference describes them, checked with ``steamnet check``, solved with
``steamnet solve``, and its balances recomputed from the result tables."""

from __future__ import annotations

import json

from click.testing import CliRunner

from steamnet.cli import main
from steamnet.model.load import load_model
from steamnet.sweep import solve_cases
from table_balances import deaerator_balance, header_balances, plant_water

NEWCOMER = """\
# My first steam balance: one boiler, three headers.
format_version = 1

[site]
name = "Practice plant"
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
heat_loss = "100 kW"

[[water_supply]]
name = "BFW"
source = "deaerator"
pressure = "50 bar(g)"

[[boiler]]
name = "Boiler 1"
header = "HP"
steam_temperature = "400 degC"
feedwater = "BFW"
efficiency = "88 %"
max_steam = "60 t/h"

[[turbine]]
name = "Feed pump drive"
inlet = "HP"
outlet = "LP"
drive = "mechanical"
isentropic_efficiency = "55 %"
mode = "fixed_power"
power = "300 kW"

[[letdown]]
name = "HP to MP"
inlet = "HP"
outlet = "MP"
[letdown.desuperheater]
spray_supply = "BFW"
approach = "20 K"

[[letdown]]
name = "MP to LP"
inlet = "MP"
outlet = "LP"
[letdown.desuperheater]
spray_supply = "BFW"
approach = "10 K"

[[user]]
name = "Reactor"
header = "MP"
demand = "12 t/h"

[[user]]
name = "Dryers"
header = "LP"
demand = "20 t/h"
condensate_return = "80 %"
condensate_temperature = "90 degC"

[[vent]]
name = "LP vent"
header = "LP"

[[deaerator]]
name = "DA"
header = "LP"
pressure = "0.3 bar(g)"

[[case]]
name = "summer"

[[case]]
name = "winter"
changes = { "user.Dryers.demand" = "28 t/h", "site.makeup_temperature" = "5 degC" }
"""


def test_newcomer_first_model(tmp_path):
    path = tmp_path / "practice.toml"
    path.write_text(NEWCOMER)
    runner = CliRunner()
    check = runner.invoke(main, ["check", str(path)])
    assert check.exit_code == 0, check.output
    assert "valid (3 headers" in check.output
    out = tmp_path / "practice.json"
    solved = runner.invoke(main, ["solve", str(path), "--json", str(out)])
    assert solved.exit_code == 0, solved.output
    assert "case 'summer': solved" in solved.output and \
        "case 'winter': solved" in solved.output
    doc = json.loads(out.read_text())
    assert [c["status"] for c in doc["cases"]] == ["solved", "solved"]

    m = load_model(path)
    study = solve_cases(m)
    for r in study.cases:
        mc = m.for_case(r.case)
        for name, (m_in, m_out, e_in, e_out, scale) in header_balances(mc, r).items():
            assert abs(m_in - m_out) <= 1e-6 * m_in, name
            assert abs(e_in - e_out) <= 1e-6 * scale, name
        d_in, d_out, de_in, de_out = deaerator_balance(mc, r)
        assert abs(d_in - d_out) <= 1e-6 * d_in and abs(de_in - de_out) <= 1e-6 * de_in
        w_in, w_out = plant_water(mc, r)
        assert abs(w_in - w_out) <= 1e-6 * w_in
        # the boiler, not the vent, holds the plant: nothing is vented
        assert r.summary["vented_t_h"] == 0.0
    # more demand in winter: more steam raised and more spray on the stations
    summer, winter = study.case("summer").summary, study.case("winter").summary
    assert winter["steam_raised_t_h"] > summer["steam_raised_t_h"]
    assert winter["spray_t_h"] > summer["spray_t_h"]
