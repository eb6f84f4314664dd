"""Case tables and hourly profiles (docs/howto-cases.md).

The independent reference for a table case is the same change written as a
``[[case]]`` of a model file and solved by the core: the two paths must give the same
balance. Unit conversions are checked against the unit definitions (1 t = 1000 kg,
1 h = 3600 s; T/K = t/degC + 273.15, ISO 80000-5).
"""

from __future__ import annotations

import math
import subprocess
import sys
from pathlib import Path

import pytest

from conftest import DEMO, ROOT
from steamnet.errors import ModelError
from steamnet.model.load import load_model, loads_model
from steamnet.solve import solve_case
from steamnet.io import casetable
from steamnet.model import cases as model_cases
from steamnet.studies import read_case_table, solve_case_set
from steamnet.studies.runcases import case_results

DEMO_TABLE = ROOT / "cases" / "orlewick_cases.csv"
HOURLY = ROOT / "cases" / "orlewick_hourly.csv"
T_H = 1000 / 3600     # 1 t/h in kg/s, by definition of the units


@pytest.fixture(scope="module")
def model():
    return load_model(DEMO)


def write(tmp_path: Path, text: str, name: str = "t.csv") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_demo_table_reads_units_into_si(model):
    cs = read_case_table(DEMO_TABLE, model)
    assert cs.names[:3] == ["spring", "cold-snap", "cold-snap-TG1-trip"]
    spring = cs.specs["spring"].changes
    assert spring["site.makeup_temperature"] == pytest.approx(10 + 273.15)
    assert spring["user.Building heating.demand"] == pytest.approx(4 * T_H)
    assert spring["user.Mill water heater.duty"] == pytest.approx(5.5e6)
    assert cs.specs["cold-snap-TG1-trip"].changes == {"turbine.TG1.mode": "tripped"}


def test_row_derivation_and_model_case_derivation(model):
    cs = read_case_table(DEMO_TABLE, model)
    m = cs.build("cold-snap-TG1-trip")
    # from its own row
    assert m.table("turbine")["TG1"].mode == "tripped"
    # from the row it is based on (cold-snap)
    assert m.table("user")["Building heating"].demand == pytest.approx(12 * T_H)
    # from the model-file case cold-snap is based on (winter changes the LP heat loss)
    assert m.headers["LP"].heat_loss == pytest.approx(420e3)
    assert m.case_name == "cold-snap-TG1-trip"


def test_table_case_equals_the_same_case_in_a_model_file(model, tmp_path):
    """Independent path: the changes of row 'cold-snap' written as a [[case]] of the
    model file, solved by the core, give the same balance."""
    text = DEMO.read_text() + '''
[[case]]
name = "cold-snap-file"
based_on = "winter"
[case.changes]
"site.makeup_temperature" = "2 degC"
"user.Building heating.demand" = "12 t/h"
"user.LP tracing.demand" = "5 t/h"
"user.Mill water heater.duty" = "9 MW"
'''
    ref = solve_case(loads_model(text), "cold-snap-file")
    cs = read_case_table(DEMO_TABLE, model).select(["cold-snap"])
    got = solve_case_set(cs).cases[0]
    assert got.status == ref.status == "solved"
    for k in ("steam_raised_t_h", "fuel_mw", "spray_t_h", "da_steam_t_h", "cost_per_h"):
        assert got.summary[k] == pytest.approx(ref.summary[k], rel=1e-9, abs=1e-9), k


def test_empty_cell_keeps_the_value_of_the_case_based_on(model, tmp_path):
    p = write(tmp_path, "case,based_on,user.LP tracing.demand [t/h]\n"
                        "a,winter,\nb,winter,2\n")
    cs = read_case_table(p, model)
    assert cs.build("a").table("user")["LP tracing"].demand == pytest.approx(4 * T_H)
    assert cs.build("b").table("user")["LP tracing"].demand == pytest.approx(2 * T_H)


def test_each_unit_is_parsed_once_per_column(model, tmp_path, monkeypatch):
    calls = []
    real = casetable.unit_factor

    def counting(unit, kind):
        calls.append(unit)
        return real(unit, kind)
    monkeypatch.setattr(casetable, "unit_factor", counting)
    lines = ["case,user.Stock heating.demand [t/h],site.makeup_temperature [degF]"]
    lines += [f"c{i},{5 + i / 10},{50 + i}" for i in range(60)]
    p = write(tmp_path, "\n".join(lines) + "\n")
    cs = read_case_table(p, model, check=False)
    assert sorted(calls) == ["degF", "t/h"]
    # degF -> K: T/K = (t/degF + 459.67) * 5/9 (definition of the Fahrenheit scale)
    assert cs.specs["c3"].changes["site.makeup_temperature"] == \
        pytest.approx((53 + 459.67) * 5 / 9)


def test_xlsx_table_reads_like_csv(model, tmp_path):
    openpyxl = pytest.importorskip("openpyxl")
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["case", "based_on", "user.Stock heating.demand [t/h]", "turbine.TG1.mode",
               "letdown.PRV-HL.desuperheater.max_spray [t/h]"])
    ws.append(["x", "winter", 7.5, None, 18])
    ws.append(["y", "x", None, "tripped", None])
    p = tmp_path / "t.xlsx"
    wb.save(p)
    cs = read_case_table(p, model)
    assert cs.specs["x"].changes["user.Stock heating.demand"] == pytest.approx(7.5 * T_H)
    y = cs.build("y")
    assert y.table("turbine")["TG1"].mode == "tripped"
    assert y.table("letdown")["PRV-HL"].desuperheater.max_spray == pytest.approx(18 * T_H)


@pytest.mark.parametrize("text, row, column, words", [
    ("case,user.Nobody.demand [t/h]\na,3\n", "row 1", "user.Nobody.demand [t/h]",
     "no user named 'Nobody'"),
    ("case,user.Stock heating.demnd [t/h]\na,3\n", "row 1",
     "user.Stock heating.demnd [t/h]", "no field 'demnd'"),
    ("case,user.Stock heating.demand [bar(g)]\na,3\n", "row 1",
     "user.Stock heating.demand [bar(g)]", "not a unit of mass flow"),
    ("case,user.Stock heating.demand [t/hx]\na,3\n", "row 1",
     "user.Stock heating.demand [t/hx]", "unknown unit"),
    ("case,user.Stock heating.demand\na,3\n", "row 1", "user.Stock heating.demand",
     "needs the unit in brackets"),
    ("case,turbine.TG1.mode [t/h]\na,tripped\n", "row 1", "turbine.TG1.mode [t/h]",
     "takes no unit"),
    ("case,user.Stock heating.demand [t/h]\na,3\nb,three\n", "row 3",
     "user.Stock heating.demand [t/h]", "'three' is not a number"),
    ("case,turbine.TG1.mode\na,trip\n", "row 2", "turbine.TG1.mode", "'trip' is not allowed"),
    ("case,based_on\na,nowhere\n", "row 2 (case 'a')", "based_on",
     "based_on 'nowhere': no such case"),
    ("case,based_on\na,b\nb,a\n", "row 2 (case 'a')", "based_on", "in a loop"),
    ("case,user.Stock heating.demand [t/h]\na,-3\n", "row 2 (case 'a')",
     "user.Stock heating.demand [t/h]", "must not be negative"),
    ("case,user.Stock heating.demand [t/h]\nwinter,3\n", "row 2", "case",
     "already a case of the model file"),
    ("case,user.Stock heating.demand [t/h]\na,3\na,4\n", "row 3", "case",
     "also the name of row 2"),
    ("case,user.Stock heating.demand [t/h],user.Stock heating.demand [kg/s]\na,3,1\n",
     "row 1", "user.Stock heating.demand [kg/s]", "changes the same field"),
    ("timestamp,user.Stock heating.demand [t/h]\n2025-01-01 00:00,3\nnoon,4\n", "row 3",
     "timestamp", "not a date and time"),
    ("case;user.Stock heating.demand [t/h]\na;3\n", "row 1", None, "use ';' between"),
])
def test_bad_table_names_file_row_and_column(model, tmp_path, text, row, column, words):
    p = write(tmp_path, text)
    with pytest.raises(ModelError) as ei:
        read_case_table(p, model)
    errors = getattr(ei.value, "errors", [ei.value])
    hit = [e for e in errors if words in e.message]
    assert hit, [str(e) for e in errors]
    e = hit[0]
    assert e.file == str(p) and e.item == row and e.field == column, str(e)


def test_profile_rows_are_cases_named_by_timestamp_from_the_base(model, tmp_path):
    lines = HOURLY.read_text().splitlines()[:25]          # heading + the first day
    p = write(tmp_path, "\n".join(lines) + "\n", "day.csv")
    cs = read_case_table(p, model, base="winter")
    assert cs.kind == "profile" and len(cs) == 24
    assert cs.names[0] == "2025-01-01 00:00" and cs.names[-1] == "2025-01-01 23:00"
    m = cs.build(cs.names[5])
    assert m.headers["LP"].heat_loss == pytest.approx(420e3)      # from 'winter'
    study = solve_case_set(cs)
    df = case_results(study)
    assert (df["status"] == "solved").all()
    assert "PRV-HL spray_t_h" in df.columns and "TG1 power_kw" in df.columns


def test_profile_base_must_be_a_model_case(model, tmp_path):
    p = write(tmp_path, "timestamp,user.LP tracing.demand [t/h]\n2025-01-01 00:00,1\n")
    with pytest.raises(ModelError, match="option --base"):
        read_case_table(p, model, base="autumn")


def test_demo_profile_is_a_year_of_hours_and_reproducible(tmp_path):
    out = tmp_path / "h.csv"
    r = subprocess.run([sys.executable, str(ROOT / "cases" / "make_orlewick_profile.py"),
                        str(out)], capture_output=True, text=True)
    assert r.returncode == 0, r.stderr
    assert out.read_bytes() == HOURLY.read_bytes()
    lines = HOURLY.read_text().splitlines()
    assert len(lines) == 8761 and lines[1].startswith("2025-01-01 00:00")
    assert lines[-1].startswith("2025-12-31 23:00")


def test_lean_results_keep_totals_and_flows(model, tmp_path):
    lines = HOURLY.read_text().splitlines()[:4]
    p = write(tmp_path, "\n".join(lines) + "\n", "h3.csv")
    cs = read_case_table(p, model)
    full = solve_case_set(cs, keep_tables=True)
    lean = solve_case_set(cs, keep_tables=False)
    assert all(len(c.equipment) == 0 and c.solution is None for c in lean.cases)
    a, b = case_results(full), case_results(lean)
    assert list(a.columns) == list(b.columns)
    assert math.isclose(a["cost_per_h"].sum(), b["cost_per_h"].sum(), rel_tol=1e-12)


# ------------------------------------------------------ case sets run as sweeps
def test_rows_based_on_rows_solve_as_their_models(model, tmp_path):
    """A row based on another row is swept as the chain's changes on the model-file
    case at its root; each case balances as the model CaseSet.build makes, solved on
    its own (cold) within the solver's tolerance (flows to 1e-9 kg/s)."""
    p = write(tmp_path, "case,based_on,user.LP tracing.demand [t/h],"
                        "user.PM1 dryer section.demand [t/h],turbine.TG1.mode\n"
                        "a,winter,2,,\n"
                        "b,a,,30,\n"
                        "c,b,3,,tripped\n"
                        "d,,1,28,\n")
    cs = read_case_table(p, model)
    from steamnet.model.cases import sweep_specs
    specs = dict((s[0], s[1:]) for s in sweep_specs(cs))
    assert specs["c"][1] == "winter" and specs["d"][1] is None
    assert specs["c"][0]["turbine.TG1.mode"] == "tripped"
    assert specs["c"][0]["user.LP tracing.demand"] == pytest.approx(3 * T_H)  # c's own
    assert specs["c"][0]["user.PM1 dryer section.demand"] == pytest.approx(30 * T_H)
    swept = case_results(solve_case_set(cs))
    from steamnet.solve import solve_model
    from steamnet.studies.runcases import CaseSetResult
    alone = case_results(CaseSetResult(model, [solve_model(cs.build(n), n)
                                               for n in cs.names], case_set=cs))
    assert list(swept["case"]) == list(alone["case"]) == ["a", "b", "c", "d"]
    for col in swept.columns:
        if swept[col].dtype.kind == "f":
            assert swept[col].to_numpy() == pytest.approx(alone[col].to_numpy(),
                                                          rel=1e-9, abs=1e-6,
                                                          nan_ok=True), col
        else:
            assert list(swept[col]) == list(alone[col]), col


def test_case_set_in_two_workers_equals_serial(model, tmp_path):
    lines = HOURLY.read_text().splitlines()[:61]           # 60 hours: three chunks
    p = write(tmp_path, "\n".join(lines) + "\n", "h60.csv")
    cs = read_case_table(p, model, base="winter")
    serial = case_results(solve_case_set(cs))
    par = case_results(solve_case_set(cs, workers=2))
    import pandas as pd
    pd.testing.assert_frame_equal(serial, par, check_exact=True)
    assert (serial["status"] == "solved").all() and len(serial) == 60


def test_unknown_based_on_lists_the_model_cases_in_file_order(model, tmp_path):
    """The list is the model file's order on every run (it came from a set before)."""
    p = write(tmp_path, "case,based_on\na,nowhere\n")
    with pytest.raises(ModelError) as info:
        read_case_table(p, model)
    order = ", ".join(c.name for c in model.cases)
    assert f"(model cases: {order})" in str(info.value)


def test_lean_case_whose_equipment_leaves_if97_is_an_error_the_others_run(
        model, tmp_path, monkeypatch):
    """Lean sets read each case's flows from its equipment rows; a state there outside
    IAPWS-IF97 makes that case an error, as building its tables would (fault injected:
    the rows of one case raise), and the other cases still run."""
    from steamnet.errors import PropertyRangeError
    from steamnet.solver import results as res
    lines = HOURLY.read_text().splitlines()[:7]
    p = write(tmp_path, "\n".join(lines) + "\n", "h6.csv")
    cs = read_case_table(p, model, base="winter")
    bad = cs.names[2]
    real = res.equipment_rows

    def rows(sol, case):
        if case == bad:
            raise PropertyRangeError("p=0.1 MPa, T=2000 K is outside IAPWS-IF97")
        return real(sol, case)
    monkeypatch.setattr(res, "equipment_rows", rows)
    for keep in (False, True):
        df = case_results(solve_case_set(cs, keep_tables=keep))
        st = dict(zip(df["case"], df["status"]))
        assert st.pop(bad) == "error" and set(st.values()) == {"solved"}, keep
        msg = df.loc[df["case"] == bad, "message"].iloc[0]
        assert "outside IAPWS-IF97" in msg


def test_small_sets_keep_tables_but_no_stream_tables(model):
    """Up to LEAN_ABOVE cases each case keeps its header and equipment tables; the
    stream tables, which no case-set output reads, are not made."""
    study = solve_case_set(model_cases.model_case_set(model))
    assert all(len(c.equipment) and len(c.headers) and not len(c.streams)
               for c in study.cases)


def test_unchecked_bad_row_is_an_error_naming_file_row_and_column(model, tmp_path):
    """A table read without its check: a row whose value breaks validation is that
    case's error, worded as the check words it (file, row, column); the others run."""
    p = write(tmp_path, "case,based_on,user.PM1 dryer section.demand [t/h]\n"
                        "a,winter,30\nneg,winter,-5\nc,winter,31\n", "unchecked.csv")
    cs = read_case_table(p, model, check=False)
    df = case_results(solve_case_set(cs))
    st = dict(zip(df["case"], df["status"]))
    assert st == {"neg": "error", "a": "solved", "c": "solved"}
    msg = df.loc[df["case"] == "neg", "message"].iloc[0]
    assert "unchecked.csv" in msg and "row 3" in msg
    assert "user.PM1 dryer section.demand [t/h]" in msg
    # the rule, not the value in kg/s the column's t/h became (-5 t/h = -1.389 kg/s)
    assert "must not be negative" in msg and "1.38" not in msg


def test_profile_rows_are_checked_without_a_full_validation_each(model, tmp_path,
                                                                 monkeypatch):
    """Rows that change only values validation never reads are checked for what they
    touch on their validated base: a day of hours costs one full validation (of the
    base case), and a make-up temperature that is not liquid water is still refused,
    naming its row (150 degC: water boils at it below 4.76 bar, IAPWS-IF97 saturation
    pressure, far above the demo deaerator's 0.4 bar(g))."""
    calls = []
    real = model_cases.validate_model
    monkeypatch.setattr(model_cases, "validate_model",
                        lambda m: (calls.append(m.case_name), real(m)))
    lines = HOURLY.read_text().splitlines()[:25]
    p = write(tmp_path, "\n".join(lines) + "\n", "day.csv")
    cs = read_case_table(p, model, base="winter")
    assert len(cs) == 24 and len(calls) == 1
    heading = lines[0].split(",")
    col = heading.index("site.makeup_temperature [degC]")
    row = lines[5].split(",")
    row[col] = "150"
    lines[5] = ",".join(row)
    p = write(tmp_path, "\n".join(lines) + "\n", "hot.csv")
    with pytest.raises(ModelError, match=r"row 6 .*not a temperature of liquid make-up"):
        read_case_table(p, model, base="winter")
