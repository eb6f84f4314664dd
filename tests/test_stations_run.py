"""Station checks wired to the balance: the demo plant."""

from __future__ import annotations

import subprocess
import sys

import pytest

import steamnet
from steamnet.errors import ModelErrors
from steamnet.stations.run import run_checks
from conftest import DEMO


@pytest.fixture(scope="module")
def demo_report():
    model = steamnet.load_model(DEMO)
    study = steamnet.solve_cases(model)
    return study, run_checks(study)


#: The single-point checks of docs/checks/index.md.
POINT_IDS = {"approach_to_saturation", "steam_turndown", "spray_capacity", "spray_turndown",
             "letdown_valve_travel", "spray_valve_travel", "spray_water_pressure",
             "downstream_velocity", "sensor_distance", "relief_cover",
             "letdown_valve_noise", "spray_valve_noise", "spray_valve_cavitation"}


def test_every_station_every_check_every_case(demo_report):
    study, rep = demo_report
    stations = list(study.model.table("letdown"))
    checks = rep.checks
    for case in [c.case for c in study.cases]:
        for st in stations:
            got = set(checks[(checks.case == case) & (checks.station == st)]["check"])
            assert got == POINT_IDS, (case, st)
    across = checks[checks.case == "all cases"]
    assert set(across["station"]) == set(stations)


def test_trip_case_shows_stations_under_stress(demo_report):
    """After the TG1 trip the HP->LP station carries the turbine's steam: its spray
    use rises past the warning limit (85 %, common practice, no source)."""
    study, rep = demo_report
    c = rep.checks
    row = c[(c.case == "winter-TG1-trip") & (c.station == "PRV-HL")
            & (c.check == "spray_capacity")].iloc[0]
    assert row["status"] in ("warn", "fail")
    assert row["value"] > 85.0
    before = c[(c.case == "winter") & (c.station == "PRV-HL")
               & (c.check == "spray_capacity")].iloc[0]
    assert before["status"] == "not_applicable"      # closed before the trip


def test_spray_in_report_equals_balance(demo_report):
    study, rep = demo_report
    eq = study.equipment
    for _, g in rep.gains.iterrows():
        row = eq[(eq.case == g["case"]) & (eq["item"] == g["station"])].iloc[0]
        assert g["spray_t_h"] == pytest.approx(row["spray_t_h"], rel=1e-12)


def test_limits_from_model_file(tmp_path):
    text = DEMO.read_text().replace("[prices]", '[station_limits]\nspray_capacity_warn = "99 %"\n\n[prices]', 1)
    m = steamnet.loads_model(text, source="x.toml")
    assert m.stations["PRV-HL"].limits.spray_capacity_warn == pytest.approx(0.99)


def test_bad_limit_is_model_error():
    text = DEMO.read_text().replace("[prices]", '[station_limits]\nspray_capacity_wrn = "99 %"\n\n[prices]', 1)
    with pytest.raises(ModelErrors) as ei:
        steamnet.loads_model(text, source="x.toml")
    assert "spray_capacity_wrn" in str(ei.value)


def test_cli_exit_1_when_a_check_fails():
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "stations", str(DEMO)],
                       capture_output=True, text=True)
    assert r.returncode == 1
    # verdicts as the workbook and the JSON export write them (docs/results.md)
    first = [l for l in r.stdout.splitlines() if l.strip().startswith(("fail ", "warn "))]
    assert first and first[0].strip().startswith("fail")     # worst first


def test_idle_station_rows_equal_a_fresh_check(demo_report):
    """The rows of a station that passes no steam are reused across cases; they must
    equal what check_point gives for that case."""
    from steamnet.stations.checks import check_point
    from steamnet.stations.run import station_points
    study, rep = demo_report
    data = study.model.stations
    seen = 0
    for cr in study.cases:
        for p in station_points(cr):
            if p.m_steam > 0:
                continue
            fresh = check_point(data[p.station], p)
            got = rep.checks[(rep.checks.case == p.case) & (rep.checks.station == p.station)]
            assert list(got["check"]) == [r.check for r in fresh]
            assert list(got["status"]) == [r.status.value for r in fresh]
            assert list(got["advice"]) == [r.advice for r in fresh]
            seen += 1
    assert seen >= 2
