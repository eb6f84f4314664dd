"""Relief cover calculations: API 520 Part I steam capacity and the flow of a valve
at a given Kv (IEC 60534-2-1 run backwards), against outside references."""

from __future__ import annotations

import math

import pytest
from CoolProp.CoolProp import PropsSI

from steamnet import properties as props
from steamnet.calc.relief import (gas_valve_flow, orifice_area, relieving_pressure,
                                  steam_relief_capacity, steam_valve_flow)
from steamnet.calc.valve import size_steam_valve
from steamnet.errors import ModelError

LB = 0.45359237          # kg per lb (exact, international pound)
INCH = 0.0254            # m per inch (exact)
PSI = 6894.757293168     # Pa per psi (lbf/in2 with standard gravity)


# ----------------------------------------------------------------- API 520 Part I
# API 520 Part I, 10th edition, the superheated-steam sizing example (Example 4 in
# fluids' numbering): 69 615 kg/h at a relieving pressure of 12 236 kPa(a) and
# 707.04 K, Kd = 0.975, Kb = Kc = 1, needs 1285.19 mm2. The inputs and the area are
# taken from the documentation of fluids.safety_valve.API520_A_steam (not from the
# standard's own pages, which were not at hand).
EX_W = 69615.0 / 3600.0          # kg/s
EX_P1 = 12236e3                  # Pa(a)
EX_T = 707.0389                  # K
EX_AREA = 0.00128518893191       # m2, as fluids' documentation prints it


def test_api520_steam_example_through_our_function():
    cap = steam_relief_capacity(EX_AREA, EX_P1, EX_T, kd=0.975)
    # the printed area has 12 digits: the capacity must come back to the example's flow
    assert cap.flow == pytest.approx(EX_W, rel=1e-9)
    assert cap.kn > 1.0          # above 10 339 kPa the high-pressure factor applies
    assert cap.ksh < 1.0         # superheated steam


def test_api520_steam_capacity_from_the_printed_us_equation():
    # The steam equation of API 520 Part I in US customary units (from memory; the
    # standard's text was not at hand to check it against):
    #     W = 51.5 A P1 Kd Kb Kc KN KSH   [lb/h; in2; psia]
    #     KN = (0.1906 P1 - 1000) / (0.2292 P1 - 1061)   for P1 > 1500 psia
    # KSH from the superheat table as fluids tabulates it (10th edition).
    from fluids.safety_valve import API520_SH
    a_in2 = EX_AREA / INCH ** 2
    p1_psia = EX_P1 / PSI
    kn = (0.1906 * p1_psia - 1000.0) / (0.2292 * p1_psia - 1061.0)
    ksh = API520_SH(EX_T, EX_P1, "10E")
    w_lb_h = 51.5 * a_in2 * p1_psia * 0.975 * 1.0 * 1.0 * kn * ksh
    expected = w_lb_h * LB / 3600.0
    cap = steam_relief_capacity(EX_AREA, EX_P1, EX_T, kd=0.975)
    # the SI constant 190.5 and the US 51.5 agree to about 0.05 %, the two KN
    # equations to about 0.01 %
    assert cap.flow == pytest.approx(expected, rel=1e-3)
    assert cap.kn == pytest.approx(kn, rel=2e-4)


def test_api520_saturated_steam_below_10339_kpa_has_no_corrections():
    # W = 51.5 A P1 Kd (US units, from memory) for saturated steam below 1500 psia
    p1 = 15e5
    t = float(PropsSI("T", "P", p1, "Q", 1.0, "IF97::Water"))
    area = orifice_area("J")
    expected = 51.5 * (area / INCH ** 2) * (p1 / PSI) * 0.975 * LB / 3600.0
    cap = steam_relief_capacity(area, p1, t, kd=0.975)
    assert (cap.kn, cap.ksh) == (1.0, 1.0)
    assert cap.flow == pytest.approx(expected, rel=1e-3)


def test_api526_orifice_letters():
    # API 526 effective areas, J = 1.287 in2 and T = 26.0 in2 (from memory)
    assert orifice_area("J") == pytest.approx(1.287 * INCH ** 2, rel=1e-9)
    assert orifice_area("t") == pytest.approx(26.0 * INCH ** 2, rel=1e-9)
    with pytest.raises(ModelError, match="API 526 letters"):
        orifice_area("Z")


def test_relieving_pressure_is_set_plus_overpressure_of_gauge():
    # 10 bar(g) set, 10 % accumulation: 11 bar(g) (definition, common practice)
    assert relieving_pressure(11.01325e5, 0.10, 1.01325e5) == pytest.approx(12.01325e5)
    with pytest.raises(ModelError):
        relieving_pressure(0.9e5, 0.1, 1.01325e5)


# -------------------------------------------------------------- failed-open flow
P1 = 46e5
T1 = 703.15
XT = 0.70


def _rho(p, t):
    return float(PropsSI("D", "P", p, "T", t, "IF97::Water"))


def test_choked_flow_does_not_depend_on_the_outlet_pressure():
    st = props.state_pt(P1, T1)
    flows = [steam_valve_flow(55.0, P1, p2, st, fl=None, xt=XT) for p2 in
             (12e5, 8e5, 3e5)]
    assert all(f.choked for f in flows)
    assert flows[1].flow == pytest.approx(flows[0].flow, rel=1e-12)
    assert flows[2].flow == pytest.approx(flows[0].flow, rel=1e-12)
    # closed form of IEC 60534-2-1 Eq. (8b) at choking, x = Fgamma xT, Y = 2/3:
    # W = N6 Kv Y sqrt(x p1 rho1), Fgamma = gamma / 1.40, gamma = cp/cv of CoolProp
    # IF97; N6 for Kv in kg/h, bar, kg/m3 from the definition of Kv (1 m3/h of water,
    # taken as 1000 kg/m3, at 1 bar): 1000 / sqrt(1 * 1000) = 31.6
    n6 = 1000.0 / math.sqrt(1000.0)
    cp = PropsSI("C", "P", P1, "T", T1, "IF97::Water")
    cv = PropsSI("O", "P", P1, "T", T1, "IF97::Water")
    x = cp / cv / 1.40 * XT
    w = n6 * 55.0 * (2.0 / 3.0) * math.sqrt(x * P1 / 1e5 * _rho(P1, T1)) / 3600.0
    # the standard prints N6 = 3.16 (kPa) with three digits
    assert flows[0].flow == pytest.approx(w, rel=2e-3)


def test_below_choking_the_flow_round_trips_through_the_forward_sizing():
    st = props.state_pt(P1, T1)
    for kw in ({"fl": None}, {"fl": 0.85, "fd": 0.46, "d_valve": 0.1}):
        f = steam_valve_flow(55.0, P1, 36e5, st, xt=XT, **kw)
        assert not f.choked
        back = size_steam_valve(P1, 36e5, f.flow, st, xt=XT, **kw)
        assert back.kv == pytest.approx(55.0, rel=1e-9)
        # and less than the choked flow
        assert f.flow < steam_valve_flow(55.0, P1, 5e5, st, xt=XT, **kw).flow


def test_iec_60534_2_1_compressible_example_backwards():
    # IEC 60534-2-1:2011 (ISA-75.01.01-2007) compressible example with attached
    # fittings: CO2, 3800 m3/h at 0 degC, 101.325 kPa; 680 kPa to 310 kPa, 433 K;
    # valve 50 mm between 80 mm and 100 mm pipes; FL 0.85, xT 0.60, Fd 0.42. The
    # standard gives Kv = 72.6 m3/h (from memory, three digits): run backwards the
    # flow is the example's to the precision of those digits.
    f = gas_valve_flow(72.6, 680e3, 310e3, t_in=433.0, mw=44.01, mu=1.4665e-4,
                       gamma=1.30, z=0.988, fl=0.85, xt=0.60, fd=0.42, d_valve=0.05,
                       d_pipe_in=0.08, d_pipe_out=0.10)
    assert not f.choked
    assert f.flow * 3600.0 == pytest.approx(3800.0, rel=1e-3)


def test_flow_needs_a_positive_kv():
    st = props.state_pt(P1, T1)
    with pytest.raises(ModelError, match="flow coefficient"):
        steam_valve_flow(0.0, P1, 10e5, st, fl=None, xt=XT)
