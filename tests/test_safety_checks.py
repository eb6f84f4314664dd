"""Relief cover, valve noise and spray valve cavitation checks: verdicts at both sides of
each limit, "not assessed" naming the missing field, limits labelled with their origin.
"""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import pytest
from CoolProp.CoolProp import PropsSI

from steamnet import properties as props
from steamnet.calc.noise import PipeWall, steam_valve_noise
from steamnet.calc.valve import size_steam_valve
from steamnet.errors import ModelError, ModelErrors
from steamnet.model.load import load_model, loads_model
from steamnet.model.stations import (DesuperheaterData, ReliefData, ReliefDevice,
                                    StationData, StationLimits, StationPoint, ValveData)
from steamnet.model.stations import parse_limits, station_data
from steamnet.stations.safety import (check_letdown_noise, check_relief_cover,
                                      check_relief_cover_rated, check_spray_cavitation)

DEMO = Path(__file__).resolve().parents[1] / "cases" / "orlewick.toml"
P_ATM = 101325.0
P1, T1 = 46e5, 703.15            # upstream header
P_SET = 8e5                      # downstream relief set pressure, absolute
KV, XT = 55.0, 0.70
SPRAY = 2.0                      # kg/s maximum spray


def _choked_flow() -> float:
    """Choked flow of the valve, IEC 60534-2-1 Eq. (8b) with x = Fgamma xT, Y = 2/3,
    N6 = 31.6 (Kv, kg/h, bar, kg/m3, from the definition of Kv), CoolProp IF97."""
    w = "IF97::Water"
    gamma = PropsSI("C", "P", P1, "T", T1, w) / PropsSI("O", "P", P1, "T", T1, w)
    rho = PropsSI("D", "P", P1, "T", T1, w)
    x = gamma / 1.4 * XT
    return 1000 / math.sqrt(1000) * KV * 2 / 3 * math.sqrt(x * P1 / 1e5 * rho) / 3600


def _data(capacity: float | None, **kw) -> StationData:
    relief = ReliefData(header="MP", devices=(ReliefDevice("PSV", P_SET, 0.10,
                                                          capacity=capacity),),
                        p_atm=P_ATM, **kw)
    return StationData(name="S", valve=ValveData(rated_kv=KV, xt=XT, fl=0.85, fd=0.46,
                                                 diameter=0.1, pipe_wall=0.0093),
                       desuperheater=DesuperheaterData(max_spray=SPRAY),
                       outlet_pipe_diameter=0.25, relief=relief)


def _point(m=8.0) -> StationPoint:
    return StationPoint(case="c", station="S", p_in=P1, h_in=props.h_pt(P1, T1),
                        p_out=14e5, m_steam=m, m_spray=0.5, h_out=props.h_pt(14e5, 500.0))


@pytest.mark.parametrize("share, status", [(0.85, "ok"), (0.95, "warn"), (1.05, "fail")])
def test_relief_cover_verdicts_either_side_of_90_and_100_percent(share, status):
    # load = choked failed-open flow + maximum spray (spray fails open by default);
    # limits 90 % warn (common practice, no source) and 100 % fail
    load = _choked_flow() + SPRAY
    r = check_relief_cover(_data(load / share), _point())
    assert r.status == status
    assert r.value == pytest.approx(100 * share, rel=3e-3)   # N6 to three digits


def test_relief_cover_spray_closed_and_credit():
    flow = _choked_flow()
    cap = flow / 0.5
    closed = check_relief_cover(_data(cap, spray_fails_open=False), _point())
    assert closed.value == pytest.approx(50.0, rel=3e-3)
    credited = check_relief_cover(_data(cap, spray_fails_open=False,
                                        credits=(("user 'U'", flow / 4),)), _point())
    assert credited.value == pytest.approx(37.5, rel=3e-3)   # (1 - 1/4) / 2
    assert "credited user 'U'" in credited.basis


def test_relief_cover_not_assessed_names_the_field():
    d = _data(None)
    r = check_relief_cover(d, _point())
    assert r.status == "not_assessed" and "orifice_area" in r.advice
    bare = dataclasses.replace(d, relief=ReliefData(header="MP"))
    assert "[[header.relief_valves]]" in check_relief_cover(bare, _point()).advice
    orifice_no_kd = dataclasses.replace(d, relief=ReliefData(header="MP", devices=(
        ReliefDevice("PSV", P_SET, 0.1, area=1e-3),)))
    assert "discharge_coefficient" in check_relief_cover(orifice_no_kd, _point()).advice
    rated = check_relief_cover_rated(d, [_point()], case="all cases")
    assert rated.status == "not_assessed" and "letdown.max_inlet_pressure" in rated.advice


def test_relief_cover_rated_uses_the_rated_upstream_state():
    load = _choked_flow() + SPRAY
    d = _data(load / 0.85, max_inlet_pressure=P1, max_inlet_temperature=T1)
    r = check_relief_cover_rated(d, [], case="all cases")
    assert r.case == "all cases" and r.status == "ok"
    assert r.basis.startswith("at the rated maximum upstream state")
    assert r.value == pytest.approx(85.0, rel=3e-3)


def _noise_level() -> float:
    st = props.state_pt(P1, T1)
    kv = size_steam_valve(P1, 14e5, 8.0, st, fl=0.85, xt=XT, fd=0.46, d_valve=0.1).kv
    return steam_valve_noise(8.0, P1, 14e5, st, kv=kv, fl=0.85, fd=0.46, d_valve=0.1,
                             pipe=PipeWall(0.25, 0.0093)).level


@pytest.mark.parametrize("offset, status", [(+1.0, "ok"), (-1.0, "warn")])
def test_noise_verdicts_either_side_of_the_warn_limit(offset, status):
    level = _noise_level()
    lim = StationLimits(noise_warn=level + offset, noise_fail=level + 30)
    r = check_letdown_noise(dataclasses.replace(_data(1.0), limits=lim), _point())
    assert r.status == status
    assert r.value == pytest.approx(level, abs=1e-9)


@pytest.mark.parametrize("offset, status", [(+1.0, "warn"), (-1.0, "fail")])
def test_noise_verdicts_either_side_of_the_fail_limit(offset, status):
    level = _noise_level()
    lim = StationLimits(noise_warn=level - 20, noise_fail=level + offset)
    r = check_letdown_noise(dataclasses.replace(_data(1.0), limits=lim), _point())
    assert r.status == status


def test_default_noise_limits_and_sources():
    lim = StationLimits()
    assert (lim.noise_warn, lim.noise_fail) == (85.0, 110.0)
    assert "2003/10/EC" in lim.source("noise_warn")
    assert lim.source("noise_fail").startswith("common practice, no source")
    assert (lim.relief_cover_warn, lim.relief_cover_fail) == (0.90, 1.00)
    assert lim.source("relief_cover_warn") == "common practice, no source"


def test_noise_not_assessed_names_the_field():
    d = dataclasses.replace(_data(1.0), valve=ValveData(rated_kv=KV, xt=XT, fl=0.85,
                                                        diameter=0.1))
    r = check_letdown_noise(d, _point())
    assert r.status == "not_assessed"
    assert "valve.fd" in r.advice and "valve.pipe_wall" in r.advice


def test_spray_cavitation_not_assessed_without_water_data():
    r = check_spray_cavitation(_data(1.0), _point())
    assert r.status == "not_assessed" and "spray_valve" in r.advice


def test_overridden_limit_is_labelled_with_its_origin():
    lim = parse_limits({"noise_warn": "80 dB(A)"}, origin="model file, [station_limits]")
    assert lim.noise_warn == 80.0
    assert lim.source("noise_warn") == "model file, [station_limits]"
    assert lim.source("noise_fail") == StationLimits.LIMIT_SOURCES["noise_fail"]
    with pytest.raises(ModelErrors, match="sound level"):
        parse_limits({"noise_warn": "80 dB"})


def test_limits_from_the_model_file_carry_their_origin():
    text = DEMO.read_text(encoding="utf-8")
    text = text.replace('[prices]', '[station_limits]\nnoise_warn = "80 dB(A)"\n\n'
                        '[prices]', 1)
    text = text.replace('name = "PRV-LL"', 'name = "PRV-LL"\nlimits = { approach_warn '
                        '= "11 K" }', 1)
    data = station_data(loads_model(text, source="demo.toml"))
    assert data["PRV-HM"].limits.source("noise_warn") == "model file, [station_limits]"
    ll = data["PRV-LL"].limits
    assert ll.source("approach_warn") == "model file, letdown 'PRV-LL' limits"
    assert ll.source("noise_warn") == "model file, [station_limits]"
    assert ll.source("approach_fail") == "common practice, no source"


def test_relief_credit_must_name_an_outflow_of_the_outlet_header():
    text = DEMO.read_text(encoding="utf-8").replace(
        'name = "PRV-LL"', 'name = "PRV-LL"\nrelief_credit = [{ user = "Sootblowing", '
        'flow = "1 t/h" }]', 1)
    with pytest.raises(ModelErrors) as exc:
        station_data(loads_model(text, source="demo.toml"))
    e = exc.value.errors[0]
    assert (e.file, e.field) == ("demo.toml", "user") and "LLP" in e.message


@pytest.mark.parametrize("old, new, field", [
    ('name = "MP-PSV1"\n', 'name = "MP-PSV1"\norifice_area = "0.01 m^2"\n', "orifice"),
    ('set_pressure = "16 bar(g)"', 'set_pressure = "12 bar(g)"', "relief_valves"),
    ('set_pressure = "16 bar(g)"', 'set_pressure = "16 bar"', "set_pressure"),
])
def test_bad_relief_valve_data_names_the_field(old, new, field):
    text = DEMO.read_text(encoding="utf-8")
    assert old in text
    with pytest.raises(ModelError) as exc:
        loads_model(text.replace(old, new, 1), source="demo.toml")
    assert field in str(exc.value)


def test_demo_relief_cover_fails_in_one_case_only():
    # the demo's LLP header is deliberately marginal (cases/orlewick.toml)
    from steamnet.sweep import solve_cases
    from steamnet.stations.run import run_checks
    m = load_model(DEMO)
    data = station_data(m)
    report = run_checks(solve_cases(m, station_checks=data), data=data)
    c = report.checks
    rc = c[c["check"] == "relief_cover"]
    fails = rc[rc["status"] == "fail"]
    assert list(zip(fails["station"], fails["case"])) == [("PRV-LL", "winter-TG1-trip")]
    flowing = c[(c["check"] == "approach_to_saturation")
                & (c["status"] != "not_applicable")]
    for check in ("relief_cover", "letdown_valve_noise"):
        rows = c[c["check"] == check].set_index(["station", "case"])
        for key in zip(flowing["station"], flowing["case"]):
            assert rows.loc[key, "status"] in ("ok", "warn", "fail"), (check, key)


def test_rows_of_an_overridden_limit_name_where_it_was_set():
    # every check's row, old and new, carries the origin of an overridden limit
    text = DEMO.read_text(encoding="utf-8").replace(
        '[prices]', '[station_limits]\nspray_capacity_warn = "80 %"\n'
        'valve_travel_warn_high = "75 %"\nnoise_warn = "80 dB(A)"\n\n[prices]', 1)
    from steamnet.sweep import solve_cases
    from steamnet.stations.run import run_checks
    m = loads_model(text, source="demo.toml")
    data = station_data(m)
    c = run_checks(solve_cases(m, station_checks=data), data=data).checks
    here = "model file, [station_limits]"
    for check in ("spray_capacity", "letdown_valve_noise"):
        warned = c[(c["check"] == check) & (c["status"] == "warn")]
        assert len(warned) and set(warned["source"]) == {here}, check
    travel = c[(c["check"] == "letdown_valve_travel") & (c["status"] == "ok")]
    assert set(travel["source"]) == {here}
    approach = c[(c["check"] == "approach_to_saturation") & (c["status"] == "ok")]
    assert set(approach["source"]) == {"common practice, no source"}


def test_relief_state_outside_api520_range_is_not_assessed():
    # API 520's superheat table stops at 649 degC (fluids raises beyond it): the row
    # says so instead of raising
    d = _data(None)
    d = dataclasses.replace(d, relief=dataclasses.replace(d.relief, devices=(
        ReliefDevice("PSV", P_SET, 0.1, area=1e-3, kd=0.975),)))
    hot = dataclasses.replace(_point(), h_in=props.h_pt(P1, 1000.0))
    r = check_relief_cover(d, hot)
    assert r.status == "not_assessed" and "649" in r.advice
