"""Tests of the let-down station checks (steamnet.stations).

Station data are invented for the demo plant "Orlewick Board Mill"; they only place the
operating point on one side or the other of each limit. The references are:

* default limits and their source labels: docs/checks/index.md;
* saturation temperatures: IAPWS R7-97(2012), Table 36;
* velocities and spray flows recomputed from CoolProp's IF97 backend;
* Kv by IEC 60534-2-1 through steamnet.calc.valve (itself checked against the
  standard's examples in test_calc_valve.py);
* gain spread: energy balance, 1/(steam + spray) (common practice, no source).
"""

from __future__ import annotations

import dataclasses
import math
from pathlib import Path

import pytest
from CoolProp.CoolProp import PropsSI

import if97_ref as ref

from steamnet import properties as props
from steamnet.calc import spray_water_flow
from steamnet.errors import InternalError, ModelError
from steamnet.stations import (ALL_CASES, CheckRow, DesuperheaterData, StationData,
                               StationLimits, StationPoint, Status, ValveData,
                               check_across_cases, check_approach_to_saturation,
                               check_downstream_velocity, check_gain_spread,
                               check_letdown_valve, check_point, check_sensor_distance,
                               check_spray_capacity, check_spray_turndown,
                               check_spray_valve, check_spray_water_pressure,
                               check_steam_turndown)

IF97 = "IF97::Water"
DOCS = Path(__file__).resolve().parents[1] / "docs" / "checks"
NAME = "Orlewick PM3 MP-LP let-down"
P_IN, T_IN = 12e5, 523.15          # MP header (demo)
P_OUT = 4.5e5                      # LP header (demo)
T_SET = props.t_sat(P_OUT) + 20.0  # 20 K above saturation
P_W, T_W = 20e5, 378.15            # feedwater to the spray (demo)


def _station(**changes) -> StationData:
    base = StationData(
        name=NAME,
        valve=ValveData(rated_kv=400.0, characteristic="linear", fl=0.9, xt=0.7),
        desuperheater=DesuperheaterData(atomisation="mechanical", rated_min_steam=1.0,
                                        rated_max_steam=12.0, max_spray=1.5,
                                        min_spray=0.02, evaporation_time=None),
        spray_valve=ValveData(rated_kv=5.0, characteristic="linear", fl=0.9),
        outlet_pipe_diameter=0.35, sensor_distance=10.0)
    return dataclasses.replace(base, **changes)


def _point(m_steam=8.0, case="winter", **changes) -> StationPoint:
    h_in = props.h_pt(P_IN, T_IN)
    h_out = props.h_pt(P_OUT, T_SET)
    h_w = props.h_pt(P_W, T_W)
    base = StationPoint(case=case, station=NAME, p_in=P_IN, h_in=h_in, p_out=P_OUT,
                        m_steam=m_steam,
                        m_spray=spray_water_flow(m_steam, h_in, h_out, h_w),
                        h_out=h_out, h_water=h_w, t_water=T_W, p_water=P_W)
    return dataclasses.replace(base, **changes)


def _ds(**changes) -> DesuperheaterData:
    return dataclasses.replace(_station().desuperheater, **changes)


# ------------------------------------------------------------------------- limits
def test_default_limits_as_in_docs_checks_index():
    lim = StationLimits()
    assert (lim.spray_capacity_warn, lim.spray_capacity_fail) == (0.85, 1.00)
    assert (lim.approach_fail, lim.approach_warn) == (8.0, 10.0)
    assert (lim.valve_travel_warn_high, lim.valve_travel_fail_high,
            lim.valve_travel_warn_low) == (0.80, 0.95, 0.10)
    assert lim.spray_pressure_margin_fail == 3.5e5
    assert (lim.velocity_warn_low, lim.velocity_warn_high) == (6.0, 75.0)
    assert lim.evaporation_time_default == 0.2
    assert lim.gain_spread_warn == 3.0
    assert set(StationLimits.LIMIT_SOURCES) == set(StationLimits.names())
    assert set(StationLimits.LIMIT_KINDS) == set(StationLimits.names())
    assert StationLimits.LIMIT_SOURCES["velocity_warn_high"] == "from memory"
    assert set(StationLimits.LIMIT_KINDS.values()) <= {
        "fraction", "temperature_difference", "pressure_difference", "velocity",
        "time", "ratio", "sound_level"}


def test_limit_overrides():
    lim = StationLimits().with_overrides(approach_warn=15.0)
    assert lim.approach_warn == 15.0 and StationLimits().approach_warn == 10.0
    with pytest.raises(ModelError, match="unknown station limit.*approach_wran"):
        StationLimits().with_overrides(approach_wran=15.0)
    with pytest.raises(ModelError, match="must not exceed"):
        StationLimits().with_overrides(approach_fail=12.0)
    with pytest.raises(ModelError, match="positive"):
        StationLimits().with_overrides(velocity_warn_low=-1.0)


def test_data_validation():
    with pytest.raises(ModelError, match="characteristic"):
        ValveData(characteristic="quick_opening")
    with pytest.raises(ModelError, match="atomisation"):
        DesuperheaterData(atomisation="ultrasonic")
    with pytest.raises(ModelError, match="rated minimum"):
        DesuperheaterData(rated_min_steam=5.0, rated_max_steam=2.0)
    with pytest.raises(ModelError, match="m_spray"):
        _point(m_spray=-0.1)


# ----------------------------------------------------------- approach to saturation
# IAPWS R7-97(2012), Table 36: Tsat at 0.1, 1 and 10 MPa.
@pytest.mark.parametrize("p, t_sat_table", [(0.1e6, 372.755919), (1e6, 453.035632),
                                            (10e6, 584.149488)])
@pytest.mark.parametrize("margin, status", [(12.0, Status.OK), (9.0, Status.WARN),
                                            (7.0, Status.FAIL)])
def test_approach_against_iapws_table_36(p, t_sat_table, margin, status):
    pt = _point(p_in=max(P_IN, 2 * p), h_in=props.h_pt(max(P_IN, 2 * p), 873.15),
                p_out=p, h_out=props.h_pt(p, t_sat_table + margin))
    row = check_approach_to_saturation(_station(), pt)
    assert row.value == pytest.approx(margin, abs=1e-3)
    assert row.status is status and row.unit == "K"
    assert row.source == "common practice, no source"


def test_wet_outlet_fails_approach():
    sat = props.saturation(P_OUT)
    row = check_approach_to_saturation(_station(), _point(h_out=sat.hf + 0.97 * sat.hfg))
    assert row.status is Status.FAIL and row.value == 0.0 and "wet" in row.advice


# ------------------------------------------------------------------ spray capacity
@pytest.mark.parametrize("share, status", [(0.80, Status.OK), (0.90, Status.WARN),
                                           (1.05, Status.FAIL)])
def test_spray_capacity(share, status):
    row = check_spray_capacity(_station(), _point(m_spray=share * 1.5))
    assert row.status is status and row.value == pytest.approx(100 * share)


# ------------------------------------------------------------------------ turndown
@pytest.mark.parametrize("m, status", [(0.9, Status.FAIL), (1.1, Status.OK),
                                       (11.9, Status.OK), (12.1, Status.FAIL)])
def test_steam_turndown(m, status):
    row = check_steam_turndown(_station(), _point(m_steam=m))
    assert row.status is status and row.source == "maker's data"


def test_steam_turndown_with_one_bound_missing():
    data = _station(desuperheater=_ds(rated_max_steam=None))
    assert check_steam_turndown(data, _point(m_steam=0.5)).status is Status.FAIL
    row = check_steam_turndown(data, _point(m_steam=5.0))
    assert row.status is Status.NOT_ASSESSED and "rated maximum" in row.advice


@pytest.mark.parametrize("m_spray, status", [(0.019, Status.FAIL), (0.021, Status.OK)])
def test_spray_turndown(m_spray, status):
    assert check_spray_turndown(_station(), _point(m_spray=m_spray)).status is status


# ------------------------------------------------------------------ let-down valve
def _iec_steam_kv(p1, p2, m, t1, xt):
    """Kv of a compressible flow, IEC 60534-2-1:2011 written out, turbulent, no
    fittings (Fp = 1), in its volumetric form Q = N9 C p1 Y sqrt(x / (M T1 Z)) with
    N9 = 24.6 for Kv, Q in m3/h at 0 degC and 101.325 kPa, p1 in kPa (the standard's
    Table 1, from memory); x capped at Fgamma xT, Fgamma = gamma / 1.40,
    Y = 1 - x / (3 Fgamma xT). gamma = cp/cv and the density (for Z) from CoolProp IF97;
    M = 18.01528 g/mol and R = 8.314462618 J/(mol K) (CODATA 2018, from memory)."""
    big_m, r = 18.01528, 8.314462618
    gamma = PropsSI("Cpmass", "P", p1, "T", t1, IF97) / PropsSI("Cvmass", "P", p1, "T",
                                                                t1, IF97)
    z = p1 / (PropsSI("D", "P", p1, "T", t1, IF97) * r / (big_m * 1e-3) * t1)
    x = min((p1 - p2) / p1, gamma / 1.40 * xt)
    y = 1 - x / (3 * gamma / 1.40 * xt)
    q_normal = m * 3600 / (101325.0 * big_m * 1e-3 / (r * 273.15))     # m3/h at 0 degC
    return q_normal / (24.6 * p1 / 1e3 * y * math.sqrt(x / (big_m * t1 * z)))


def _iec_water_kv(p1, p2, m, t1, fl):
    """Kv of a liquid flow, IEC 60534-2-1:2011 written out, turbulent, Fp = 1:
    Q = N1 C sqrt(dP / (rho1 / rho0)), N1 = 1 for Kv with m3/h and bar; dP capped at the
    choked limit FL^2 (p1 - FF pv), FF = 0.96 - 0.28 sqrt(pv / pc); rho0 water at 15 degC
    (from memory: the standard's reference). Every property from CoolProp IF97."""
    rho1 = PropsSI("D", "P", p1, "T", t1, IF97)
    rho0 = PropsSI("D", "P", 101325.0, "T", 288.15, IF97)
    pv, pc = PropsSI("P", "T", t1, "Q", 0, IF97), PropsSI("pcrit", IF97)
    dp = min(p1 - p2, fl * fl * (p1 - (0.96 - 0.28 * math.sqrt(pv / pc)) * pv))
    return m / rho1 * 3600 / math.sqrt(dp / 1e5 / (rho1 / rho0))


@pytest.mark.parametrize("travel, status", [(0.05, Status.WARN), (0.5, Status.OK),
                                            (0.9, Status.WARN), (0.97, Status.FAIL),
                                            (1.2, Status.FAIL)])
def test_letdown_valve_travel(travel, status):
    """Travel of a linear valve = required Kv / rated Kv, the required Kv from the
    IEC 60534-2-1 equations written out here."""
    pt = _point()
    assert (P_IN - P_OUT) / P_IN < 0.7          # not choked: Fgamma xT is about 0.65
    kv = _iec_steam_kv(P_IN, P_OUT, pt.m_steam, T_IN, 0.7)
    data = _station(valve=ValveData(rated_kv=kv / travel, characteristic="linear",
                                    fl=0.9, xt=0.7))
    row = check_letdown_valve(data, pt)
    # the IF97 implementations agree to about 1e-6 relative in rho, cp and cv
    assert row.value == pytest.approx(100 * travel, rel=1e-5)
    assert row.status is status


def test_letdown_valve_notes_choked_flow():
    # IEC 60534-2-1: choked when dp/p1 >= Fgamma xT, Fgamma = gamma/1.40 (from
    # memory); gamma = cp/cv of the inlet steam from CoolProp.
    gamma = PropsSI("Cpmass", "P", P_IN, "T", T_IN, IF97) / PropsSI(
        "Cvmass", "P", P_IN, "T", T_IN, IF97)
    x_crit = gamma / 1.40 * 0.7
    rows = []
    for x in (0.97 * x_crit, 1.03 * x_crit):
        p_out = P_IN * (1 - x)
        rows.append(check_letdown_valve(_station(), _point(
            p_out=p_out, h_out=props.h_pt(p_out, props.t_sat(p_out) + 20.0))))
    assert "compressible, non-choked" in rows[0].basis
    assert "noise" not in rows[0].advice
    assert "compressible, choked" in rows[1].basis and "noise" in rows[1].advice


@pytest.mark.parametrize("valve, needs", [
    (None, "let-down valve's data"),
    (ValveData(rated_kv=100.0, characteristic="linear"), "xT"),
    (ValveData(characteristic="linear", xt=0.7), "rated Kv"),
    (ValveData(rated_kv=100.0, characteristic="equal_percentage", xt=0.7),
     "rangeability"),
    (ValveData(rated_kv=100.0, xt=0.7), "characteristic"),
])
def test_letdown_valve_missing_data(valve, needs):
    row = check_letdown_valve(_station(valve=valve), _point())
    assert row.status is Status.NOT_ASSESSED
    assert row.advice.startswith("not assessed, needs") and needs in row.advice


def test_letdown_valve_wet_inlet_not_assessed():
    sat = props.saturation(P_IN)
    row = check_letdown_valve(_station(), _point(h_in=sat.hf + 0.98 * sat.hfg))
    assert row.status is Status.NOT_ASSESSED and "wet" in row.advice


# --------------------------------------------------------------------- spray valve
@pytest.mark.parametrize("travel, status", [(0.05, Status.WARN), (0.5, Status.OK),
                                            (0.9, Status.WARN), (0.97, Status.FAIL)])
def test_spray_valve_travel(travel, status):
    """The same for the spray valve, from the liquid equations of IEC 60534-2-1 (this
    point is choked: 15.5 bar across against FL^2 (p1 - FF pv), about 15.3 bar)."""
    pt = _point()
    kv = _iec_water_kv(P_W, P_OUT, pt.m_spray, T_W, 0.9)
    data = _station(spray_valve=ValveData(rated_kv=kv / travel,
                                          characteristic="linear", fl=0.9))
    row = check_spray_valve(data, pt)
    assert row.value == pytest.approx(100 * travel, rel=1e-5)
    assert row.status is status and "p_water - p_out" in row.basis


def test_spray_valve_without_supply_pressure_or_pressure_difference():
    assert check_spray_valve(_station(), _point(p_water=None)).status is \
        Status.NOT_ASSESSED
    assert check_spray_valve(_station(), _point(p_water=4.0e5)).status is Status.FAIL


# ------------------------------------------------------------ spray water pressure
@pytest.mark.parametrize("margin_bar, status", [(3.4, Status.FAIL), (3.6, Status.OK)])
def test_spray_water_pressure(margin_bar, status):
    row = check_spray_water_pressure(_station(),
                                     _point(p_water=P_OUT + margin_bar * 1e5))
    assert row.status is status and row.value == pytest.approx(margin_bar)
    assert row.unit == "bar" and row.source == "from memory, common practice"


def test_spray_water_pressure_by_atomisation():
    pt = _point(p_water=P_OUT + 2e5)
    row = check_spray_water_pressure(_station(desuperheater=_ds(atomisation=None)), pt)
    assert row.status is Status.FAIL and "mechanical-nozzle limit applied" in row.basis
    row = check_spray_water_pressure(
        _station(desuperheater=_ds(atomisation="steam_assisted")), pt)
    assert row.status is Status.NOT_ASSESSED and row.value == pytest.approx(2.0)


# ------------------------------------------------------------ downstream velocity
def _diameter_for(velocity, pt):
    rho = PropsSI("D", "P", pt.p_out, "H", pt.h_out, IF97)
    q = (pt.m_steam + pt.m_spray) / rho
    return math.sqrt(4 * q / (math.pi * velocity))


@pytest.mark.parametrize("velocity, status", [(5.0, Status.WARN), (7.0, Status.OK),
                                              (70.0, Status.OK), (80.0, Status.WARN)])
def test_downstream_velocity(velocity, status):
    pt = _point()
    row = check_downstream_velocity(
        _station(outlet_pipe_diameter=_diameter_for(velocity, pt)), pt)
    assert row.value == pytest.approx(velocity, rel=1e-4)      # CoolProp density
    assert row.status is status


def test_low_velocity_without_desuperheater_is_not_judged():
    pt = _point(m_spray=0.0, h_out=props.h_pt(P_IN, T_IN))
    data = _station(desuperheater=None, outlet_pipe_diameter=_diameter_for(5.0, pt))
    assert check_downstream_velocity(data, pt).status is Status.OK


# --------------------------------------------------------------- sensor distance
@pytest.mark.parametrize("evap_time, source", [(None, "from memory; maker's figure wins"),
                                               (0.35, "maker's data")])
@pytest.mark.parametrize("factor, status", [(0.95, Status.FAIL), (1.05, Status.OK)])
def test_sensor_distance(evap_time, source, factor, status):
    pt = _point()
    d = _diameter_for(30.0, pt)
    needed = 30.0 * (0.2 if evap_time is None else evap_time)
    data = _station(outlet_pipe_diameter=d, sensor_distance=factor * needed,
                    desuperheater=_ds(evaporation_time=evap_time))
    row = check_sensor_distance(data, pt)
    assert row.limit == pytest.approx(needed, rel=1e-4)
    assert row.status is status and row.source == source


# ----------------------------------------------------------------- gain spread
def _fd_gains(p_in, t_in, p_out, t_set, p_w, t_w, m_s):
    """|dT_out/dm_w| and |dT_out/dR| of one operating point as central finite
    differences of the full mixing balance (m_s h_s + m_w h_w = (m_s + m_w) h_out,
    T_out = T(p_out, h_out)), every state from CoolProp's IF97 forward equations
    (tests/if97_ref.py inverts them for T(p, h): the backward equation's derivative is
    off by some 1e-4); the spray is the one that holds the setpoint."""
    h_s, h_o, h_w = (ref.h_pt(p, t) if t > ref.sat(p).t else ref.liquid_h(p, t)
                     for p, t in ((p_in, t_in), (p_out, t_set), (p_w, t_w)))
    m_w = m_s * (h_s - h_o) / (h_o - h_w)

    def t_out(m_steam, m_water):
        return ref.t_ph(p_out, (m_steam * h_s + m_water * h_w) / (m_steam + m_water))
    dm = 1e-4 * m_w
    spray = (t_out(m_s, m_w + dm) - t_out(m_s, m_w - dm)) / (2 * dm)
    r, dr = m_w / m_s, 1e-4 * m_w / m_s
    ratio = (t_out(1.0, r + dr) - t_out(1.0, r - dr)) / (2 * dr)
    return abs(spray), abs(ratio)


def test_gain_spread_against_finite_differences_at_different_states():
    """Two cases whose inlet steam, outlet setpoint and spray water all differ: each
    gain spread is the ratio of the finite-difference gains of the full balance
    (CoolProp), not an algebraic ratio of flows."""
    full = (P_IN, 553.15, P_OUT, props.t_sat(P_OUT) + 25.0, P_W, 378.15, 12.0)
    low = (11e5, 503.15, P_OUT, props.t_sat(P_OUT) + 15.0, 25e5, 398.15, 2.5)
    points = []
    for case, (p_in, t_in, p_out, t_set, p_w, t_w, m_s) in (("full", full),
                                                            ("low", low)):
        h_in, h_out = props.h_pt(p_in, t_in), props.h_pt(p_out, t_set)
        h_w = props.h_pt(p_w, t_w)
        points.append(_point(m_s, case, p_in=p_in, h_in=h_in, p_out=p_out, h_out=h_out,
                             h_water=h_w, t_water=t_w, p_water=p_w,
                             m_spray=spray_water_flow(m_s, h_in, h_out, h_w)))
    g_full, g_low = _fd_gains(*full), _fd_gains(*low)
    data = _station(desuperheater=_ds(rated_min_steam=None))
    spray, ratio = check_gain_spread(data, points)
    assert spray.check == "gain_spread_spray" and spray.case == ALL_CASES
    # central differences of step 1e-4 are exact to about 1e-8 here, and the analytic
    # gain's cp at the outlet is the same derivative 1 / (dT/dh): 1e-6
    assert spray.value == pytest.approx(g_low[0] / g_full[0], rel=1e-6)
    assert ratio.value == pytest.approx(max(g_low[1], g_full[1])
                                        / min(g_low[1], g_full[1]), rel=1e-6)
    assert spray.value > 3 and spray.status is Status.WARN
    assert "ratio to steam flow" in spray.advice
    assert ratio.status is Status.OK


def test_gain_spread_includes_rated_minimum_flow():
    points = [_point(10.0, "winter"), _point(8.0, "summer")]
    without = check_gain_spread(_station(desuperheater=_ds(rated_min_steam=None)),
                                points)[0]
    assert without.value == pytest.approx(1.25) and without.status is Status.OK
    with_min = check_gain_spread(_station(desuperheater=_ds(rated_min_steam=2.0)),
                                 points)[0]
    assert with_min.value == pytest.approx(5.0) and with_min.status is Status.WARN
    assert "rated minimum flow" in with_min.basis


def test_gain_spread_needs_two_points():
    data = _station(desuperheater=_ds(rated_min_steam=None))
    rows = check_gain_spread(data, [_point(10.0)])
    assert all(r.status is Status.NOT_ASSESSED for r in rows)
    rows = check_gain_spread(data, [_point(10.0), _point(5.0, h_water=None,
                                                         t_water=None)])
    assert all(r.status is Status.NOT_ASSESSED for r in rows)


# ---------------------------------------------------- missing data, applicability
@pytest.mark.parametrize("check, changes, needs", [
    (check_spray_capacity, {"desuperheater": _ds(max_spray=None)}, "maximum spray"),
    (check_steam_turndown, {"desuperheater": _ds(rated_min_steam=None,
                                                 rated_max_steam=None)}, "rated"),
    (check_spray_turndown, {"desuperheater": _ds(min_spray=None)}, "minimum"),
    (check_spray_valve, {"spray_valve": None}, "spray valve's data"),
    (check_spray_valve, {"spray_valve": ValveData(rated_kv=5.0,
                                                  characteristic="linear")}, "FL"),
    (check_downstream_velocity, {"outlet_pipe_diameter": None}, "diameter"),
    (check_sensor_distance, {"sensor_distance": None}, "straight run"),
])
def test_missing_data_not_assessed(check, changes, needs):
    row = check(_station(**changes), _point())
    assert row.status is Status.NOT_ASSESSED
    assert row.advice.startswith("not assessed, needs") and needs in row.advice


def test_no_desuperheater_spray_checks_not_applicable():
    data = _station(desuperheater=None, spray_valve=None)
    pt = _point(m_spray=0.0, h_out=props.h_pt(P_IN, T_IN), h_water=None, t_water=None,
                p_water=None)
    rows = {r.check: r for r in check_point(data, pt)}
    for cid in ("spray_capacity", "steam_turndown", "spray_turndown",
                "spray_valve_travel", "spray_water_pressure", "sensor_distance"):
        assert rows[cid].status is Status.NOT_APPLICABLE, cid
    for cid in ("approach_to_saturation", "letdown_valve_travel",
                "downstream_velocity"):
        assert rows[cid].status in (Status.OK, Status.WARN, Status.FAIL), cid
    assert all(r.status is Status.NOT_APPLICABLE for r in check_gain_spread(data, [pt]))


def test_zero_steam_flow_not_applicable():
    rows = check_point(_station(), _point(m_steam=0.0))
    assert rows and all(r.status is Status.NOT_APPLICABLE for r in rows)


def test_no_spray_needed_spray_only_checks_not_applicable():
    pt = _point(m_spray=0.0, h_in=props.h_pt(P_IN, 460.0), setpoint_reachable=False)
    rows = {r.check: r for r in check_point(_station(), pt)}
    for cid in ("spray_turndown", "spray_valve_travel", "spray_water_pressure",
                "sensor_distance"):
        assert rows[cid].status is Status.NOT_APPLICABLE
    assert "colder than the setpoint" in rows["approach_to_saturation"].advice


# ----------------------------------------------------------------- across cases
def test_check_across_cases_envelope():
    data = _station()
    points = [_point(10.0, "winter"), _point(4.0, "summer"), _point(11.5, "trip"),
              _point(0.0, "shutdown")]
    rows, env = check_across_cases(data, points)
    assert [r.check for r in rows] == ["gain_spread_spray", "gain_spread_ratio",
                                       "relief_cover_rated"]
    assert env["cases"] == ["winter", "summer", "trip"]
    assert env["steam_min"] == {"value": 4.0, "case": "summer"}
    assert env["steam_max"] == {"value": 11.5, "case": "trip"}
    assert env["spray_max"]["case"] == "trip"
    assert env["turndown_used"] == pytest.approx(11.5 / 4.0)
    assert env["turndown_rated"] == pytest.approx(12.0)
    # the rated minimum (1 kg/s) against 11.5 kg/s gives the spread of 11.5:1
    assert env["worst"]["gain_spread_spray"] is Status.WARN
    point_rows = [r for p in points for r in check_point(data, p)]
    for cid, status in env["worst"].items():
        statuses = [r.status for r in point_rows + rows if r.check == cid]
        assert status in statuses


def test_rows_are_checkrows_with_docs_pages():
    data = _station()
    rows = check_point(data, _point()) + check_across_cases(data, [_point()])[0]
    index = (DOCS / "index.md").read_text()
    for r in rows:
        assert isinstance(r, CheckRow)
        assert (DOCS / f"{r.check}.md").is_file(), r.check
        assert f"({r.check}.md)" in index


def test_wrong_station_rejected():
    """A point of one station handed to another's checks is a fault of the caller in
    steamnet, not of the input: an internal error."""
    with pytest.raises(InternalError, match="station 'another'"):
        check_point(_station(), _point(station="another"))
