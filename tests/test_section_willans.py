"""Willans lines for the sections of an extraction turbine (docs/method.md,
"extraction turbine"): section output (m_j - m0_j) / k_j, its internal power that
over eta_mg; at fixed power sum_j (m_j - m0_j) / k_j = power. Validation refuses a line
whose implied isentropic efficiency exceeds 1 in its range.

Expected values from CoolProp's IF97 backend (``if97_ref``) and the closed form below;
tolerance 1e-9 relative as in tests/test_equipment_balances.py.
"""

from __future__ import annotations

import math

import pytest
import if97_ref as ref
from helpers import barg, check_refuses, degc, equip, header, j_kg, kg_s, solve, t_h
from test_equipment_balances import xturbine_net

REL = 1e-9
RATE = 1e3 / 3.6e9                   # 1 t/MWh in kg/J
LINES = ('section_willans_no_load = ["1.5 t/h", "1 t/h"]\n'
         'section_willans_slope = ["11 t/MWh", "8.5 t/MWh"]')


def net(extra: str = "", mode: str = 'mode = "fixed_power"\npower = "7 MW"') -> str:
    return xturbine_net(mode + "\n" + extra).replace(
        'section_efficiencies = ["78 %", "72 %"]', LINES)


def close(a, b):
    return math.isclose(a, b, rel_tol=REL)


def test_section_willans_lines_at_fixed_power():
    r = solve(net())
    m01, m02, k1, k2 = t_h(1.5), t_h(1), 11 * RATE, 8.5 * RATE
    eta_mg, e, power = 0.98 * 0.97, t_h(12), 7e6
    # sum_j (m_j - m0_j) / k_j = power, m_1 = s1, m_2 = s1 - e
    s1 = (power + m01 / k1 + (m02 + e) / k2) / (1 / k1 + 1 / k2)
    s2 = s1 - e
    h1 = ref.h_pt(barg(60), degc(480))     # the boiler alone feeds HP, no heat loss
    h2 = h1 - (s1 - m01) / k1 / (eta_mg * s1)
    h3 = h2 - (s2 - m02) / k2 / (eta_mg * s2)
    row = equip(r, "TX")
    assert close(kg_s(row.flow_t_h), s1)
    assert close(kg_s(row.exhaust_t_h), s2)
    assert close(row.power_kw * 1e3, power)
    assert close(j_kg(row.h_out_kj_kg), h3)
    assert close(j_kg(header(r, "MP").h_kj_kg), h2)
    assert close(j_kg(equip(r, "TX/MP").h_out_kj_kg), h2)
    # the efficiencies the lines imply, reported: drop over isentropic drop
    eta1 = (h1 - h2) / (h1 - ref.h_ps(barg(10), ref.s_ph(barg(60), h1)))
    eta2 = (h2 - h3) / (h2 - ref.h_ps(0.1e5, ref.s_ph(barg(10), h2)))
    assert row.section_efficiencies_used == f"{100 * eta1:.2f} %, {100 * eta2:.2f} %"
    assert 0 < eta2 < eta1 < 1                        # precondition: plausible lines


def test_section_willans_lines_at_fixed_flow():
    r = solve(net(mode='mode = "fixed_flow"\nflow = "40 t/h"'))
    m01, m02, k1, k2 = t_h(1.5), t_h(1), 11 * RATE, 8.5 * RATE
    s1, s2 = t_h(40), t_h(40 - 12)
    out = (s1 - m01) / k1 + (s2 - m02) / k2          # the sections' outputs
    assert close(equip(r, "TX").power_kw * 1e3, out)


BAD = [
    ("implied efficiency above 1", ('"11 t/MWh"', '"3 t/MWh"'),
     "section_willans_slope", "isentropic efficiency of"),
    ("efficiencies and lines", (LINES, LINES + '\nsection_efficiencies = ["78 %", "72 %"]'),
     "section_efficiencies", "one of the two"),
    ("one line missing", ('section_willans_slope = ["11 t/MWh", "8.5 t/MWh"]', ''),
     "section_willans_slope", "need both"),
    ("a line too few", ('["11 t/MWh", "8.5 t/MWh"]', '["11 t/MWh"]'),
     "section_willans_slope", "need 2 section_willans_slope, got 1"),
    ("moisture correction on a line", (LINES, LINES + "\nmoisture_correction = true"),
     "moisture_correction", "Willans line"),
]


@pytest.mark.parametrize("change,field,words", [b[1:] for b in BAD],
                         ids=[b[0] for b in BAD])
def test_bad_section_willans_names_file_item_and_field(tmp_path, change, field, words):
    old, new = change
    text = net()
    assert old in text
    check_refuses(tmp_path, text.replace(old, new, 1), "extraction turbine 'TX'", field,
                  words)
