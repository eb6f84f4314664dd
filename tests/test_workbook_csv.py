"""The CSV export: the same tables as the workbook, numbers at full precision
(docs/workbook.md). Read back with pandas' CSV reader and compared with the solver's tables."""

from __future__ import annotations

import csv

import pandas as pd
import pytest

from steamnet.workbook import write_csv_folder
from steamnet.workbook.columns import KNOWN
from wb_helpers import stand_in_checks
from wb_helpers import study  # noqa: F401 (fixtures)

EXPECTED = {"run", "cases", "case_differences", "headers", "equipment", "streams",
            "stations", "station_summary", "station_checks", "findings", "inputs"}


@pytest.fixture(scope="module")
def folder(study, tmp_path_factory):
    out = tmp_path_factory.mktemp("csv") / "tables"
    files = write_csv_folder(out, study, checks=stand_in_checks(study, advice="=2+2"))
    assert {p.stem for p in files} == EXPECTED
    return out


def test_headers_csv_equals_solver_exactly(study, folder):
    """repr() of a float reads back as the same float: the CSV is exact."""
    df = pd.read_csv(folder / "headers.csv")
    sol = study.headers
    assert len(df) == len(sol)
    for key in ("p_barg", "t_degc", "t_sat_degc", "superheat_k", "h_kj_kg",
                "inflow_t_h", "mass_residual_t_h"):
        assert df[KNOWN[key].heading].tolist() == sol[key].tolist(), key


def test_cases_csv_is_one_row_per_case(study, folder):
    df = pd.read_csv(folder / "cases.csv")
    assert df["Case"].tolist() == [c.case for c in study.cases]
    assert df["Fuel duty, total [MW]"].tolist() == study.summary["fuel_mw"].tolist()


def test_formula_like_text_is_defused(folder):
    with open(folder / "findings.csv", newline="", encoding="utf-8") as fh:
        rows = list(csv.DictReader(fh))
    advice = {r["Advice"] for r in rows if "2+2" in r["Advice"]}
    assert advice == {"'=2+2"}
    assert all(not v.startswith(("=", "+", "@")) for r in rows for v in r.values())


def test_station_checks_csv_keeps_verdicts(study, folder):
    df = pd.read_csv(folder / "station_checks.csv")
    checks = stand_in_checks(study)
    assert len(df) == len(checks)
    assert set(df["Verdict"]) == {s.replace("_", " ") for s in checks["status"]}
