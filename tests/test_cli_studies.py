"""The study commands through the command line: exit codes, messages, JSON export,
and that nothing the user had is lost on bad input or Ctrl-C."""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time

import pytest
from click.testing import CliRunner

from conftest import DEMO, ROOT

TABLE = ROOT / "cases" / "orlewick_cases.csv"
HOURLY = ROOT / "cases" / "orlewick_hourly.csv"


def run(*args, cwd=None):
    """The command in a new process, as a user runs it."""
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *map(str, args)],
                          capture_output=True, text=True, cwd=cwd)


def invoke(*args):
    """The command in this process (faster; same error handling as the real one)."""
    from steamnet.cli import main
    r = CliRunner().invoke(main, [str(a) for a in args])
    if r.exception is not None and not isinstance(r.exception, SystemExit):
        raise r.exception                    # a traceback the user would have seen
    r.returncode = r.exit_code
    return r


@pytest.mark.parametrize("heading, cells, words", [
    ("user.PM9 dryer section.demand [t/h]", "30", "row 1: field "
     "'user.PM9 dryer section.demand [t/h]': no user named 'PM9 dryer section'"),
    ("user.PM1 dryer section.demand [bar(g)]", "30", "row 1: field "
     "'user.PM1 dryer section.demand [bar(g)]': 'bar(g)' is not a unit of mass flow"),
    ("user.PM1 dryer section.demand [t/h]", "thirty", "row 2: field "
     "'user.PM1 dryer section.demand [t/h]': 'thirty' is not a number"),
])
def test_bad_case_table_exit_2_names_file_row_column(tmp_path, heading, cells, words):
    bad = tmp_path / "bad.csv"
    bad.write_text(f"case,{heading}\nspring,{cells}\n")
    out = tmp_path / "out.json"
    out.write_text("previous results")
    r = run("cases", DEMO, bad, "--json", out)
    assert r.returncode == 2, r.stderr
    assert "Traceback" not in r.stderr
    assert f"{bad}: {words}" in r.stderr
    assert out.read_text() == "previous results"        # nothing overwritten


def test_missing_case_reference_exit_2(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("case,based_on,user.LP tracing.demand [t/h]\na,,1\nb,autumn,2\n")
    r = run("cases", DEMO, bad)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert f"{bad}: row 3 (case 'b'): field 'based_on': based_on 'autumn': no such case" \
        in r.stderr


def test_bad_table_in_another_study_exit_2(tmp_path):
    bad = tmp_path / "bad.csv"
    bad.write_text("case,turbine.TG1.mode\na,broken\n")
    r = invoke("trips", DEMO, "--table", bad)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert "row 2: field 'turbine.TG1.mode': 'broken' is not allowed" in r.stderr


def test_bad_options_exit_2():
    for args in (["add-user", DEMO, "--header", "LP", "--demand", "12"],
                 ["add-user", DEMO, "--header", "XP", "--demand", "12 t/h"],
                 ["headroom", DEMO, "--return", "40 %"],
                 ["marginal", DEMO, "--case", "autumn"],
                 ["trips", DEMO, "--base", "winter"]):
        r = invoke(*args)
        assert r.returncode == 2, (args, r.stdout, r.stderr)
        assert "Traceback" not in r.stderr and r.stderr.startswith("error: ")


def test_cases_command_demo_table_json(tmp_path):
    out = tmp_path / "cases.json"
    r = run("cases", DEMO, TABLE, "--json", out)
    # the demo's cases fail station checks by design: exit 1, said on the last line
    assert r.returncode == 1, r.stderr
    assert "check(s) fail" in r.stdout.splitlines()[-1]
    doc = json.loads(out.read_text())
    rows = doc["studies"]["case_table"]["rows"]
    assert [x["case"] for x in rows] == ["spring", "cold-snap", "cold-snap-TG1-trip",
                                         "PM1-shutdown", "summer-TG2-trip",
                                         "winter-HRSG-off"]
    assert len(doc["cases"]) == 6 and {c["status"] for c in doc["cases"]} == {"solved"}
    assert "6 solved" in r.stdout
    assert "\x1b" not in r.stderr and "it/s" not in r.stderr   # no bar without a TTY


def test_cases_command_workers_give_the_same_results(tmp_path):
    """--workers 2 solves the hours in two processes: the same printed table and JSON
    (apart from the time written and the solve times)."""
    day = tmp_path / "two-days.csv"
    day.write_text("\n".join(HOURLY.read_text().splitlines()[:49]) + "\n")
    docs = []
    for w in ("1", "2"):
        out = tmp_path / f"w{w}.json"
        r = run("cases", DEMO, day, "--workers", w, "--rows", "0", "--json", out)
        assert r.returncode in (0, 1) and r.stdout.splitlines()[-1].startswith(
            "verdict:"), r.stderr
        assert "48 solved" in r.stdout
        doc = json.loads(out.read_text())
        doc.pop("written_utc")
        for c in doc["cases"]:
            c["summary"].pop("solve_ms")
        docs.append((r.stdout.replace(str(out), "OUT"), doc))
    assert docs[0] == docs[1]


def test_trips_command_exit_1_with_findings_and_json(tmp_path):
    out = tmp_path / "trips.json"
    r = invoke("trips", DEMO, "--boilers", "--json", out, "--rows", "5")
    assert r.returncode == 1
    assert "CANNOT BALANCE" in r.stdout and "header 'HP' is short of steam" in r.stdout
    rows = json.loads(out.read_text())["studies"]["trip_screening"]["rows"]
    assert rows[0]["row"] == "finding"
    assert {x["trip"] for x in rows} >= {"TG1", "TG2", "TP1-feedpump", "B1-bark"}


def test_trips_on_a_case_that_balances_after_every_trip():
    """Summer balances after every trip, but TG1's trip drives PRV-ML's valve past its
    travel limit: the trip's own findings fail a check, so exit 1."""
    r = invoke("trips", DEMO, "--case", "summer")
    assert r.returncode == 1, r.stdout + r.stderr
    assert "0 leave the plant unable to balance" in r.stdout
    assert "letdown_valve_travel" in r.stdout
    assert r.stdout.splitlines()[-1].startswith("verdict: ")


def test_add_user_headroom_marginal_commands(tmp_path):
    r = invoke("add-user", DEMO, "--header", "LP", "--demand", "12 t/h", "--return", "60 %",
            "--return-temperature", "90 degC", "--case", "winter", "--json",
            tmp_path / "u.json")
    assert r.returncode in (0, 1), r.stderr
    assert "because of the addition" in r.stdout.splitlines()[-1]
    assert "case 'winter':" in r.stdout and "new consumer" in r.stdout
    doc = json.loads((tmp_path / "u.json").read_text())
    assert doc["studies"]["new_consumer"]["user"]["header"] == "LP"
    r = invoke("headroom", DEMO, "--json", tmp_path / "h.json")
    assert r.returncode == 1, r.stderr      # the demo's trip case fails checks itself
    rows = json.loads((tmp_path / "h.json").read_text())["studies"]["headroom"]["rows"]
    assert len(rows) == 12 and rows[0]["headroom_t_h"] <= rows[-1]["headroom_t_h"]
    r = invoke("marginal", DEMO, "--case", "winter", "--header", "LP")
    # winter fails let-down valve noise and relief checks of its own: exit 1, said last
    assert r.returncode == 1 and "check(s) fail" in r.stdout.splitlines()[-1], r.stderr
    assert "marginal EUR/t" in r.stdout and "winter  LP" in r.stdout


def test_table_cases_feed_the_other_studies(tmp_path):
    r = invoke("headroom", DEMO, "--table", TABLE, "--case", "cold-snap", "--header", "LP")
    assert r.returncode in (0, 1) and r.stdout.splitlines()[-1].endswith(
        f"exit {r.returncode}"), r.stderr
    assert "cold-snap  LP" in r.stdout


def test_ctrl_c_stops_cleanly_and_keeps_nothing_half_written(tmp_path):
    profile = tmp_path / "month.csv"          # a year of hours: far longer than 1 s
    profile.write_text(HOURLY.read_text())
    out = tmp_path / "year.json"
    out.write_text("previous results")
    p = subprocess.Popen([sys.executable, "-m", "steamnet.cli", "cases", str(DEMO),
                          str(profile), "--json", str(out)], stdout=subprocess.PIPE,
                         stderr=subprocess.PIPE, text=True)
    # wait until the study has started solving (the line goes to stderr first)
    line = p.stderr.readline()
    assert "solving 8760 cases" in line, line
    time.sleep(1.0)
    p.send_signal(signal.SIGINT)
    stdout, stderr = p.communicate(timeout=60)
    assert p.returncode == 130, (stdout, stderr)
    assert "interrupted" in stderr and "Traceback" not in stderr
    assert out.read_text() == "previous results"
    assert sorted(os.listdir(tmp_path)) == ["month.csv", "year.json"]   # no temp files


def test_case_that_cannot_balance_is_reported_and_the_others_still_run(tmp_path):
    table = tmp_path / "t.csv"
    table.write_text("case,based_on,boiler.B2-gas.max_steam [t/h]\n"
                     "small-B2,winter,60\nlarge-B2,winter,120\n")
    out = tmp_path / "r.json"
    r = invoke("cases", DEMO, table, "--json", out)
    assert r.returncode == 1
    assert "case 'small-B2': infeasible: header 'HP' is short of steam" in r.stdout
    rows = json.loads(out.read_text())["studies"]["case_table"]["rows"]
    assert [(x["case"], x["status"]) for x in rows] == [("small-B2", "infeasible"),
                                                       ("large-B2", "solved")]
