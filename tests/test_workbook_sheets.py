"""The workbook's sheets, layout, charts, drawing and markings (docs/workbook.md).

Sources: the sheet list and layout rules of docs/workbook.md; the model file itself (parsed here
with tomllib) for the inputs sheet; the OOXML package (read as a zip) for formulas.
"""

from __future__ import annotations

import io
import tomllib

import openpyxl
import pandas as pd
import pytest
from PIL import Image

import steamnet
from conftest import DATA, DEMO
from steamnet.workbook import write_workbook
from steamnet.workbook.cover import CAUTIONS
from wb_helpers import (formulas_in, heading_row, sheet_frame, stand_in_checks,
                        two_header_study)
from wb_helpers import study, book  # noqa: F401 (fixtures)

DEMO_SHEETS = ["Cover", "Findings", "Cases", "Case differences", "Network",
               "Network, worst case", "Stations", "Station summary", "Station charts",
               "Headers", "Equipment", "Streams", "Inputs"]
TABLE_SHEETS = ["Cases", "Case differences", "Headers", "Equipment", "Streams",
                "Stations", "Station summary", "Inputs"]


@pytest.fixture(scope="module")
def infeasible_book(tmp_path_factory):
    study = two_header_study()
    assert study.case("toomuch").status == "infeasible"
    path = tmp_path_factory.mktemp("wbi") / "two.xlsx"
    write_workbook(path, study, checks=stand_in_checks(study))
    return path


def _title(chart) -> str:
    return "".join(r.t for p in chart.title.tx.rich.p for r in (p.r or []))


def test_every_sheet_in_reading_order(book):
    assert openpyxl.load_workbook(book).sheetnames == DEMO_SHEETS


def test_cover_carries_identity_and_cautions(study, book):
    ws = openpyxl.load_workbook(book)["Cover"]
    facts = {r[0].value: r[1].value for r in ws.iter_rows() if r[0].value}
    m = study.model
    assert facts["Plant"] == "Orlewick Board Mill"
    assert facts["Model file SHA-256"] == m.sha256 == __import__("hashlib").sha256(
        DEMO.read_bytes()).hexdigest()
    assert facts["Program"].startswith(f"steamnet {steamnet.__version__}")
    text = " ".join(str(c.value) for r in ws.iter_rows() for c in r if c.value)
    for caution in CAUTIONS:
        assert caution in text
    for phrase in ("licensed engineer", "relief", "water hammer", "fails open",
                   "pressure vessel code", "power piping code"):
        assert phrase in text
    for c in study.cases:
        assert c.case in text


def test_tables_frozen_filtered_and_fitted(book):
    wb = openpyxl.load_workbook(book)
    for name in TABLE_SHEETS:
        ws = wb[name]
        head = heading_row(book, name)
        assert head in (3, 4), name      # row 4 under grouped headings
        assert ws.freeze_panes and ws.freeze_panes.endswith(str(head + 1)), name
        (table,) = ws.tables.values()
        assert table.ref.startswith(f"A{head}:") and table.autoFilter is not None, name
        heads = [c.value for c in ws[head]]
        assert [c.name for c in table.tableColumns] == heads
        for i in range(1, len(heads) + 1):
            letter = openpyxl.utils.get_column_letter(i)
            assert 6 <= ws.column_dimensions[letter].width <= 62, (name, letter)


def test_units_in_every_numeric_heading(book):
    """A column that holds numbers names its unit in brackets in its heading (counts and
    dimensionless columns included, as [count] and [-])."""
    wb = openpyxl.load_workbook(book)
    for name in ("Case differences", "Headers", "Equipment", "Streams", "Stations",
                 "Station summary"):
        ws = wb[name]
        head = heading_row(book, name)
        heads = [c.value for c in ws[head]]
        numeric = set()
        for row in ws.iter_rows(min_row=head + 1):
            numeric |= {i for i, c in enumerate(row) if c.data_type == "n"
                        and c.value is not None}
        assert numeric, name
        for i in numeric:
            assert heads[i].endswith("]"), (name, heads[i])


def test_charts_and_network_image(book):
    wb = openpyxl.load_workbook(book)
    charts = wb["Station charts"]._charts
    titles = [_title(c) for c in charts]
    assert titles[0] == "Spray water per station and case"
    for st in steamnet.load_model(DEMO).table("letdown"):
        assert f"{st}: operating envelope" in titles
    assert not any("gain" in t.lower() for t in titles)     # no checks: no gain chart
    (img,) = wb["Network"]._images
    png = Image.open(io.BytesIO(img._data()))
    assert png.format == "PNG" and png.width > 800 and png.height > 500


def test_envelope_chart_draws_the_model_limits(book):
    """PRV-HM's limits from the model file: maximum spray 7 t/h, rated steam 3 to
    40 t/h (cases/orlewick.toml), each drawn as a two-point line."""
    wb = openpyxl.load_workbook(book)
    ch = next(c for c in wb["Station charts"]._charts
              if _title(c) == "PRV-HM: operating envelope")
    names = [s.tx.v for s in ch.series]
    assert "maximum spray 7.00 t/h" in names
    assert "rated minimum steam 3.0 t/h" in names
    assert "rated maximum steam 40.0 t/h" in names


def test_gain_chart_when_checks_give_gains(study, tmp_path):
    path = tmp_path / "g.xlsx"
    write_workbook(path, study, checks=stand_in_checks(study))
    wb = openpyxl.load_workbook(path)
    titles = [_title(c) for c in wb["Station charts"]._charts]
    assert "Control gain against steam flow" in titles
    assert "Station checks" not in wb.sheetnames   # folded into Stations (CSV keeps it)


def test_studies_and_envelopes_get_their_sheets(study, tmp_path):
    headroom = pd.DataFrame({"header": ["HP", "LP"], "headroom_t_h": [12.5, 3.25],
                             "binding_limit": ["boiler 'B2-gas' maximum", "=cmd|' /C'!A0"],
                             "status": ["ok", "warn"]})
    env = pd.DataFrame({"station": ["PRV-HM"], "steam_min_t_h": [0.0],
                        "steam_max_t_h": [11.5]})
    path = tmp_path / "s.xlsx"
    write_workbook(path, study, studies={"headroom": headroom}, envelopes=env)
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames.index("Headroom") == wb.sheetnames.index("Inputs") - 1
    assert "Station envelopes" not in wb.sheetnames     # folded into Station summary
    df = sheet_frame(path, "Headroom")
    assert list(df.columns) == ["Header", "Headroom [t/h]", "Binding limit", "Status"]
    assert df["Headroom [t/h]"].tolist() == [12.5, 3.25]
    assert df["Binding limit"].tolist()[1] == "=cmd|' /C'!A0"
    assert formulas_in(path) == []


def test_infeasible_case_marked_on_every_sheet(infeasible_book):
    """Every cell naming case 'toomuch' (infeasible) carries the fail fill."""
    wb = openpyxl.load_workbook(infeasible_book)
    fail = next(r[0].fill.fgColor.rgb for r in wb["Cover"].iter_rows()
                if r[0].value == "fail")
    marked = {}
    for ws in wb.worksheets[:-1]:        # not Inputs: there a case is its definition
        for row in ws.iter_rows():
            for c in row:
                if c.value == "toomuch":
                    assert c.fill.fgColor.rgb == fail, (ws.title, c.coordinate)
                    marked[ws.title] = True
    for name in ("Cover", "Cases", "Headers", "Equipment", "Stations", "Findings",
                 "Station charts"):
        assert marked.get(name), name
    df = sheet_frame(infeasible_book, "Cases").set_index("Quantity")
    assert df.loc["Solve status", "toomuch"] == "infeasible"


def test_findings_worst_first_infeasible_cases_first(infeasible_book):
    df = sheet_frame(infeasible_book, "Findings")
    assert df.iloc[0]["Case"] == "toomuch" and df.iloc[0]["Severity"] == "fail"
    assert "short of steam" in df.iloc[0]["Advice"]
    # the value is the amount the message gives ("short of steam by X t/h")
    said = float(df.iloc[0]["Advice"].split("short of steam by ")[1].split(" t/h")[0])
    assert df.iloc[0]["Value"] == pytest.approx(said, abs=0.005)
    rank = {"fail": 0, "warn": 1, "not assessed": 2}
    bad = df["Case status"] != "solved"
    assert bad.tolist() == sorted(bad.tolist(), reverse=True)     # bad cases first
    for part in (df[bad], df[~bad]):
        r = part["Severity"].map(rank).tolist()
        assert r == sorted(r)
    assert set(df["Severity"]) <= set(rank)
    # every finding of the case that does not balance says so, not only its balance row
    for advice in df[bad]["Advice"]:
        assert "does not balance" in advice or "short of steam" in advice, advice
    assert (df[bad]["Advice"].str.contains("the case does not balance")).sum() >= 1


def test_inputs_sheet_holds_every_field_of_the_file(study, book):
    """Every leaf of cases/orlewick.toml (parsed here with tomllib) is a row of the
    inputs sheet, with the text as written."""
    doc = tomllib.loads(DEMO.read_text())
    sheet = sheet_frame(book, "Inputs").fillna("")
    rows = {(t, i, f): v for t, i, f, v in sheet.itertuples(index=False)}
    expected = 0
    for table, items in doc.items():
        if table in ("format_version", "case"):
            continue
        for item in (items if isinstance(items, list) else [items]):
            name = item.get("name", "") if table not in ("site", "prices") else ""
            for field, value in item.items():
                if isinstance(value, dict):
                    for k, v in value.items():
                        assert rows[(table, name, f"{field}.{k}")] == v
                        expected += 1
                elif isinstance(value, list) and value and isinstance(value[0], dict):
                    for j, sub in enumerate(value, 1):
                        for k, v in sub.items():
                            assert rows[(table, name, f"{field}[{j}].{k}")] == v
                            expected += 1
                elif isinstance(value, list):
                    assert rows[(table, name, field)] == "[" + ", ".join(
                        f'"{x}"' for x in value) + "]"
                    expected += 1
                elif isinstance(value, bool):      # as the file writes it
                    assert rows[(table, name, field)] == str(value).lower()
                    expected += 1
                else:
                    if isinstance(value, bool):      # as TOML writes it
                        value = "true" if value else "false"
                    assert rows[(table, name, field)] == value, (table, name, field)
                    expected += 1
    for case in doc["case"]:
        for k, v in case["changes"].items():
            assert rows[("case", case["name"], f"changes.{k}")] == v
            expected += 1
    assert expected > 250


def test_hostile_text_arrives_as_text(tmp_path):
    """Free text of the model that looks like a formula stays text: in the site name,
    a header's description and a user's group (names allow none of = + - @)."""
    text = (DATA / "two_header.toml").read_text()
    hostile = {"site": '=HYPERLINK("http://example.invalid","x")',
               "desc": "+1+2", "group": "@SUM(A1:A9)", "minus": "-2+3"}
    text = text.replace('name = "Test two-header network"', f"name = '{hostile['site']}'")
    text = text.replace('pressure = "40 bar(g)"',
                        f'pressure = "40 bar(g)"\ndescription = "{hostile["desc"]}"')
    text = text.replace('demand = "20 t/h"', f'demand = "20 t/h"\ngroup = "{hostile["group"]}"')
    text = text.replace('demand = "5 t/h"', f'demand = "5 t/h"\ngroup = "{hostile["minus"]}"')
    src = tmp_path / "hostile.toml"
    src.write_text(text)
    study = steamnet.solve_cases(steamnet.load_model(src))
    path = tmp_path / "h.xlsx"
    write_workbook(path, study)
    assert formulas_in(path) == []
    wb = openpyxl.load_workbook(path)
    found = set()
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if isinstance(c.value, str) and c.value in hostile.values():
                    assert c.data_type == "s" and c.quotePrefix, (ws.title, c.value)
                    found.add(c.value)
    assert found == set(hostile.values())
    groups = sheet_frame(path, "Equipment")["Group"].dropna().tolist()
    assert hostile["group"] in groups and hostile["minus"] in groups


def test_model_without_stations_still_writes_every_sheet(tmp_path):
    """tests/data/two_header.toml less its let-down station (the turbine swings)."""
    text = (DATA / "two_header.toml").read_text()
    start, end = text.index("[[letdown]]"), text.index("[[user]]")
    text = text[:start] + text[end:]
    text = text.replace('mode = "fixed_flow"\nflow = "10 t/h"', 'mode = "swing"')
    study = steamnet.solve_cases(steamnet.loads_model(text))
    path = tmp_path / "n.xlsx"
    write_workbook(path, study)
    wb = openpyxl.load_workbook(path)
    assert wb.sheetnames == DEMO_SHEETS
    assert wb["Station charts"]._charts == []
    assert wb["Stations"]["A4"].value == "(no rows)"
