"""The moisture correction of an extraction turbine's sections (Baumann rule: 1 % of
efficiency per 1 % of mean moisture, common practice, no source; docs/method.md):
off by default, and when on each section's efficiency is eta (1 - y_mean), y_mean the
mean of its inlet and outlet moisture, reported in the results.

Expected values from CoolProp's IF97 backend (``if97_ref``), the implicit outlet state
found here by a root search; tolerance 1e-9 relative as in
tests/test_equipment_balances.py.
"""

from __future__ import annotations

import math

from scipy.optimize import brentq

import if97_ref as ref
from helpers import barg, check_refuses, degc, equip, j_kg, kg_s, solve, t_h
from test_equipment_balances import xturbine_net

REL = 1e-9
POWER = 'mode = "fixed_power"\npower = "7 MW"'


def close(a, b):
    return math.isclose(a, b, rel_tol=REL)


def _moisture(p, h):
    s = ref.sat(p)
    return max(0.0, (s.hg - h) / (s.hg - s.hf))


def _baumann(p_in, h_in, p_out, eta):
    """Outlet enthalpy of a section whose efficiency is eta (1 - mean moisture)."""
    h_is = ref.h_ps(p_out, ref.s_ph(p_in, h_in))
    y_in = _moisture(p_in, h_in)

    def gap(h_out):
        y = (y_in + _moisture(p_out, h_out)) / 2
        return h_in - eta * (1 - y) * (h_in - h_is) - h_out
    return brentq(gap, h_is, h_in, xtol=1e-9, rtol=1e-15)


def test_moisture_correction_lowers_the_wet_section():
    r = solve(xturbine_net(POWER + "\nmoisture_correction = true"))
    p_hp, p_mp, p_c = barg(60), barg(10), 0.1e5
    h1 = ref.h_pt(p_hp, degc(480))
    h_is2 = ref.h_ps(p_mp, ref.s_ph(p_hp, h1))
    h2 = h1 - 0.78 * (h1 - h_is2)
    assert _moisture(p_mp, h2) == 0.0            # section 1 stays dry: no correction
    h3 = _baumann(p_mp, h2, p_c, 0.72)
    assert _moisture(p_c, h3) > 0.05             # precondition: a wet last section
    e = t_h(12)
    dh1, dh2 = h1 - h2, h2 - h3
    s1 = (7e6 / (0.98 * 0.97) + e * dh2) / (dh1 + dh2)
    row = equip(r, "TX")
    assert close(j_kg(row.h_out_kj_kg), h3)
    assert close(kg_s(row.flow_t_h), s1)
    assert close(row.exhaust_quality, ref.quality_ph(p_c, h3))
    eta2 = dh2 / (h2 - ref.h_ps(p_c, ref.s_ph(p_mp, h2)))
    assert eta2 < 0.72
    assert row.section_efficiencies_used == f"78.00 %, {100 * eta2:.2f} %"


def test_off_by_default_and_not_reported():
    r = solve(xturbine_net(POWER))
    assert "section_efficiencies_used" not in r.equipment.columns


def test_moisture_correction_needs_a_condenser(tmp_path):
    text = xturbine_net(POWER + "\nmoisture_correction = true").replace(
        'condenser_pressure = "0.1 bar(a)"', 'exhaust = "MP"').replace(
        '[[extraction_turbine.extractions]]\nheader = "MP"\nmode = "swing"\n', '').replace(
        'section_efficiencies = ["78 %", "72 %"]',
        'section_efficiencies = ["78 %"]\nextractions = []')
    check_refuses(tmp_path, text, "extraction turbine 'TX'", "moisture_correction",
                  "condensing")
