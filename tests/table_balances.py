"""Balances recomputed from the published result tables (flows in t/h, enthalpies in
kJ/kg) and the model as written; the enthalpies the tables do not carry (blowdown flash,
make-up, condensate returns, deaerator outlet and vent) come from CoolProp's IF97 backend
(``if97_ref``), never from steamnet's property layer."""

from __future__ import annotations

import pandas as pd

import if97_ref as ref
from helpers import j_kg, kg_s


def _rows(eq: pd.DataFrame, types, column, value) -> pd.DataFrame:
    """The rows of running items (an idle one keeps its row at zero flow, without a
    state: docs/results.md) of ``types`` whose ``column`` is ``value``."""
    return eq[eq["type"].isin(types) & (eq[column] == value)
              & (eq["service"] == "in service")]


def _flash(m, eq):
    """Blowdown flash per boiler: (header, flow [kg/s]) with the flash fraction
    (h_f,drum - h_f,low) / h_fg,low from CoolProp."""
    out = []
    for name, b in m.table("boiler").items():
        if b.blowdown_flash_header is None or name not in set(eq["item"]):
            continue
        bd = kg_s(equip_row(eq, name).blowdown_t_h)
        hi = ref.sat(b.drum_pressure if b.drum_pressure is not None
                     else m.headers[b.header].pressure)        # the drum's water
        lo = ref.sat(m.headers[b.blowdown_flash_header].pressure)
        out.append((b.blowdown_flash_header, bd * (hi.hf - lo.hf) / lo.hfg))
    return out


def equip_row(eq, item):
    sel = eq[eq["item"] == item]
    assert len(sel) == 1
    return sel.iloc[0]


def header_balances(m, r):
    """(mass in, mass out, energy in - loss, energy out) per header, from the tables."""
    eq, hd = r.equipment, r.headers
    flashes = _flash(m, eq)
    out = {}
    for _, h in hd.iterrows():
        name, h_hdr = h.header, j_kg(h.h_kj_kg)
        ins = []                              # (kg/s, J/kg)
        for _, e in _rows(eq, ["boiler", "turbine", "extraction"], "to", name).iterrows():
            ins.append((kg_s(e.flow_t_h), j_kg(e.h_out_kj_kg)))
        for _, e in _rows(eq, ["extraction_turbine"], "to", name).iterrows():
            ins.append((kg_s(e.exhaust_t_h), j_kg(e.h_out_kj_kg)))
        for _, e in _rows(eq, ["letdown"], "to", name).iterrows():
            ins.append((kg_s(e.steam_out_t_h), j_kg(e.h_out_kj_kg)))
        for _, e in _rows(eq, ["import"], "to", name).iterrows():
            t = m.table("steam_transfer")[e["item"]].steam_temperature
            ins.append((kg_s(e.flow_t_h), ref.h_pt(m.headers[name].pressure, t)))
        for fh, f in flashes:
            if fh == name:
                ins.append((f, ref.sat(m.headers[name].pressure).hg))
        outs = _rows(eq, ["turbine", "extraction_turbine", "letdown", "vent", "user",
                          "deaerator", "export"], "from", name)
        m_out = float(sum(kg_s(v) for v in outs["flow_t_h"]))
        q = m.headers[name].heat_loss
        out[name] = (sum(f for f, _ in ins), m_out,
                     sum(f * hh for f, hh in ins) - q, m_out * h_hdr,
                     sum(f * abs(hh) for f, hh in ins))
    return out


def _liquid_at_da(p_da, t):
    assert t < ref.sat(p_da).t, "return hotter than the deaerator: not liquid there"
    return ref.liquid_h(p_da, t)


def deaerator_balance(m, r):
    """(mass in, mass out, energy in, energy out) of the deaerator, from the tables."""
    eq = r.equipment
    (da_name, da), = m.table("deaerator").items()
    p_da = da.pressure
    row = equip_row(eq, da_name)
    h_steam = j_kg(r.headers.set_index("header").loc[da.header, "h_kj_kg"])
    m_in = kg_s(row.flow_t_h) + kg_s(row.makeup_t_h)
    e_in = (kg_s(row.flow_t_h) * h_steam
            + kg_s(row.makeup_t_h) * _liquid_at_da(p_da, m.site.makeup_temperature))
    for _, u in eq[eq["type"] == "user"].iterrows():
        if u.condensate_return_t_h > 0:
            t_ret = m.table("user")[u["item"]].condensate_temperature
            m_in += kg_s(u.condensate_return_t_h)
            e_in += kg_s(u.condensate_return_t_h) * _liquid_at_da(p_da, t_ret)
    for _, x in eq[(eq["type"] == "extraction_turbine") & (eq["to"] == "condenser")].iterrows():
        it = m.table("extraction_turbine")[x["item"]]
        ret = kg_s(x.exhaust_t_h) * it.condensate_return
        h_ret = (_liquid_at_da(p_da, it.condensate_temperature)
                 if it.condensate_temperature is not None
                 else ref.sat(it.condenser_pressure).hf)
        m_in += ret
        e_in += ret * h_ret
    s = ref.sat(p_da)
    m_out = kg_s(row.feedwater_t_h) + kg_s(row.vent_t_h)
    e_out = kg_s(row.feedwater_t_h) * s.hf + kg_s(row.vent_t_h) * s.hg
    return m_in, m_out, e_in, e_out


def plant_water(m, r):
    """(water in, water out) of the whole plant [kg/s], from the tables."""
    eq = r.equipment
    supplies = m.table("water_supply")
    external = 0.0
    for _, b in eq[eq["type"] == "boiler"].iterrows():
        if supplies[m.table("boiler")[b["item"]].feedwater].source == "external":
            external += kg_s(b.feedwater_t_h)
    for _, s in eq[eq["type"] == "letdown"].iterrows():
        d = m.table("letdown")[s["item"]].desuperheater
        if d is not None and supplies[d.spray_supply].source == "external":
            external += kg_s(s.spray_t_h)
    da = eq[eq["type"] == "deaerator"]
    makeup = float(kg_s(da.makeup_t_h.sum())) if len(da) else 0.0
    imports = float(kg_s(eq[eq["type"] == "import"].flow_t_h.sum()))
    w_in = makeup + external + imports
    users = eq[eq["type"] == "user"]
    lost = float(kg_s((users.flow_t_h - users.condensate_return_t_h).sum()))
    for _, x in eq[(eq["type"] == "extraction_turbine") & (eq["to"] == "condenser")].iterrows():
        it = m.table("extraction_turbine")[x["item"]]
        lost += kg_s(x.exhaust_t_h) * (1 - it.condensate_return)
    blowdown = float(kg_s(eq[eq["type"] == "boiler"].blowdown_t_h.sum()))
    flash = sum(f for _, f in _flash(m, eq))
    w_out = (float(kg_s(eq[eq["type"].isin(["vent", "export"])].flow_t_h.sum()))
             + lost + blowdown - flash
             + (float(kg_s(da.vent_t_h.sum())) if len(da) else 0.0))
    return w_in, w_out
