"""One verdict per balance: every study gives the findings that ``steamnet stations`` gives
on the same balance written as a case, and every command's exit code follows the
README's table.

The plant (tests/data/trip_stress.toml, invented) has a let-down desuperheater whose
spray suffices untripped but not after the backpressure turbine trips; so a station
check fails only after a change. The consistency checks compare two independent routes
to the same balance: the study's own (a trip made in its sweep, a user added by the
study, a headroom probe) and a model file that writes that balance as an ordinary case.
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from steamnet.evaluate import evaluate
from steamnet.model.load import load_model, loads_model
from steamnet.studies.consumer import new_consumer_impact
from steamnet.studies.headroom import header_headroom
from steamnet.studies.trips import screen_trips
from steamnet.sweep import solve_cases

DATA = Path(__file__).parent / "data"
PLANT = DATA / "trip_stress.toml"
TEXT = PLANT.read_text()


def _problems(findings, case: str) -> set[tuple[str, str, str]]:
    """(item, check, verdict) of every finding of ``case`` that is not ok."""
    f = findings[(findings["case"] == case) & (findings["status"] != "ok")]
    return set(zip(f["item"], f["check"], f["status"]))


def _stations_findings(text: str):
    """The findings `steamnet stations` reports for every case of a model text."""
    m = loads_model(text, source="written as a case")
    return evaluate(solve_cases(m, station_checks=True)).findings


def test_trip_shows_exactly_the_findings_of_the_tripped_case():
    m = load_model(PLANT)
    screened = screen_trips(m, ["normal"])
    f = screened.findings
    trip = f[(f["case"] == "normal") & (f["trip"] == "T1")]
    got = set(zip(trip["item"], trip["check"], trip["status"]))
    expected = _problems(_stations_findings(TEXT), "T1 tripped")
    assert got == expected
    assert ("PRV1", "spray_capacity", "fail") in got        # fails only after the trip
    untripped = _problems(_stations_findings(TEXT), "normal")
    assert ("PRV1", "spray_capacity", "fail") not in untripped
    table = screened.table
    assert set(table.loc[table["trip"] == "T1", "trip_verdict"]) == {"fail"}


def _with_user(demand: str) -> str:
    """The plant with one more LP user, written in the model file."""
    return TEXT.replace("[[case]]", f'''[[user]]
name = "Added"
header = "LP"
demand = "{demand}"

[[case]]''', 1)


def test_new_consumer_shows_the_findings_it_creates():
    """A 20 t/h user on LP: the let-down takes it, its spray passes the maximum in the
    normal case. The findings the study says the addition creates or worsens to fail are
    those that fail in the model with the user written in, and not without it."""
    m = load_model(PLANT)
    df = new_consumer_impact(m, "LP", demand="20 t/h", name="Added", cases=["normal"])
    fd = df[df["section"] == "finding"]
    made = set(zip(fd.loc[fd["verdict_with"] == "fail", "item"],
                   fd.loc[fd["verdict_with"] == "fail", "quantity"]))
    with_user = _problems(_stations_findings(_with_user("20 t/h")), "normal")
    without = _problems(_stations_findings(TEXT), "normal")
    expected = {(i, c) for i, c, s in with_user if s == "fail"} - \
        {(i, c) for i, c, s in without if s == "fail"}
    assert made == expected and ("PRV1", "spray_capacity") in made


def test_headroom_ends_where_the_stations_check_starts_to_fail():
    """The headline headroom on LP in the normal case: with it added, `stations` finds no
    new failing check; with one accuracy step more, the check the study names fails."""
    m = load_model(PLANT)
    df = header_headroom(m, ["normal"], headers=["LP"], accuracy="0.1 t/h")
    row = df.iloc[0]
    base = {(i, c) for i, c, s in _problems(_stations_findings(TEXT), "normal")
            if s == "fail"}

    def fails(d):
        f = _problems(_stations_findings(_with_user(f"{d:.6f} t/h")), "normal")
        return {(i, c) for i, c, s in f if s == "fail"} - base

    assert not fails(row["headroom_t_h"])
    after = fails(row["headroom_t_h"] + 0.1)
    assert (row["ends_item"], row["ends_with"]) in after
    assert row["headroom_t_h"] <= row["balance_headroom_t_h"]


TRICKLE = (DATA / "trickle_turndown.toml").read_text()


def test_headroom_ends_at_a_check_that_fails_over_a_middle_range_only():
    """LP is fed by T1 (first in its sequence, 25 of at most 30 t/h) and then by PRV1.
    Past 30 - 25 = 5 t/h added (closed form, the turbine's maximum less the user), PRV1
    opens from closed and its desuperheater passes less than its rated minimum 3 t/h:
    `stations` fails its turndown there, and passes it again once the let-down carries
    more (10 t/h added). The headline ends where the check first fails, not where a
    bisection over the whole range happens to land."""
    m = loads_model(TRICKLE, source="trickle")
    row = header_headroom(m, ["normal"], headers=["LP"], accuracy="0.1 t/h").iloc[0]
    assert row["headroom_t_h"] == pytest.approx(5.0, abs=0.1 + 1e-9)
    assert (row["ends_item"], row["ends_with"]) == ("PRV1", "steam_turndown")
    assert row["balance_headroom_t_h"] > 30

    def fails(d):
        text = TRICKLE.replace("[[case]]", f'''[[user]]
name = "Added"
header = "LP"
demand = "{d:.6f} t/h"

[[case]]''', 1)
        return {(i, c) for i, c, s in _problems(_stations_findings(text), "normal")
                if s == "fail"}

    assert not fails(row["headroom_t_h"])
    assert ("PRV1", "steam_turndown") in fails(row["headroom_t_h"] + 0.1)
    assert not fails(10.0)          # past the middle range the check passes again


# ---------------------------------------------------------------- exit codes
CLEAN = TEXT.replace('max_spray = "4 t/h"', 'max_spray = "8 t/h"')
INFEASIBLE = TEXT.replace('max_steam = "80 t/h"', 'max_steam = "25 t/h"')


def _run(*args) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "steamnet.cli", *map(str, args)],
                          capture_output=True, text=True, timeout=300)


@pytest.fixture(scope="module")
def plants(tmp_path_factory):
    d = tmp_path_factory.mktemp("plants")
    out = {}
    for name, text in (("failing", TEXT), ("clean", CLEAN), ("infeasible", INFEASIBLE)):
        p = d / f"{name}.toml"
        p.write_text(text)
        out[name] = p
    out["dir"] = d
    return out


COMMANDS = {
    "solve": lambda p, d: ["solve", p],
    "stations": lambda p, d: ["stations", p],
    "report": lambda p, d: ["report", p, "--out", d / f"{p.stem}.xlsx", "--quiet",
                            "--studies", "none"],
    "headroom": lambda p, d: ["headroom", p, "--quiet", "--accuracy", "2 t/h",
                              "--max-added", "40 t/h"],
    "marginal": lambda p, d: ["marginal", p, "--quiet"],
}


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_exit_codes_follow_the_table(plants, command):
    """0 on the clean plant; 1 where a check fails (the spray after the trip case) and
    where a case cannot balance (the boiler too small for the trip case); the last line
    says which (README, exit codes)."""
    codes = {}
    for name in ("clean", "failing", "infeasible"):
        r = _run(*COMMANDS[command](plants[name], plants["dir"]))
        codes[name] = r.returncode
        last = r.stdout.strip().splitlines()[-1]
        assert last.startswith("verdict:"), (command, name, r.stdout, r.stderr)
        assert last.endswith(f"exit {r.returncode}")
    assert codes == {"clean": 0, "failing": 1, "infeasible": 1}, codes


def test_trips_exit_codes(plants):
    """Trips judge the tripped balances: the clean plant's trip passes, the failing
    plant's trip fails a check, the small boiler cannot carry the trip."""
    codes = {n: _run("trips", plants[n], "--quiet", "--case", "normal").returncode
             for n in ("clean", "failing", "infeasible")}
    assert codes == {"clean": 0, "failing": 1, "infeasible": 1}


def test_add_user_exit_codes(plants):
    """Judged on what the addition changes: 2 t/h is harmless on the clean plant; 45 t/h
    takes the let-down's spray past its 8 t/h maximum in the normal case."""
    ok = _run("add-user", plants["clean"], "--header", "LP", "--demand", "2 t/h",
              "--case", "normal", "--quiet")
    bad = _run("add-user", plants["clean"], "--header", "LP", "--demand", "45 t/h",
               "--case", "normal", "--quiet")
    assert ok.returncode == 0, ok.stdout
    assert bad.returncode == 1, bad.stdout
    assert "because of the addition" in bad.stdout.splitlines()[-1]


def test_help_documents_the_exit_codes():
    for command in ("solve", "stations", "report", "trips", "add-user", "headroom",
                    "marginal", "cases"):
        r = _run(command, "--help")
        assert "Exit codes:" in r.stdout, command


@pytest.mark.parametrize("demand,code", [("2 t/h", 0), ("5.5 t/h", 1)])
def test_report_with_a_new_user_exits_on_what_the_addition_changes(tmp_path, demand,
                                                                   code):
    """On a plant whose checks all pass, `report --new-user` exits 1 when the addition
    makes a check fail (5.5 t/h on LP opens PRV1 below its desuperheater's rated
    minimum: the headroom test above puts the start at 30 - 25 = 5 t/h), as `add-user`
    does, and 0 when it does not; the line before the verdict says what the addition
    changes."""
    p = tmp_path / "trickle.toml"
    p.write_text(TRICKLE)
    r = _run("report", p, "--out", tmp_path / "r.xlsx", "--studies", "none",
             "--new-user", f"LP={demand}")
    a = _run("add-user", p, "--header", "LP", "--demand", demand)
    assert (r.returncode, a.returncode) == (code, code), r.stdout + r.stderr
    last = r.stdout.strip().splitlines()
    if code:
        assert last[-2] == "the new user: 1 check(s) fail because of the addition"
        assert last[-1] == "verdict: 1 check(s) fail because of the new user -> exit 1"
    else:
        assert last[-1].startswith("verdict: every case balances and no check fails")
