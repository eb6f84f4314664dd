"""The blowdown leaves at the drum's saturation state (docs/method.md, "boiler"): with
``drum_pressure`` its enthalpy and its flash follow from the drum; without it, from the
header pressure, and the results say which.

Expected values from CoolProp's IF97 backend (``if97_ref``); tolerance 1e-9 relative as
in tests/test_equipment_balances.py.
"""

from __future__ import annotations

import math

import pytest

import if97_ref as ref
from helpers import (LETDOWN_L1, barg, boiler, check_refuses, degc, equip, external_water,
                     header, headers, j_kg, kg_s, solve, t_h, user)

REL = 1e-9


def close(a, b):
    return math.isclose(a, b, rel_tol=REL)


def net(drum: str = "") -> str:
    return (headers(lp="3 bar(g)") + external_water()
            + boiler(extra='blowdown = "3 %"\nblowdown_flash_header = "LP"\n' + drum,
                     eff="88 %")
            + user("U-HP", "HP", 'demand = "20 t/h"') + LETDOWN_L1
            + user("U-LP", "LP", 'demand = "8 t/h"'))


def test_blowdown_at_the_drum_pressure():
    r = solve(net('drum_pressure = "46 bar(g)"'))
    p_hp, p_lp, p_drum = barg(40), barg(3), barg(46)
    b = 0.03
    drum, lo = ref.sat(p_drum), ref.sat(p_lp)
    frac = (drum.hf - lo.hf) / lo.hfg        # the drum water flashing at LP
    k = b / (1 - b) * frac                   # flash per unit of boiler steam
    u_hp, u_lp = t_h(20), t_h(8)
    m_l = (u_lp - k * u_hp) / (1 + k)        # LP: let-down + flash = user
    m_b = u_hp + m_l
    fw, bd = m_b / (1 - b), b * m_b / (1 - b)
    h_s = ref.h_pt(p_hp, degc(400))
    h_fw = ref.liquid_h(barg(50), degc(105))
    duty = m_b * (h_s - h_fw) + bd * (drum.hf - h_fw)
    row = equip(r, "B1")
    assert close(kg_s(row.flow_t_h), m_b)
    assert close(kg_s(row.feedwater_t_h), fw)
    assert close(row.duty_mw * 1e6, duty)
    assert close(row.fuel_mw * 1e6, duty / 0.88)
    assert close(r.water["blowdown_flash_kg_s"], k * m_b)
    h_lp = (m_l * h_s + k * m_b * lo.hg) / (m_l + k * m_b)
    assert close(j_kg(header(r, "LP").h_kj_kg), h_lp)
    assert close(row.drum_p_barg, 46.0)
    assert row.drum_pressure_from == "drum_pressure"


def test_without_drum_pressure_the_header_pressure_is_used_and_said():
    r = solve(net())
    row = equip(r, "B1")
    assert row.drum_pressure_from == "header pressure"
    assert close(row.drum_p_barg, 40.0)
    hi, lo = ref.sat(barg(40)), ref.sat(barg(3))
    frac = (hi.hf - lo.hf) / lo.hfg
    k = 0.03 / 0.97 * frac
    m_l = (t_h(8) - k * t_h(20)) / (1 + k)
    assert close(r.water["blowdown_flash_kg_s"], k * (t_h(20) + m_l))


@pytest.mark.parametrize("drum,words", [
    ('drum_pressure = "35 bar(g)"', "below the header pressure"),
    ('drum_pressure = "230 bar(g)"', "critical pressure"),
])
def test_bad_drum_pressure_names_file_item_and_field(tmp_path, drum, words):
    check_refuses(tmp_path, net(drum), "boiler 'B1'", "drum_pressure", words)
