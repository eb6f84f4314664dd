"""Case differences (steamnet.studies.compare, `steamnet compare`, the workbook sheet).

The plant is written here: a swing boiler on external feedwater raises HP steam; one
let-down station with a spray desuperheater (spray from the same external water) feeds
the LP header, whose only user U1 is raised by 20 t/h in case 'more'. Nothing else
moves, so the extra let-down steam and the extra boiler steam follow in closed form
from the LP mass and energy balance with enthalpies from CoolProp's IF97 backend, and
the boiler's feedwater is steam / (1 - blowdown) (the boiler balance of
docs/method.md). The expected verdicts of the steam turndown check follow from the
rated range of docs/checks/steam_turndown.md.
"""

from __future__ import annotations

import json
import math

import pytest
from click.testing import CliRunner

from steamnet.errors import ModelError
from steamnet.model.load import loads_model
from steamnet.stations.run import run_checks
from steamnet.sweep import solve_cases
from steamnet.studies.compare import COMPARE_COLUMNS, compare_cases

CP = pytest.importorskip("CoolProp.CoolProp")
#: Standard atmosphere [Pa] (ISO 2533), the default site atmosphere.
P_ATM = 101325.0
C0 = 273.15

PLANT = """
format_version = 1
[site]
name = "Compare test plant"
makeup_temperature = "15 degC"
[prices]
fuel = "10 EUR/GJ"
makeup_water = "2 EUR/t"
[[header]]
name = "HP"
pressure = "30 bar(g)"
[[header]]
name = "LP"
pressure = "4 bar(g)"
[[water_supply]]
name = "EXT"
source = "external"
pressure = "40 bar(g)"
temperature = "105 degC"
[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "380 degC"
feedwater = "EXT"
blowdown = "3 %"
efficiency = "87 %"
max_steam = "80 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
[letdown.desuperheater]
spray_supply = "EXT"
approach = "25 K"
rated_min_steam = "2 t/h"
rated_max_steam = "RATED_MAX"
[[user]]
name = "U1"
header = "LP"
demand = "10 t/h"
[[user]]
name = "U2"
header = "HP"
demand = "15 t/h"
[[case]]
name = "normal"
[[case]]
name = "more"
changes = { "user.U1.demand" = "30 t/h" }
[[case]]
name = "toomuch"
changes = { "user.U1.demand" = "90 t/h" }
"""
#: The demands, blowdown and efficiency written in PLANT above [t/h, -]
U2, U1_NORMAL, U1_MORE, U1_TOOMUCH = 15.0, 10.0, 30.0, 90.0
BLOWDOWN, EFFICIENCY = 0.03, 0.87


def plant(rated_max: str = "20 t/h"):
    return loads_model(PLANT.replace("RATED_MAX", rated_max), source="compare.toml")


def letdown_share() -> float:
    """Let-down steam per unit of LP steam: (h_out - h_w) / (h_HP - h_w), from the LP
    header's mass and energy balance with the outlet at saturation + 25 K."""
    p_hp, p_lp, p_w = 30e5 + P_ATM, 4e5 + P_ATM, 40e5 + P_ATM
    h_hp = CP.PropsSI("H", "P", p_hp, "T", 380 + C0, "IF97::Water")
    t_set = CP.PropsSI("T", "P", p_lp, "Q", 1, "IF97::Water") + 25.0
    h_out = CP.PropsSI("H", "P", p_lp, "T", t_set, "IF97::Water")
    h_w = CP.PropsSI("H", "P", p_w, "T", 105 + C0, "IF97::Water")
    return (h_out - h_w) / (h_hp - h_w)


def fuel_per_steam_mw_per_t_h() -> float:
    """Boiler fuel per t/h of steam [MW per t/h]: steam and blowdown heated from the
    feedwater, over the efficiency (docs/method.md, boiler balance)."""
    p = 30e5 + P_ATM
    h_s = CP.PropsSI("H", "P", p, "T", 380 + C0, "IF97::Water")
    h_fw = CP.PropsSI("H", "P", 40e5 + P_ATM, "T", 105 + C0, "IF97::Water")
    h_bd = CP.PropsSI("H", "P", p, "Q", 0, "IF97::Water")
    return ((h_s - h_fw) + BLOWDOWN / (1 - BLOWDOWN) * (h_bd - h_fw)) / EFFICIENCY \
        / 3.6 / 1e6


@pytest.fixture(scope="module")
def solved():
    """The study of the three cases and its station checks (read-only)."""
    study = solve_cases(plant())
    return study, run_checks(study)


def one(df, **where):
    sel = df
    for k, v in where.items():
        sel = sel[sel[k] == v]
    assert len(sel) == 1, (where, len(sel))
    return sel.iloc[0]


def test_steam_raised_difference_is_the_closed_form_boiler_balance(solved):
    study, report = solved
    df = compare_cases(study, report, cases=["more"])
    assert list(df.columns) == COMPARE_COLUMNS
    d_user = U1_MORE - U1_NORMAL
    d_steam = d_user * letdown_share()            # all of it through L1 and B1
    total = one(df, section="total", quantity="steam raised")
    # two IF97 implementations agree to about 1e-6 relative
    assert total["difference"] == pytest.approx(d_steam, rel=1e-6)
    assert total["reference_value"] == pytest.approx(U2 + U1_NORMAL * letdown_share(),
                                                     rel=1e-6)
    assert one(df, section="equipment", item="B1", quantity="flow")["difference"] == \
        pytest.approx(d_steam, rel=1e-6)
    assert one(df, section="equipment", item="L1", quantity="flow")["difference"] == \
        pytest.approx(d_steam, rel=1e-6)
    assert one(df, section="equipment", item="L1", quantity="spray")["difference"] == \
        pytest.approx(d_user - d_steam, rel=1e-6)
    # external water: feedwater = steam / (1 - blowdown), plus the spray
    assert one(df, section="total", quantity="make-up water")["difference"] == \
        pytest.approx(d_steam / (1 - BLOWDOWN) + d_user - d_steam, rel=1e-6)
    assert one(df, section="total", quantity="fuel")["difference"] == \
        pytest.approx(d_steam * fuel_per_steam_mw_per_t_h(), rel=1e-6)
    assert one(df, section="header", item="LP", quantity="throughput")["difference"] == \
        pytest.approx(d_user, rel=1e-9)
    # U2 does not move: its row is there with no difference
    assert one(df, section="equipment", item="U2", quantity="flow")["difference"] == 0


def test_differences_are_value_minus_reference_from_the_cases_own_tables(solved):
    study, report = solved
    df = compare_cases(study, report, reference="normal", cases="more")
    a, b = study.case("normal"), study.case("more")
    for name in ("B1", "L1", "U1", "U2"):
        fa = a.equipment.loc[a.equipment["item"] == name, "flow_t_h"].sum()
        fb = b.equipment.loc[b.equipment["item"] == name, "flow_t_h"].sum()
        r = one(df, section="equipment", item=name, quantity="flow")
        assert (r["reference_value"], r["value"]) == (fa, fb)
        assert r["difference"] == pytest.approx(fb - fa, rel=1e-12, abs=1e-12)
    boilers = [c.equipment[c.equipment["type"] == "boiler"]["flow_t_h"].sum()
               for c in (a, b)]
    assert one(df, section="total", quantity="steam raised")["difference"] == \
        pytest.approx(boilers[1] - boilers[0], rel=1e-9)
    # swapping the two cases swaps the values and turns every difference round
    back = compare_cases(study, report, reference="more", cases=["normal"])
    key = ["section", "item", "quantity"]
    joined = df.merge(back, on=key, suffixes=("", "_back"))
    assert len(joined) == len(df) == len(back)
    assert (joined["value"] == joined["reference_value_back"]).all()
    assert (joined["reference_value"] == joined["value_back"]).all()
    assert (joined["difference"] == -joined["difference_back"]).all()


def test_a_check_failing_in_one_case_only_appears_with_both_verdicts(solved):
    study, report = solved
    df = compare_cases(study, report, cases=["more"])
    # the let-down steam (closed form) against the rated range 2 to 20 t/h
    steam = [U1_NORMAL * letdown_share(), U1_MORE * letdown_share()]
    assert 2.0 < steam[0] < 20.0 < steam[1]
    f = one(df, section="finding", item="L1", quantity="steam_turndown")
    assert (f["reference_verdict"], f["verdict"]) == ("ok", "fail")
    assert (f["reference_value"], f["value"]) == pytest.approx(steam, rel=1e-6)
    assert f["unit"] == "t/h"
    # the worst verdict leads the findings; checks with one verdict in both are left out
    findings = df[df["section"] == "finding"]
    assert findings.iloc[0]["quantity"] == "steam_turndown"
    assert "approach_to_saturation" not in set(findings["quantity"])


def test_a_case_that_does_not_balance_gets_a_status_row_only(solved):
    study, report = solved
    # the HP steam needed exceeds the boiler's maximum of 80 t/h
    assert U2 + U1_TOOMUCH * letdown_share() > 80.0
    df = compare_cases(study, report)
    assert list(df["case"].drop_duplicates()) == ["more", "toomuch"]
    t = df[df["case"] == "toomuch"]
    assert list(t["section"]) == ["status"]
    r = t.iloc[0]
    assert (r["reference_verdict"], r["verdict"]) == ("solved", "infeasible")
    assert "HP" in r["message"] and math.isnan(r["difference"])


def test_unknown_cases_name_the_known_ones(solved):
    study, report = solved
    with pytest.raises(ModelError, match=r"no case 'winter'.*normal, more, toomuch"):
        compare_cases(study, report, reference="winter")
    with pytest.raises(ModelError, match=r"no case 'spring'.*normal, more, toomuch"):
        compare_cases(study, report, cases=["spring"])


# ------------------------------------------------------------------ command line
def invoke(*args):
    from steamnet.cli import main
    r = CliRunner().invoke(main, [str(a) for a in args])
    if r.exception is not None and not isinstance(r.exception, SystemExit):
        raise r.exception
    return r


@pytest.fixture
def model_file(tmp_path):
    def make(rated_max="20 t/h"):
        p = tmp_path / "compare.toml"
        p.write_text(PLANT.replace("RATED_MAX", rated_max))
        return p
    return make


def test_cli_exit_0_when_all_is_well(model_file, tmp_path):
    # a rated maximum of 60 t/h holds the 25.9 t/h of 'more' (closed form above)
    assert U1_MORE * letdown_share() < 60.0
    out = tmp_path / "diff.json"
    r = invoke("compare", model_file("60 t/h"), "--case", "more", "--json", out)
    assert r.exit_code == 0, r.output
    last = r.output.strip().splitlines()[-1]
    assert last.startswith("verdict: every case balances and no check fails"), last
    assert last.endswith("-> exit 0")
    assert "steam raised [t/h]" in r.output
    # U2 on HP does not move: left out of the printout unless --all
    assert "U2" not in r.output
    assert "U2" in invoke("compare", model_file("60 t/h"), "--case", "more",
                          "--all").output
    doc = json.loads(out.read_text())
    rows = doc["studies"]["case_differences"]["rows"]
    steam = [x for x in rows if x["quantity"] == "steam raised"]
    assert steam[0]["difference"] == pytest.approx((U1_MORE - U1_NORMAL)
                                                   * letdown_share(), rel=1e-6)


def test_cli_exit_1_when_a_compared_case_fails_a_check_or_cannot_balance(model_file):
    r = invoke("compare", model_file(), "--case", "more")
    assert r.exit_code == 1
    assert "steam_turndown" in r.output
    assert r.output.strip().splitlines()[-1] == \
        "verdict: 1 check(s) fail (the compared cases and the reference) -> exit 1"
    r = invoke("compare", model_file("60 t/h"), "--case", "toomuch")
    assert r.exit_code == 1
    assert "NOT COMPARED" in r.output
    assert r.output.strip().splitlines()[-1].startswith(
        "verdict: 1 case(s) do not balance ('toomuch')")


def test_cli_exit_2_for_an_unknown_case_and_3_for_an_unwritable_file(model_file,
                                                                     tmp_path):
    r = invoke("compare", model_file(), "--case", "spring")
    assert r.exit_code == 2
    assert "no case named 'spring' (cases: normal, more, toomuch)" in r.output
    assert "option --case" in r.output
    r = invoke("compare", model_file(), "--against", "winter")
    assert r.exit_code == 2 and "option --against" in r.output
    r = invoke("compare", model_file("60 t/h"), "--case", "more", "--json",
               tmp_path / "no such folder" / "x.json")
    assert r.exit_code == 3


def test_help_gives_the_exit_codes():
    r = invoke("compare", "--help")
    assert r.exit_code == 0
    text = " ".join(r.output.split())
    for words in ("0 every compared case", "1 a compared case", "2 bad input",
                  "3 the JSON file"):
        assert words in text


# ------------------------------------------------------------------ workbook
def test_workbook_sheet_reads_back_with_openpyxl_and_calamine(solved, tmp_path):
    import openpyxl
    import pandas as pd
    from steamnet.workbook import write_csv_folder, write_workbook
    study, report = solved
    path = tmp_path / "compare.xlsx"
    write_workbook(path, study, checks=report.checks, envelopes=report.envelopes)
    names = openpyxl.load_workbook(path, read_only=True).sheetnames
    assert names.index("Case differences") == names.index("Cases") + 1
    ws = openpyxl.load_workbook(path)["Case differences"]
    head = [c.value for c in ws[3]]
    assert "Difference [unit of the row]" in head
    d_steam = (U1_MORE - U1_NORMAL) * letdown_share()
    for frame in (pd.read_excel(path, sheet_name="Case differences", header=2,
                                engine="calamine"),
                  pd.DataFrame(list(ws.iter_rows(min_row=4, values_only=True)),
                               columns=head)):
        steam = frame[(frame["Case"] == "more") & (frame["Quantity"] == "steam raised")]
        assert steam["Difference [unit of the row]"].iloc[0] == pytest.approx(d_steam,
                                                                             rel=1e-6)
        f = frame[frame["Quantity"] == "steam_turndown"]
        assert list(f["Reference verdict"]) == ["ok"] and list(f["Verdict"]) == ["fail"]
        assert list(frame.loc[frame["Case"] == "toomuch", "Section"]) == ["status"]
    # a temperature row is formatted as the other sheets' degC columns
    t = [r for r in ws.iter_rows(min_row=4) if r[7].value == "outlet temperature"]
    assert t and t[0][8].value == "degC" and t[0][10].number_format == "0.0"
    files = write_csv_folder(tmp_path / "csv", study, checks=report.checks)
    csv = pd.read_csv(tmp_path / "csv" / "case_differences.csv")
    assert tmp_path / "csv" / "case_differences.csv" in files
    assert csv.loc[(csv["Case"] == "more") & (csv["Quantity"] == "steam raised"),
                   "Difference [unit of the row]"].iloc[0] == pytest.approx(d_steam,
                                                                           rel=1e-6)


def test_no_sheet_for_a_single_case(tmp_path):
    import openpyxl
    from steamnet.workbook import write_workbook
    study = solve_cases(plant(), ["normal"])
    path = tmp_path / "one.xlsx"
    write_workbook(path, study)
    names = openpyxl.load_workbook(path, read_only=True).sheetnames
    assert "Case differences" not in names and "Cases" in names
