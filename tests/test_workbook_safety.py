"""Writing the workbook safely, reproducibly, and from the command line (docs/workbook.md).

A failed write never leaves a half-written file nor destroys the previous one; the same
inputs give the same cells (apart from the run's time on the cover); the ``report``
command exits 0/1/2/3 like the other commands (steamnet/cli/__init__.py).
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile

import openpyxl
import pytest

from conftest import DATA, DEMO
from steamnet.io.atomic import OutputError
from steamnet.workbook import write_csv_folder, write_workbook
from wb_helpers import stand_in_checks
from wb_helpers import study  # noqa: F401 (fixtures)


def _leftovers(folder):
    return [p.name for p in folder.iterdir() if p.name.startswith(".")]


def test_parent_is_a_file_clear_error_nothing_written(study, tmp_path):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("x")
    with pytest.raises(OutputError, match="not-a-folder"):
        write_workbook(blocker / "r.xlsx", study)
    assert blocker.read_text() == "x"
    assert _leftovers(tmp_path) == []


def test_replace_fails_old_workbook_intact_no_temp_left(study, tmp_path, monkeypatch):
    target = tmp_path / "r.xlsx"
    write_workbook(target, study)
    before = target.read_bytes()

    def refuse(src, dst):
        raise PermissionError(13, "Permission denied")
    monkeypatch.setattr(os, "replace", refuse)
    with pytest.raises(OutputError, match="open in another program"):
        write_workbook(target, study, checks=stand_in_checks(study))
    assert target.read_bytes() == before
    assert _leftovers(tmp_path) == []
    openpyxl.load_workbook(target)          # still a whole workbook


def test_failure_while_writing_keeps_old_file(study, tmp_path, monkeypatch):
    target = tmp_path / "r.xlsx"
    target.write_bytes(b"previous results")
    import steamnet.workbook.writer as writer
    scratch = tmp_path / "scratch"       # where openpyxl streams its sheets
    scratch.mkdir()
    monkeypatch.setattr(tempfile, "tempdir", str(scratch))

    def boom(*a, **k):
        raise RuntimeError("drawing failed")
    monkeypatch.setattr(writer, "network_png", boom)
    with pytest.raises(RuntimeError):
        write_workbook(target, study)
    assert target.read_bytes() == b"previous results"
    assert _leftovers(tmp_path) == []
    assert list(scratch.iterdir()) == []


def test_new_file_gets_ordinary_permissions(study, tmp_path):
    target = tmp_path / "r.xlsx"
    write_workbook(target, study)
    umask = os.umask(0)
    os.umask(umask)
    assert target.stat().st_mode & 0o777 == 0o666 & ~umask


def _cells(path):
    wb = openpyxl.load_workbook(path)
    out = {}
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if c.value is not None:
                    out[(ws.title, c.coordinate)] = c.value
    return out


def test_same_inputs_same_cells(study, tmp_path):
    checks = stand_in_checks(study)
    a, b = tmp_path / "a.xlsx", tmp_path / "b.xlsx"
    write_workbook(a, study, checks=checks)
    write_workbook(b, study, checks=checks)
    ca, cb = _cells(a), _cells(b)
    run_at = [k for k, v in ca.items() if k[0] == "Cover" and v == "Run at"]
    assert len(run_at) == 1
    stamp = ("Cover", "B" + run_at[0][1][1:])
    ca.pop(stamp), cb.pop(stamp)
    assert ca == cb and len(ca) > 3000


def test_csv_folder_on_a_file_clear_error(study, tmp_path):
    f = tmp_path / "out"
    f.write_text("keep")
    with pytest.raises(OutputError, match="is a file"):
        write_csv_folder(f, study)
    assert f.read_text() == "keep"


def run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *args],
                          capture_output=True, text=True, cwd=cwd)


def test_report_command_exit_codes(tmp_path):
    out = tmp_path / "r.xlsx"
    r = run("report", str(DEMO), "--out", str(out), "--csv", str(tmp_path / "csv"))
    assert r.returncode == 1, r.stderr        # the demo fails checks by design
    assert out.exists() and (tmp_path / "csv" / "headers.csv").exists()
    r = run("report", str(DATA / "two_header.toml"), "--out", str(tmp_path / "t.xlsx"))
    assert r.returncode == 1 and "toomuch" in r.stdout
    assert (tmp_path / "t.xlsx").exists()            # written, with the case marked
    r = run("report", str(DEMO), "--out", str(tmp_path / "missing" / "r.xlsx"))
    assert r.returncode == 3 and "does not exist" in r.stderr
    r = run("report", str(DEMO), "--out", str(out), "--network-case", "nope")
    assert r.returncode == 2 and "nope" in r.stderr
    r = run("report", str(DEMO), "--out", str(out), "--case", "autumn")
    assert r.returncode == 2 and "autumn" in r.stderr
    for res in (r,):
        assert "Traceback" not in res.stderr


def test_report_of_one_case_draws_that_case(tmp_path):
    out = tmp_path / "r.xlsx"
    r = run("report", str(DEMO), "--out", str(out), "--case", "winter",
            "--network-case", "winter")
    assert r.returncode == 1, r.stderr      # winter fails a noise check of its own
    wb = openpyxl.load_workbook(out)
    assert "winter" in wb["Network"]["A2"].value
    assert len(wb["Network"]._images) == 1
