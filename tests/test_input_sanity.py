"""Input that breaks physics is refused, or reported where it is possible but probably
not meant: each refusal names the file, the item and the field and ``steamnet check``
exits 2; each warning is a ``warn`` finding of every balance and a line of
``steamnet check`` (docs/checks/index.md, "Checks of the input").

The references: IAPWS-IF97 states from CoolProp's IF97 backend (saturation
temperatures, isentropic enthalpy drops); the rest are the definitions of
docs/model-file.md and docs/method.md.
"""

from __future__ import annotations

import pytest
from CoolProp.CoolProp import PropsSI
from click.testing import CliRunner

from helpers import barg, degc, t_h
from steamnet.cli import main
from steamnet.evaluate import evaluate
from steamnet.model.load import loads_model
from steamnet.sweep import solve_cases
from test_bad_input import BASE, _append, _case, _check, _sub

IF97 = "IF97::Water"

#: A condensing extraction turbine on the bench of test_bad_input (invented data).
CONDENSING = """
[[extraction_turbine]]
name = "TC1"
inlet = "HP"
section_efficiencies = ["75 %", "75 %"]
condenser_pressure = "0.12 bar(a)"
mode = "fixed_flow"
flow = "8 t/h"
condensate_return = "100 %"
condensate_temperature = "45 degC"

[[extraction_turbine.extractions]]
header = "LP"
mode = "fixed"
flow = "2 t/h"
"""

#: An external spray water supply (invented data).
SPRAY = """
[[water_supply]]
name = "SPRAY"
source = "external"
pressure = "{p}"
temperature = "105 degC"
"""


def _spray_from(p: str):
    return lambda text: _sub('spray_supply = "BFW"', 'spray_supply = "SPRAY"')(
        text + SPRAY.format(p=p))


def _willans(no_load: str, slope: str, extra: str = 'max_flow = "110 t/h"'):
    return _sub('isentropic_efficiency = "70 %"',
                f'willans_no_load = "{no_load}"\nwillans_slope = "{slope}"\n{extra}')


def _dh_is(p_in, t_in, p_out):
    """Isentropic enthalpy drop [J/kg] from CoolProp IF97: inlet h and s from (p, T);
    a wet end point by the lever rule between CoolProp's saturated liquid and vapour at
    p_out (its (p, s) flash in the two-phase region is some 1e-5 off the lever rule)."""
    h = PropsSI("H", "P", p_in, "T", t_in, IF97)
    s = PropsSI("S", "P", p_in, "T", t_in, IF97)
    sf, sg = (PropsSI("S", "P", p_out, "Q", q, IF97) for q in (0, 1))
    if s >= sg:
        return h - PropsSI("H", "P", p_out, "S", s, IF97)
    hf, hg = (PropsSI("H", "P", p_out, "Q", q, IF97) for q in (0, 1))
    return h - (hf + (s - sf) / (sg - sf) * (hg - hf))


# (id, change to BASE, item named, field named, words of the message)
REFUSED = [
    ("Willans line implying an efficiency above 1", _willans("2 t/h", "3 t/MWh"),
     "turbine 'T1'", "willans_slope", "implies an isentropic efficiency"),
    ("Willans line without max_flow, above 1 at high flow",
     _sub('isentropic_efficiency = "70 %"\nmode = "fixed_flow"\nflow = "10 t/h"',
          'willans_no_load = "2 t/h"\nwillans_slope = "3 t/MWh"\nmode = "swing"\n'
          'priority = 2'),
     "turbine 'T1'", "willans_slope", "at high flow"),
    ("user condensate hotter than saturation at its header",
     _sub('demand = "20 t/h"', 'demand = "20 t/h"\ncondensate_return = "50 %"\n'
          'condensate_temperature = "250 degC"'),
     "user 'U1'", "condensate_temperature", "above saturation at its header 'LP'"),
    ("condenser condensate hotter than the condenser's saturation",
     lambda t: t + CONDENSING.replace('"45 degC"', '"60 degC"'),
     "extraction turbine 'TC1'", "condensate_temperature",
     "above saturation at the condenser"),
    ("spray supply below the outlet header", _spray_from("3 bar(g)"),
     "letdown 'L1'", "desuperheater.spray_supply", "no spray can flow"),
    ("spray supply at the outlet header pressure", _spray_from("4 bar(g)"),
     "letdown 'L1'", "desuperheater.spray_supply", "is not above the outlet header"),
    ("approach written as a Celsius temperature",
     _sub('approach = "10 K"', 'approach = "160 degC"'),
     "letdown 'L1'", "desuperheater.approach", "write K or delta_degC"),
    ("case renaming an item", _case('"user.U1.name" = "U9"'),
     "case 'winter'", "user.U1.name", "cannot rename an item"),
    ("pump efficiency on an external supply",
     lambda t: _spray_from("10 bar(g)")(t).replace(
         'temperature = "105 degC"', 'temperature = "105 degC"\npump_efficiency = "70 %"'),
     "water supply 'SPRAY'", "pump_efficiency", "no pump is modelled"),
]


@pytest.mark.parametrize("change,item,field,words", [b[1:] for b in REFUSED],
                         ids=[b[0] for b in REFUSED])
def test_physics_breaking_input_is_refused(tmp_path, change, item, field, words):
    """Each input names its file, item and field, and check exits 2, no traceback."""
    path, result = _check(tmp_path, change(BASE))
    assert result.exit_code == 2, result.output
    assert isinstance(result.exception, SystemExit)
    where = f"{path}: {item}: field '{field}'"
    lines = [ln for ln in result.stderr.splitlines() if ln.startswith(f"error: {where}")]
    assert lines, f"no line naming {where!r} in:\n{result.stderr}"
    assert any(words in ln for ln in lines), result.stderr


def test_a_willans_line_is_refused_exactly_when_it_beats_an_ideal_expansion(tmp_path):
    """From the bench's boiler steam (40 bar(g), 400 degC, the hottest it has) to 4
    bar(g), CoolProp's isentropic drop gives the ideal steam rate 1 / dh_is: a line of
    slope 0.95 times it (and next to no no-load flow) implies more than 1 at 110 t/h
    and is refused; one of 1.3 times it passes."""
    dh = _dh_is(barg(40), degc(400), barg(4))
    ideal = 3.6e9 / dh / 1e3                          # t/MWh of an ideal expansion
    m, m0, k = t_h(110), t_h(0.01), 0.95 * ideal * 1e3 / 3.6e9     # k in kg/J
    assert (m - m0) / (k * m * dh) > 1
    path, result = _check(tmp_path, _willans("0.01 t/h", f"{0.95 * ideal:.6f} t/MWh")(BASE))
    assert result.exit_code == 2 and "willans_slope" in result.stderr, result.output
    path, result = _check(tmp_path, _willans("1 t/h", f"{1.3 * ideal:.6f} t/MWh")(BASE))
    assert result.exit_code == 0, result.output


def test_a_willans_efficiency_above_0_9_is_flagged_in_the_balance():
    """The implied efficiency of a running Willans turbine is a finding: 0.95 here, a
    slope chosen from CoolProp's isentropic drop of the inlet steam (the boiler's, the
    HP header has no heat loss); warn above 0.9 (common practice, no source)."""
    dh = _dh_is(barg(40), degc(400), barg(4))
    m, m0, eta = t_h(10), t_h(0.2), 0.95
    k = (m - m0) / (eta * m * dh)                      # kg/J
    text = _willans("0.2 t/h", f"{k * 3.6e9 / 1e3:.12g} t/MWh", "")(BASE)
    model = loads_model(text, source="willans.toml")
    study = solve_cases(model, ["winter"])
    assert study.all_solved
    f = evaluate(study).findings
    row = f[(f["item"] == "T1") & (f["check"] == "turbine_efficiency")]
    assert len(row) == 1
    assert row["status"].iloc[0] == "warn" and row["limit"].iloc[0] == 0.9
    # two IF97 implementations agree to about 1e-6 relative (DEVELOPERS.md)
    assert row["value"].iloc[0] == pytest.approx(eta, rel=1e-6)


# ------------------------------------------------------------------------ warnings
WARNED = [
    ("condenser at atmospheric pressure",
     lambda t: t + CONDENSING.replace('"0.12 bar(a)"', '"1.2 bar(a)"').replace(
         '"45 degC"', '"95 degC"'),
     "extraction turbine 'TC1'", "condenser_pressure", "condenser_pressure",
     "not below the atmospheric"),
    ("spray supply margin below the station's minimum", _spray_from("6 bar(g)"),
     "letdown 'L1'", "desuperheater.spray_supply", "spray_supply_margin",
     "below the station's minimum spray pressure difference 3.5 bar"),
]


@pytest.mark.parametrize("change,item,field,check,words", [w[1:] for w in WARNED],
                         ids=[w[0] for w in WARNED])
def test_doubtful_input_is_a_warning(tmp_path, change, item, field, check, words):
    """check passes (exit 0) and prints a warning naming file, item and field; every
    balance lists it as a warn finding."""
    path, result = _check(tmp_path, change(BASE))
    assert result.exit_code == 0, result.output
    where = f"warning: {path}: {item}: field '{field}'"
    lines = [ln for ln in result.output.splitlines() if ln.startswith(where)]
    assert lines and words in lines[0], result.output
    study = solve_cases(loads_model(change(BASE), source="w.toml"))
    f = evaluate(study).findings
    rows = f[f["check"] == check]
    assert len(rows) == 1 and rows["status"].iloc[0] == "warn"
    assert rows["case"].iloc[0] == "all cases"


def test_the_spray_margin_warning_follows_the_station_limit(tmp_path):
    """The margin is judged against the station's own spray_pressure_margin_fail: a
    2 bar margin warns against the default 3.5 bar and passes against 1.5 bar."""
    text = _spray_from("6 bar(g)")(BASE)
    path, result = _check(tmp_path, text)
    assert "spray pressure difference 3.5 bar" in result.output, result.output
    lowered = text + '\n[station_limits]\nspray_pressure_margin_fail = "1.5 bar"\n'
    path, result = _check(tmp_path, lowered)
    assert result.exit_code == 0, result.output
    assert "warning:" not in result.output


# ------------------------------------------------------------ command-line options
def _run(*args):
    return CliRunner().invoke(main, list(args))


@pytest.mark.parametrize("temperature,words", [
    ("-300 degC", "not a temperature of liquid water"),
    ("190 degC", "above saturation at its header 'LP'"),   # Tsat(5.5 bar(a)) 155.5 degC
])
def test_add_user_options_are_validated_as_in_a_model_file(tmp_path, temperature, words):
    path = tmp_path / "bench.toml"
    path.write_text(BASE, encoding="utf-8")
    r = _run("add-user", str(path), "--header", "LP", "--demand", "5 t/h", "--return",
             "50 %", "--return-temperature", temperature, "--quiet")
    assert r.exit_code == 2, r.output
    assert isinstance(r.exception, SystemExit)
    line = f"error: option --return-temperature: {temperature}"
    assert any(ln.startswith(line) and words in ln for ln in r.stderr.splitlines()), \
        r.stderr


def test_report_new_user_options_are_validated_before_anything_is_written(tmp_path):
    path = tmp_path / "bench.toml"
    path.write_text(BASE, encoding="utf-8")
    out = tmp_path / "book.xlsx"
    r = _run("report", str(path), "--out", str(out), "--studies", "none",
             "--new-user", "LP=5 t/h", "--new-user-return", "50 %",
             "--new-user-return-temperature", "-300 degC", "--quiet")
    assert r.exit_code == 2, r.output
    assert "error: option --new-user-return-temperature: -300 degC" in r.stderr
    assert not out.exists()


def test_checking_an_added_user_leaves_the_model_as_it_was():
    """The options of an added user are checked on a copy of the model: the model (and
    so every balance of the report) does not gain the user."""
    from steamnet.model.schema import SI
    model = loads_model(BASE, source="bench.toml")
    users = dict(model.table("user"))
    added = model.with_item("user", {"name": "extra", "header": "LP",
                                     "demand": SI(t_h(5))})
    assert set(added.table("user")) == set(users) | {"extra"}
    assert model.table("user") == users


def test_fixed_flow_at_its_maximum_within_rounding_is_accepted():
    """A fixed flow written as its maximum converted back and forth (20 t/h in kg/s and
    again in t/h: 20.000000000000004) is at the maximum, not above it: the limit
    tolerance of the checks (docs/checks/index.md) holds for the input too. 0.1 % above
    is still refused."""
    from pathlib import Path
    from steamnet.errors import ModelError
    from steamnet.model.load import loads_model
    text = (Path(__file__).parent / "data" / "trip_stress.toml").read_text()

    def fixed(flow: str):
        return loads_model(text.replace('flow = "20 t/h"', f'flow = "{flow}"\n'
                                        'max_flow = "20 t/h"'), source="fixed.toml")
    fixed(f"{20 / 3.6 * 3.6!r} t/h")
    fixed("20.000000000000004 t/h")
    with pytest.raises(ModelError, match="fixed flow is above max_flow"):
        fixed("20.02 t/h")
