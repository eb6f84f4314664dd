"""Each equipment model against its closed-form balance, recomputed here from raw
properties of an independent IF97 implementation (CoolProp's IF97 backend, see
``if97_ref``), never from steamnet's property layer.

Equations: docs/method.md, "Equipment equations" (boiler, turbines, let-down and desuperheater,
deaerator, user, header). The networks are tiny and built so that every flow follows in
closed form (or from a 3 x 3 linear system solved here).

Tolerance: ``REL = 1e-9`` relative. What limits the comparison:

* iapws and CoolProp's IF97 forward equations agree to about 1e-14 relative at the states
  used here (checked in ``test_property_libraries_agree``), far below 1e-6;
* steamnet refines (P, h) and (P, s) states by Newton steps to 1e-10 relative in T, and
  the reference inverts the forward equations by a root search to round-off;
* the solver stops when enthalpies move less than 1e-6 J/kg and flows less than
  1e-10 kg/s between iterations (about 1e-12 relative).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import if97_ref as ref
from helpers import (C0, DA_WATER, LETDOWN_L1, barg, boiler, deaerator, degc, equip,
                     external_water, header, headers, j_kg, kg_s, solve, stream, t_h,
                     turbine, user)
from steamnet import properties as props

REL = 1e-9


def close(a: float, b: float, rel: float = REL, abs_: float = 0.0) -> bool:
    return math.isclose(a, b, rel_tol=rel, abs_tol=abs_)


# --------------------------------------------------------------------------- boiler
def boiler_net(lp_loss="0 kW", flash="") -> str:
    return (headers(lp="3 bar(g)", lp_loss=lp_loss) + external_water()
            + boiler(extra='blowdown = "3 %"\n' + flash, eff="88 %")
            + user("U-HP", "HP", 'demand = "20 t/h"') + LETDOWN_L1
            + user("U-LP", "LP", 'demand = "8 t/h"'))


def test_boiler_feedwater_blowdown_and_fuel():
    r = solve(boiler_net())
    p_hp = barg(40)
    m_s = t_h(20 + 8)                     # no heat loss, users by demand
    b = 0.03                              # blowdown as a fraction of feedwater
    fw = m_s / (1 - b)
    bd = b * fw
    h_s = ref.h_pt(p_hp, degc(400))
    h_fw = ref.liquid_h(barg(50), degc(105))
    h_bd = ref.sat(p_hp).hf               # saturated liquid at drum pressure
    duty = m_s * (h_s - h_fw) + bd * (h_bd - h_fw)
    row = equip(r, "B1")
    assert close(kg_s(row.flow_t_h), m_s)
    assert close(kg_s(row.feedwater_t_h), m_s + bd)          # feedwater = steam + blowdown
    assert close(kg_s(row.blowdown_t_h), bd)
    assert close(j_kg(row.h_out_kj_kg), h_s)
    assert close(j_kg(stream(r, "B1 feedwater").h_kj_kg), h_fw)
    assert close(row.duty_mw * 1e6, duty)
    assert close(row.fuel_mw * 1e6, duty / 0.88)
    assert close(r.water["blowdown_kg_s"], bd)
    assert r.water["blowdown_flash_kg_s"] == 0.0


def test_boiler_blowdown_flash_to_low_header():
    q_lp = 40e3
    r = solve(boiler_net(lp_loss="40 kW", flash='blowdown_flash_header = "LP"'))
    p_hp, p_lp = barg(40), barg(3)
    b = 0.03
    lo, hi = ref.sat(p_lp), ref.sat(p_hp)
    frac = (hi.hf - lo.hf) / lo.hfg       # flash fraction of the blowdown
    k = b / (1 - b) * frac                # flash per unit of boiler steam
    u_hp, u_lp = t_h(20), t_h(8)
    # LP: letdown + flash = user; HP: boiler = user + letdown; flash = k * boiler
    m_l = (u_lp - k * u_hp) / (1 + k)
    m_b = u_hp + m_l
    flash = k * m_b
    h_hp = ref.h_pt(p_hp, degc(400))
    h_lp = (m_l * h_hp + flash * lo.hg - q_lp) / (m_l + flash)
    assert close(kg_s(equip(r, "L1").flow_t_h), m_l)
    assert close(kg_s(equip(r, "B1").flow_t_h), m_b)
    assert close(r.water["blowdown_flash_kg_s"], flash)
    assert close(j_kg(header(r, "LP").h_kj_kg), h_lp)
    # the blowdown that leaves the plant is what did not flash
    assert close(r.water["blowdown_kg_s"] - r.water["blowdown_flash_kg_s"],
                 b / (1 - b) * m_b * (1 - frac))


# ------------------------------------------------------------------------- turbines
def turbine_net(drive: str, turbine: str) -> str:
    return (headers(hp_loss="200 kW", lp_loss="60 kW") + external_water()
            + boiler(t="410 degC") + user("U-HP", "HP", 'demand = "5 t/h"') + f"""
[[turbine]]
name = "T1"
inlet = "HP"
outlet = "LP"
drive = "{drive}"
mechanical_efficiency = "98 %"
generator_efficiency = "97 %"
{turbine}
""" + LETDOWN_L1 + user("U-LP", "LP", 'demand = "25 t/h"'))


def _hp_header_h() -> float:
    """HP header enthalpy: boiler steam less the header heat loss. Users are fixed, so
    the boiler raises the HP user plus everything the LP header takes."""
    m_b = t_h(5 + 25)
    return ref.h_pt(barg(40), degc(410)) - 200e3 / m_b


def _expansion(p_in, h_in, p_out, eta):
    s_in = ref.s_ph(p_in, h_in)
    h_is = ref.h_ps(p_out, s_in)
    h_out = h_in - eta * (h_in - h_is)
    return h_is, h_out


def test_backpressure_turbine_isentropic_efficiency():
    r = solve(turbine_net(drive="generator", turbine="""
isentropic_efficiency = "75 %"
mode = "fixed_flow"
flow = "15 t/h"
"""))
    h_in = _hp_header_h()
    h_is, h_out = _expansion(barg(40), h_in, barg(4), 0.75)
    m = t_h(15)
    row = equip(r, "T1")
    assert close(j_kg(header(r, "HP").h_kj_kg), h_in)
    assert close(j_kg(row.h_out_kj_kg), h_out)
    # internal power: the steam's, m dh, before mechanical losses; shaft power after
    # them (mechanical efficiency 98 %), electric power after the generator (97 %)
    assert close(row.internal_power_kw * 1e3, m * (h_in - h_out))
    assert close(row.shaft_power_kw * 1e3, m * (h_in - h_out) * 0.98)
    assert close(row.power_kw * 1e3, m * (h_in - h_out) * 0.98 * 0.97)
    assert close(row.t_out_degc + C0, ref.t_ph(barg(4), h_out))
    assert math.isnan(row.exhaust_quality)          # superheated exhaust
    assert close(row.isentropic_efficiency, 0.75)
    # the letdown closes the LP header; LP mixes exhaust and throttled steam
    assert close(kg_s(equip(r, "L1").flow_t_h), t_h(25 - 15))
    h_lp = (m * h_out + t_h(10) * h_in - 60e3) / t_h(25)
    assert close(j_kg(header(r, "LP").h_kj_kg), h_lp)


def test_backpressure_turbine_wet_exhaust_flags_the_header():
    """Steam with little superheat expanded to a low header arrives wet: the exhaust
    quality and the header's wetness are reported (docs/method.md, "Equipment equations")."""
    text = (headers(hp="10 bar(g)", lp="0.5 bar(g)") + external_water(p="15 bar(g)")
            + boiler(t="200 degC")
            + turbine('mode = "swing"\nmechanical_efficiency = "98 %"', eta="70 %")
            + user("U-LP", "LP", 'demand = "10 t/h"'))
    r = solve(text)
    p_hp, p_lp = barg(10), barg(0.5)
    h_in = ref.h_pt(p_hp, degc(200))
    _, h_out = _expansion(p_hp, h_in, p_lp, 0.70)
    assert ref.is_wet_h(p_lp, h_out)                   # precondition: a wet exhaust
    row, lp = equip(r, "T1"), header(r, "LP")
    assert close(kg_s(row.flow_t_h), t_h(10))
    assert close(row.exhaust_quality, ref.quality_ph(p_lp, h_out))
    assert close(row.t_out_degc + C0, ref.sat(p_lp).t)
    assert bool(lp.wet)
    assert close(lp.quality, ref.quality_ph(p_lp, h_out))
    assert math.isnan(lp.superheat_k)                  # no "superheat 0.0 K" for wet steam
    assert lp.state == f"wet, quality {ref.quality_ph(p_lp, h_out):.4f}"


@pytest.mark.parametrize("drive,eta_mg", [("generator", 0.98 * 0.97),
                                           ("mechanical", 0.98)])
def test_fixed_power_turbine_flow(drive, eta_mg):
    r = solve(turbine_net(drive=drive, turbine="""
isentropic_efficiency = "62 %"
mode = "fixed_power"
power = "800 kW"
"""))
    h_in = _hp_header_h()
    _, h_out = _expansion(barg(40), h_in, barg(4), 0.62)
    flow = 800e3 / ((h_in - h_out) * eta_mg)     # flow = power / (dh eta_mech eta_gen)
    row = equip(r, "T1")
    assert close(kg_s(row.flow_t_h), flow)
    assert close(row.power_kw, 800.0)
    assert close(kg_s(equip(r, "L1").flow_t_h), t_h(25) - flow)


#: Willans line: steam = no-load steam + slope x output (invented; it implies an
#: isentropic efficiency of about 0.7 here, as a real turbine might)
WILLANS = 'willans_no_load = "2 t/h"\nwillans_slope = "9 t/MWh"\n'


def test_willans_line_fixed_power():
    r = solve(turbine_net("generator", WILLANS + 'mode = "fixed_power"\npower = "1.5 MW"'))
    m = t_h(2) + 9e3 / 3.6e9 * 1.5e6          # 9 t/MWh = 9000 kg / 3.6e9 J
    h_in = _hp_header_h()
    row = equip(r, "T1")
    assert close(kg_s(row.flow_t_h), m)
    assert close(row.power_kw * 1e3, 1.5e6)
    dh = 1.5e6 / (0.98 * 0.97) / m             # shaft work per kg
    assert close(j_kg(row.h_out_kj_kg), h_in - dh)
    h_is = ref.h_ps(barg(4), ref.s_ph(barg(40), h_in))
    assert close(row.isentropic_efficiency, dh / (h_in - h_is))


def test_willans_line_fixed_flow():
    r = solve(turbine_net("mechanical", WILLANS + 'mode = "fixed_flow"\nflow = "14 t/h"'))
    out = (t_h(14) - t_h(2)) / (9e3 / 3.6e9)    # output = (steam - no-load) / slope
    row = equip(r, "T1")
    assert close(row.power_kw * 1e3, out)
    # a mechanical drive delivers its shaft power; the steam gave it and the losses
    assert close(row.shaft_power_kw * 1e3, out)
    assert close(row.internal_power_kw * 1e3, out / 0.98)


def xturbine_net(mode: str) -> str:
    return (headers(hp="60 bar(g)", lp="10 bar(g)", lp_name="MP")
            + external_water(p="75 bar(g)", t="120 degC") + boiler(t="480 degC") + f"""
[[extraction_turbine]]
name = "TX"
inlet = "HP"
section_efficiencies = ["78 %", "72 %"]
condenser_pressure = "0.1 bar(a)"
mechanical_efficiency = "98 %"
generator_efficiency = "97 %"
condensate_return = "0 %"
{mode}
[[extraction_turbine.extractions]]
header = "MP"
mode = "swing"
""" + user("U-MP", "MP", 'demand = "12 t/h"'))


def _sections():
    p_hp, p_mp, p_c = barg(60), barg(10), 0.1e5
    h1 = ref.h_pt(p_hp, degc(480))
    _, h2 = _expansion(p_hp, h1, p_mp, 0.78)     # section 1: inlet to extraction
    _, h3 = _expansion(p_mp, h2, p_c, 0.72)      # section 2 starts where 1 ended
    return h1, h2, h3


@pytest.mark.parametrize("mode", ["fixed_power", "fixed_flow"])
def test_extraction_condensing_turbine(mode):
    text = xturbine_net('mode = "fixed_power"\npower = "7 MW"' if
                           mode == "fixed_power" else 'mode = "fixed_flow"\nflow = "40 t/h"')
    r = solve(text)
    h1, h2, h3 = _sections()
    dh1, dh2 = h1 - h2, h2 - h3
    e = t_h(12)                                  # the extraction holds MP
    if mode == "fixed_power":
        s1 = (7e6 / (0.98 * 0.97) + e * dh2) / (dh1 + dh2)
    else:
        s1 = t_h(40)
    internal = s1 * dh1 + (s1 - e) * dh2          # the steam's power, before losses
    row = equip(r, "TX")
    assert close(kg_s(row.flow_t_h), s1)
    assert close(kg_s(row.exhaust_t_h), s1 - e)
    assert close(row.power_kw * 1e3, internal * 0.98 * 0.97)
    assert close(row.internal_power_kw * 1e3, internal)
    assert close(row.shaft_power_kw * 1e3, internal * 0.98)
    assert close(j_kg(row.h_out_kj_kg), h3)
    assert ref.is_wet_h(0.1e5, h3)
    assert close(row.exhaust_quality, ref.quality_ph(0.1e5, h3))
    assert close(row.t_out_degc + C0, ref.sat(0.1e5).t)
    assert close(row.condenser_duty_mw * 1e6, (s1 - e) * (h3 - ref.sat(0.1e5).hf))
    ext = equip(r, "TX/MP")
    assert close(kg_s(ext.flow_t_h), e)
    assert close(j_kg(ext.h_out_kj_kg), h2)
    assert close(j_kg(header(r, "MP").h_kj_kg), h2)
    assert bool(row.quality_below_limit) == (ref.quality_ph(0.1e5, h3) < 0.88)


# ------------------------------------------------------------------------ let-downs
FLOW20 = 'demand = "20 t/h"'


def _letdown(dsh="", demand=FLOW20, p_hp="40 bar(g)", p_lp="4 bar(g)", t_b="400 degC",
             p_fw="50 bar(g)"):
    return solve(headers(hp=p_hp, lp=p_lp) + external_water(p=p_fw)
                 + external_water("SPRAY", "30 bar(g)", "110 degC") + boiler(t=t_b)
                 + LETDOWN_L1 + dsh + user("U-LP", "LP", demand))


def test_letdown_without_desuperheater_throttles():
    r = _letdown()
    h_in = ref.h_pt(barg(40), degc(400))
    row = equip(r, "L1")
    assert close(j_kg(row.h_out_kj_kg), h_in)              # throttling: h_out = h_in
    assert close(row.t_out_degc + C0, ref.t_ph(barg(4), h_in))
    assert close(kg_s(row.flow_t_h), t_h(20))
    assert row.spray_t_h == 0.0


def _spray_ratio(h_s, h_out, h_w):
    return (h_s - h_out) / (h_out - h_w)          # m_w / m_s from the energy balance


@pytest.mark.parametrize("setpoint,t_set", [
    ('outlet_temperature = "180 degC"', lambda: degc(180)),
    ('approach = "12 K"', lambda: ref.sat(barg(4)).t + 12.0),
])
def test_desuperheater_spray(setpoint, t_set):
    r = _letdown(dsh=f'[letdown.desuperheater]\nspray_supply = "SPRAY"\n{setpoint}')
    h_s = ref.h_pt(barg(40), degc(400))
    h_out = ref.h_pt(barg(4), t_set())
    h_w = ref.liquid_h(barg(30), degc(110))
    rr = _spray_ratio(h_s, h_out, h_w)
    m_s = t_h(20) / (1 + rr)                     # outlet flow = steam + spray = demand
    row = equip(r, "L1")
    assert close(kg_s(row.flow_t_h), m_s)
    assert close(kg_s(row.spray_t_h), m_s * rr)
    assert close(kg_s(row.steam_out_t_h), t_h(20))
    assert close(row.t_out_degc + C0, t_set())
    assert close(row.t_set_degc + C0, t_set())
    assert bool(row.setpoint_reachable)
    assert close(r.water["spray_kg_s"], m_s * rr)
    assert close(r.water["external_water_kg_s"], m_s * rr + kg_s(equip(r, "B1").flow_t_h))


def test_desuperheater_steam_arriving_too_cold():
    # 10 bar(g) steam at 200 degC throttled to 3 bar(g) arrives below a 190 degC setpoint
    r = _letdown(dsh='[letdown.desuperheater]\nspray_supply = "SPRAY"\n'
                 'outlet_temperature = "190 degC"', p_hp="10 bar(g)", p_lp="3 bar(g)",
                 t_b="200 degC", p_fw="15 bar(g)")
    h_in = ref.h_pt(barg(10), degc(200))
    assert h_in < ref.h_pt(barg(3), degc(190))     # precondition: too cold
    row = equip(r, "L1")
    assert row.spray_t_h == 0.0
    assert not bool(row.setpoint_reachable)
    assert close(j_kg(row.h_out_kj_kg), h_in)
    assert close(row.t_out_degc + C0, ref.t_ph(barg(3), h_in))
    assert row.t_out_degc < 190.0
    assert close(kg_s(row.flow_t_h), t_h(20))


# ---------------------------------------------------------------------------- users
def test_user_by_duty():
    r = _letdown(dsh='[letdown.desuperheater]\nspray_supply = "SPRAY"\napproach = "10 K"',
                 demand='duty = "5 MW"')
    p_lp = barg(4)
    h_lp = ref.h_pt(p_lp, ref.sat(p_lp).t + 10.0)   # only the station feeds LP
    flow = 5e6 / (h_lp - ref.sat(p_lp).hf)           # flow = Q / (h_header - h_f)
    row = equip(r, "U-LP")
    assert close(kg_s(row.flow_t_h), flow)
    assert close(row.duty_mw, 5.0)
    assert close(j_kg(header(r, "LP").h_kj_kg), h_lp)
    h_w = ref.liquid_h(barg(30), degc(110))
    rr = _spray_ratio(ref.h_pt(barg(40), degc(400)), h_lp, h_w)
    assert close(kg_s(equip(r, "L1").flow_t_h), flow / (1 + rr))


# ---------------------------------------------------------------- header mixing
MIXING = (headers(lp_loss="150 kW") + external_water()
          + boiler(extra='blowdown = "4 %"\nblowdown_flash_header = "LP"')
          + user("U-HP", "HP", 'demand = "6 t/h"')
          + turbine('mode = "fixed_flow"\nflow = "12 t/h"') + LETDOWN_L1 + """
[letdown.desuperheater]
spray_supply = "FW"
approach = "20 K"
""" + user("U-LP", "LP", 'demand = "30 t/h"'))


def test_header_mixing_of_three_inflows_with_heat_loss():
    r = solve(MIXING)
    p_hp, p_lp = barg(40), barg(4)
    h_hp = ref.h_pt(p_hp, degc(400))
    h_w = ref.liquid_h(barg(50), degc(105))
    lo = ref.sat(p_lp)
    h_set = ref.h_pt(p_lp, lo.t + 20.0)
    rr = _spray_ratio(h_hp, h_set, h_w)
    _, h_t = _expansion(p_hp, h_hp, p_lp, 0.70)
    k = 0.04 / 0.96 * (ref.sat(p_hp).hf - lo.hf) / lo.hfg     # flash per kg of steam
    d, m_t, u_hp = t_h(30), t_h(12), t_h(6)
    # LP: m_t + m_l (1 + r) + k (u_hp + m_t + m_l) = d
    m_l = (d - m_t - k * (u_hp + m_t)) / (1 + rr + k)
    flash = k * (u_hp + m_t + m_l)
    h_lp = (m_t * h_t + m_l * (1 + rr) * h_set + flash * lo.hg - 150e3) / d
    assert close(kg_s(equip(r, "L1").flow_t_h), m_l)
    assert close(j_kg(header(r, "LP").h_kj_kg), h_lp)
    assert close(kg_s(header(r, "LP").inflow_t_h), d)
    assert close(kg_s(equip(r, "B1").flow_t_h), u_hp + m_t + m_l)


# ------------------------------------------------------------------------ deaerator
DEAERATOR = (headers(lp="3 bar(g)") + DA_WATER
             + boiler(feedwater="BFW", extra='blowdown = "2 %"', eff="88 %")
             + user("U-HP", "HP", 'demand = "3 t/h"') + LETDOWN_L1
             + user("U1", "LP", 'demand = "20 t/h"\ncondensate_return = "70 %"\n'
                    'condensate_temperature = "85 degC"')
             + user("U2", "LP", 'demand = "5 t/h"') + deaerator())


def test_pumped_feedwater_enthalpy():
    r = solve(DEAERATOR)
    da = ref.sat(barg(0.3))
    h = da.hf + da.vf * (barg(50) - barg(0.3)) / 0.70     # h_f + v_f dP / eta
    assert close(j_kg(stream(r, "B1 feedwater").h_kj_kg), h)
    assert close(stream(r, "B1 feedwater").t_degc + C0, ref.t_ph(barg(50), h))


def test_deaerator_mass_and_energy_balance():
    r = solve(DEAERATOR)
    p_da = barg(0.3)
    da = ref.sat(p_da)
    h_fw = da.hf + da.vf * (barg(50) - p_da) / 0.70
    h_lp = ref.h_pt(barg(40), degc(400))       # no losses: LP carries throttled HP steam
    h_mk = ref.liquid_h(p_da, degc(10))         # make-up at deaerator pressure
    h_ret = ref.liquid_h(p_da, degc(85))        # returns at deaerator pressure
    ret = 0.7 * t_h(20)
    b, vf = 0.02, 0.005
    # unknowns: boiler steam m, deaerator steam s, make-up w
    #   HP:  m = U-HP + U1 + U2 + s                      (the letdown passes U1+U2+s)
    #   DA mass:   s + w + ret = (1 + vf) m / (1 - b)
    #   DA energy: s h_lp + w h_mk + ret h_ret = m / (1 - b) (h_f + vf h_g)
    a = np.array([[1.0, -1.0, 0.0],
                  [-(1 + vf) / (1 - b), 1.0, 1.0],
                  [-(da.hf + vf * da.hg) / (1 - b), h_lp, h_mk]])
    rhs = np.array([t_h(3 + 20 + 5), -ret, -ret * h_ret])
    m, s, w = np.linalg.solve(a, rhs)
    row = equip(r, "DA")
    assert close(kg_s(equip(r, "B1").flow_t_h), m)
    assert close(kg_s(row.flow_t_h), s)
    assert close(kg_s(row.makeup_t_h), w)
    assert close(kg_s(row.feedwater_t_h), m / (1 - b))
    assert close(kg_s(row.vent_t_h), vf * m / (1 - b))
    assert close(row.t_out_degc + C0, da.t)
    h_b = ref.h_pt(barg(40), degc(400))
    duty = m * (h_b - h_fw) + b * m / (1 - b) * (ref.sat(barg(40)).hf - h_fw)
    assert close(equip(r, "B1").duty_mw * 1e6, duty)


# ---------------------------------------------------------------- the two libraries
PLANT_STATES = [(barg(p), degc(t)) for p, t in
                [(60, 480), (40, 400), (13, 280), (4.5, 200), (1.5, 130), (0.3, 120),
                 (50, 105), (62, 110), (24, 60), (0.3, 10)]]


@pytest.mark.parametrize("p,t", PLANT_STATES)
def test_property_libraries_agree(p, t):
    """The premise of REL: iapws (through steamnet) and CoolProp's IF97 agree far
    better than 1e-6 on plant states, forward and backward."""
    st = props.state_pt(p, t)
    assert close(st.h, ref.h_pt(p, t), rel=1e-12)
    assert close(st.s, ref.s_pt(p, t), rel=1e-12)
    assert close(props.state_ph(p, st.h).t, t, rel=1e-10)
    sat = props.saturation(p)
    rs = ref.sat(p)
    assert close(sat.t, rs.t, rel=1e-12)
    assert close(sat.hf, rs.hf, rel=1e-12) and close(sat.hg, rs.hg, rel=1e-12)
    assert close(sat.vf, rs.vf, rel=1e-12)
    # the end of an isentropic expansion to 0.1 bar(a), usually wet
    assert close(props.state_ps(0.1e5, st.s).h, ref.h_ps(0.1e5, st.s), rel=1e-10)
