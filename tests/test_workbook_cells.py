"""The workbook's numbers against the solver's result tables (docs/workbook.md).

Each workbook is read twice, independently: by pandas with the calamine engine (a Rust
reader, no openpyxl) and by openpyxl. Every numeric cell of the headers, equipment and
stations sheets must equal the solver's value (StudyResult DataFrames) to the 16
significant digits a workbook stores.
"""

from __future__ import annotations

import math

import openpyxl
import pandas as pd
import pytest

from steamnet.workbook import write_workbook
from steamnet.workbook.columns import KNOWN
from wb_helpers import close, heading_row, sheet_frame, stand_in_checks
from wb_helpers import study, book  # noqa: F401 (fixtures)

# The headings of the headers sheet, written out here as the specification: every
# numeric column carries its unit (docs/results.md).
HEADER_HEADINGS = {
    "Pressure [bar(g)]": "p_barg", "Pressure [bar(a)]": "p_bara",
    "Temperature [degC]": "t_degc", "Saturation temperature [degC]": "t_sat_degc",
    "Superheat [K]": "superheat_k", "Enthalpy [kJ/kg]": "h_kj_kg",
    "Steam quality [-]": "quality", "Inflow [t/h]": "inflow_t_h",
    "Outflow [t/h]": "outflow_t_h", "Heat loss [kW]": "heat_loss_kw",
    "Mass balance residual [t/h]": "mass_residual_t_h",
    "Energy balance residual [kW]": "energy_residual_kw",
}
STATION_HEADINGS = {
    "Steam in [t/h]": "flow_t_h", "Spray water [t/h]": "spray_t_h",
    "Steam out [t/h]": "steam_out_t_h", "Outlet temperature [degC]": "t_out_degc",
    "Outlet setpoint [degC]": "t_set_degc", "Load [% of maximum]": "load_percent",
}


@pytest.fixture(scope="module")
def checked_book(study, tmp_path_factory):
    path = tmp_path_factory.mktemp("wbc") / "checked.xlsx"
    checks = stand_in_checks(study)
    write_workbook(path, study, checks=checks)
    return path, checks


def _compare(sheet: pd.DataFrame, solver: pd.DataFrame, keys: list[str],
             headings: dict[str, str]) -> int:
    """Compare every mapped numeric column row by row; returns the cells compared."""
    assert len(sheet) == len(solver)
    merged = sheet.merge(solver, left_on=[k.title() for k in keys], right_on=keys,
                         how="left", indicator=True, suffixes=("", "_solver"))
    assert (merged["_merge"] == "both").all()
    n = 0
    for heading, key in headings.items():
        assert heading in sheet.columns, heading
        for got, want in zip(merged[heading], merged[key]):
            assert close(got, want), (heading, got, want)
            n += 1
    return n


def test_header_sheet_equals_solver_read_by_pandas(study, book):
    sheet = sheet_frame(book, "Headers")
    n = _compare(sheet, study.headers, ["case", "header"], HEADER_HEADINGS)
    assert n == len(study.headers) * len(HEADER_HEADINGS)


def test_equipment_sheet_equals_solver_read_by_pandas(study, book):
    sheet = sheet_frame(book, "Equipment")
    eq = study.equipment
    numeric = [k for k in eq.columns if pd.api.types.is_float_dtype(eq[k])]
    headings = {KNOWN[k].heading: k for k in numeric}
    assert "Flow [t/h]" in headings and "Fuel duty [MW]" in headings
    n = _compare(sheet, eq, ["case", "item"], headings)
    assert n >= len(eq) * 20


def test_station_sheet_equals_solver_read_by_pandas(study, book):
    sheet = sheet_frame(book, "Stations")
    eq = study.equipment
    ld = eq[eq["type"] == "letdown"]
    assert set(sheet["Station"]) == set(study.model.table("letdown"))
    merged = sheet.merge(ld, left_on=["Case", "Station"], right_on=["case", "item"])
    assert len(merged) == len(ld) == len(sheet)
    for heading, key in STATION_HEADINGS.items():
        for got, want in zip(merged[heading], merged[key]):
            assert close(got, want), (heading, got, want)
    assert set(sheet["Checks"]) == {"not run"}


def test_every_numeric_cell_read_by_openpyxl_is_a_number_with_a_format(study, book):
    """openpyxl, independently: the cells hold numbers (not text), with a number
    format of fixed decimals, and the same values as the solver."""
    wb = openpyxl.load_workbook(book)
    ws = wb["Headers"]
    head = [c.value for c in ws[3]]
    by_key = {(r["case"], r["header"]): r for r in study.headers.to_dict("records")}
    n = 0
    for row in ws.iter_rows(min_row=4):
        sol = by_key[(row[0].value, row[2].value)]
        for heading, cell in zip(head, row):
            key = HEADER_HEADINGS.get(heading)
            if key is None:
                continue
            want = sol[key]
            if isinstance(want, float) and math.isnan(want):
                assert cell.value is None
                continue
            assert cell.data_type == "n" and close(cell.value, want), (heading, cell.value)
            assert cell.number_format != "General" and "0" in cell.number_format
            n += 1
    assert n > 100


def test_station_checks_values_and_verdict_fills(study, checked_book):
    path, checks = checked_book
    sheet = sheet_frame(path, "Stations")
    cap = checks[checks["check"] == "spray_capacity"]
    merged = sheet.merge(cap, left_on=["Case", "Station"], right_on=["case", "station"])
    assert len(merged) == len(cap)
    for got, want in zip(merged["Spray capacity: value [%]"], merged["value"]):
        assert close(got, want)
    assert set(merged["Spray capacity: verdict"]) <= {"ok", "warn", "fail", "not assessed",
                                                     "not applicable"}
    # openpyxl: a verdict cell is filled like the cover's legend of that verdict
    wb = openpyxl.load_workbook(path)
    legend = {}
    for row in wb["Cover"].iter_rows():
        if row[0].value in ("fail", "warn", "ok", "not assessed") and row[1].value:
            legend[row[0].value] = row[0].fill.fgColor.rgb
    assert len(set(legend.values())) == 4           # four distinct fills
    ws = wb["Stations"]
    hr = heading_row(path, "Stations")
    head = [c.value for c in ws[hr]]
    col = head.index("Spray capacity: verdict")
    seen = set()
    for row in ws.iter_rows(min_row=hr + 1):
        v = row[col].value
        if v in legend:
            assert row[col].fill.fgColor.rgb == legend[v]
            seen.add(v)
    assert "warn" in seen and "ok" in seen


def test_station_summary_counts_cases_per_worst_verdict(study, checked_book):
    """The summary's counts equal a pandas count of each case's worst verdict."""
    path, checks = checked_book
    order = {"fail": 0, "warn": 1, "not_assessed": 2, "ok": 3, "not_applicable": 4}
    worst = (checks.assign(r=checks["status"].map(order))
             .groupby(["station", "case"])["r"].min().reset_index())
    sheet = sheet_frame(path, "Station summary").set_index("Station")
    for (st, r), n in worst.groupby(["station", "r"]).size().items():
        word = {v: k for k, v in order.items()}[r].replace("_", " ")
        assert sheet.loc[st, f"Cases {word} [count]"] == n


def test_case_overview_closes_against_the_solver(study, book):
    """Cases side by side: totals equal the solver summary, and the steam raised by
    each boiler adds up to the total (a closed-form balance over the sheet's cells)."""
    sheet = sheet_frame(book, "Cases").set_index("Quantity")
    for c in study.cases:
        s = c.summary
        assert close(sheet.loc["Fuel duty, total [MW]", c.case], s["fuel_mw"])
        assert close(sheet.loc["Spray water [t/h]", c.case], s["spray_t_h"])
        assert close(sheet.loc["Make-up water [t/h]", c.case], s["makeup_t_h"])
        per = [float(sheet.loc[f"Steam raised, {b} [t/h]", c.case])
               for b in study.model.table("boiler")]
        assert math.isclose(sum(per), float(sheet.loc["Steam raised, total [t/h]",
                                                       c.case]), rel_tol=1e-12)
        assert sheet.loc["Solve status", c.case] == "solved"


def test_spray_on_overview_is_the_sum_of_station_sprays(study, book):
    """Closed-form check across sheets: plant spray = sum of the stations' spray."""
    ov = sheet_frame(book, "Cases").set_index("Quantity")
    st = sheet_frame(book, "Stations")
    for c in study.cases:
        total = st.loc[st["Case"] == c.case, "Spray water [t/h]"].sum()
        assert math.isclose(total, float(ov.loc["Spray water [t/h]", c.case]),
                            rel_tol=1e-12)
