"""Marginal cost of steam (docs/howto-marginal-cost.md).

(1) One header, a swing boiler fed from an external feedwater supply: the marginal cost
of a tonne of steam is recomputed by hand from CoolProp's IF97 backend with the boiler
balance of docs/method.md, "Equipment equations" (feedwater = steam / (1 - blowdown);
fuel = (m_s (h_s - h_fw) + m_bd (h_bd - h_fw)) / efficiency; blowdown leaves as saturated liquid at
drum pressure) and the water bought per tonne of steam. (2) The same by hand behind a
desuperheating let-down (tests/data/letdown_cost.toml).
"""

from __future__ import annotations

import pytest

from conftest import DATA, DEMO
from steamnet.model.load import load_model
from steamnet.solve import solve_case
from steamnet.studies import marginal_steam_cost

CP = pytest.importorskip("CoolProp.CoolProp")
P_ATM = 101325.0



def test_one_header_marginal_cost_by_hand():
    p = 30e5 + P_ATM
    h_s = CP.PropsSI("H", "P", p, "T", 380 + 273.15, "IF97::Water")
    h_fw = CP.PropsSI("H", "P", 40e5 + P_ATM, "T", 105 + 273.15, "IF97::Water")
    h_bd = CP.PropsSI("H", "P", p, "Q", 0, "IF97::Water")
    bd, eff = 0.03, 0.87
    fuel_price = 10 / 1e9                     # EUR/J
    water_price = 2 / 1000                    # EUR/kg
    per_kg = fuel_price * (h_s - h_fw + bd / (1 - bd) * (h_bd - h_fw)) / eff \
        + water_price / (1 - bd)              # one kg of steam needs 1/(1-bd) kg water
    expected = per_kg * 1000                  # EUR per tonne
    r = marginal_steam_cost(load_model(DATA / "one_header.toml")).iloc[0]
    assert r["marginal_cost_per_t"] == pytest.approx(expected, rel=1e-6)
    assert r["water_part_per_t"] == pytest.approx(water_price * 1000 / (1 - bd), rel=1e-9)
    # no fixed costs in this plant: the average cost equals the marginal cost
    assert r["average_cost_per_t"] == pytest.approx(expected, rel=1e-6)
    assert r["currency"] == "EUR" and r["limit_in_step"] == ""


@pytest.fixture(scope="module")
def demo():
    model = load_model(DEMO)
    return model, marginal_steam_cost(model)


def test_marginal_cost_after_a_desuperheating_letdown_by_hand():
    """One more kg on LP is m_s of HP steam and m_w of spray water with m_s + m_w = 1
    and m_s h_s + m_w h_w = h_out (desuperheater balance, docs/method.md); the boiler
    raises m_s more from external water: fuel price x m_s (h_s - h_fw) / efficiency,
    plus the price of the 1 kg of water bought. On HP it is the boiler's alone. States
    from CoolProp IF97; the invented plant tests/data/letdown_cost.toml."""
    w = "IF97::Water"
    h_s = CP.PropsSI("H", "P", 30e5 + P_ATM, "T", 380 + 273.15, w)
    h_fw = CP.PropsSI("H", "P", 40e5 + P_ATM, "T", 105 + 273.15, w)
    h_out = CP.PropsSI("H", "P", 4e5 + P_ATM, "T", 180 + 273.15, w)
    fuel_price, water_price, eff = 10 / 1e9, 2 / 1000, 0.87
    m_s = (h_out - h_fw) / (h_s - h_fw)       # spray water h_w = h_fw (same supply)
    expected = {"HP": 1000 * (fuel_price * (h_s - h_fw) / eff + water_price),
                "LP": 1000 * (fuel_price * m_s * (h_s - h_fw) / eff + water_price)}
    df = marginal_steam_cost(load_model(DATA / "letdown_cost.toml"))
    assert set(df["header"]) == {"HP", "LP"}
    for r in df.itertuples():
        assert r.limit_in_step == ""
        # two IF97 implementations agree to about 1e-6 relative in h (DEVELOPERS.md)
        assert r.marginal_cost_per_t == pytest.approx(expected[r.header], rel=1e-6)
        assert r.water_part_per_t == pytest.approx(water_price * 1000, rel=1e-9)


def test_demo_average_cost_and_parts(demo):
    model, df = demo
    for case in ("summer", "winter"):
        s = solve_case(model, case).summary
        rows = df[df["case"] == case]
        assert rows["average_cost_per_t"].iloc[0] == pytest.approx(
            s["cost_per_h"] / s["steam_raised_t_h"], rel=1e-12)
        parts = rows[["fuel_part_per_t", "water_part_per_t", "power_part_per_t",
                      "other_part_per_t"]].sum(axis=1)
        assert parts.to_numpy() == pytest.approx(rows["marginal_cost_per_t"].to_numpy(),
                                                 rel=1e-9)
        # dearest first within a case
        assert list(rows["marginal_cost_per_t"]) == sorted(rows["marginal_cost_per_t"],
                                                           reverse=True)
