"""The turbine trip: the tripped turbine's steam reaches the lower header through the
let-down stations, and the spray water rises accordingly
(docs/method.md, "Equipment equations").

Two checks:

* the demo's "winter-TG1-trip" against "winter", with a hand balance of the LP and LLP
  headers and the deaerator recomputed here from CoolProp's IF97 properties (let-down
  outlet = steam x (1 + r), r = (h_in - h_set) / (h_set - h_w)); the hand balance takes
  from the solved case only what the HP and MP headers decide (their enthalpies, the
  boiler feedwater, the MP station's spray, the condenser flow and the blowdown);
* a two-header network small enough that both cases follow from a 4 x 4 linear system.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import if97_ref as ref
from conftest import DEMO
from helpers import (DA_WATER, boiler, deaerator, equip, header, headers, j_kg, kg_s,
                     model as model_from_text, turbine, user)
from steamnet.model.load import load_model
from steamnet.sweep import solve_cases

CLOSE = 1e-6          # the closure the balance promises (docs/method.md)


def _ratio(h_in, h_set, h_w):
    """Spray per kg of steam; no spray when the steam arrives at or below the setpoint."""
    return (h_in - h_set) / (h_set - h_w) if h_in > h_set else 0.0


def _expansion(p_in, h_in, p_out, eta):
    h_is = ref.h_ps(p_out, ref.s_ph(p_in, h_in))
    return h_in - eta * (h_in - h_is)


def _pumped(m, supply, p_da):
    ws = m.table("water_supply")[supply]
    s = ref.sat(p_da)
    return s.hf + s.vf * (ws.pressure - p_da) / ws.pump_efficiency


def _set_h(m, station):
    """Enthalpy at the desuperheater setpoint of ``station`` (CoolProp)."""
    s = m.table("letdown")[station]
    p = m.headers[s.outlet].pressure
    d = s.desuperheater
    t = d.outlet_temperature if d.outlet_temperature is not None else ref.sat(p).t + d.approach
    return ref.h_pt(p, t)


def hand_balance(m, r):
    """LP, LLP and deaerator of the demo by hand, for the case model ``m``.

    Returns a dict of flows [kg/s] and enthalpies [J/kg]."""
    H = m.headers
    p_hp, p_lp, p_llp = H["HP"].pressure, H["LP"].pressure, H["LLP"].pressure
    (da_name, da), = m.table("deaerator").items()
    p_da = da.pressure
    assert da.header == "LLP"
    users = m.table("user")
    turb = m.table("turbine")
    lds = m.table("letdown")
    # what the HP and MP headers decide, taken from the solved case
    h_hp, h_mp = j_kg(header(r, "HP").h_kj_kg), j_kg(header(r, "MP").h_kj_kg)
    fw_boilers = sum(kg_s(equip(r, b).feedwater_t_h) for b in m.table("boiler"))
    spray_hm = kg_s(equip(r, "PRV-HM").spray_t_h)
    tg2_exhaust = kg_s(equip(r, "TG2").exhaust_t_h)
    b2 = m.table("boiler")["B2-gas"]
    assert b2.blowdown_flash_header == "LLP"
    bd_b2 = kg_s(equip(r, "B2-gas").blowdown_t_h)
    # properties
    s_lp, s_llp, s_da, s_hp = ref.sat(p_lp), ref.sat(p_llp), ref.sat(p_da), ref.sat(p_hp)
    h_w_bfw = _pumped(m, "BFW", p_da)
    h_w_ip = _pumped(m, "IP-spray", p_da)
    assert lds["PRV-HL"].desuperheater.spray_supply == "BFW"
    assert lds["PRV-ML"].desuperheater.spray_supply == "IP-spray"
    assert lds["PRV-LL"].desuperheater.spray_supply == "IP-spray"
    h_set = {n: _set_h(m, n) for n in ("PRV-HL", "PRV-ML", "PRV-LL")}
    r_hl = _ratio(h_hp, h_set["PRV-HL"], h_w_bfw)
    r_ml = _ratio(h_mp, h_set["PRV-ML"], h_w_ip)
    flash = bd_b2 * (s_hp.hf - s_llp.hf) / s_llp.hfg
    # the feed pump turbine: flow = power / (dh eta_mech), its power that of the BFW
    # pump it drives: v dP / eta_pump times the boilers' feedwater and the sprays of
    # PRV-HM and PRV-HL (docs/method.md, "turbine-driven pump")
    tp1 = turb["TP1-feedpump"]
    assert tp1.mode == "pump" and m.table("water_supply")["BFW"].pump_turbine == tp1.name
    assert lds["PRV-HM"].desuperheater.spray_supply == "BFW"
    h_tp1 = _expansion(p_hp, h_hp, p_lp, tp1.isentropic_efficiency)
    w_bfw = h_w_bfw - ref.sat(p_da).hf

    def tp1_flow(m_hl):
        pump = w_bfw * (fw_boilers + spray_hm + m_hl * r_hl)
        return pump / ((h_hp - h_tp1) * tp1.mechanical_efficiency)
    m_tp1 = tp1_flow(0.0)
    tg1 = turb["TG1"]
    h_tg1 = _expansion(p_hp, h_hp, p_lp, tg1.isentropic_efficiency)
    # LP supply sequence by priority: (name, min steam, max steam, outlet per kg, h_out)
    seq = []
    if tg1.mode == "swing":
        seq.append((tg1.priority, "TG1", tg1.min_flow, tg1.max_flow, 1.0, h_tg1))
    seq.append((lds["PRV-ML"].priority, "PRV-ML", 0.0, lds["PRV-ML"].max_flow, 1 + r_ml,
                h_set["PRV-ML"]))
    seq.append((lds["PRV-HL"].priority, "PRV-HL", 0.0, lds["PRV-HL"].max_flow, 1 + r_hl,
                h_set["PRV-HL"]))
    seq.sort()
    # fixed LP and LLP users; the duty user is recomputed from h_LP
    def on(h):
        return [(n, u) for n, u in users.items() if u.header == h and u.in_service]
    duty_users = [(n, u) for n, u in on("LP") if u.duty is not None]
    lp_fixed = sum(u.demand for _, u in on("LP") if u.demand is not None)
    llp_users = sum(u.demand for _, u in on("LLP"))
    ret_fixed = [(u.demand * u.condensate_return, u.condensate_temperature)
                 for _, u in on("LP") + on("LLP") + on("MP")
                 if u.demand is not None and u.condensate_return > 0]
    tg2 = m.table("extraction_turbine")["TG2"]
    ret_fixed.append((tg2_exhaust * tg2.condensate_return, tg2.condensate_temperature))
    h_mk = ref.liquid_h(p_da, m.site.makeup_temperature)
    h_lp, h_llp, steam_da = s_lp.hg + 20e3, s_llp.hg + 5e3, 0.0     # a rough start
    for _ in range(200):
        duty_flow = {n: u.duty / (h_lp - s_lp.hf) for n, u in duty_users}
        r_ll = _ratio(h_lp, h_set["PRV-LL"], h_w_ip)
        out_ll = llp_users + steam_da - flash          # PRV-LL outlet holds LLP
        m_ll = out_ll / (1 + r_ll)
        lp_out = lp_fixed + sum(duty_flow.values()) + m_ll
        need = lp_out - m_tp1
        flows = {n: lo for _, n, lo, hi, k, h in seq}
        need -= sum(lo * k for _, n, lo, hi, k, h in seq)
        for _, n, lo, hi, k, h in seq:               # fill in order of priority
            take = min(need, (hi - lo) * k)
            flows[n] += take / k
            need -= take
        assert need <= 1e-9, "the LP suppliers cannot carry the LP demand"
        m_tp1_new = tp1_flow(flows["PRV-HL"])
        e_in = m_tp1 * h_tp1 + sum(flows[n] * k * h for _, n, lo, hi, k, h in seq)
        h_lp_new = (e_in - H["LP"].heat_loss) / lp_out
        sprays = (spray_hm + flows["PRV-ML"] * r_ml + flows["PRV-HL"] * r_hl
                  + m_ll * r_ll)
        fw = fw_boilers + sprays                       # every spray is pumped from the DA
        rets = [(mm, ref.liquid_h(p_da, t)) for mm, t in ret_fixed]
        for n, u in duty_users:
            rets.append((duty_flow[n] * u.condensate_return,
                         ref.liquid_h(p_da, u.condensate_temperature)))
        ret_m = sum(mm for mm, _ in rets)
        ret_e = sum(mm * hh for mm, hh in rets)
        vf = da.vent_fraction
        # DA: steam + make-up + returns = fw (1 + vf); energy likewise (vent at h_g)
        a = np.array([[1.0, 1.0], [h_llp, h_mk]])
        b = np.array([fw * (1 + vf) - ret_m, fw * (s_da.hf + vf * s_da.hg) - ret_e])
        steam_da_new, makeup = np.linalg.solve(a, b)
        h_llp_new = ((out_ll * h_set["PRV-LL"] + flash * s_llp.hg - H["LLP"].heat_loss)
                     / (out_ll + flash))
        moved = max(abs(h_lp_new - h_lp), abs(h_llp_new - h_llp),
                    abs(steam_da_new - steam_da) * 1e3, abs(m_tp1_new - m_tp1) * 1e3)
        h_lp, h_llp, steam_da = h_lp_new, h_llp_new, steam_da_new
        m_tp1 = m_tp1_new
        if moved < 1e-7:
            break
    else:
        raise AssertionError("hand balance did not converge")
    return {"h_lp": h_lp, "h_llp": h_llp, "da_steam": steam_da, "makeup": makeup,
            "PRV-LL": m_ll, "PRV-ML": flows["PRV-ML"], "PRV-HL": flows["PRV-HL"],
            "TG1": flows.get("TG1", 0.0), "TP1-feedpump": m_tp1, "r_hl": r_hl,
            "r_ml": r_ml, "r_ll": r_ll, "spray": sprays, "fw": fw, "duty": duty_flow,
            "lp_out": lp_out}


@pytest.fixture(scope="module")
def demo():
    m = load_model(DEMO)
    study = solve_cases(m, ["winter", "winter-TG1-trip"])
    out = {}
    for c in ("winter", "winter-TG1-trip"):
        r = study.case(c)
        assert r.ok, r.message
        out[c] = (m.for_case(c), r)
    return out


def _rel(a, b):
    return abs(a - b) <= CLOSE * max(abs(a), abs(b), 1e-12)


@pytest.mark.parametrize("case", ["winter", "winter-TG1-trip"])
def test_demo_lp_hand_balance(demo, case):
    m, r = demo[case]
    for v in ("LP vent", "LLP vent"):
        assert equip(r, v).flow_t_h == 0.0          # the hand balance assumes no venting
    hb = hand_balance(m, r)
    assert _rel(j_kg(header(r, "LP").h_kj_kg), hb["h_lp"])
    assert _rel(j_kg(header(r, "LLP").h_kj_kg), hb["h_llp"])
    for n in ("PRV-ML", "PRV-HL", "PRV-LL", "TP1-feedpump"):
        assert _rel(kg_s(equip(r, n).flow_t_h), hb[n]), n
    for n, rr in (("PRV-ML", "r_ml"), ("PRV-HL", "r_hl"), ("PRV-LL", "r_ll")):
        row = equip(r, n)
        assert _rel(kg_s(row.spray_t_h), hb[n] * hb[rr]), n
        assert _rel(kg_s(row.steam_out_t_h), hb[n] * (1 + hb[rr])), n   # steam (1 + r)
    for n, f in hb["duty"].items():
        assert _rel(kg_s(equip(r, n).flow_t_h), f)
    assert _rel(r.water["spray_kg_s"], hb["spray"])
    assert _rel(r.water["da_steam_kg_s"], hb["da_steam"])
    assert _rel(r.water["makeup_kg_s"], hb["makeup"])
    assert _rel(r.water["feedwater_from_da_kg_s"], hb["fw"])
    if case == "winter":
        assert _rel(kg_s(equip(r, "TG1").flow_t_h), hb["TG1"])


def test_trip_steam_arrives_through_the_letdowns(demo):
    (mw, w), (mt, t) = demo["winter"], demo["winter-TG1-trip"]
    # tripped: passes nothing, and keeps its row saying so (docs/results.md)
    assert equip(t, "TG1").flow_t_h == 0.0 and equip(t, "TG1").service == "tripped"
    tg1 = kg_s(equip(w, "TG1").flow_t_h)
    assert tg1 > 0
    into_lp = ("PRV-ML", "PRV-HL")

    def ld_out(r):
        return sum(kg_s(equip(r, n).steam_out_t_h) for n in into_lp)
    hw, ht = hand_balance(mw, w), hand_balance(mt, t)
    # what TG1 carried now comes through the stations, less what the LP no longer needs
    d_out = ht["lp_out"] - hw["lp_out"]
    d_tp1 = kg_s(equip(t, "TP1-feedpump").flow_t_h) - kg_s(equip(w, "TP1-feedpump").flow_t_h)
    assert _rel(ld_out(t) - ld_out(w), tg1 + d_out - d_tp1)
    assert ld_out(t) - ld_out(w) > 0.9 * tg1
    # the HP-LP station now runs, behind the MP-LP station at its maximum
    assert equip(w, "PRV-HL").flow_t_h == 0.0 and equip(t, "PRV-HL").flow_t_h > 0
    assert equip(t, "PRV-ML").limit == "at maximum"
    # the spray rises by what the extra let-down steam needs
    spray_w, spray_t = w.water["spray_kg_s"], t.water["spray_kg_s"]
    assert spray_t > spray_w
    assert _rel(spray_t - spray_w, ht["spray"] - hw["spray"])
    # the deaerator follows the feedwater it must heat (boilers and every spray)
    assert _rel(t.water["da_steam_kg_s"] - w.water["da_steam_kg_s"],
                ht["da_steam"] - hw["da_steam"])
    assert t.water["da_steam_kg_s"] != w.water["da_steam_kg_s"]


# ----------------------------------------------------- a small exact network
TWO = (headers(site="Trip bench") + DA_WATER
       + boiler(feedwater="BFW", eff="88 %", extra='blowdown = "2 %"')
       + turbine('mechanical_efficiency = "98 %"\ngenerator_efficiency = "97 %"\n'
                 'mode = "swing"\npriority = 1\nmax_flow = "60 t/h"', name="TG", eta="72 %")
       + """
[[letdown]]
name = "PRV"
inlet = "HP"
outlet = "LP"
priority = 2
[letdown.desuperheater]
spray_supply = "BFW"
approach = "15 K"
""" + user("U-HP", "HP", 'demand = "2 t/h"')
       + user("U-LP", "LP", 'demand = "30 t/h"\ncondensate_return = "60 %"\n'
              'condensate_temperature = "90 degC"') + deaerator() + """
[[case]]
name = "running"
[[case]]
name = "trip"
changes = { "turbine.TG.mode" = "tripped" }
""")


def _two_header_exact():
    """Both cases of TWO from a 4 x 4 linear system each (no heat losses)."""
    atm = 101325.0
    p_hp, p_lp, p_da = 40e5 + atm, 4e5 + atm, 0.3e5 + atm
    h_b = ref.h_pt(p_hp, 400 + 273.15)
    da = ref.sat(p_da)
    h_w = da.hf + da.vf * (50e5 + atm - p_da) / 0.70
    h_fwo = da.hf + 0.005 * da.hg                     # feedwater + vent, per kg feedwater
    h_mk = ref.liquid_h(p_da, 10 + 273.15)
    ret, h_ret = 0.6 * 30 / 3.6, ref.liquid_h(p_da, 90 + 273.15)
    d, u_hp, b, vf = 30 / 3.6, 2 / 3.6, 0.02, 0.005
    h_t = _expansion(p_hp, h_b, p_lp, 0.72)
    h_set = ref.h_pt(p_lp, ref.sat(p_lp).t + 15.0)
    r = (h_b - h_set) / (h_set - h_w)
    # running: unknowns boiler, turbine, DA steam, make-up (the PRV stays shut)
    a = np.array([[1, -1, 0, 0],
                  [0, 1, -1, 0],
                  [-(1 + vf) / (1 - b), 0, 1, 1],
                  [-h_fwo / (1 - b), 0, h_t, h_mk]], dtype=float)
    run = np.linalg.solve(a, [u_hp, d, -ret, -ret * h_ret])
    # trip: unknowns boiler, PRV steam, DA steam, make-up; spray r per kg from the DA
    a = np.array([[1, -1, 0, 0],
                  [0, 1 + r, -1, 0],
                  [-(1 + vf) / (1 - b), -(1 + vf) * r, 1, 1],
                  [-h_fwo / (1 - b), -h_fwo * r, h_set, h_mk]], dtype=float)
    trip = np.linalg.solve(a, [u_hp, d, -ret, -ret * h_ret])
    return run, trip, r, h_b, h_t, h_set


def test_two_header_trip_exact():
    m = model_from_text(TWO, "trip_bench.toml")
    study = solve_cases(m)
    run_r, trip_r = study.case("running"), study.case("trip")
    assert run_r.ok and trip_r.ok, (run_r.message, trip_r.message)
    run, trip, r, h_b, h_t, h_set = _two_header_exact()
    # running: the turbine carries LP and the deaerator steam; no spray
    assert math.isclose(kg_s(equip(run_r, "B1").flow_t_h), run[0], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(run_r, "TG").flow_t_h), run[1], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(run_r, "DA").flow_t_h), run[2], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(run_r, "DA").makeup_t_h), run[3], rel_tol=1e-9)
    assert equip(run_r, "PRV").flow_t_h == 0.0
    assert run_r.water["spray_kg_s"] == 0.0
    assert math.isclose(equip(run_r, "TG").power_kw * 1e3,
                        run[1] * (h_b - h_t) * 0.98 * 0.97, rel_tol=1e-9)
    assert math.isclose(j_kg(header(run_r, "LP").h_kj_kg), h_t, rel_tol=1e-9)
    # trip: everything reaches LP through the station, with spray r per kg of steam
    assert equip(trip_r, "TG").flow_t_h == 0.0 and equip(trip_r, "TG").service == "tripped"
    prv = equip(trip_r, "PRV")
    assert math.isclose(kg_s(prv.flow_t_h), trip[1], rel_tol=1e-9)
    assert math.isclose(kg_s(prv.spray_t_h), r * trip[1], rel_tol=1e-9)
    assert math.isclose(kg_s(prv.steam_out_t_h), (1 + r) * trip[1], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(trip_r, "B1").flow_t_h), trip[0], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(trip_r, "DA").flow_t_h), trip[2], rel_tol=1e-9)
    assert math.isclose(kg_s(equip(trip_r, "DA").makeup_t_h), trip[3], rel_tol=1e-9)
    assert math.isclose(j_kg(header(trip_r, "LP").h_kj_kg), h_set, rel_tol=1e-9)
    # the station passes what the turbine passed, less the spray it adds, and the
    # deaerator steam changes with the LP enthalpy and the spray it must heat
    assert trip_r.water["spray_kg_s"] > 0
    assert trip[1] < run[1]
    assert not math.isclose(trip[2], run[2], rel_tol=1e-3)


def test_trip_with_no_station_left_is_reported_short():
    """With the station closed too, LP has nothing to hold it: the trip case is
    infeasible and says so, while the running case still solves."""
    m = model_from_text(TWO.replace('changes = { "turbine.TG.mode" = "tripped" }',
                                    'changes = { "turbine.TG.mode" = "tripped", '
                                    '"letdown.PRV.max_flow" = "5 t/h" }'))
    study = solve_cases(m)
    assert study.case("running").ok
    trip = study.case("trip")
    assert trip.status == "infeasible"
    assert "header 'LP' is short of steam" in trip.message
    assert "letdown 'PRV' at its maximum 5.00 t/h" in trip.message
