"""The workbook a reader opens first page first (docs/workbook.md): the cover answers
(plant, model file, one line per case, the worst findings with their sources, the cost
and its parts, the cautions), the findings come next, every number has a format, the
verdict words are spelled one way, and two independent readers open every sheet.

Sources: the model file (prices, parsed here with tomllib) and the case summaries for
the closed-form cost; the station checks' own table for verdicts; the OOXML package
(read as a zip) for charts and drawings; python-calamine as the second reader.
"""

from __future__ import annotations

import hashlib
import tomllib
import zipfile

import openpyxl
import pytest
from python_calamine import CalamineWorkbook

import steamnet
from conftest import DATA, DEMO
from steamnet.evaluate import evaluate
from steamnet.workbook import write_workbook
from wb_helpers import study  # noqa: F401 (fixture)

#: Words a verdict or a case status may be written as, in the workbook and the console.
VERDICT_WORDS = {"fail", "warn", "not assessed", "ok", "not applicable", "solved",
                 "infeasible", "not converged", "error", "not run"}


@pytest.fixture(scope="module")
def checked(study, tmp_path_factory):  # noqa: F811
    """The demo's workbook with the real station checks (no studies: cheap)."""
    ev = evaluate(study, data=study.model.stations)
    path = tmp_path_factory.mktemp("first") / "demo.xlsx"
    write_workbook(path, study, checks=ev.stations.checks, envelopes=ev.stations.envelopes,
                   gains=ev.stations.gains)
    return path, ev


def _rows(ws):
    return [[c.value for c in r] for r in ws.iter_rows()]


def _section(rows, title):
    """The rows under a section title of the cover, up to the next blank row."""
    at = next(i for i, r in enumerate(rows) if r[0] == title)
    out = []
    for r in rows[at + 1:]:
        if all(v is None for v in r):
            break
        out.append(r)
    return out


def test_cover_answers_first(study, checked):  # noqa: F811
    path, ev = checked
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames[:2] == ["Cover", "Findings"]      # findings next
    rows = _rows(wb["Cover"])
    facts = {r[0]: r[1] for r in rows[:8] if r[0]}
    assert facts["Plant"] == "Orlewick Board Mill"
    assert facts["Model file"].endswith("orlewick.toml")
    assert facts["Model file SHA-256"] == hashlib.sha256(DEMO.read_bytes()).hexdigest()
    cases = _section(rows, "Cases")
    head, lines = cases[0], cases[1:]
    assert [r[0] for r in lines] == [c.case for c in study.cases]    # one line per case
    col = {h: i for i, h in enumerate(head) if h}
    checks = ev.stations.checks
    for r, c in zip(lines, study.cases):
        assert r[col["Balanced"]] == c.status.replace("_", " ")
        assert r[col["Steam raised [t/h]"]] == pytest.approx(c.summary["steam_raised_t_h"])
        assert r[col["Operating cost, net [EUR/h]"]] == pytest.approx(c.summary["cost_per_h"])
        mine = checks[checks["case"] == c.case]["status"]
        order = ["fail", "warn", "not_assessed", "ok", "not_applicable"]
        want = next(v for v in order if v in set(mine)).replace("_", " ")
        assert r[col["Worst station verdict"]] == want, c.case
        n = ev.findings[(ev.findings["case"] == c.case)]["status"].value_counts()
        assert r[col["Fail [count]"]] == n.get("fail", 0)
        assert r[col["Warn [count]"]] == n.get("warn", 0)


def test_cover_lists_the_five_worst_findings_with_sources(checked):
    path, ev = checked
    rows = _rows(openpyxl.load_workbook(path)["Cover"])
    top = _section(rows, "The 5 worst findings")
    head, lines = top[0], top[1:6]
    col = {h: i for i, h in enumerate(head) if h}
    fails = ev.findings[ev.findings["status"] == "fail"]
    assert len(fails) >= 5                          # the demo's trip case fails by design
    assert [r[col["Verdict"]] for r in lines] == ["fail"] * 5
    for r in lines:
        assert r[col["Source of the limit"]], r   # every limit's source named
        match = fails[(fails["case"] == r[col["Case"]]) &
                      (fails["value"].round(6) == round(r[col["Value"]], 6))]
        assert len(match) >= 1, r
        assert str(match["source"].iloc[0]) == r[col["Source of the limit"]]
    more = len(ev.findings[ev.findings["status"].isin(["fail", "warn", "not_assessed"])])
    assert any(isinstance(r[0], str) and r[0].startswith(f"{more - 5} more on the Findings")
               for r in rows)


def test_cover_cautions_include_the_default_limits(checked):
    path, _ = checked
    rows = _rows(openpyxl.load_workbook(path)["Cover"])
    cautions = " ".join(r[1] for r in _section(rows, "Cautions"))
    assert "default starting values" in cautions and "maker's figures" in cautions
    assert "site's standards win" in cautions
    assert "licensed engineer" in cautions and "relief capacity" in cautions


def test_invented_plant_marked_only_when_the_model_says_so(study, tmp_path):  # noqa: F811
    assert tomllib.loads(DEMO.read_text())["site"]["invented"] is True
    path = tmp_path / "demo.xlsx"
    write_workbook(path, study)
    ws = openpyxl.load_workbook(path)["Cover"]
    assert "invented demo plant" in ws["A1"].value
    other = steamnet.solve_cases(steamnet.load_model(DATA / "two_header.toml"))
    write_workbook(tmp_path / "two.xlsx", other)
    text = " ".join(str(v) for r in _rows(openpyxl.load_workbook(tmp_path / "two.xlsx")
                                         ["Cover"]) for v in r if v)
    assert "invented" not in text


def test_cost_shown_with_its_parts_net_of_the_power_credit(study, checked):  # noqa: F811
    """Cases sheet: the net cost is fuel + make-up + imports + power bought - exports -
    power credit, and the fuel part and the power credit recomputed from the model
    file's prices (each boiler's fuel price or the site's, the electricity price) and
    the case's fuel duties and power."""
    path, _ = checked
    doc = tomllib.loads(DEMO.read_text())
    prices, boilers = doc["prices"], doc["boiler"]
    fuel_eur_gj = float(prices["fuel"].split()[0])
    power_eur_mwh = float(prices["electricity"].split()[0])
    ws = openpyxl.load_workbook(path)["Cases"]
    rows = {r[0]: r[2:] for r in _rows(ws)[3:] if r[0]}
    note = ws["A2"].value
    assert "net of the power credit" in note
    parts = {k: v for k, v in rows.items() if k.startswith("Cost part")}
    assert len(parts) == 7
    for i, c in enumerate(study.cases):
        net = rows["Operating cost, net of the power credit [EUR/h]"][i]
        p = {k: v[i] for k, v in parts.items()}
        plus = sum(v for k, v in p.items() if "subtracted" not in k)
        minus = sum(v for k, v in p.items() if "subtracted" in k)
        assert net == pytest.approx(plus - minus, rel=1e-12)
        eq = c.equipment.set_index("item")
        fuel = sum(eq.loc[b["name"], "fuel_mw"] * 3.6 *             # MW * 3.6 GJ/MWh
                   float(b.get("fuel_price", f"{fuel_eur_gj} EUR/GJ").split()[0])
                   for b in boilers)
        assert p["Cost part: fuel [EUR/h]"] == pytest.approx(fuel, rel=1e-9)
        # the demo gives no carbon price and no emission factors: no CO2 cost
        assert "carbon" not in prices and p["Cost part: CO2 of the fuel [EUR/h]"] == 0
        credit = c.summary["power_generated_mw"] * power_eur_mwh
        assert p["Cost part: power generated (credit, subtracted) [EUR/h]"] == \
            pytest.approx(credit, rel=1e-9)
        avg = rows["Average cost of steam, net of the power credit [EUR/t]"][i]
        assert avg == pytest.approx(net / c.summary["steam_raised_t_h"], rel=1e-12)


def test_every_numeric_cell_of_every_sheet_has_a_number_format(checked):
    wb = openpyxl.load_workbook(checked[0])
    n = 0
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if c.data_type == "n" and c.value is not None and \
                        not isinstance(c.value, bool):
                    assert c.number_format != "General", (ws.title, c.coordinate)
                    n += 1
    assert n > 1000


def test_verdict_words_spelled_one_way(checked):
    """No verdict or status written with an underscore or in capitals on any sheet."""
    wb = openpyxl.load_workbook(checked[0])
    seen = set()
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                v = c.value
                if not isinstance(v, str):
                    continue
                for bad in ("not_assessed", "not_applicable", "not_converged",
                            "NOT ASSESSED", "NOT_ASSESSED", "INFEASIBLE", "not_run"):
                    assert bad not in v, (ws.title, c.coordinate, v)
                if v in VERDICT_WORDS:
                    seen.add(v)
    assert {"fail", "warn", "ok", "not assessed"} <= seen


def test_one_spelling_of_degrees(checked):
    """degC, as the model file writes it, on every sheet (never a second spelling)."""
    wb = openpyxl.load_workbook(checked[0])
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if isinstance(c.value, str) and ws.title != "Inputs":  # as written
                    assert "°C" not in c.value and "deg C" not in c.value, \
                        (ws.title, c.coordinate, c.value)


def test_two_independent_readers_open_every_sheet_and_chart(checked):
    path = checked[0]
    wb = openpyxl.load_workbook(path)
    cal = CalamineWorkbook.from_path(str(path))
    assert cal.sheet_names == wb.sheetnames
    for name in wb.sheetnames:
        data = cal.get_sheet_by_name(name).to_python()
        assert data and data[0][0] == wb[name]["A1"].value, name
    with zipfile.ZipFile(path) as z:
        assert z.testzip() is None
        charts = [n for n in z.namelist() if n.startswith("xl/charts/chart")]
        images = [n for n in z.namelist() if n.startswith("xl/media/")]
    assert len(charts) == len(wb["Station charts"]._charts) > 0
    assert len(images) == 2                      # base case and worst case drawings
    assert len(wb["Network"]._images) == len(wb["Network, worst case"]._images) == 1
