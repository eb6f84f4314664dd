"""A new consumer (docs/howto-new-consumer.md).

(1) One header, one swing boiler on external feedwater: the added steam, fuel and water
follow from the boiler balance of docs/method.md, "Equipment equations", with enthalpies from
CoolProp's IF97 backend. (2) On the demo plant the 'with' values equal a model file
that has the user written into it, solved by the core, and the model file itself is not
changed.
"""

from __future__ import annotations

import hashlib

import pytest

from conftest import DATA, DEMO
from steamnet.errors import ModelError
from steamnet.model.load import load_model, loads_model
from steamnet.solve import solve_case
from steamnet.studies import new_consumer_impact

CP = pytest.importorskip("CoolProp.CoolProp")
P_ATM = 101325.0


def value(df, section, item, quantity, col="with"):
    r = df[(df["section"] == section) & (df["item"] == item) & (df["quantity"] == quantity)]
    assert len(r) == 1, (section, item, quantity)
    return r.iloc[0][col]


def test_one_header_added_steam_and_fuel_by_hand():
    df = new_consumer_impact(load_model(DATA / "one_header.toml"), "HP", demand="12 t/h")
    p = 30e5 + P_ATM
    h_s = CP.PropsSI("H", "P", p, "T", 380 + 273.15, "IF97::Water")
    h_fw = CP.PropsSI("H", "P", 40e5 + P_ATM, "T", 105 + 273.15, "IF97::Water")
    h_bd = CP.PropsSI("H", "P", p, "Q", 0, "IF97::Water")
    bd, eff, m = 0.03, 0.87, 12 / 3.6
    fuel_w = (m * (h_s - h_fw) + m * bd / (1 - bd) * (h_bd - h_fw)) / eff
    assert value(df, "total", "plant", "steam raised", "change") == pytest.approx(12.0)
    assert value(df, "total", "plant", "fuel", "change") == pytest.approx(fuel_w / 1e6,
                                                                          rel=1e-6)
    assert value(df, "total", "plant", "make-up water", "change") == \
        pytest.approx(12.0 / (1 - bd), rel=1e-9)
    assert value(df, "equipment", "new consumer", "flow") == pytest.approx(12.0)


def test_demo_user_equals_the_user_written_into_the_file():
    before = hashlib.sha256(DEMO.read_bytes()).hexdigest()
    model = load_model(DEMO)
    df = new_consumer_impact(model, "LP", demand="12 t/h", condensate_return="60 %",
                             condensate_temperature="90 degC", cases=["winter", "summer"])
    assert hashlib.sha256(DEMO.read_bytes()).hexdigest() == before
    text = DEMO.read_text() + '''
[[user]]
name = "new consumer"
header = "LP"
demand = "12 t/h"
condensate_return = "60 %"
condensate_temperature = "90 degC"
'''
    ref_model = loads_model(text)
    assert "new consumer" in ref_model.table("user")
    for case in ("winter", "summer"):
        ref = solve_case(ref_model, case)
        d = df[df["case"] == case]
        assert set(d["status_with"]) == {"solved"}
        for k, q in (("steam_raised_t_h", "steam raised"), ("fuel_mw", "fuel"),
                     ("spray_t_h", "spray water"), ("cost_per_h", "cost"),
                     ("makeup_t_h", "make-up water")):
            assert value(d, "total", "plant", q) == pytest.approx(ref.summary[k],
                                                                  rel=1e-9), (case, q)
        eq = ref.equipment.set_index("item")
        for st in ("PRV-HM", "PRV-HL", "PRV-ML", "PRV-LL"):
            got = d[(d["item"] == st) & (d["quantity"] == "flow")]
            if len(got):
                assert got.iloc[0]["with"] == pytest.approx(eq.at[st, "flow_t_h"],
                                                            rel=1e-9, abs=1e-9)
    # per case, totals first, then headers, then equipment
    sections = list(df[df["case"] == "winter"]["section"])
    assert sections == sorted(sections, key=["total", "header", "equipment",
                                             "finding"].index)


def test_bad_consumer_input_names_the_option():
    model = load_model(DEMO)
    with pytest.raises(ModelError, match="option --demand"):
        new_consumer_impact(model, "LP", demand="12")
    with pytest.raises(ModelError, match="header 'XP' does not exist"):
        new_consumer_impact(model, "XP", demand="12 t/h")
    with pytest.raises(ModelError, match="needs its temperature"):
        new_consumer_impact(model, "LP", demand="12 t/h", condensate_return="50 %")
    with pytest.raises(ModelError, match="exists already"):
        new_consumer_impact(model, "LP", demand="12 t/h", name="PRV-HL")
