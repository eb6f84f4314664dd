"""The command line on the demo plant: exit codes of steamnet/cli/__init__.py."""

from __future__ import annotations

import json
import subprocess
import sys

from conftest import DEMO, DATA


def run(*args, cwd=None):
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *args], capture_output=True,
                          text=True, cwd=cwd)


def test_demo_solves_all_cases(tmp_path):
    out = tmp_path / "r.json"
    r = run("solve", str(DEMO), "--json", str(out))
    # every case solves; winter-TG1-trip fails station checks by design: exit 1
    assert r.returncode == 1, r.stderr
    assert r.stdout.splitlines()[-1].endswith("check(s) fail -> exit 1")
    doc = json.loads(out.read_text())
    assert [c["case"] for c in doc["cases"]] == ["summer", "winter", "winter-TG1-trip"]
    assert all(c["status"] == "solved" for c in doc["cases"])
    assert "Traceback" not in r.stderr


def test_infeasible_case_exit_1_and_others_still_solved(tmp_path):
    r = run("solve", str(DATA / "two_header.toml"))
    assert r.returncode == 1
    assert "case 'toomuch': infeasible" in r.stdout
    assert "header 'HP' is short of steam" in r.stdout
    assert "case 'winter': solved" in r.stdout and "case 'summer': solved" in r.stdout


def test_bad_file_exit_2_no_traceback(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(DEMO.read_text().replace('pressure = "45 bar(g)"', 'pressure = "45"'))
    r = run("check", str(bad))
    assert r.returncode == 2
    assert "Traceback" not in r.stderr
    assert "bad.toml: header 'HP': field 'pressure'" in r.stderr


def test_version_and_help():
    assert run("--version").stdout.startswith("steamnet, version")
    assert "solve" in run("--help").stdout
