"""Numeric form of one case: variables, fixed properties and per-iteration coefficients.

:func:`build` turns a validated :class:`~steamnet.model.Model` into a :class:`Net`: one
flow variable per running element (boiler steam, transfer, turbine flow, extraction
turbine throttle and extraction flows, let-down steam, vent, deaerator heating steam and
make-up), the constant states (boiler outlet, feedwater, make-up, returns) and, for each
header, its swing sequence (groups in priority order) and its absorbers (swing exports,
vents). :func:`coefficients` evaluates everything that depends on the header
enthalpies: turbine expansion lines, desuperheater spray ratios, duty-based user flows.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace

import numpy as np

from .. import properties as props
from ..calc.desuperheater import spray_ratio
from ..calc.pump import pump_work
from ..calc.turbine import section_flows
from ..errors import ItemPropertyError, PropertyRangeError  # noqa: F401 (re-exported)
from ..model.schema import VENT_RANK

INF = math.inf
#: Least enthalpy above saturated liquid a duty-based user is computed with, as a
#: fraction of the header's latent heat [-]
USER_DH_FLOOR = 0.01


@dataclass
class Var:
    """One unknown flow [kg/s]."""

    index: int
    kind: str            # boiler, transfer, turbine, xt_in, xt_ext, letdown, vent,
    #                      da_steam, da_makeup
    item: str            # item name (extraction: "turbine/header")
    table: str
    lo: float = 0.0
    hi: float = INF
    fixed: float | None = None      # value when not free (None: swing or solved)


@dataclass
class Group:
    """Swing elements of equal priority on one header, sharing load by set fractions."""

    priority: int
    members: list[int]   # var indices
    weights: list[float]  # normalised shares (sum 1)


@dataclass
class HeaderSwing:
    groups: list[Group] = field(default_factory=list)
    absorbers: list[int] = field(default_factory=list)   # var indices, in order


@dataclass
class Net:
    """Numeric structure of one case (constant across the fixed-point iterations)."""

    model: object
    headers: list[str]
    hidx: dict[str, int]
    p: list[float]                  # header pressures [Pa]
    sat: list                       # props.Saturation per header
    q_loss: list[float]             # header heat loss [W]
    vars: list[Var]
    swing: list[HeaderSwing]
    boilers: list[dict]
    transfers: list[dict]
    turbines: list[dict]
    xturbines: list[dict]
    letdowns: list[dict]
    vents: list[dict]
    users: list[dict]
    supplies: dict[str, dict]
    deaerator: dict | None
    makeup_h: float
    makeup_t: float
    #: compiled assembly of the balance system (steamnet.solver.assembly), made on
    #: first use and shared by the Nets :func:`rebuild` makes from this one
    plan: object = field(default=None, repr=False, compare=False)


def _prop(item: str, func, *args):
    try:
        return func(*args)
    except PropertyRangeError as exc:
        raise ItemPropertyError(item, exc) from None


def group_bounds(net: "Net", g: Group,
                 eff: dict[int, tuple[float, float]]) -> tuple[float, float]:
    """Range of a swing group's level (its members' flows over their shares), from
    the members' limits or their effective ranges ``eff``."""
    lo, hi = 0.0, INF
    for vi, w in zip(g.members, g.weights):
        vlo, vhi = eff.get(vi, (net.vars[vi].lo, net.vars[vi].hi))
        lo = max(lo, vlo / w)
        hi = min(hi, vhi / w)
    return lo, hi


def _share_groups(entries: list[tuple[int, int, float | None]]) -> list[Group]:
    """entries: (priority, var index, share) -> groups sorted by priority."""
    by: dict[int, list] = {}
    for prio, vi, share in entries:
        by.setdefault(prio, []).append((vi, share))
    groups = []
    for prio in sorted(by):
        mem = by[prio]
        shares = [1.0 if s is None else s for _, s in mem]
        tot = sum(shares)
        groups.append(Group(prio, [vi for vi, _ in mem], [s / tot for s in shares]))
    return groups


def build(model, like: Net | None = None) -> Net:
    """Numeric structure of ``model`` (one case). With ``like``, the Net of a similar
    model (the previous case of a sweep), only what differs is built again when the two
    have the same structure (:func:`same_structure`); the result is the same."""
    if like is not None and same_structure(like.model, model):
        return rebuild(like, model)
    if like is not None and same_structure(like.model, model, flows=True):
        return rebuild_flows(like, model)
    on = lambda it: getattr(it, "in_service", True)  # noqa: E731
    headers = sorted(model.headers, key=lambda n: (-model.headers[n].pressure, n))
    hidx = {h: i for i, h in enumerate(headers)}
    p = [model.headers[h].pressure for h in headers]
    sat = [_prop(f"header '{h}'", props.saturation, model.headers[h].pressure)
           for h in headers]
    vars_: list[Var] = []
    swing_entries: list[list] = [[] for _ in headers]
    absorb_entries: list[list] = [[] for _ in headers]

    def new_var(kind, item, table, lo=0.0, hi=None, fixed=None):
        v = Var(len(vars_), kind, item, table, lo, INF if hi is None else hi, fixed)
        vars_.append(v)
        return v.index

    # deaerator and water supplies
    da = None
    for n, d in model.table("deaerator").items():
        dsat = _prop(f"deaerator '{n}'", props.saturation, d.pressure)
        da = {"name": n, "header": hidx[d.header], "p": d.pressure, "sat": dsat,
              "vent_fraction": d.vent_fraction}
    supplies: dict[str, dict] = {}
    for n, ws in model.table("water_supply").items():
        if ws.source == "deaerator":
            h0 = da["sat"].hf
            pump_w = 0.0
            if ws.pump_efficiency is not None:
                pump_w = pump_work(da["sat"].vf, ws.pressure - da["p"], ws.pump_efficiency)
            st = _prop(f"water supply '{n}'", props.state_ph, ws.pressure, h0 + pump_w)
            supplies[n] = {"name": n, "h": st.h, "t": st.t, "p": ws.pressure,
                           "from_da": True, "pump_work": pump_w}
        else:
            st = _prop(f"water supply '{n}'", props.state_pt, ws.pressure, ws.temperature)
            supplies[n] = {"name": n, "h": st.h, "t": st.t, "p": ws.pressure,
                           "from_da": False, "pump_work": 0.0}

    makeup_h = _makeup_h(model, da)
    for n, t in model.table("turbine").items():
        if on(t) and t.mode == "pump":
            for ws in model.table("water_supply").values():
                if ws.pump_turbine == n:     # the turbine drives it: no motor power
                    supplies[ws.name]["pump_turbine"] = n

    boilers = []
    for n, b in model.table("boiler").items():
        if not on(b) or b.mode == "off":
            continue
        hi = hidx[b.header]
        st = _prop(f"boiler '{n}'", props.state_pt, p[hi], b.steam_temperature)
        ws = supplies[b.feedwater]
        fixed = b.steam if b.mode == "fixed" else None
        vi = new_var("boiler", n, "boiler", b.min_steam if b.mode == "swing" else 0.0,
                     b.max_steam, fixed)
        # the blowdown leaves saturated at the drum: the header's pressure unless given
        drum = sat[hi] if b.drum_pressure is None else _prop(
            f"boiler '{n}'", props.saturation, b.drum_pressure)
        flash = None
        if b.blowdown_flash_header:
            fh = hidx[b.blowdown_flash_header]
            frac = max(0.0, (drum.hf - sat[fh].hf) / sat[fh].hfg)
            flash = {"header": fh, "fraction": frac}
        boilers.append({"name": n, "var": vi, "header": hi, "h": st.h, "t": st.t,
                        "supply": ws, "bd": b.blowdown, "h_bd": drum.hf,
                        "p_drum": p[hi] if b.drum_pressure is None else b.drum_pressure,
                        "eff": b.efficiency, "kind": b.kind, "flash": flash,
                        "fuel_price": (b.fuel_price if b.fuel_price is not None
                                       else model.prices.fuel), "item": b})
        if b.mode == "swing":
            swing_entries[hi].append((b.priority, vi, b.share))

    transfers = []
    for n, t in model.table("steam_transfer").items():
        if not on(t) or t.mode == "off":
            continue
        hi = hidx[t.header]
        fixed = t.flow if t.mode == "fixed" else None
        vi = new_var("transfer", n, "steam_transfer",
                     t.min_flow if t.mode == "swing" else 0.0, t.max_flow, fixed)
        h_imp = None
        if t.direction == "import":
            h_imp = _prop(f"steam transfer '{n}'", props.state_pt, p[hi],
                          t.steam_temperature).h
        transfers.append({"name": n, "var": vi, "header": hi, "dir": t.direction,
                          "h": h_imp, "price": t.price, "item": t})
        if t.mode == "swing":
            if t.direction == "import":
                swing_entries[hi].append((t.priority, vi, t.share))
            else:
                absorb_entries[hi].append((t.priority, vi))

    turbines = []
    for n, t in model.table("turbine").items():
        if not on(t) or t.mode == "tripped":
            continue
        lo = t.min_flow if t.mode == "swing" else 0.0
        vi = new_var("turbine", n, "turbine", lo, t.max_flow,
                     t.flow if t.mode == "fixed_flow" else None)
        eta_mg = t.mechanical_efficiency * (t.generator_efficiency
                                            if t.drive == "generator" else 1.0)
        turbines.append({"name": n, "var": vi, "inlet": hidx[t.inlet],
                         "outlet": hidx[t.outlet], "mode": t.mode, "eta_mg": eta_mg,
                         "item": t})
        if t.mode == "pump":
            turbines[-1]["pump"] = next(s for s in supplies.values()
                                        if s.get("pump_turbine") == n)
        if t.mode == "swing":
            swing_entries[hidx[t.outlet]].append((t.priority, vi, t.share))

    xturbines = []
    for n, t in model.table("extraction_turbine").items():
        if not on(t) or t.mode == "tripped":
            continue
        vin = new_var("xt_in", n, "extraction_turbine", 0.0, INF,
                      t.flow if t.mode == "fixed_flow" else None)
        exts = []
        for e in t.extractions:
            vname = f"{n}/{e.header}"
            ve = new_var("xt_ext", vname, "extraction_turbine",
                         e.min_flow if e.mode == "swing" else 0.0, e.max_flow,
                         e.flow if e.mode == "fixed" else None)
            exts.append({"var": ve, "header": hidx[e.header], "mode": e.mode,
                         "lo": e.min_flow if e.mode == "swing" else 0.0,
                         "hi": INF if e.max_flow is None else e.max_flow})
            if e.mode == "swing":
                swing_entries[hidx[e.header]].append((e.priority, ve, e.share))
        pressures = [p[hidx[t.inlet]]] + [p[x["header"]] for x in exts]
        if t.exhaust is not None:
            pressures.append(p[hidx[t.exhaust]])
        else:
            pressures.append(t.condenser_pressure)
        eta_mg = t.mechanical_efficiency * (t.generator_efficiency
                                            if t.drive == "generator" else 1.0)
        cond_h = None
        if t.exhaust is None and t.condensate_return > 0:
            if t.condensate_temperature is not None:
                cond_h = _liquid_h(f"extraction turbine '{n}'", t.condensate_temperature,
                                   da["p"] if da else t.condenser_pressure)
            else:
                cond_h = _prop(f"extraction turbine '{n}'", props.saturation,
                               t.condenser_pressure).hf
        willans = None
        if t.section_willans_no_load is not None:
            # section output (m_j - m0_j) / k_j: its internal power times eta_mg
            m0s, ks = list(t.section_willans_no_load), list(t.section_willans_slope)
            willans = {"m0": m0s, "k": ks, "coef": [1.0 / (k * eta_mg) for k in ks],
                       "rhs": sum(m0 / (k * eta_mg) for m0, k in zip(m0s, ks))}
        xturbines.append({"name": n, "in_var": vin, "inlet": hidx[t.inlet], "exts": exts,
                          "exhaust": None if t.exhaust is None else hidx[t.exhaust],
                          "pressures": pressures,
                          "etas": (list(t.section_efficiencies)
                                   if t.section_efficiencies is not None else None),
                          "willans": willans,
                          "eta_mg": eta_mg, "mode": t.mode, "item": t,
                          "ret": t.condensate_return if t.exhaust is None else 0.0,
                          "cond_h": cond_h})

    letdowns = []
    for n, s in model.table("letdown").items():
        if not on(s) or s.mode == "closed":
            continue
        lo = s.min_flow if s.mode == "auto" else 0.0
        vi = new_var("letdown", n, "letdown", lo, s.max_flow,
                     s.flow if s.mode == "fixed_flow" else None)
        ho = hidx[s.outlet]
        d = s.desuperheater
        ds = None
        if d is not None:
            t_set = (d.outlet_temperature if d.outlet_temperature is not None
                     else sat[ho].t + d.approach)
            h_set = _prop(f"letdown '{n}'", props.state_pt, p[ho], t_set).h
            ds = {"t_set": t_set, "h_set": h_set, "supply": supplies[d.spray_supply]}
        letdowns.append({"name": n, "var": vi, "inlet": hidx[s.inlet], "outlet": ho,
                         "ds": ds, "item": s})
        if s.mode == "auto":
            swing_entries[ho].append((s.priority, vi, s.share))

    vents = []
    for n, v in model.table("vent").items():
        if not on(v):
            continue
        hi = hidx[v.header]
        vi = new_var("vent", n, "vent", 0.0, v.max_flow)
        vents.append({"name": n, "var": vi, "header": hi})
        absorb_entries[hi].append((v.priority + VENT_RANK, vi))   # exports first

    if da is not None:
        da["steam_var"] = new_var("da_steam", da["name"], "deaerator")
        da["makeup_var"] = new_var("da_makeup", da["name"], "deaerator")

    swing = []
    for hi in range(len(headers)):
        hs = HeaderSwing(groups=_share_groups(swing_entries[hi]),
                         absorbers=[vi for _, vi in sorted(absorb_entries[hi])])
        swing.append(hs)
    return Net(model=model, headers=headers, hidx=hidx, p=p, sat=sat,
               q_loss=[model.headers[h].heat_loss for h in headers], vars=vars_,
               swing=swing, boilers=boilers, transfers=transfers, turbines=turbines,
               xturbines=xturbines, letdowns=letdowns, vents=vents,
               users=_users(model, hidx, p, da), supplies=supplies, deaerator=da,
               makeup_h=makeup_h, makeup_t=model.site.makeup_temperature)


def _users(model, hidx: dict[str, int], p: list[float], da: dict | None,
           like: list[dict] = ()) -> list[dict]:
    """The in-service users: header, demand or duty, condensate returned. The entry of
    a user whose item is the very one in ``like`` (users of a Net of the same
    structure) is taken from there."""
    users = []
    same = {u["name"]: u for u in like}
    for n, u in model.table("user").items():
        if not getattr(u, "in_service", True):
            continue
        old = same.get(n)
        if old is not None and old["item"] is u:
            users.append(old)
            continue
        hi = hidx[u.header]
        h_ret = None
        if u.condensate_return > 0:
            h_ret = _liquid_h(f"user '{n}'", u.condensate_temperature,
                              da["p"] if da else p[hi])
        users.append({"name": n, "header": hi, "demand": u.demand, "duty": u.duty,
                      "ret": u.condensate_return, "h_ret": h_ret, "item": u})
    return users


def _makeup_h(model, da: dict | None) -> float:
    """Enthalpy of the make-up water, at the deaerator pressure (or atmospheric)."""
    mk_p = da["p"] if da else model.site.atmospheric_pressure
    return _prop("site makeup_temperature", props.state_pt, max(mk_p, 2 * props.P_MIN),
                 model.site.makeup_temperature).h


#: Tables that :func:`rebuild` builds again for each case; every other table's items
#: must be the very objects of the model the Net is rebuilt from.
_REBUILT_TABLES = frozenset({"user", "header"})


#: Fields that set a flow: the value of a fixed element (:func:`rebuild_flows`)
FLOW_FIELDS = frozenset({"flow", "steam"})
#: Tables whose items :func:`rebuild_flows` takes with other flows
_FLOW_TABLES = frozenset({"boiler", "steam_transfer", "turbine", "extraction_turbine",
                          "letdown"})


def _same_but_flows(a, b) -> bool:
    """Whether items ``a`` and ``b`` differ at most in their flow fields (and an
    extraction turbine's in its extractions' flows)."""
    if type(a) is not type(b):
        return False
    da, db = a.__dict__, b.__dict__
    for k, v in da.items():
        if k in FLOW_FIELDS:
            continue
        w = db[k]
        if k == "extractions" and v is not w:
            if len(v) != len(w) or not all(_same_but_flows(e, f) for e, f in zip(v, w)):
                return False
        elif v is not w and v != w:
            return False
    return True


def same_structure(a, b, flows: bool = False) -> bool:
    """Whether models ``a`` and ``b`` build Nets that differ only in their users, header
    heat losses and make-up water: the same item objects in every other table, the
    same headers at the same pressures and the same prices. With ``flows``, items of
    the tables of fixed flows (boilers, transfers, turbines, let-downs) may also differ
    in their flow fields (:func:`rebuild_flows` builds such a Net)."""
    if a is b:
        return True
    if a.prices is not b.prices and a.prices != b.prices:
        return False
    ha, hb = a.headers, b.headers
    if list(ha) != list(hb) or any(ha[n].pressure != hb[n].pressure for n in ha):
        return False
    for t in (set(a.items) | set(b.items)) - _REBUILT_TABLES:
        ta, tb = a.table(t), b.table(t)
        if ta is tb:                          # a table the case did not change
            continue
        if list(ta) != list(tb):
            return False
        for n, it in ta.items():
            if tb[n] is not it and not (flows and t in _FLOW_TABLES
                                        and _same_but_flows(it, tb[n])):
                return False
    return True


def rebuild(like: Net, model) -> Net:
    """The Net of ``model`` from the Net of a model of the same structure (see
    :func:`same_structure`): only users, heat losses and make-up water are built; the
    rest is shared with ``like`` (never modified by the solver). Equal to
    ``build(model)``."""
    return replace(like, model=model,
                   users=_users(model, like.hidx, like.p, like.deaerator, like.users),
                   q_loss=[model.headers[h].heat_loss for h in like.headers],
                   makeup_h=_makeup_h(model, like.deaerator),
                   makeup_t=model.site.makeup_temperature)


def rebuild_flows(like: Net, model) -> Net:
    """The Net of ``model`` from the Net of a model whose items differ at most in their
    flow fields (``same_structure(..., flows=True)``): :func:`rebuild`, with each such
    element's item and fixed flow taken from ``model`` and the compiled assembly's
    right-hand sides of the fixed flows made again. Equal to ``build(model)``."""
    net = rebuild(like, model)
    vars_ = list(net.vars)

    def fixed(vi: int, value) -> None:
        if vars_[vi].fixed is not None:
            vars_[vi] = replace(vars_[vi], fixed=value)

    lists = {}
    for attr, table in (("boilers", "boiler"), ("transfers", "steam_transfer"),
                        ("turbines", "turbine"), ("xturbines", "extraction_turbine"),
                        ("letdowns", "letdown")):
        items, out = model.table(table), []
        for e in getattr(net, attr):
            it = items[e["name"]]
            if it is not e["item"]:
                e = dict(e, item=it)
                if attr == "xturbines":
                    fixed(e["in_var"], it.flow)
                    for x, ext in zip(e["exts"], it.extractions):
                        fixed(x["var"], ext.flow)
                else:
                    fixed(e["var"], it.steam if attr == "boilers" else it.flow)
            out.append(e)
        lists[attr] = out
    net = replace(net, vars=vars_, **lists)
    if like.plan is not None:
        net.plan = like.plan.refreshed(net)
    return net


def _liquid_h(item: str, t: float, p_min: float) -> float:
    """Enthalpy of liquid water at ``t`` [K], at a pressure just above saturation."""
    p = p_min
    if t < props.T_CRIT - 1:
        try:
            p = max(p_min, props.p_sat(t) * 1.001 + 100.0)
        except PropertyRangeError as exc:
            raise ItemPropertyError(item, exc) from None
    return _prop(item, props.state_pt, p, t).h


# --------------------------------------------------------------------- coefficients
@dataclass
class Coeffs:
    """Everything that depends on the header enthalpies, for one iteration."""

    turb: list[dict]
    xturb: list[dict]
    ld: list[dict]
    user_flow: list[float]
    #: users whose header carries (almost) no heat above saturated liquid: their flow
    #: is computed with a floor on the enthalpy difference, and the case is infeasible
    user_starved: list[bool] = field(default_factory=list)


def expansion(item: str, p_in: float, h_in: float, p_out: float, eta: float) -> dict:
    """One turbine section: isentropic-efficiency expansion (docs/method.md)."""
    st_in = _prop(item, props.state_ph, p_in, h_in)
    st_is = _prop(item, props.state_ps, p_out, st_in.s)
    h_out = h_in - eta * (h_in - st_is.h)
    return {"h_in": h_in, "h_is": st_is.h, "h_out": h_out, "dh": h_in - h_out,
            "s_in": st_in.s}


def _willans_sections(t: dict, h: list[float], x) -> dict:
    """Section drops of an extraction turbine whose sections follow Willans lines: the
    section's output (m_j - m0_j) / k_j (none below its no-load flow) over eta_mg is
    its internal power, m_j dh_j; section flows from the last flows ``x`` (before the
    first, the fixed throttle flow or twice the largest no-load flow, no extraction)."""
    wl, it = t["willans"], t["item"]
    if x is not None:
        flows = section_flows(x[t["in_var"]], [x[e["var"]] for e in t["exts"]])
    else:
        flows = [it.flow if it.flow else max(2 * max(wl["m0"]), 1.0)] * len(wl["k"])
    hs, dhs = [h[t["inlet"]]], []
    for m, m0, k in zip(flows, wl["m0"], wl["k"]):
        dh = max(0.0, (m - m0) / k) / (t["eta_mg"] * m) if m > 0 else 0.0
        hs.append(hs[-1] - dh)
        dhs.append(dh)
    return {"h": hs, "dh": dhs, "flows": flows}


def power_row(t: dict, c: dict) -> tuple[list[float], float]:
    """The equation of a fixed-power extraction turbine ``t`` (a Net entry) at its
    coefficients ``c``: sum over its sections of coef_j x section flow_j = rhs. With
    efficiencies, coef_j is the section's drop and rhs the internal power; with
    Willans lines, sum_j (m_j - m0_j) / (k_j eta_mg) = power / eta_mg, linear in the
    flows with constant coefficients."""
    wl = t["willans"]
    if wl is None:
        return c["dh"], t["item"].power / t["eta_mg"]
    return wl["coef"], t["item"].power / t["eta_mg"] + wl["rhs"]


def wet_expansion(item: str, p_in: float, p_out: float, ex: dict, eta: float) -> dict:
    """The section ``ex`` (from :func:`expansion` at efficiency ``eta``) with its
    efficiency lowered by the Baumann rule: eta (1 - y_mean), y_mean the mean of the
    inlet and outlet moisture (docs/method.md). The outlet moisture follows from the
    outlet enthalpy, so the two are solved together: inside the dome y_out is linear
    in h_out, and h_out = h_in - A (1 - (y_in + y_out) / 2), A = eta (h_in - h_is),
    has the closed form below. A section that stays dry is unchanged."""
    h_in, drop = ex["h_in"], ex["h_in"] - ex["h_is"]
    s_in = _prop(item, props.saturation, p_in)
    s_out = _prop(item, props.saturation, p_out)
    y_in = max(0.0, (s_in.hg - h_in) / s_in.hfg) if p_in < props.P_CRIT else 0.0
    if y_in == 0.0 and ex["h_out"] >= s_out.hg:
        return {**ex, "eta": eta}
    a = eta * drop
    h_out = (h_in - a * (1 - y_in / 2) + a * s_out.hg / (2 * s_out.hfg)) \
        / (1 + a / (2 * s_out.hfg))
    if h_out >= s_out.hg:                       # the corrected outlet is dry: y_out 0
        h_out = h_in - a * (1 - y_in / 2)
    return {**ex, "h_out": h_out, "dh": h_in - h_out,
            "eta": (h_in - h_out) / drop if drop > 0 else eta}


def coefficients(net: Net, h: list[float], x: list[float] | None) -> Coeffs:
    """Per-iteration coefficients from header enthalpies ``h`` and the last flows ``x``."""
    turb = []
    for t in net.turbines:
        it = t["item"]
        pin, pout = net.p[t["inlet"]], net.p[t["outlet"]]
        h_in = h[t["inlet"]]
        name = f"turbine '{t['name']}'"
        set_power = t["mode"] in ("fixed_power", "pump")
        power = it.power if t["mode"] != "pump" else pump_power(net, t["pump"], h, x)
        if it.isentropic_efficiency is not None:
            ex = expansion(name, pin, h_in, pout, it.isentropic_efficiency)
            c = {"h_out": ex["h_out"], "dh": ex["dh"], "h_is": ex["h_is"], "willans": False}
            if set_power:
                c["flow"] = power / (t["eta_mg"] * ex["dh"])
        else:
            st_in = _prop(name, props.state_ph, pin, h_in)
            h_is = _prop(name, props.state_ps, pout, st_in.s).h
            m0, k = it.willans_no_load, it.willans_slope
            c = {"willans": True, "h_is": h_is, "m0": m0, "k": k}
            if set_power:
                m = m0 + k * power
                c["flow"] = m
            else:
                m = x[t["var"]] if x is not None else (it.flow or max(m0 * 2, 1.0))
            w_out = max(0.0, (m - m0) / k) if m > 0 else 0.0
            shaft = w_out / t["eta_mg"]
            dh = shaft / m if m > 0 else 0.0
            c.update({"h_out": h_in - dh, "dh": dh})
        turb.append(c)
    xturb = []
    for t in net.xturbines:
        name = f"extraction turbine '{t['name']}'"
        hs = [h[t["inlet"]]]
        dhs = []
        if t["willans"] is not None:
            xturb.append(_willans_sections(t, h, x))
            continue
        wet = t["item"].moisture_correction
        used = []
        for j, eta in enumerate(t["etas"]):
            ex = expansion(name, t["pressures"][j], hs[-1], t["pressures"][j + 1], eta)
            if wet:
                ex = wet_expansion(name, t["pressures"][j], t["pressures"][j + 1], ex, eta)
                used.append(ex["eta"])
            hs.append(ex["h_out"])
            dhs.append(ex["dh"])
        xturb.append({"h": hs, "dh": dhs, **({"eta": used} if wet else {})})
    ld = []
    for s in net.letdowns:
        h_in = h[s["inlet"]]
        ds = s["ds"]
        if ds is None:
            ld.append({"r": 0.0, "h_out": h_in, "reachable": True, "h_w": None})
            continue
        h_set, h_w = ds["h_set"], ds["supply"]["h"]
        if h_in > h_set:
            r = spray_ratio(h_in, h_set, h_w)
            ld.append({"r": r, "h_out": h_set, "reachable": True, "h_w": h_w})
        else:
            ld.append({"r": 0.0, "h_out": h_in, "reachable": h_in >= h_set - 1e-6,
                       "h_w": h_w})
    uf, starved = [], []
    for u in net.users:
        if u["demand"] is not None:
            uf.append(u["demand"])
            starved.append(False)
        else:
            hi = u["header"]
            dh = h[hi] - net.sat[hi].hf
            # floor: 1 % of the latent heat, so that a header that is (for an
            # iteration, or for good) condensed gives a finite, reported flow
            floor = USER_DH_FLOOR * net.sat[hi].hfg
            uf.append(u["duty"] / max(dh, floor))
            starved.append(dh <= floor)
    return Coeffs(turb=turb, xturb=xturb, ld=ld, user_flow=uf, user_starved=starved)


def supply_weights(net: Net, name: str, ratios) -> np.ndarray:
    """Water drawn from supply ``name`` per kg/s of every flow: the feedwater of the
    boilers it feeds, 1 / (1 - blowdown), and the spray of the let-downs it feeds
    (``ratios``: every let-down's spray per unit steam, r, in ``net.letdowns`` order)
    [-]."""
    w = np.zeros(len(net.vars))
    for b in net.boilers:
        if b["supply"]["name"] == name:
            w[b["var"]] += 1 / (1 - b["bd"])
    for s, r in zip(net.letdowns, ratios):
        if s["ds"] is not None and s["ds"]["supply"]["name"] == name:
            w[s["var"]] += r
    return w


def supply_flow(net: Net, name: str, x, ratios) -> float:
    """Water drawn from supply ``name`` at the flows ``x`` [kg/s]
    (:func:`supply_weights`)."""
    return float(supply_weights(net, name, ratios) @ np.asarray(x, dtype=float))


def pump_ratios(net: Net, supply: dict, h: list[float]) -> list[float]:
    """Spray per unit steam of every let-down (``net.letdowns`` order) that ``supply``
    feeds at the header enthalpies ``h``; 0 for the others [-]."""
    ratios = []
    for s in net.letdowns:
        ds = s["ds"]
        r = 0.0
        if ds is not None and ds["supply"] is supply and h[s["inlet"]] > ds["h_set"]:
            r = spray_ratio(h[s["inlet"]], ds["h_set"], supply["h"])
        ratios.append(r)
    return ratios


def pump_power(net: Net, supply: dict, h: list[float], x) -> float:
    """Power of the pump of ``supply`` (a Net entry) at the header enthalpies ``h`` and
    the flows ``x``: its pump work v dP / efficiency times the water it delivers [W];
    0 before the first flows are known."""
    if x is None:
        return 0.0
    return supply["pump_work"] * supply_flow(net, supply["name"], x,
                                             pump_ratios(net, supply, h))


def pump_flow_line(t: dict, c: dict) -> tuple[float, float]:
    """(a0, a1) of a pump-driving turbine ``t`` (a Net entry) at its coefficients ``c``:
    its steam flow is ``a0 + a1 * power`` of the pump it drives (its Willans line, or
    power / (mechanical efficiency x enthalpy drop)) [kg/s], [kg/s per W]."""
    if c["willans"]:
        return c["m0"], c["k"]
    return 0.0, 1.0 / (t["eta_mg"] * c["dh"])


def pump_weights(net: Net, supply: dict, h: list[float]) -> np.ndarray:
    """The power of the pump of ``supply`` per kg/s of every flow at the header
    enthalpies ``h``: :func:`pump_power` is ``pump_weights(...) @ x`` [W per kg/s]."""
    return supply["pump_work"] * supply_weights(net, supply["name"],
                                                pump_ratios(net, supply, h))


# ------------------------------------------------------------------ header inflows
def header_inflows(net: Net, co: Coeffs, x: "np.ndarray | list[float]", labels: bool = True):
    """Per header: list of (source label, flow, enthalpy) entering it (labels None when
    not asked for, as in the iterations). The flows are linear in ``x``: with the rows
    of an identity matrix as ``x`` each "flow" is its row of coefficients."""
    ins: list[list[tuple[str | None, float, float]]] = [[] for _ in net.headers]
    for b in net.boilers:
        name = b["name"]
        ins[b["header"]].append((f"boiler '{name}'" if labels else None, x[b["var"]],
                                 b["h"]))
        if b["flash"] is not None:
            fh = b["flash"]["header"]
            m = x[b["var"]] * b["bd"] / (1 - b["bd"]) * b["flash"]["fraction"]
            ins[fh].append((f"boiler '{name}' blowdown flash" if labels else None, m,
                            net.sat[fh].hg))
    for t in net.transfers:
        if t["dir"] == "import":
            ins[t["header"]].append((f"import '{t['name']}'" if labels else None,
                                     x[t["var"]], t["h"]))
    for t, c in zip(net.turbines, co.turb):
        ins[t["outlet"]].append((f"turbine '{t['name']}'" if labels else None,
                                 x[t["var"]], c["h_out"]))
    for t, c in zip(net.xturbines, co.xturb):
        rest = x[t["in_var"]]
        label = f"extraction turbine '{t['name']}'" if labels else None
        for j, e in enumerate(t["exts"]):
            ins[e["header"]].append((label, x[e["var"]], c["h"][j + 1]))
            rest = rest - x[e["var"]]       # (not in place: x may be an array)
        if t["exhaust"] is not None:
            ins[t["exhaust"]].append((label and label + " exhaust", rest, c["h"][-1]))
    for s, c in zip(net.letdowns, co.ld):
        ins[s["outlet"]].append((f"letdown '{s['name']}'" if labels else None,
                                 x[s["var"]] * (1 + c["r"]), c["h_out"]))
    return ins
