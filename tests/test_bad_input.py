"""Bad input: every class gives one clear message naming the file, the
item and the field, and ``steamnet check FILE`` exits 2 with no traceback. Infeasible
cases are reported with the header, the amount and the binding limits while
the other cases still solve, and ``steamnet solve`` exits 1.

Each bad model is a valid base model with one change, so the message can only come from
that change.
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from click.testing import CliRunner

from helpers import (LETDOWN_L1, boiler, deaerator, external_water, headers, turbine,
                     user)
from steamnet.cli import main
from steamnet.model.load import loads_model
from steamnet.sweep import solve_cases

BASE = (headers(site="Bad input bench") + """
[[water_supply]]
name = "BFW"
pressure = "50 bar(g)"
""" + boiler(feedwater="BFW", eff="88 %", extra='max_steam = "80 t/h"')
        + turbine('mode = "fixed_flow"\nflow = "10 t/h"') + LETDOWN_L1 + """
[letdown.desuperheater]
spray_supply = "BFW"
approach = "10 K"
""" + user("U1", "LP", 'demand = "20 t/h"') + """
[[vent]]
name = "V1"
header = "LP"
""" + deaerator(vent="0 %") + """
[[case]]
name = "winter"
changes = { "user.U1.demand" = "30 t/h" }
""")


L1 = 'name = "L1"\ninlet = "HP"\noutlet = "LP"'


def _sub(old: str, new: str, count: int = 1):
    def f(text: str) -> str:
        assert text.count(old) >= count, f"{old!r} not in the base model"
        return text.replace(old, new, count)
    return f


def _append(extra: str):
    return lambda text: text + extra


def _case(changes: str):
    return _sub('changes = { "user.U1.demand" = "30 t/h" }', f"changes = {{ {changes} }}")


# (id, change to BASE, item named, field named or None, words of the message)
BAD = [
    ("unknown key", _sub('demand = "20 t/h"', 'demand = "20 t/h"\ndemnad = "5 t/h"'),
     "user 'U1'", "demnad", "unknown key"),
    ("unknown key in site", _sub('makeup_temperature', 'makeup_temprature'),
     "site", "makeup_temprature", "unknown key"),
    ("unknown equipment table", _append('[[compressor]]\nname = "K1"\n'),
     "compressor", None, "unknown table"),
    ("unknown equipment kind", _sub('efficiency = "88 %"', 'efficiency = "88 %"\n'
                                    'kind = "nuclear"'),
     "boiler 'B1'", "kind", "'nuclear'"),
    ("unknown mode", _sub('mode = "fixed_flow"', 'mode = "idle"'),
     "turbine 'T1'", "mode", "'idle'"),
    ("missing unit", _sub('pressure = "40 bar(g)"', 'pressure = "40"'),
     "header 'HP'", "pressure", "needs a unit"),
    ("bare number", _sub('demand = "20 t/h"', 'demand = 20'),
     "user 'U1'", "demand", "bare number"),
    ("wrong unit", _sub('demand = "20 t/h"', 'demand = "20 bar(g)"'),
     "user 'U1'", "demand", "not a unit of mass flow"),
    ("unknown unit", _sub('steam_temperature = "400 degC"', 'steam_temperature = "400 C"'),
     "boiler 'B1'", "steam_temperature", "degC"),
    ("gauge or absolute not said", _sub('pressure = "4 bar(g)"', 'pressure = "4 bar"'),
     "header 'LP'", "pressure", "gauge or absolute"),
    ("missing required field", _sub('steam_temperature = "400 degC"\n', ''),
     "boiler 'B1'", "steam_temperature", "required field is missing"),
    ("reference to a missing header", _sub('header = "HP"', 'header = "XP"'),
     "boiler 'B1'", "header", "header 'XP' does not exist"),
    ("reference to a missing water supply", _sub('spray_supply = "BFW"',
                                                 'spray_supply = "SPRAY"'),
     "letdown 'L1'", "desuperheater.spray_supply", "'SPRAY' does not exist"),
    ("no element closes a header",
     lambda t: _sub('[[vent]]\nname = "V1"\nheader = "LP"\n', "")(
         _sub(L1, L1 + '\nmode = "fixed_flow"\nflow = "12 t/h"')(t)),
     "header 'LP'", None, "no element can close this header's balance"),
    ("two swing elements at equal priority without shares",
     _sub('mode = "fixed_flow"\nflow = "10 t/h"', 'mode = "swing"'),
     "header 'LP'", "priority", "same priority 1"),
    ("two vents at equal priority", _append('[[vent]]\nname = "V2"\nheader = "LP"\n'),
     "header 'LP'", "priority", "take excess steam at the same priority 1"),
    ("setpoint below saturation", _sub('approach = "10 K"',
                                       'outlet_temperature = "140 degC"'),
     "letdown 'L1'", "desuperheater.outlet_temperature", "at or below saturation"),
    ("setpoint at saturation", _sub('approach = "10 K"', 'approach = "0 K"'),
     "letdown 'L1'", "desuperheater.approach", "above saturation"),
    ("efficiency above 1", _sub('isentropic_efficiency = "70 %"',
                                'isentropic_efficiency = "105 %"'),
     "turbine 'T1'", "isentropic_efficiency", "(0, 1]"),
    ("efficiency zero", _sub('efficiency = "88 %"', 'efficiency = "0 %"'),
     "boiler 'B1'", "efficiency", "(0, 1]"),
    ("negative flow", _sub('demand = "20 t/h"', 'demand = "-5 t/h"'),
     "user 'U1'", "demand", "must not be negative (written '-5 t/h')"),
    ("minimum above maximum", _sub('max_steam = "80 t/h"',
                                   'max_steam = "80 t/h"\nmin_steam = "90 t/h"'),
     "boiler 'B1'", "min_steam", "above max_steam"),
    ("let-down outlet not below inlet", _sub(L1, L1.replace('outlet = "LP"', 'outlet = "HP"')),
     "letdown 'L1'", "outlet", "not below the inlet"),
    ("turbine outlet not below inlet",
     _sub('inlet = "HP"\noutlet = "LP"\nisentropic', 'inlet = "LP"\noutlet = "HP"\nisentropic'),
     "turbine 'T1'", "outlet", "not below the inlet"),
    ("steam above IF97's temperature range", _sub('steam_temperature = "400 degC"',
                                                  'steam_temperature = "2500 degC"'),
     "boiler 'B1'", "steam_temperature", "outside IAPWS-IF97"),
    ("header above the critical pressure", _sub('pressure = "40 bar(g)"',
                                                'pressure = "250 bar(g)"'),
     "header 'HP'", "pressure", "critical pressure"),
    ("boiler steam not superheated", _sub('steam_temperature = "400 degC"',
                                          'steam_temperature = "240 degC"'),
     "boiler 'B1'", "steam_temperature", "must be superheated"),
    ("case change naming a missing item", _case('"user.Nobody.demand" = "5 t/h"'),
     "case 'winter'", "user.Nobody.demand", "no user named 'Nobody'"),
    ("case change naming a missing field", _case('"user.U1.demnad" = "5 t/h"'),
     "case 'winter': user 'U1'", "demnad", "unknown key"),
    ("case change with a bad value", _case('"user.U1.demand" = "5 bar(g)"'),
     "case 'winter': user 'U1'", "demand", "not a unit of mass flow"),
    ("case change not of the form table.item.field", _case('"U1.demand" = "5 t/h"'),
     "case 'winter'", "U1.demand", "table.item.field"),
    ("case based on a missing case", _sub('name = "winter"',
                                          'name = "winter"\nbased_on = "autumn"'),
     "case 'winter'", "based_on", "no such case"),
    ("duplicate name", _sub('name = "V1"', 'name = "U1"'),
     "vent 'U1'", "name", "used by user 'U1' too"),
    ("missing format version", _sub("format_version = 1\n", ""),
     "format_version", None, "missing format_version"),
    ("carbon price without an emission factor",
     _sub('makeup_temperature = "10 degC"\n',
          'makeup_temperature = "10 degC"\n[prices]\ncarbon = "80 EUR/t"\n'),
     "boiler 'B1'", "emission_factor", "there is no default"),
    ("export cap without the site's power demand",
     _sub('makeup_temperature = "10 degC"\n',
          'makeup_temperature = "10 degC"\nmax_power_export = "2 MW"\n'),
     "site", "max_power_export", "needs the site's power_demand"),
    ("export price without the site's power demand",
     _sub('makeup_temperature = "10 degC"\n',
          'makeup_temperature = "10 degC"\n[prices]\nelectricity_export = "60 EUR/MWh"\n'),
     "prices", "electricity_export", "needs the site's power_demand"),
    ("a boiler that may stop without its maximum",
     _sub('max_steam = "80 t/h"', 'can_stop = true'),
     "boiler 'B1'", "can_stop", "needs its max_steam"),
]


def _check(tmp_path, text: str, name: str = "bad model.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["check", str(path)])
    return path, result


def test_base_model_is_valid(tmp_path):
    path, result = _check(tmp_path, BASE, "good.toml")
    assert result.exit_code == 0, result.output
    assert "valid" in result.output


@pytest.mark.parametrize("change,item,field,words", [b[1:] for b in BAD],
                         ids=[b[0] for b in BAD])
def test_bad_input_names_file_item_and_field(tmp_path, change, item, field, words):
    path, result = _check(tmp_path, change(BASE))
    assert result.exit_code == 2, result.output
    assert isinstance(result.exception, SystemExit)       # no uncaught exception
    assert "Traceback" not in result.output
    where = f"{path}: {item}" + (f": field '{field}'" if field else "")
    lines = [ln for ln in result.stderr.splitlines() if ln.startswith(f"error: {where}")]
    assert lines, f"no line naming {where!r} in:\n{result.stderr}"
    assert any(words in ln for ln in lines), result.stderr


def test_the_api_raises_the_same_errors():
    """Loading from text names the source given, and collects every problem."""
    from steamnet.errors import ModelErrors
    text = BASE.replace('demand = "20 t/h"', 'demand = "-5 t/h"').replace(
        'isentropic_efficiency = "70 %"', 'isentropic_efficiency = "170 %"')
    with pytest.raises(ModelErrors) as info:
        loads_model(text, source="plant.toml")
    got = {(e.file, e.item, e.field) for e in info.value.errors}
    assert ("plant.toml", "user 'U1'", "demand") in got
    assert ("plant.toml", "turbine 'T1'", "isentropic_efficiency") in got


def _run_cli(*args):
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *args],
                          capture_output=True, text=True)


@pytest.mark.parametrize("content,words", [
    (None, "file not found"),
    ("", "missing format_version"),
    ("format_version = 1\n[site\nname = 'x'\n", "not valid TOML"),
    (b"\xff\xfe not text", "not UTF-8"),
], ids=["missing file", "empty file", "bad TOML", "not text"])
def test_unreadable_files_exit_2_without_traceback(tmp_path, content, words):
    path = tmp_path / "plant.toml"
    if isinstance(content, bytes):
        path.write_bytes(content)
    elif content is not None:
        path.write_text(content)
    r = _run_cli("check", str(path))
    assert r.returncode == 2
    assert "Traceback" not in r.stderr
    assert r.stderr.startswith(f"error: {path}: ")
    assert words in r.stderr


# ---------------------------------------------------------------- infeasible cases
FEAS = (headers(lp_loss="50 kW", site="Feasibility bench") + external_water()
        + boiler(eff="88 %", extra='max_steam = "50 t/h"')
        + turbine('mode = "fixed_flow"\nflow = "10 t/h"') + LETDOWN_L1
        + user("U1", "LP", 'demand = "20 t/h"') + """
[[vent]]
name = "V1"
header = "LP"
max_flow = "5 t/h"
[[case]]
name = "normal"
[[case]]
name = "short"
changes = { "user.U1.demand" = "60 t/h" }
[[case]]
name = "long"
changes = { "turbine.T1.flow" = "40 t/h" }
[[case]]
name = "also normal"
changes = { "user.U1.demand" = "30 t/h" }
""")
# Without a let-down spray or a deaerator every flow here follows from the demands:
# short: HP needs U1 = 60 t/h against the boiler's 50 t/h -> short by 10 t/h;
# long: T1 brings 40 t/h to LP, which takes U1 = 20 t/h and vents 5 t/h -> 15 t/h over.


def test_infeasible_cases_are_reported_and_the_others_solve():
    study = solve_cases(loads_model(FEAS, source="feasibility.toml"))
    st = {c.case: c for c in study.cases}
    assert st["normal"].ok and st["also normal"].ok
    short, long_ = st["short"], st["long"]
    assert short.status == long_.status == "infeasible"
    (f,) = short.findings
    assert (f["header"], f["side"]) == ("HP", "short")
    assert abs(f["amount_kg_s"] * 3.6 - 10.0) < 1e-9
    assert "header 'HP' is short of steam by 10.00 t/h" in short.message
    assert "boiler 'B1' at its maximum 50.00 t/h" in short.message
    (f,) = long_.findings
    assert (f["header"], f["side"]) == ("LP", "long")
    assert abs(f["amount_kg_s"] * 3.6 - 15.0) < 1e-9
    assert "header 'LP' has 15.00 t/h of steam in excess" in long_.message
    assert "letdown 'L1' at its minimum 0.00 t/h" in long_.message
    assert "vent 'V1' at its capacity 5.00 t/h" in long_.message


def test_solve_exits_1_on_infeasible_and_prints_every_case(tmp_path):
    path = tmp_path / "feasibility.toml"
    path.write_text(FEAS)
    r = _run_cli("solve", str(path))
    assert r.returncode == 1, r.stderr
    assert "Traceback" not in r.stderr + r.stdout
    out = r.stdout
    # the words of docs/results.md, as the workbook and the JSON export write them
    for c, mark in (("normal", "solved"), ("short", "infeasible"), ("long", "infeasible"),
                    ("also normal", "solved")):
        assert f"case '{c}': {mark}" in out
    assert "short of steam by 10.00 t/h" in out
    assert "15.00 t/h of steam in excess" in out


def test_header_with_nothing_connected_says_so(tmp_path):
    """An orphan header gets its own message, not the degrees-of-freedom one."""
    from conftest import DEMO
    text = DEMO.read_text().replace("# ------------------------------------------------------------------- water supplies",
                                    '[[header]]\nname = "Spare"\npressure = "8 bar(g)"\n\n# ---', 1)
    p = tmp_path / "orphan.toml"
    p.write_text(text)
    import steamnet
    from steamnet.errors import ModelErrors
    import pytest as _pytest
    with _pytest.raises(ModelErrors) as ei:
        steamnet.load_model(p)
    assert "header 'Spare'" in str(ei.value) and "nothing is connected" in str(ei.value)


def test_optimise_refuses_an_export_price_above_the_electricity_price(tmp_path):
    text = _sub('makeup_temperature = "10 degC"\n',
                'makeup_temperature = "10 degC"\npower_demand = "5 MW"\n[prices]\n'
                'electricity = "80 EUR/MWh"\nelectricity_export = "90 EUR/MWh"\n')(BASE)
    path = tmp_path / "dear export.toml"
    path.write_text(text, encoding="utf-8")
    result = CliRunner().invoke(main, ["optimise", str(path)])
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    assert f"error: {path}: prices: field 'electricity_export'" in result.stderr
