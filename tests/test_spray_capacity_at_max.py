"""spray_capacity with the spray exhausted: what the outlet and the header it feeds
reach with the spray at its maximum (docs/checks/spray_capacity.md).

Reference: the energy balance of the desuperheater, h = (m_s h_s + m_w,max h_w) /
(m_s + m_w,max), and the mixing balance of the header, recomputed here with the
enthalpies and temperatures of CoolProp's IF97 backend, on a small plant written for
this test.
"""

from __future__ import annotations

import re

import pytest
from CoolProp.CoolProp import PropsSI

from helpers import C0, KG_S_PER_T_H, barg, degc, equip, hp_boiler, model, plant_head, t_h
from steamnet import solve_case
from steamnet.stations.checks import check_spray_capacity

IF97 = "IF97::Water"

# HP steam from a boiler; LP fed by a fixed-flow turbine and by a let-down whose
# desuperheater can spray at most 1 t/h, less than it needs to hold 180 degC.
PLANT = plant_head("spray capacity test plant (written for this test)", """
[[header]]
name = "LP"
pressure = "3 bar(g)"
heat_loss = "200 kW"
""") + hp_boiler("B1", "100 t/h") + """
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
isentropic_efficiency = "70 %"
mode = "fixed_flow"
flow = "10 t/h"
[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
[letdown.desuperheater]
spray_supply = "BFW"
outlet_temperature = "180 degC"
max_spray = "1 t/h"
[[user]]
name = "U1"
header = "LP"
demand = "30 t/h"
"""

P_HP, P_LP, P_W = barg(40.0), barg(3.0), barg(50.0)
M_MAX, Q_LOSS = t_h(1.0), 200e3


def _h(p, t):
    return PropsSI("H", "P", p, "T", t, IF97)


def _t(p, h):
    return PropsSI("T", "P", p, "H", h, IF97)


def test_spray_capacity_gives_outlet_and_header_at_the_maximum_spray():
    m = model(PLANT)
    r = solve_case(m)
    assert r.status == "solved", r.message
    (pt,) = [p for p in r.points if p.station == "L1"]
    got = check_spray_capacity(m.stations["L1"], pt)
    ld = equip(r, "L1")
    # verdict and value as before: the required spray over the maximum
    assert got.status == "fail"
    assert got.value == pytest.approx(100 * ld["spray_t_h"] / 1.0, rel=1e-9)

    # closed form from CoolProp: HP holds the boiler's steam (no heat loss on HP)
    h_hp = _h(P_HP, degc(400.0))
    h_w = _h(P_W, degc(105.0))
    m_s = ld["flow_t_h"] * KG_S_PER_T_H
    h_out = (m_s * h_hp + M_MAX * h_w) / (m_s + M_MAX)
    t_out = _t(P_LP, h_out)
    # the turbine's exhaust: h_in - eta (h_in - h(P_LP, s_in))
    s_hp = PropsSI("S", "P", P_HP, "T", degc(400.0), IF97)
    h_t = h_hp - 0.70 * (h_hp - PropsSI("H", "P", P_LP, "S", s_hp, IF97))
    m_t = t_h(10.0)
    h_hdr = (m_t * h_t + (m_s + M_MAX) * h_out - Q_LOSS) / (m_t + m_s + M_MAX)
    t_hdr = _t(P_LP, h_hdr)

    text = got.advice
    found = re.search(r"at the maximum spray ([0-9.]+) t/h the outlet reaches "
                      r"([0-9.]+) degC \(setpoint ([0-9.]+) degC\) and header LP "
                      r"([0-9.]+) degC", text)
    assert found, text
    spray, t1, t_set, t2 = map(float, found.groups())
    assert spray == pytest.approx(1.0)
    assert t_set == pytest.approx(180.0, abs=0.051)
    # printed to 0.1 K; the two IF97 implementations agree far closer (about 1e-6 in h)
    assert t1 == pytest.approx(t_out - C0, abs=0.051)
    assert t2 == pytest.approx(t_hdr - C0, abs=0.051)
    # not an empty comparison: the outlet is well above the setpoint, the header too
    assert t1 > 185.0 and t2 > t_set
