"""A turbine-driven feedwater pump (docs/model-file.md, water supply ``pump_turbine``;
docs/method.md, "Equipment equations"): the turbine's power follows the pumped flow,
v dP / eta_pump times the water delivered, and the pump costs no electricity; while the
turbine is tripped the pump counts as motor-driven.

The expected values are recomputed here from CoolProp's IF97 backend (``if97_ref``).
Tolerance 1e-9 relative, as in tests/test_equipment_balances.py (the solver's
convergence, about 1e-12; the two IF97 implementations agree to about 1e-14).
"""

from __future__ import annotations

import math

import pytest
import if97_ref as ref
from helpers import (barg, check_refuses, deaerator, degc, equip, headers, j_kg, kg_s,
                     solve, t_h, user)

REL = 1e-9

NET = headers(hp="40 bar(g)", lp="3 bar(g)") + """
[prices]
electricity = "100 EUR/MWh"

[[water_supply]]
name = "BFW"
source = "deaerator"
pressure = "55 bar(g)"
pump_efficiency = "70 %"
pump_turbine = "TP"

[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "420 degC"
feedwater = "BFW"
efficiency = "90 %"
blowdown = "2 %"
mode = "fixed"
steam = "40 t/h"

[[turbine]]
name = "TP"
inlet = "HP"
outlet = "LP"
drive = "mechanical"
isentropic_efficiency = "55 %"
mechanical_efficiency = "96 %"
mode = "pump"

[[letdown]]
name = "L1"
inlet = "HP"
outlet = "LP"
[letdown.desuperheater]
spray_supply = "BFW"
approach = "15 K"

[[vent]]
name = "HP vent"
header = "HP"
""" + user("U-HP", "HP", 'demand = "5 t/h"') + user(
    "U-LP", "LP", 'demand = "20 t/h"\ncondensate_return = "50 %"\n'
    'condensate_temperature = "90 degC"') + deaerator(header="LP", p="0.3 bar(g)",
                                                     vent="0 %") + """
[[case]]
name = "pump turbine tripped"
changes = { "turbine.TP.mode" = "tripped" }
"""


def close(a, b, rel=REL):
    return math.isclose(a, b, rel_tol=rel)


def _pump():
    """Pump work per kg [J/kg] and the feedwater enthalpy: saturated water at the
    deaerator raised by v dP / eta (docs/method.md, "water supply")."""
    sd = ref.sat(barg(0.3))
    w = sd.vf * (barg(55) - barg(0.3)) / 0.70
    return w, sd.hf + w


def test_turbine_power_follows_the_pumped_flow():
    r = solve(NET, None)
    w, h_w = _pump()
    p_hp, p_lp = barg(40), barg(3)
    h_hp = ref.h_pt(p_hp, degc(420))          # the boiler alone feeds HP, no heat loss
    fw = t_h(40) / (1 - 0.02)                 # boiler feedwater: steam + blowdown
    # the let-down's spray from the same pump: r = (h_in - h_set) / (h_set - h_w)
    h_set = ref.h_pt(p_lp, ref.sat(p_lp).t + 15)
    m_ld = kg_s(equip(r, "L1").flow_t_h)
    spray = m_ld * (h_hp - h_set) / (h_set - h_w)
    assert spray > 0                          # precondition: the pump feeds both
    assert close(kg_s(equip(r, "L1").spray_t_h), spray)
    pump = w * (fw + spray)                   # pump power [W]
    s_in = ref.s_ph(p_hp, h_hp)
    dh = 0.55 * (h_hp - ref.h_ps(p_lp, s_in))
    row = equip(r, "TP")
    assert close(row.power_kw * 1e3, pump)               # shaft power = pump power
    assert close(row.shaft_power_kw * 1e3, pump)
    assert close(kg_s(row.flow_t_h), pump / (0.96 * dh))
    assert close(j_kg(row.h_out_kj_kg), h_hp - dh)
    assert close(r.summary["mechanical_power_mw"] * 1e6, pump)
    # no electricity is bought for the pump: the only price is electricity's
    assert abs(r.summary["cost_per_h"]) < 1e-9


def test_tripped_pump_turbine_leaves_the_pump_on_its_motor():
    r = solve(NET, "pump turbine tripped")
    w, h_w = _pump()
    assert equip(r, "TP").flow_t_h == 0.0 and equip(r, "TP").service == "tripped"
    fw = t_h(40) / (1 - 0.02)
    spray = kg_s(equip(r, "L1").spray_t_h)
    # the motor's power at 100 EUR/MWh = 100 EUR / 3.6e9 J
    assert close(r.summary["cost_per_h"], w * (fw + spray) * 100 / 3.6e9 * 3600)


BAD = [
    ("missing turbine", ('pump_turbine = "TP"', 'pump_turbine = "TX"'),
     "water supply 'BFW'", "pump_turbine", "turbine 'TX' does not exist"),
    ("generator drive", ('drive = "mechanical"\nisentropic_efficiency = "55 %"\n'
                         'mechanical_efficiency = "96 %"\nmode = "pump"',
                         'drive = "generator"\nisentropic_efficiency = "55 %"\n'
                         'mechanical_efficiency = "96 %"\nmode = "fixed_flow"\n'
                         'flow = "2 t/h"'),
     "water supply 'BFW'", "pump_turbine", "drive = 'mechanical'"),
    ("pump mode with a generator", ('drive = "mechanical"', 'drive = "generator"'),
     "turbine 'TP'", "drive", "mechanical drive"),
    ("turbine in another mode", ('mode = "pump"', 'mode = "fixed_flow"\nflow = "2 t/h"'),
     "water supply 'BFW'", "pump_turbine", "mode = 'pump'"),
    ("pump mode named by no supply", ('pump_turbine = "TP"\n', ''),
     "turbine 'TP'", "mode", "no water supply names"),
    ("power given in pump mode", ('mode = "pump"', 'mode = "pump"\npower = "300 kW"'),
     "turbine 'TP'", "power", "remove 'power'"),
    ("no pump efficiency", ('pump_efficiency = "70 %"\n', ''),
     "water supply 'BFW'", "pump_turbine", "pump_efficiency"),
    ("external supply", ('source = "deaerator"', 'source = "external"\n'
                         'temperature = "105 degC"'),
     "water supply 'BFW'", "pump_turbine", "source = 'deaerator'"),
]


@pytest.mark.parametrize("change,item,field,words", [b[1:] for b in BAD],
                         ids=[b[0] for b in BAD])
def test_bad_pump_turbine_names_file_item_and_field(tmp_path, change, item, field,
                                                    words):
    old, new = change
    assert old in NET
    check_refuses(tmp_path, NET.replace(old, new, 1), item, field, words)


@pytest.mark.parametrize("seed", [72, 117])     # seeds whose pump turbine runs, balanced
def test_random_networks_with_a_pump_turbine_pass_the_independent_check(seed):
    import dataclasses

    import steamnet
    from steamnet.testing import check_case, check_study
    from steamnet.testing.synth import random_model_text
    text = random_model_text(seed, 2 + seed % 4, 14 + seed % 40, n_cases=2)
    model = steamnet.loads_model(text, source=f"seed {seed}")
    pumped = [w.pump_turbine for w in model.table("water_supply").values()
              if w.pump_turbine]
    assert pumped                                        # precondition
    study = steamnet.solve_cases(model)
    assert all(c.status == "solved" for c in study.cases)
    assert check_study(study) == []
    r = study.cases[0]
    eq = r.equipment.copy()
    pick = eq["item"] == pumped[0]
    assert eq.loc[pick, "power_kw"].iloc[0] > 0          # precondition: it pumps
    eq.loc[pick, "power_kw"] *= 1.001                     # the check sees a wrong power
    bad = dataclasses.replace(r, equipment=eq)
    assert any("pump it drives" in p for p in check_case(model, bad))


def test_cheapest_dispatch_holds_the_pump_turbine_to_the_water_it_pumps():
    """The dispatch programme moves the load from B1 (2 % blowdown) to a cheaper boiler
    with 10 % blowdown: more feedwater is pumped, and the pump-driving turbine's flow in
    the programme's answer is the one its pump then needs, v dP / eta_pump x (feedwater
    + spray) / (eta_m dh), recomputed from CoolProp's IF97 backend at the enthalpies of
    the programme (the header and spray enthalpies of the balance it starts from)."""
    from steamnet.solver.dispatch import solve_dispatch
    text = NET.replace('mode = "fixed"\nsteam = "40 t/h"',
                       'mode = "swing"\npriority = 1\nmax_steam = "80 t/h"\n'
                       'fuel_price = "12 EUR/GJ"', 1) + """
[[boiler]]
name = "B2"
header = "HP"
steam_temperature = "420 degC"
feedwater = "BFW"
efficiency = "90 %"
blowdown = "10 %"
mode = "swing"
priority = 2
max_steam = "80 t/h"
fuel_price = "6 EUR/GJ"
"""
    r = solve(text, None)
    sol = r.solution
    lp = solve_dispatch(sol.net, sol.co, list(sol.h))
    assert lp.status == "optimal"
    x = {(v.kind, v.item): lp.x[v.index] for v in sol.net.vars}
    assert x[("boiler", "B2")] > x[("boiler", "B1")]     # precondition: the load moved
    w, h_w = _pump()
    p_hp, p_lp = barg(40), barg(3)
    h_hp = ref.h_pt(p_hp, degc(420))
    h_set = ref.h_pt(p_lp, ref.sat(p_lp).t + 15)
    spray = x[("letdown", "L1")] * (h_hp - h_set) / (h_set - h_w)
    fw = x[("boiler", "B1")] / (1 - 0.02) + x[("boiler", "B2")] / (1 - 0.10)
    dh = 0.55 * (h_hp - ref.h_ps(p_lp, ref.s_ph(p_hp, h_hp)))
    assert close(x[("turbine", "TP")], w * (fw + spray) / (0.96 * dh), rel=1e-7)
    # and not the flow of the balance it started from (the load moved)
    assert not close(x[("turbine", "TP")], kg_s(equip(r, "TP").flow_t_h), rel=1e-3)
