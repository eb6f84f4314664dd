"""Helpers for the workbook tests: the demo study, and tables shaped like those of the
station checks (made here from the balance with closed-form formulas, so that the
workbook's formatting of verdicts, gains and findings can be exercised before the real
checks exist)."""

from __future__ import annotations

import math
import zipfile
from dataclasses import replace
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import steamnet
from conftest import DATA, DEMO

#: Limits used by the stand-in checks: docs/checks/index.md (spray capacity warn
#: above 85 %, fail above 100 %; approach fail below 8 K, warn below 10 K; common
#: practice, no source).
SPRAY_WARN, SPRAY_FAIL, APPROACH_FAIL, APPROACH_WARN = 85.0, 100.0, 8.0, 10.0


def demo_study():
    return steamnet.solve_cases(steamnet.load_model(DEMO))


@pytest.fixture(scope="module")
def study():
    """The demo's study (fixture; import it into a test module to use it)."""
    return demo_study()


@pytest.fixture(scope="module")
def book(study, tmp_path_factory):
    """The demo's workbook written without checks (fixture)."""
    from steamnet.workbook import write_workbook
    path = tmp_path_factory.mktemp("wb") / "demo.xlsx"
    write_workbook(path, study)
    return path


def two_header_study():
    """tests/data/two_header.toml: case 'toomuch' is infeasible (header HP short)."""
    return steamnet.solve_cases(steamnet.load_model(DATA / "two_header.toml"))


def stand_in_checks(study, *, advice: str = "") -> pd.DataFrame:
    """Rows shaped like the station checks' long table for every station and case.

    spray_capacity = 100 * spray / maximum spray of the model file [%];
    approach = outlet temperature - saturation temperature of the outlet header [K];
    control_gain ~ 1 / (steam + spray), docs/checks/gain_spread_spray.md (the gain of outlet
    temperature to spray flow falls inversely with total flow), scaled to 40 K/(t/h)
    at 1 t/h: a stand-in of the right shape, not a computed gain.
    """
    m = study.model
    rows = []
    for c in study.cases:
        if not len(c.equipment):
            continue
        tsat = dict(zip(c.headers["header"], c.headers["t_sat_degc"]))
        for r in c.equipment[c.equipment["type"] == "letdown"].to_dict("records"):
            st = r["item"]
            base = {"case": c.case, "station": st}
            if r["flow_t_h"] <= 0:
                for chk in ("spray_capacity", "approach", "control_gain"):
                    rows.append({**base, "check": chk, "value": np.nan, "limit": np.nan,
                                 "unit": "", "status": "not_applicable", "basis": "",
                                 "source": "", "advice": ""})
                continue
            ds = m.items["letdown"][st].desuperheater
            if ds is not None and ds.max_spray:
                cap = 100 * r["spray_t_h"] / (ds.max_spray * 3.6)
                status = ("fail" if cap > SPRAY_FAIL else "warn" if cap > SPRAY_WARN
                          else "ok")
                rows.append({**base, "check": "spray_capacity", "value": cap,
                             "limit": SPRAY_WARN, "unit": "%", "status": status,
                             "basis": "spray / maximum spray",
                             "source": "common practice, no source",
                             "advice": advice or "Spray is near the nozzle's maximum."})
            else:
                rows.append({**base, "check": "spray_capacity", "value": np.nan,
                             "limit": np.nan, "unit": "%", "status": "not_assessed",
                             "basis": "no maximum spray given", "source": "",
                             "advice": ""})
            appr = r["t_out_degc"] - tsat[r["to"]]
            status = ("fail" if appr < APPROACH_FAIL else "warn" if appr < APPROACH_WARN
                      else "ok")
            rows.append({**base, "check": "approach", "value": appr,
                         "limit": APPROACH_WARN, "unit": "K", "status": status,
                         "basis": "T_out - Tsat(P_out)", "source": "common practice",
                         "advice": advice})
            rows.append({**base, "check": "control_gain",
                         "value": 40.0 / (r["flow_t_h"] + r["spray_t_h"]),
                         "limit": np.nan, "unit": "K/(t/h)", "status": "ok",
                         "basis": "1/(steam + spray)", "source": "", "advice": ""})
    return pd.DataFrame(rows)


def copies(study, n: int):
    """A study of ``n`` synthetic cases: the demo cases repeated under new names."""
    cases = []
    for i in range(n):
        c = study.cases[i % len(study.cases)]
        name = f"h{i:05d}"
        cases.append(replace(c, case=name, summary={**c.summary, "case": name},
                             headers=c.headers.assign(case=name),
                             equipment=c.equipment.assign(case=name),
                             streams=c.streams.assign(case=name)))
    return steamnet.StudyResult(study.model, cases)


def heading_row(path: Path, sheet: str) -> int:
    """The row of a table sheet's headings (1-based): the first row of its Excel table
    (row 3, or row 4 under grouped headings)."""
    import openpyxl
    ws = openpyxl.load_workbook(path)[sheet]
    refs = [t.ref for t in ws.tables.values()]
    if not refs:
        return 3
    return openpyxl.utils.cell.range_boundaries(refs[0])[1]


def sheet_frame(path: Path, sheet: str) -> pd.DataFrame:
    """A sheet read by pandas with the calamine engine (the values: no openpyxl
    involved); the headings are in the first row of the sheet's table."""
    return pd.read_excel(path, sheet_name=sheet, header=heading_row(path, sheet) - 1,
                         engine="calamine")


def formulas_in(path: Path) -> list[str]:
    """Every formula element in the worksheets' XML (read from the zip, no library)."""
    out = []
    with zipfile.ZipFile(path) as z:
        for name in z.namelist():
            if name.startswith("xl/worksheets/") and name.endswith(".xml"):
                text = z.read(name).decode("utf-8")
                if "<f>" in text or "<f " in text:
                    out.append(name)
    return out


def close(a, b, rel=1e-14) -> bool:
    """Equal to the 16 significant digits a workbook stores, NaN equal to missing."""
    a_nan = a is None or (isinstance(a, float) and math.isnan(a))
    b_nan = b is None or (isinstance(b, float) and math.isnan(b))
    if a_nan or b_nan:
        return a_nan and b_nan
    return math.isclose(float(a), float(b), rel_tol=rel, abs_tol=1e-300)
