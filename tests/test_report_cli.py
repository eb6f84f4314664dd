"""The README's demo command: the workbook answers the three study questions."""

from __future__ import annotations

import subprocess
import sys

import openpyxl

from conftest import DEMO


def test_report_with_studies_and_new_user(tmp_path):
    out = tmp_path / "orlewick-results.xlsx"
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "report", str(DEMO),
                        "--out", str(out), "--new-user", "LP=12 t/h", "--quiet"],
                       capture_output=True, text=True)
    # exit 1: the demo's trip case fails station checks by design; the workbook is
    # written all the same
    assert r.returncode == 1, r.stderr
    wb = openpyxl.load_workbook(out, read_only=True)
    for sheet in ("Cover", "Cases", "Headers", "Equipment", "Stations", "Station summary",
                  "Findings", "Trip screening", "Headroom", "Marginal steam cost",
                  "New consumer", "Inputs"):
        assert sheet in wb.sheetnames, sheet


def test_new_user_spec_without_equals_is_exit_2(tmp_path):
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "report", str(DEMO),
                        "--out", str(tmp_path / "x.xlsx"), "--new-user", "LP 12 t/h",
                        "--studies", "none"], capture_output=True, text=True)
    assert r.returncode == 2 and "HEADER=DEMAND" in r.stderr
    assert not (tmp_path / "x.xlsx").exists()
