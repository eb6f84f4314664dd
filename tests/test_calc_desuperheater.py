"""Tests of steamnet.calc.desuperheater.

Independent references: the mass and energy balance of a spray attemperator
(docs/method.md, "Equipment equations") recomputed here from CoolProp's IF97 backend, and the
outlet temperature recomputed by CoolProp for finite-difference gains. The 1/(steam +
spray) dependence of the gain is common practice, no source.
"""

from __future__ import annotations

import pytest
from CoolProp.CoolProp import PropsSI

import if97_ref as ref

from steamnet import properties as props
from steamnet.calc.desuperheater import (evaporation_distance, gain_per_ratio,
                                         gain_per_spray, spray_water_flow)
from steamnet.errors import ModelError

IF97 = "IF97::Water"

# (p_in [Pa], T_in [K], p_out [Pa], T_set [K], p_water [Pa], T_water [K]); invented
# operating conditions (demo plant), the references are the balances below.
CONDITIONS = [
    (42e5, 673.15, 12e5, 473.15, 60e5, 378.15),
    (42e5, 673.15, 5.5e5, 448.15, 60e5, 378.15),
    (100e5, 783.15, 42e5, 673.15, 120e5, 423.15),
    (12e5, 523.15, 4.5e5, 433.15, 20e5, 333.15),
]


def _h_cp(p, t):
    return PropsSI("H", "P", p, "T", t, IF97)


@pytest.mark.parametrize("p_in, t_in, p_out, t_set, p_w, t_w", CONDITIONS)
def test_spray_flow_against_coolprop_balance(p_in, t_in, p_out, t_set, p_w, t_w):
    m_s = 12.5
    h_s, h_o, h_w = _h_cp(p_in, t_in), _h_cp(p_out, t_set), _h_cp(p_w, t_w)
    expected = m_s * (h_s - h_o) / (h_o - h_w)          # section 5, closed form
    got = spray_water_flow(m_s, props.h_pt(p_in, t_in), props.h_pt(p_out, t_set),
                           props.h_pt(p_w, t_w))
    # Both sides evaluate the IF97 forward equation h(p, T) (region 1 and 2), which the
    # two implementations agree on to a few 1e-16 relative here; the ratio of enthalpy
    # differences magnifies that by h / (h_s - h_o), about 10: 1e-12 is ample.
    assert got == pytest.approx(expected, rel=1e-12)
    # Energy closes with CoolProp enthalpies: m_s h_s + m_w h_w = (m_s + m_w) h_out.
    assert (m_s * h_s + got * h_w) / (m_s + got) == pytest.approx(h_o, rel=1e-6)


def test_no_spray_when_steam_is_not_hotter_than_setpoint():
    assert spray_water_flow(5.0, 2.80e6, 2.85e6, 0.4e6) == 0.0
    assert spray_water_flow(5.0, 2.85e6, 2.85e6, 0.4e6) == 0.0
    assert spray_water_flow(0.0, 3.0e6, 2.85e6, 0.4e6) == 0.0


def test_spray_flow_errors():
    with pytest.raises(ModelError, match="cannot cool"):
        spray_water_flow(5.0, 3.0e6, 2.8e6, 2.9e6)
    with pytest.raises(ModelError, match="negative"):
        spray_water_flow(-1.0, 3.0e6, 2.8e6, 0.4e6)
    with pytest.raises(ModelError, match="finite"):
        spray_water_flow(1.0, float("nan"), 2.8e6, 0.4e6)


def _t_mix(m_s, h_s, m_w, h_w, p_out):
    """Outlet temperature of the mixing balance, T(p, h) from CoolProp's IF97 forward
    equations inverted (tests/if97_ref.py; the backward equation's slope is off by
    some 1e-4)."""
    return ref.t_ph(p_out, (m_s * h_s + m_w * h_w) / (m_s + m_w))


@pytest.mark.parametrize("p_in, t_in, p_out, t_set, p_w, t_w", CONDITIONS)
def test_gain_per_spray_against_coolprop_finite_difference(p_in, t_in, p_out, t_set,
                                                           p_w, t_w):
    m_s = 10.0
    h_s, h_o, h_w = _h_cp(p_in, t_in), _h_cp(p_out, t_set), _h_cp(p_w, t_w)
    m_w = m_s * (h_s - h_o) / (h_o - h_w)
    dm = 1e-4 * m_w
    numeric = (_t_mix(m_s, h_s, m_w + dm, h_w, p_out)
               - _t_mix(m_s, h_s, m_w - dm, h_w, p_out)) / (2 * dm)
    cp_out = PropsSI("Cpmass", "P", p_out, "T", t_set, IF97)
    # a central difference of step 1e-4 is exact to about 1e-8 here
    assert gain_per_spray(h_w, h_o, cp_out, m_s, m_w) == pytest.approx(numeric, rel=1e-6)


@pytest.mark.parametrize("p_in, t_in, p_out, t_set, p_w, t_w", CONDITIONS)
def test_gain_per_ratio_against_coolprop_finite_difference(p_in, t_in, p_out, t_set,
                                                           p_w, t_w):
    h_s, h_o, h_w = _h_cp(p_in, t_in), _h_cp(p_out, t_set), _h_cp(p_w, t_w)
    ratio = (h_s - h_o) / (h_o - h_w)
    dr = 1e-4 * ratio
    numeric = (_t_mix(1.0, h_s, ratio + dr, h_w, p_out)
               - _t_mix(1.0, h_s, ratio - dr, h_w, p_out)) / (2 * dr)
    cp_out = PropsSI("Cpmass", "P", p_out, "T", t_set, IF97)
    assert gain_per_ratio(h_w, h_s, cp_out, ratio) == pytest.approx(numeric, rel=1e-6)


def test_gain_ratio_between_two_states_is_that_of_the_full_balance():
    """Two operating points that differ in flow, inlet steam, setpoint and spray water:
    the ratio of their gains (what the gain-spread check reports) is the ratio of
    finite differences of the full mixing balance, CoolProp IF97."""
    pts = [(CONDITIONS[1], 20.0), (CONDITIONS[2], 6.0)]
    ours, numeric = [], []
    for (p_in, t_in, p_out, t_set, p_w, t_w), m_s in pts:
        h_s, h_o, h_w = _h_cp(p_in, t_in), _h_cp(p_out, t_set), _h_cp(p_w, t_w)
        m_w = m_s * (h_s - h_o) / (h_o - h_w)
        dm = 1e-4 * m_w
        numeric.append((_t_mix(m_s, h_s, m_w + dm, h_w, p_out)
                        - _t_mix(m_s, h_s, m_w - dm, h_w, p_out)) / (2 * dm))
        st = props.state_pt(p_out, t_set)
        ours.append(gain_per_spray(props.h_pt(p_w, t_w), st.h, st.cp, m_s,
                                   spray_water_flow(m_s, props.h_pt(p_in, t_in), st.h,
                                                    props.h_pt(p_w, t_w))))
    assert ours[1] / ours[0] == pytest.approx(numeric[1] / numeric[0], rel=1e-6)
    assert ours[1] / ours[0] > 2          # the low-flow point's gain is the larger


def test_gain_sign_and_errors():
    assert gain_per_spray(0.4e6, 2.8e6, 2200.0, 10.0, 1.0) < 0
    assert gain_per_ratio(0.4e6, 3.2e6, 2200.0, 0.1) < 0
    with pytest.raises(ModelError):
        gain_per_spray(0.4e6, 2.8e6, 2200.0, 0.0, 0.0)
    with pytest.raises(ModelError):
        gain_per_ratio(0.4e6, 3.2e6, 0.0, 0.1)


def test_evaporation_distance():
    # L = u t (kinematics).
    assert evaporation_distance(35.0, 0.2) == pytest.approx(7.0)
    with pytest.raises(ModelError):
        evaporation_distance(-1.0, 0.2)
