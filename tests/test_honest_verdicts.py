"""Verdicts that say what they found: a wet header reads "wet, quality x" in the
console, the JSON export and the workbook; a value at a limit is graded by the limit's
own rule; a choked spray valve names the choked-flow limit; a valve sizing says which
data it used.

References: IAPWS-IF97 states from CoolProp's IF97 backend (tests/if97_ref.py); the
choked-liquid limit FL^2 (p1 - FF pv), FF = 0.96 - 0.28 sqrt(pv / pc), of IEC
60534-2-1:2011 (Eq. 6 and 7, written out here); the limits of docs/checks/index.md.
"""

from __future__ import annotations

import dataclasses
import json
import math

import openpyxl
import pytest
from CoolProp.CoolProp import PropsSI
from click.testing import CliRunner

import if97_ref as ref
from helpers import barg, boiler, degc, external_water, headers, turbine, user
from steamnet import properties as props
from steamnet.cli import main
from steamnet.model.stations import (DesuperheaterData, StationData, StationLimits,
                                     StationPoint, ValveData)
from steamnet.stations.checks import check_approach_to_saturation, check_letdown_valve
from steamnet.stations.rows import Status, grade_high, grade_low
from steamnet.stations.safety import check_spray_cavitation
from test_equipment_balances import _expansion
from test_station_checks import _point, _station

IF97 = "IF97::Water"

#: Steam with little superheat expanded to a low header: the header is wet (the
#: network of test_equipment_balances, invented data).
WET = (headers(hp="10 bar(g)", lp="0.5 bar(g)") + external_water(p="15 bar(g)")
       + boiler(t="200 degC")
       + turbine('mode = "swing"\nmechanical_efficiency = "98 %"', eta="70 %")
       + user("U-LP", "LP", 'demand = "10 t/h"'))


def _wet_quality() -> float:
    """Quality of the LP header: the turbine exhaust (its only inflow), CoolProp."""
    _, h_out = _expansion(barg(10), ref.h_pt(barg(10), degc(200)), barg(0.5), 0.70)
    return ref.quality_ph(barg(0.5), h_out)


def test_a_wet_header_reads_wet_with_its_quality_in_every_output(tmp_path):
    """Console, JSON and workbook all say "wet, quality x" for the wet LP header, and
    none gives it a superheat of 0.0 K (which reads as dry saturated steam)."""
    q = _wet_quality()
    assert 0 < q < 1                                   # precondition: a wet header
    text = f"wet, quality {q:.4f}"
    model = tmp_path / "wet.toml"
    model.write_text(WET, encoding="utf-8")
    out_json, out_xlsx = tmp_path / "wet.json", tmp_path / "wet.xlsx"
    r = CliRunner().invoke(main, ["solve", str(model), "--json", str(out_json)])
    lp = [ln for ln in r.output.splitlines() if ln.split()[:2] == ["header", "LP"]]
    assert len(lp) == 1 and text in lp[0] and "superheat" not in lp[0], r.output
    doc = json.loads(out_json.read_text(encoding="utf-8"))
    hdr = next(h for h in doc["cases"][0]["headers"] if h["header"] == "LP")
    assert hdr["state"] == text and hdr["superheat_k"] is None and hdr["wet"] is True
    r = CliRunner().invoke(main, ["report", str(model), "--out", str(out_xlsx),
                                  "--studies", "none", "--quiet"])
    assert out_xlsx.exists(), r.output
    ws = openpyxl.load_workbook(out_xlsx, read_only=True)["Headers"]
    rows = [[c for c in row] for row in ws.iter_rows(values_only=True)]
    lp_rows = [row for row in rows if "LP" in row]
    assert len(lp_rows) == 1 and text in lp_rows[0]
    assert 0.0 not in lp_rows[0][lp_rows[0].index(text) - 1:lp_rows[0].index(text)]


# ------------------------------------------------------------------ at the limit
def test_a_value_at_a_limit_is_graded_by_the_limits_rule():
    """'warn below 10 K' (docs/checks/index.md) does not warn at 10 K, nor at 10 K
    computed one rounding off; below it by more than 1e-9 relative it warns."""
    lim = StationLimits()
    for v in (10.0, 10.0 * (1 - 1e-12), 10.0 * (1 + 1e-12)):
        assert grade_low(v, lim.approach_warn, lim.approach_fail) == (Status.OK, 10.0)
    assert grade_low(10.0 * (1 - 1e-8), 10.0, 8.0)[0] is Status.WARN
    assert grade_high(0.85 * (1 + 1e-12), 0.85, 1.0)[0] is Status.OK
    assert grade_high(0.85 * (1 + 1e-8), 0.85, 1.0)[0] is Status.WARN


@pytest.mark.parametrize("p_barg", [2, 4, 6, 7, 9, 12, 25, 30])
def test_an_approach_set_at_10_k_is_not_a_warning(p_barg):
    """An outlet 10 K above saturation (CoolProp's Tsat of IF97) is at the 10 K warning
    limit, so ok, whatever the last digit of the recomputed approach."""
    p = barg(p_barg)
    t_out = PropsSI("T", "P", p, "Q", 1, IF97) + 10.0
    pt = _point(p_out=p, h_out=props.h_pt(p, t_out), p_in=max(12e5, 2 * p),
                h_in=props.h_pt(max(12e5, 2 * p), 873.15))
    row = check_approach_to_saturation(_station(), pt)
    assert row.value == pytest.approx(10.0, abs=1e-6)   # the two IF97 agree far closer
    assert row.status is Status.OK and row.limit == 10.0


# -------------------------------------------------------------- spray valve choking
P_OUT = 14e5                  # steam pressure at the nozzle
T_W = 378.15                  # spray water 105 degC


def _choked_dp(p1: float, t: float, fl: float) -> float:
    """IEC 60534-2-1:2011 Eq. (6)-(7): the pressure drop at which liquid flow chokes,
    FL^2 (p1 - FF pv), FF = 0.96 - 0.28 sqrt(pv / pc); pv and pc from CoolProp IF97."""
    pv = PropsSI("P", "T", t, "Q", 0, IF97)
    pc = PropsSI("pcrit", IF97)
    ff = 0.96 - 0.28 * math.sqrt(pv / pc)
    return fl * fl * (p1 - ff * pv)


def _spray_station(fl: float) -> StationData:
    return StationData(name="S", desuperheater=DesuperheaterData(max_spray=2.0),
                       spray_valve=ValveData(rated_kv=2.0, fl=fl, fd=0.4, diameter=0.025,
                                             pipe_wall=0.0045))


def _spray_point(p_water: float) -> StationPoint:
    return StationPoint(case="c", station="S", p_in=46e5, h_in=props.h_pt(46e5, 703.15),
                        p_out=P_OUT, m_steam=8.0, m_spray=0.4,
                        h_out=props.h_pt(P_OUT, 500.0), h_water=props.h_pt(p_water, T_W),
                        t_water=T_W, p_water=p_water)


def test_a_choked_spray_valve_warns_with_the_choked_flow_limit():
    """dP above FL^2 (p1 - FF pv): the valve chokes (it cavitates or flashes): warn, the
    basis names that limit, the advice a cavitation trim or a lower pressure drop."""
    fl, p_w = 0.6, 60e5
    dp_ch = _choked_dp(p_w, T_W, fl)
    assert p_w - P_OUT > dp_ch                          # precondition: choked
    row = check_spray_cavitation(_spray_station(fl), _spray_point(p_w))
    assert row.status is Status.WARN
    assert f"FL^2 (p1 - FF pv) = {dp_ch / 1e5:.4g} bar (choked)" in row.basis
    assert "anti-cavitation trim" in row.advice and "pressure drop" in row.advice


def test_a_spray_valve_below_the_choked_limit_says_so():
    fl, p_w = 0.9, 16e5
    dp_ch = _choked_dp(p_w, T_W, fl)
    assert p_w - P_OUT < dp_ch
    row = check_spray_cavitation(_spray_station(fl), _spray_point(p_w))
    assert f"FL^2 (p1 - FF pv) = {dp_ch / 1e5:.4g} bar (not choked)" in row.basis


# ------------------------------------------------------------------ valve basis
def test_the_valve_basis_says_a_size_without_fd_was_not_used():
    """A let-down valve with its size but no Fd is sized without the valve Reynolds
    number; the basis says so instead of "no diameters given"."""
    valve = ValveData(rated_kv=400.0, characteristic="linear", fl=0.9, xt=0.7,
                      diameter=0.15)
    row = check_letdown_valve(_station(valve=valve), _point())
    assert "no diameters given" not in row.basis
    assert "valve size 150 mm given without Fd: size not used" in row.basis
    row = check_letdown_valve(_station(valve=dataclasses.replace(valve, diameter=None)),
                              _point())
    assert "no diameters given" in row.basis
