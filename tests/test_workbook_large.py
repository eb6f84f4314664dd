"""A long run (more cases than LARGE_RUN): the overview turns to one row per case, the
per-case bar chart is left out, the station summary counts cases (hours) per verdict.
Speed and memory of 8,760 cases are measured by benchmarks/bench_workbook.py, not here."""

from __future__ import annotations

import openpyxl
import pytest

from steamnet.workbook import write_workbook
from steamnet.workbook.run import LARGE_RUN
from wb_helpers import copies, demo_study, sheet_frame, stand_in_checks


@pytest.fixture(scope="module")
def long_book(tmp_path_factory):
    study = copies(demo_study(), LARGE_RUN + 15)
    checks = stand_in_checks(study)
    path = tmp_path_factory.mktemp("long") / "long.xlsx"
    write_workbook(path, study, checks=checks)
    return path, study, checks


def test_overview_one_row_per_case(long_book):
    path, study, _ = long_book
    df = sheet_frame(path, "Cases")
    assert df["Case"].tolist() == [c.case for c in study.cases]
    assert df["Spray water [t/h]"].tolist() == pytest.approx(
        study.summary["spray_t_h"].tolist(), rel=1e-14)


def test_no_streams_sheet_in_a_long_run(long_book):
    assert "Streams" not in openpyxl.load_workbook(long_book[0]).sheetnames


def test_no_bar_chart_but_envelopes(long_book):
    path, study, _ = long_book
    charts = openpyxl.load_workbook(path)["Station charts"]._charts
    kinds = {type(c).__name__ for c in charts}
    assert "BarChart" not in kinds and "ScatterChart" in kinds
    assert len(charts) == len(study.model.table("letdown")) + 1      # + the gain chart


def test_summary_worst_case_is_a_failing_or_warning_case(long_book):
    path, study, checks = long_book
    sheet = sheet_frame(path, "Station summary").set_index("Station")
    for st, grp in checks.groupby("station"):
        counts = sheet.loc[st, [c for c in sheet.columns if c.startswith("Cases ")
                                and "[count]" in c and "passing" not in c]]
        assert counts.drop("Cases [count]").sum() == grp["case"].nunique()
        worst = sheet.loc[st, "Worst verdict"]
        case = sheet.loc[st, "Worst case"]
        word = worst.replace(" ", "_")
        assert word in set(grp.loc[grp["case"] == case, "status"])
        order = ["fail", "warn", "not_assessed", "ok", "not_applicable"]
        assert order.index(word) == min(order.index(s) for s in grp["status"])
