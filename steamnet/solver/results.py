"""Result tables of a solved case, and the residuals that prove the balance closes.

All tables are long-form pandas DataFrames with a ``case`` column, so the tables of many
cases concatenate. Column names carry their unit (``flow_t_h``, ``t_degc``, ``p_barg``,
``h_kj_kg``, ``power_kw``, ``duty_mw``); docs/results.md lists every column.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
import pandas as pd

from .. import properties as props
from ..calc.boiler import BoilerBalance, boiler_balance
from ..calc.turbine import internal_power, section_flows
from ..model.stations import StationPoint
from ..status import CaseStatus
from ..units import C0, KJ, T_H as TH
from .balance import IDLE_FLOW, Solution
from .network import coefficients, header_inflows, supply_flow

__all__ = ["residuals", "water_balance", "header_table", "equipment_table",
           "equipment_rows", "stream_table", "totals", "case_cost", "letdown_points",
           "operating_flags", "Flag"]


def _boiler(b: dict, m: float) -> BoilerBalance:
    """The balance of boiler ``b`` (a Net entry) raising ``m`` [kg/s]."""
    return boiler_balance(m, b["bd"], b["h"], b["h_bd"], b["supply"]["h"], b["eff"])


def _h_out_flows(sol: Solution):
    """Per header: list of (label, flow) leaving it, with the final coefficients."""
    net, co, x = sol.net, sol.co, sol.x
    outs: list[list[tuple[str, float]]] = [[] for _ in net.headers]
    for t in net.transfers:
        if t["dir"] == "export":
            outs[t["header"]].append((f"export '{t['name']}'", x[t["var"]]))
    for t in net.turbines:
        outs[t["inlet"]].append((f"turbine '{t['name']}'", x[t["var"]]))
    for t in net.xturbines:
        outs[t["inlet"]].append((f"extraction turbine '{t['name']}'", x[t["in_var"]]))
    for s in net.letdowns:
        outs[s["inlet"]].append((f"letdown '{s['name']}'", x[s["var"]]))
    for v in net.vents:
        outs[v["header"]].append((f"vent '{v['name']}'", x[v["var"]]))
    for u, m in zip(net.users, co.user_flow):
        outs[u["header"]].append((f"user '{u['name']}'", m))
    if net.deaerator is not None:
        da = net.deaerator
        outs[da["header"]].append((f"deaerator '{da['name']}'", x[da["steam_var"]]))
    return outs


def residuals(sol: Solution) -> dict:
    """Mass and energy residuals of every header, the deaerator and the plant water
    balance, recomputed from the final flows and enthalpies.

    Returns a dict with per-header arrays ``mass_kg_s``, ``energy_w``, the relative
    maxima ``mass_rel``, ``energy_rel``, ``water_rel`` and the deaerator residuals.
    """
    net, x = sol.net, sol.x
    co = coefficients(net, sol.h, x)          # coefficients at the final enthalpies
    ins = header_inflows(net, co, x, labels=False)
    outs = _h_out_flows(sol)
    mass, energy, through = [], [], []
    for i in range(len(net.headers)):
        m_in = sum(f for _, f, _ in ins[i])
        e_in = sum(f * hh for _, f, hh in ins[i])
        m_out = sum(f for _, f in outs[i])
        mass.append(m_in - m_out)
        q_loss = net.q_loss[i] if m_in > IDLE_FLOW else 0.0   # an idle header loses none
        energy.append(e_in - q_loss - m_out * sol.h[i])
        through.append(max(m_in, m_out))
    total = max(1e-9, sum(through))
    e_scale = max(1e-9, sum(t * abs(h) for t, h in zip(through, sol.h)))
    # desuperheater energy balance m_s h_in + m_w h_w = (m_s + m_w) h_out
    ds_res = 0.0
    for s, c in zip(net.letdowns, co.ld):
        if s["ds"] is None or c["r"] == 0:
            continue
        m = x[s["var"]]
        ds_res = max(ds_res, abs(m * sol.h[s["inlet"]] + m * c["r"] * c["h_w"]
                                 - m * (1 + c["r"]) * c["h_out"]))
    da_mass = da_energy = 0.0
    wb = water_balance(sol, co)
    if net.deaerator is not None:
        da_mass, da_energy = wb["da_mass_residual_kg_s"], wb["da_energy_residual_w"]
    water_scale = max(1e-9, wb["water_in_kg_s"])
    return {
        "mass_kg_s": mass, "energy_w": energy,
        "mass_rel": max((abs(m) for m in mass), default=0.0) / total,
        "energy_rel": max(max((abs(e) for e in energy), default=0.0), ds_res,
                          abs(da_energy)) / e_scale,
        "da_mass_kg_s": da_mass, "da_energy_w": da_energy,
        "water_rel": abs(wb["water_residual_kg_s"]) / water_scale,
        "water": wb,
    }


def water_balance(sol: Solution, co=None) -> dict:
    """The plant water balance: every kilogram that enters leaves.

    In: make-up to the deaerator, external water supplies, imported steam.
    Out: vented steam, exported steam, condensate not returned (users and condenser),
    blowdown not recovered as flash steam, deaerator vent. Steam held in the headers
    does not accumulate (steady state), so in - out must be zero.
    """
    net, x = sol.net, sol.x
    co = co or sol.co
    makeup = external = imports = 0.0
    vented = exported = lost_condensate = blowdown = flash = da_vent = 0.0
    fw_da = 0.0
    for b in net.boilers:
        fw = x[b["var"]] / (1 - b["bd"])
        bd = fw - x[b["var"]]
        blowdown += bd
        if b["flash"] is not None:
            flash += bd * b["flash"]["fraction"]
        if b["supply"]["from_da"]:
            fw_da += fw
        else:
            external += fw
    spray = 0.0
    for s, c in zip(net.letdowns, co.ld):
        m_w = x[s["var"]] * c["r"]
        spray += m_w
        if s["ds"] is not None and c["r"] > 0:
            if s["ds"]["supply"]["from_da"]:
                fw_da += m_w
            else:
                external += m_w
    for t in net.transfers:
        if t["dir"] == "import":
            imports += x[t["var"]]
        else:
            exported += x[t["var"]]
    for v in net.vents:
        vented += x[v["var"]]
    returned = 0.0
    ret_energy = 0.0
    for u, m in zip(net.users, co.user_flow):
        lost_condensate += m * (1 - u["ret"])
        returned += m * u["ret"]
        if u["ret"] > 0:
            ret_energy += m * u["ret"] * u["h_ret"]
    condensed = 0.0
    for t in net.xturbines:
        if t["exhaust"] is None:
            ex = x[t["in_var"]] - sum(x[e["var"]] for e in t["exts"])
            condensed += ex
            lost_condensate += ex * (1 - t["ret"])
            returned += ex * t["ret"]
            if t["ret"] > 0:
                ret_energy += ex * t["ret"] * t["cond_h"]
    da_steam = da_mu = da_mass = da_energy = 0.0
    if net.deaerator is not None:
        da = net.deaerator
        da_steam, da_mu = x[da["steam_var"]], x[da["makeup_var"]]
        da_vent = da["vent_fraction"] * fw_da
        makeup = da_mu
        da_mass = da_steam + da_mu + returned - fw_da - da_vent
        da_energy = (da_steam * sol.h[da["header"]] + da_mu * net.makeup_h + ret_energy
                     - fw_da * da["sat"].hf - da_vent * da["sat"].hg)
    water_in = makeup + external + imports
    water_out = vented + exported + lost_condensate + (blowdown - flash) + da_vent
    return {
        "makeup_kg_s": makeup, "external_water_kg_s": external, "imports_kg_s": imports,
        "vented_kg_s": vented, "exported_kg_s": exported,
        "condensate_lost_kg_s": lost_condensate, "condensate_returned_kg_s": returned,
        "blowdown_kg_s": blowdown, "blowdown_flash_kg_s": flash, "da_vent_kg_s": da_vent,
        "da_steam_kg_s": da_steam, "feedwater_from_da_kg_s": fw_da, "spray_kg_s": spray,
        "condenser_kg_s": condensed, "water_in_kg_s": water_in,
        "water_out_kg_s": water_out, "water_residual_kg_s": water_in - water_out,
        "da_mass_residual_kg_s": da_mass, "da_energy_residual_w": da_energy,
    }


# ------------------------------------------------------------------------ tables
def wet_text(quality: float) -> str:
    """How every output names wet steam: ``"wet, quality 0.9812"``."""
    return f"wet, quality {quality:.4f}"


def state_text(st: props.State, t_sat: float) -> str:
    """A header's steam in words: ``"superheat 23.4 K"``, or :func:`wet_text` for wet
    steam (never "superheat 0.0 K", which reads as dry saturated steam)."""
    if st.is_wet:
        return wet_text(st.x)
    if st.phase == "liquid":
        return "liquid, below saturation"
    return f"superheat {st.t - t_sat:.1f} K"


def header_table(sol: Solution, case: str, res: dict) -> pd.DataFrame:
    net, x = sol.net, sol.x
    ins = header_inflows(net, sol.co, x, labels=False)
    outs = _h_out_flows(sol)
    p_atm = net.model.site.atmospheric_pressure
    rows = []
    for i, name in enumerate(net.headers):
        st = props.state_ph(net.p[i], sol.h[i])
        sat = net.sat[i]
        rows.append({
            "case": case, "header": name,
            "p_bara": net.p[i] / 1e5, "p_barg": (net.p[i] - p_atm) / 1e5,
            "t_degc": st.t - C0, "t_sat_degc": sat.t - C0,
            "superheat_k": (st.t - sat.t) if st.phase == "vapour" else np.nan,
            "state": state_text(st, sat.t),
            "h_kj_kg": sol.h[i] * KJ,
            "quality": st.x if st.is_wet else np.nan, "wet": st.is_wet,
            "inflow_t_h": sum(f for _, f, _ in ins[i]) * TH,
            "outflow_t_h": sum(f for _, f in outs[i]) * TH,
            "heat_loss_kw": net.q_loss[i] / 1e3,
            "mass_residual_t_h": res["mass_kg_s"][i] * TH,
            "energy_residual_kw": res["energy_w"][i] / 1e3,
        })
    return pd.DataFrame(rows)


def _row(case, item, typ, frm, to, mode, flow, **kw):
    d = {"case": case, "item": item, "type": typ, "from": frm, "to": to, "mode": mode,
         "flow_t_h": flow * TH}
    d.update(kw)
    return d


def _power_columns(internal: float, item) -> dict:
    """A turbine's internal power (the steam's, m dh, before mechanical losses) and its
    shaft power (after them) [kW]."""
    return {"internal_power_kw": internal / 1e3,
            "shaft_power_kw": internal * item.mechanical_efficiency / 1e3}


def _sections_used(t: dict, c: dict) -> dict:
    """The efficiency each section of an extraction turbine ran at, when it is not
    simply the model's: after the moisture correction, or implied by the sections'
    Willans lines (drop over isentropic drop); nothing otherwise."""
    etas = c.get("eta")
    if t["willans"] is not None:
        etas = []
        for j, dh in enumerate(c["dh"]):
            p0, p1, h0 = t["pressures"][j], t["pressures"][j + 1], c["h"][j]
            drop_is = h0 - props.state_ps(p1, props.state_ph(p0, h0).s).h
            etas.append(dh / drop_is if drop_is > 0 else math.nan)
    if etas is None:
        return {}
    return {"section_efficiencies_used": ", ".join(f"{100 * e:.2f} %" for e in etas)}


def _limit_state(value, lo, hi, tol=1e-7):
    if hi is not None and math.isfinite(hi) and value >= hi - tol * max(1, hi):
        return "at maximum"
    if lo is not None and lo > 0 and value <= lo + tol * max(1, lo):
        return "at minimum"
    return ""


def equipment_table(sol: Solution, case: str) -> pd.DataFrame:
    """One row per item: flows, powers, states and limits (docs/results.md)."""
    return pd.DataFrame(equipment_rows(sol, case))


def equipment_rows(sol: Solution, case: str) -> list[dict]:
    """The rows of :func:`equipment_table` as dicts (without pandas: what a sweep of
    lean cases reads its equipment flows from)."""
    net, x, co = sol.net, sol.x, sol.co
    H = net.headers
    rows = []
    for b in net.boilers:
        it = b["item"]
        m = x[b["var"]]
        fw, bd, duty, fuel = _boiler(b, m)
        rows.append(_row(case, b["name"], "boiler", b["supply"]["name"], H[b["header"]],
                         it.mode, m, t_out_degc=b["t"] - C0, h_out_kj_kg=b["h"] * KJ,
                         feedwater_t_h=fw * TH, blowdown_t_h=bd * TH,
                         duty_mw=duty / 1e6, fuel_mw=fuel / 1e6,
                         drum_p_barg=(b["p_drum"] - net.model.site.atmospheric_pressure)
                         / 1e5, drum_pressure_from=("drum_pressure"
                                                    if it.drum_pressure is not None
                                                    else "header pressure"),
                         min_t_h=(it.min_steam if it.mode == "swing" else np.nan) * TH,
                         max_t_h=(it.max_steam if it.max_steam is not None else np.nan) * TH,
                         load_percent=(100 * m / it.max_steam if it.max_steam else np.nan),
                         limit=_limit_state(m, it.min_steam if it.mode == "swing" else None,
                                            it.max_steam)))
    for t in net.transfers:
        it = t["item"]
        m = x[t["var"]]
        frm, to = ("outside", H[t["header"]]) if t["dir"] == "import" else \
            (H[t["header"]], "outside")
        rows.append(_row(case, t["name"], t["dir"], frm, to, it.mode, m,
                         max_t_h=(it.max_flow if it.max_flow is not None else np.nan) * TH,
                         limit=_limit_state(m, it.min_flow if it.mode == "swing" else None,
                                            it.max_flow)))
    for t, c in zip(net.turbines, co.turb):
        it = t["item"]
        m = x[t["var"]]
        internal = m * c["dh"]
        st_out = props.state_ph(net.p[t["outlet"]], c["h_out"])
        eta_is = c["dh"] / (c["h_out"] + c["dh"] - c["h_is"]) if c["dh"] > 0 else np.nan
        rows.append(_row(case, t["name"], "turbine", H[t["inlet"]], H[t["outlet"]],
                         it.mode, m, power_kw=internal * t["eta_mg"] / 1e3,
                         **_power_columns(internal, it), drive=it.drive,
                         h_out_kj_kg=c["h_out"] * KJ, t_out_degc=st_out.t - C0,
                         exhaust_quality=st_out.x if st_out.is_wet else np.nan,
                         isentropic_efficiency=eta_is,
                         min_t_h=it.min_flow * TH,
                         max_t_h=(it.max_flow if it.max_flow is not None else np.nan) * TH,
                         load_percent=(100 * m / it.max_flow if it.max_flow else np.nan),
                         limit=_limit_state(m, it.min_flow if it.mode == "swing" else None,
                                            it.max_flow)))
    for t, c in zip(net.xturbines, co.xturb):
        it = t["item"]
        s = x[t["in_var"]]
        flows = section_flows(s, [x[e["var"]] for e in t["exts"]])
        internal = internal_power(flows, c["dh"])
        p_ex = t["pressures"][-1]
        st_ex = props.state_ph(p_ex, c["h"][-1])
        q = st_ex.x if st_ex.is_wet else np.nan
        to = H[t["exhaust"]] if t["exhaust"] is not None else "condenser"
        cond_duty = 0.0
        if t["exhaust"] is None:
            cond_duty = flows[-1] * (c["h"][-1] - props.saturation(p_ex).hf)
        rows.append(_row(case, t["name"], "extraction_turbine", H[t["inlet"]], to,
                         it.mode, s, power_kw=internal * t["eta_mg"] / 1e3,
                         **_power_columns(internal, it), drive=it.drive,
                         exhaust_t_h=flows[-1] * TH, h_out_kj_kg=c["h"][-1] * KJ,
                         t_out_degc=st_ex.t - C0, exhaust_quality=q,
                         condenser_duty_mw=cond_duty / 1e6,
                         min_t_h=it.min_flow * TH,
                         max_t_h=(it.max_flow if it.max_flow is not None else np.nan) * TH,
                         load_percent=(100 * s / it.max_flow if it.max_flow else np.nan),
                         limit=_limit_state(s, it.min_flow, it.max_flow),
                         quality_below_limit=bool(st_ex.is_wet and q < it.min_exhaust_quality),
                         **_sections_used(t, c)))
        for j, e in enumerate(t["exts"]):
            rows.append(_row(case, f"{t['name']}/{H[e['header']]}", "extraction",
                             t["name"], H[e["header"]], e["mode"], x[e["var"]],
                             h_out_kj_kg=c["h"][j + 1] * KJ,
                             t_out_degc=props.state_ph(t["pressures"][j + 1],
                                                       c["h"][j + 1]).t - C0,
                             max_t_h=e["hi"] * TH if math.isfinite(e["hi"]) else np.nan,
                             limit=_limit_state(x[e["var"]], e["lo"] if e["mode"] == "swing"
                                                else None, e["hi"])))
    for s, c in zip(net.letdowns, co.ld):
        it = s["item"]
        m = x[s["var"]]
        st_out = props.state_ph(net.p[s["outlet"]], c["h_out"])
        rows.append(_row(case, s["name"], "letdown", H[s["inlet"]], H[s["outlet"]],
                         it.mode, m, spray_t_h=m * c["r"] * TH,
                         steam_out_t_h=m * (1 + c["r"]) * TH, h_out_kj_kg=c["h_out"] * KJ,
                         t_out_degc=st_out.t - C0,
                         t_set_degc=(s["ds"]["t_set"] - C0) if s["ds"] else np.nan,
                         setpoint_reachable=c["reachable"],
                         max_t_h=(it.max_flow if it.max_flow is not None else np.nan) * TH,
                         load_percent=(100 * m / it.max_flow if it.max_flow else np.nan),
                         limit=_limit_state(m, it.min_flow if it.mode == "auto" else None,
                                            it.max_flow)))
    for v in net.vents:
        m = x[v["var"]]
        cap = net.vars[v["var"]].hi
        rows.append(_row(case, v["name"], "vent", H[v["header"]], "atmosphere", "excess",
                         m, max_t_h=cap * TH if math.isfinite(cap) else np.nan,
                         limit=_limit_state(m, None, cap)))
    for u, m in zip(net.users, co.user_flow):
        it = u["item"]
        duty = m * (sol.h[u["header"]] - net.sat[u["header"]].hf)
        rows.append(_row(case, u["name"], "user", H[u["header"]], "process",
                         "duty" if it.duty is not None else "demand", m,
                         duty_mw=duty / 1e6, condensate_return_t_h=m * u["ret"] * TH,
                         group=it.group))
    if net.deaerator is not None:
        da = net.deaerator
        wb = water_balance(sol)
        rows.append(_row(case, da["name"], "deaerator", H[da["header"]], "feedwater",
                         "balance", x[da["steam_var"]], makeup_t_h=wb["makeup_kg_s"] * TH,
                         feedwater_t_h=wb["feedwater_from_da_kg_s"] * TH,
                         vent_t_h=wb["da_vent_kg_s"] * TH,
                         t_out_degc=da["sat"].t - C0))
    for r in rows:
        r["service"] = IN_SERVICE
    return _with_idle_rows(rows, net.model, case)


#: The ``service`` of a row whose item runs in the case (docs/results.md).
IN_SERVICE = "in service"

#: Row types of the equipment table -> the model table of their items, in the order
#: the table lists them.
_ROW_TABLES = {"boiler": "boiler", "import": "steam_transfer", "export": "steam_transfer",
               "turbine": "turbine", "extraction_turbine": "extraction_turbine",
               "extraction": "extraction_turbine", "letdown": "letdown", "vent": "vent",
               "user": "user", "deaerator": "deaerator"}
_TABLE_ORDER = {t: i for i, t in enumerate(dict.fromkeys(_ROW_TABLES.values()))}
#: Modes in which an item is idle, by table, and what its row's ``service`` says.
_IDLE_MODES = {"boiler": "off", "steam_transfer": "off", "turbine": "tripped",
               "extraction_turbine": "tripped", "letdown": "closed"}
#: Flow and power columns an idle item's row carries as zero, by row type.
_IDLE_ZEROS = {"boiler": ("feedwater_t_h", "blowdown_t_h", "duty_mw", "fuel_mw"),
               "turbine": ("power_kw", "internal_power_kw", "shaft_power_kw"),
               "extraction_turbine": ("power_kw", "internal_power_kw", "shaft_power_kw",
                                      "exhaust_t_h", "condenser_duty_mw"),
               "letdown": ("spray_t_h", "steam_out_t_h"),
               "user": ("duty_mw", "condensate_return_t_h")}


def idle_service(table: str, item) -> str | None:
    """Why ``item`` of ``table`` passes no flow in its case ("out of service",
    "tripped", "off", "closed"), or None when it runs."""
    if not getattr(item, "in_service", True):
        return "out of service"
    mode = _IDLE_MODES.get(table)
    if mode is not None and getattr(item, "mode", None) == mode:
        return mode
    return None


def _idle_rows(model, case: str) -> list[dict]:
    """A row, at zero flow, for every item that does not run in the case."""
    rows = []
    for table in _TABLE_ORDER:
        for n, it in model.table(table).items():
            why = idle_service(table, it)
            if why is None:
                continue
            if table == "boiler":
                typ, frm, to = "boiler", it.feedwater, it.header
            elif table == "steam_transfer":
                typ = it.direction
                frm, to = (("outside", it.header) if typ == "import"
                           else (it.header, "outside"))
            elif table in ("turbine", "letdown"):
                typ, frm, to = table, it.inlet, it.outlet
            elif table == "extraction_turbine":
                typ, frm = table, it.inlet
                to = it.exhaust if it.exhaust is not None else "condenser"
            elif table == "vent":
                typ, frm, to = "vent", it.header, "atmosphere"
            else:
                typ, frm, to = "user", it.header, "process"
            mode = it.mode if hasattr(it, "mode") else ""
            if table == "user":
                mode = "duty" if it.duty is not None else "demand"
            elif table == "vent":
                mode = "excess"
            extra = {k: 0.0 for k in _IDLE_ZEROS.get(typ, ())}
            if hasattr(it, "drive"):
                extra["drive"] = it.drive
            if table == "user":
                extra["group"] = it.group
            rows.append(_row(case, n, typ, frm, to, mode, 0.0, **extra, limit="",
                             service=why))
            if table == "extraction_turbine":
                for e in it.extractions:
                    rows.append(_row(case, f"{n}/{e.header}", "extraction", n, e.header,
                                     e.mode, 0.0, limit="", service=why))
    return rows


def _with_idle_rows(rows: list[dict], model, case: str) -> list[dict]:
    """``rows`` (of the running items) with the rows of the idle items, every item at
    its place: by table, then in the order of the model file."""
    idle = _idle_rows(model, case)
    if not idle:
        return rows
    place = {t: {n: i for i, n in enumerate(model.table(t))} for t in _TABLE_ORDER}

    def key(r):
        table = _ROW_TABLES[r["type"]]
        name = r["item"] if r["type"] != "extraction" else r["from"]
        return _TABLE_ORDER[table], place[table].get(name, -1), r["type"] == "extraction"
    return sorted(rows + idle, key=key)


def stream_table(sol: Solution, case: str) -> pd.DataFrame:
    """Every steam and water stream: from, to, flow, pressure, temperature, enthalpy."""
    net, x, co = sol.net, sol.x, sol.co
    H = net.headers
    rows = []

    def add(name, frm, to, medium, m, p, h):
        st = props.state_ph(p, h)
        rows.append({"case": case, "stream": name, "from": frm, "to": to,
                     "medium": medium, "flow_t_h": m * TH, "p_bara": p / 1e5,
                     "t_degc": st.t - C0, "h_kj_kg": h * KJ,
                     "quality": st.x if st.is_wet else np.nan})
    for b in net.boilers:
        add(f"{b['name']} steam", b["name"], H[b["header"]], "steam", x[b["var"]],
            net.p[b["header"]], b["h"])
        add(f"{b['name']} feedwater", b["supply"]["name"], b["name"], "water",
            x[b["var"]] / (1 - b["bd"]), b["supply"]["p"], b["supply"]["h"])
    for t, c in zip(net.turbines, co.turb):
        add(f"{t['name']} exhaust", t["name"], H[t["outlet"]], "steam", x[t["var"]],
            net.p[t["outlet"]], c["h_out"])
    for s, c in zip(net.letdowns, co.ld):
        if s["ds"] is not None:
            add(f"{s['name']} spray", s["ds"]["supply"]["name"], s["name"], "water",
                x[s["var"]] * c["r"], s["ds"]["supply"]["p"], s["ds"]["supply"]["h"])
        add(f"{s['name']} outlet", s["name"], H[s["outlet"]], "steam",
            x[s["var"]] * (1 + c["r"]), net.p[s["outlet"]], c["h_out"])
    for r in rows:
        r["service"] = IN_SERVICE
    return pd.DataFrame(_with_idle_streams(rows, net.model, case))


def _with_idle_streams(rows: list[dict], model, case: str) -> list[dict]:
    """``rows`` (the streams of the running items) with those of the idle items at zero
    flow and without a state, every stream at its item's place."""
    idle, owner = [], {}
    supplies = model.table("water_supply")
    for table in ("boiler", "turbine", "letdown"):
        for n, it in model.table(table).items():
            why = idle_service(table, it)
            if why is None:
                continue
            if table == "boiler":
                ws = supplies[it.feedwater]
                streams = [(f"{n} steam", n, it.header, "steam", model.headers[it.header]),
                           (f"{n} feedwater", it.feedwater, n, "water", ws)]
            elif table == "turbine":
                streams = [(f"{n} exhaust", n, it.outlet, "steam", model.headers[it.outlet])]
            else:
                streams = []
                if it.desuperheater is not None:
                    ws = supplies[it.desuperheater.spray_supply]
                    streams.append((f"{n} spray", ws.name, n, "water", ws))
                streams.append((f"{n} outlet", n, it.outlet, "steam",
                                model.headers[it.outlet]))
            for name, frm, to, medium, at in streams:
                idle.append({"case": case, "stream": name, "from": frm, "to": to,
                             "medium": medium, "flow_t_h": 0.0,
                             "p_bara": at.pressure / 1e5, "t_degc": np.nan,
                             "h_kj_kg": np.nan, "quality": np.nan, "service": why})
    if not idle:
        return rows
    order = {"boiler": 0, "turbine": 1, "letdown": 2}
    for table in order:
        for i, n in enumerate(model.table(table)):
            owner[n] = (order[table], i)

    def key(r):
        item = r["to"] if r["stream"].endswith((" feedwater", " spray")) else r["from"]
        return owner.get(item, (3, 0))
    return sorted(rows + idle, key=key)


# ------------------------------------------------------------- totals and cost
def totals(sol: Solution) -> dict:
    """Plant totals straight from the solution [SI]: steam raised, fuel, power by drive,
    imports and exports (the same numbers the tables sum up)."""
    net, x, co = sol.net, sol.x, sol.co
    fuel = sum(_boiler(b, x[b["var"]]).fuel for b in net.boilers)
    gen = mech = 0.0
    for t, c in zip(net.turbines, co.turb):
        p = x[t["var"]] * c["dh"] * t["eta_mg"]
        if t["item"].drive == "generator":
            gen += p
        else:
            mech += p
    for t, c in zip(net.xturbines, co.xturb):
        shaft = internal_power(section_flows(x[t["in_var"]], [x[e["var"]] for e in t["exts"]]),
                               c["dh"])
        if t["item"].drive == "generator":
            gen += shaft * t["eta_mg"]
        else:
            mech += shaft * t["eta_mg"]
    return {
        "steam_raised": float(sum(x[b["var"]] for b in net.boilers)),
        "fuel": fuel, "power_generated": gen, "mechanical_power": mech,
        "imports": float(sum(x[t["var"]] for t in net.transfers if t["dir"] == "import")),
        "exports": float(sum(x[t["var"]] for t in net.transfers if t["dir"] == "export")),
    }


def case_cost(model, water: dict, sol: Solution, tot: dict | None = None) -> dict:
    """Operating cost per hour and its parts, in the site currency.

    cost = fuel + CO2 of the fuel + make-up and external water + imported steam
    - exported steam - value of the net electric power (generated less the pumps' power).

    The net power is worth the electricity price (a purchase avoided) up to the site's
    ``power_demand``, and the export price above it, up to the export cap (power beyond
    the cap earns nothing); without a power demand all of it is worth the electricity
    price. The purchase of the whole demand, which no dispatch changes, is left out.
    """
    pr = model.prices
    net = sol.net
    tot = tot or totals(sol)
    fuels = [(b, _boiler(b, sol.x[b["var"]]).fuel) for b in net.boilers]
    fuel = sum(f * b["fuel_price"] for b, f in fuels)
    carbon = sum(f * (b["item"].emission_factor or 0.0) for b, f in fuels) * pr.carbon
    water_cost = (water["makeup_kg_s"] + water["external_water_kg_s"]) * pr.makeup_water
    imp = sum(sol.x[t["var"]] * t["price"] for t in net.transfers if t["dir"] == "import")
    exp = sum(sol.x[t["var"]] * t["price"] for t in net.transfers if t["dir"] == "export")
    gen = tot["power_generated"]
    # a pump driven by a running turbine costs steam (in the balance), not electricity
    pump = sum(ws["pump_work"] * _supply_flow(sol, name)
               for name, ws in net.supplies.items() if "pump_turbine" not in ws)
    power_value = power_worth(model, gen - pump)
    per_s = fuel + carbon + water_cost + imp - exp - power_value
    return {"cost_per_h": per_s * 3600, "fuel_cost_per_h": fuel * 3600,
            "carbon_cost_per_h": carbon * 3600,
            # the credit for the power generated, so that the parts add up to the cost:
            # the value of the net power plus the pumps' power at the electricity price
            # (gen x price when no power demand is given)
            "water_cost_per_h": water_cost * 3600,
            "power_value_per_h": (power_value + pump * pr.electricity) * 3600,
            "pump_power_kw": pump / 1e3,
            "import_cost_per_h": imp * 3600, "export_credit_per_h": exp * 3600,
            "pump_power_cost_per_h": pump * pr.electricity * 3600}


def power_worth(model, p_net: float) -> float:
    """Value of a net electric power ``p_net`` [W] (generated less used by the plant's
    pumps) [currency/s]: at the electricity price up to the site's power demand, at the
    export price above it up to the export cap (see :func:`case_cost`)."""
    pr, site = model.prices, model.site
    if site.power_demand is None:
        return p_net * pr.electricity
    own = min(p_net, site.power_demand)
    sold = max(0.0, p_net - site.power_demand)
    if site.max_power_export is not None:
        sold = min(sold, site.max_power_export)
    p_exp = pr.electricity if pr.electricity_export is None else pr.electricity_export
    return own * pr.electricity + sold * p_exp


def _supply_flow(sol: Solution, name: str) -> float:
    return supply_flow(sol.net, name, sol.x, [c["r"] for c in sol.co.ld])


# ------------------------------------------------------------ let-down points
def letdown_points(case: str, status: str, sol: Solution) -> list[StationPoint]:
    """The operating point of every running let-down (steam in, spray, outlet state,
    spray water, and the steam inflow, enthalpy and heat loss of the header it feeds),
    what the station checks read; empty unless the case is solved or infeasible."""
    if sol is None or status not in (CaseStatus.SOLVED, CaseStatus.INFEASIBLE):
        return []
    net, x, co = sol.net, sol.x, sol.co
    inflow = [sum(f for _, f, _ in lst) for lst in header_inflows(net, co, x, labels=False)]
    pts = []
    for s, c in zip(net.letdowns, co.ld):
        ds = s["ds"]
        m = float(x[s["var"]])
        ho = s["outlet"]
        pts.append(StationPoint(
            case=case, station=s["name"], p_in=net.p[s["inlet"]],
            h_in=sol.h[s["inlet"]], p_out=net.p[s["outlet"]], m_steam=max(m, 0.0),
            m_spray=max(m * c["r"], 0.0), h_out=c["h_out"],
            h_water=ds["supply"]["h"] if ds else None,
            t_water=ds["supply"]["t"] if ds else None,
            p_water=ds["supply"]["p"] if ds else None,
            setpoint_reachable=bool(c["reachable"]), out_header=net.headers[ho],
            header_inflow=float(inflow[ho]), header_h=float(sol.h[ho]),
            header_heat_loss=float(net.q_loss[ho])))
    return pts


# ------------------------------------------------------------ operating flags
class Flag(NamedTuple):
    """One operating flag of a balance, read from the solution [SI].

    ``kind`` is ``header_wet`` (value: the header's quality [-], limit 1),
    ``exhaust_quality`` (a wet turbine exhaust: quality [-] against the turbine's
    ``min_exhaust_quality``), ``outlet_setpoint`` (a desuperheater whose inlet steam is
    too cold: outlet temperature against its setpoint [K]), ``at_maximum`` or
    ``at_minimum`` (a flow at its limit [kg/s]).
    """

    item: str
    type: str
    kind: str
    value: float
    limit: float | None


def operating_flags(sol: Solution) -> list[Flag]:
    """Wet headers, wet turbine exhausts, unreachable desuperheater setpoints and
    elements at a limit, from a solution (the same states and limits the result tables
    show, without building them)."""
    net, x, co = sol.net, sol.x, sol.co
    out: list[Flag] = []
    for i, name in enumerate(net.headers):
        if sol.h[i] < net.sat[i].hg:
            st = props.state_ph(net.p[i], sol.h[i])
            out.append(Flag(name, "header", "header_wet", st.x if st.is_wet else 0.0, 1.0))
    for t, c in zip(net.turbines, co.turb):
        st = props.state_ph(net.p[t["outlet"]], c["h_out"])
        if st.is_wet and x[t["var"]] > IDLE_FLOW:
            out.append(Flag(t["name"], "turbine", "exhaust_quality", st.x,
                            getattr(t["item"], "min_exhaust_quality", None)))
    for t, c in zip(net.xturbines, co.xturb):
        st = props.state_ph(t["pressures"][-1], c["h"][-1])
        if st.is_wet and x[t["in_var"]] > IDLE_FLOW:
            out.append(Flag(t["name"], "extraction_turbine", "exhaust_quality", st.x,
                            t["item"].min_exhaust_quality))
    for s, c in zip(net.letdowns, co.ld):
        if s["ds"] is not None and not c["reachable"] and x[s["var"]] > IDLE_FLOW:
            out.append(Flag(s["name"], "letdown", "outlet_setpoint",
                            props.state_ph(net.p[s["outlet"]], c["h_out"]).t,
                            s["ds"]["t_set"]))
    for v in net.vars:
        if v.kind in ("da_steam", "da_makeup"):
            continue
        m = x[v.index]
        table = {"transfer": "steam_transfer", "xt_in": "extraction_turbine",
                 "xt_ext": "extraction"}.get(v.kind, v.kind)
        state = _limit_state(m, v.lo if v.fixed is None else None,
                             v.hi if v.fixed is None else None)
        if state == "at maximum":
            out.append(Flag(v.item, table, "at_maximum", float(m), v.hi))
        elif state == "at minimum":
            out.append(Flag(v.item, table, "at_minimum", float(m), v.lo))
    return out
