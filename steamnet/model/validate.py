"""Checks across items, run on the base model and on every case before any solve.

Each problem is a :class:`ModelError` naming the file, the item and the field; all are
collected and raised together as :class:`ModelErrors`.
"""

from __future__ import annotations

import math
from collections import defaultdict


from .. import properties as props
from ..calc.pump import pump_work
from ..units import T_H
from ..errors import ModelError, ModelErrors, PropertyRangeError
from ..graph import steam_reach
from .model import Model
from .schema import ITEM_LABELS, VENT_RANK

__all__ = ["validate_model", "swing_elements"]


def _on(item) -> bool:
    return getattr(item, "in_service", True)


def swing_elements(model: Model) -> dict[str, list[tuple[str, str, int, float | None]]]:
    """Per header, the elements that can close its balance by supplying steam:
    (table, name, priority, share). Extractions are named 'turbine/header'."""
    out: dict[str, list] = defaultdict(list)
    for n, b in model.table("boiler").items():
        if _on(b) and b.mode == "swing":
            out[b.header].append(("boiler", n, b.priority, b.share))
    for n, t in model.table("steam_transfer").items():
        if _on(t) and t.mode == "swing" and t.direction == "import":
            out[t.header].append(("steam_transfer", n, t.priority, t.share))
    for n, t in model.table("turbine").items():
        if _on(t) and t.mode == "swing":
            out[t.outlet].append(("turbine", n, t.priority, t.share))
    for n, t in model.table("extraction_turbine").items():
        if _on(t) and t.mode != "tripped":
            for e in t.extractions:
                if e.mode == "swing":
                    out[e.header].append(("extraction_turbine", f"{n}/{e.header}",
                                          e.priority, e.share))
    for n, s in model.table("letdown").items():
        if _on(s) and s.mode == "auto":
            out[s.outlet].append(("letdown", n, s.priority, s.share))
    return out


def absorbers(model: Model) -> dict[str, list[tuple[str, str, int]]]:
    """Per header, the elements that take excess steam: swing exports, then vents.

    Vents always come after every export (the solver ranks them so, see
    ``schema.VENT_RANK``); priorities order exports among exports and vents among vents.
    """
    out: dict[str, list] = defaultdict(list)
    for n, t in model.table("steam_transfer").items():
        if _on(t) and t.mode == "swing" and t.direction == "export":
            out[t.header].append(("steam_transfer", n, t.priority))
    for n, v in model.table("vent").items():
        if _on(v):
            out[v.header].append(("vent", n, v.priority + VENT_RANK))
    return out


def validate_model(model: Model) -> None:
    """Raise :class:`ModelErrors` listing every cross-item problem of ``model``."""
    errs: list[ModelError] = []
    src = model.source
    case = f"case '{model.case_name}': " if model.case_name else ""

    def err(table: str, name: str, field: str | None, msg: str) -> None:
        errs.append(ModelError(msg, file=src, item=f"{case}{ITEM_LABELS[table]} '{name}'",
                               field=field))

    headers = model.headers
    supplies = model.table("water_supply")
    deaerators = model.table("deaerator")

    def need_header(table, name, field, ref):
        if ref not in headers:
            known = ", ".join(headers) or "none"
            err(table, name, field, f"header '{ref}' does not exist (headers: {known})")
            return False
        return True

    def p(ref):
        return headers[ref].pressure

    # ------------------------------------------------------------ headers, IF97 range
    if not headers:
        errs.append(ModelError("the model has no [[header]]", file=src, item="header"))
    for n, h in headers.items():
        if not (props.P_MIN < h.pressure < props.P_CRIT):
            err("header", n, "pressure", f"{h.pressure / 1e5:.4g} bar(a) is outside the "
                "range this program solves (above the triple point, below the critical "
                "pressure 220.64 bar(a), IAPWS-IF97)")
    # ---------------------------------------------------------------- deaerator
    if len(deaerators) > 1:
        for n in list(deaerators)[1:]:
            err("deaerator", n, None, "only one deaerator is supported per model")
    for n, da in deaerators.items():
        if need_header("deaerator", n, "header", da.header):
            if da.pressure > p(da.header):
                err("deaerator", n, "pressure", f"deaerator pressure is above its "
                    f"heating-steam header '{da.header}'")
        if not (props.P_MIN < da.pressure < props.P_CRIT):
            err("deaerator", n, "pressure", "outside IAPWS-IF97 saturation range")
    errs.extend(_makeup_errors(model, case))
    # ------------------------------------------------------------- water supplies
    for n, ws in supplies.items():
        if not (props.P_MIN < ws.pressure <= props.P_MAX):
            err("water_supply", n, "pressure", f"{ws.pressure / 1e5:.4g} bar(a) is "
                f"outside IAPWS-IF97 (up to {props.P_MAX / 1e5:g} bar(a))")
            continue
        if ws.source == "deaerator" and not deaerators:
            err("water_supply", n, "source", "source 'deaerator' but the model has no "
                "[[deaerator]]")
        if ws.source == "deaerator" and deaerators:
            da = next(iter(deaerators.values()))
            if ws.pressure < da.pressure:
                err("water_supply", n, "pressure", "supply pressure is below the "
                    "deaerator pressure it is pumped from")
            elif ws.pump_efficiency is not None and props.P_MIN < da.pressure < props.P_CRIT:
                sat = props.saturation(da.pressure)   # pump work v dP / eta heats it
                h = sat.hf + pump_work(sat.vf, ws.pressure - da.pressure, ws.pump_efficiency)
                try:
                    if props.state_ph(ws.pressure, h).phase != "liquid":
                        err("water_supply", n, "pump_efficiency", "the pump work "
                            "(v dP / efficiency) would boil the water: efficiency too low")
                except PropertyRangeError:
                    err("water_supply", n, "pump_efficiency", "the pump work (v dP / "
                        "efficiency) heats the water beyond IAPWS-IF97: efficiency too "
                        "low")
        if ws.temperature is not None:
            try:
                props.state_pt(ws.pressure, ws.temperature)
                if ws.pressure < props.P_CRIT and ws.temperature >= props.t_sat(ws.pressure):
                    err("water_supply", n, "temperature", "water at or above saturation "
                        "at the supply pressure")
            except PropertyRangeError as exc:
                err("water_supply", n, "temperature", str(exc))
    # -------------------------------------------------------------------- boilers
    for n, b in model.table("boiler").items():
        ok = need_header("boiler", n, "header", b.header)
        if b.feedwater not in supplies:
            err("boiler", n, "feedwater", f"water supply '{b.feedwater}' does not exist")
        elif ok and supplies[b.feedwater].pressure <= p(b.header):
            err("boiler", n, "feedwater", f"feedwater supply '{b.feedwater}' pressure is "
                f"not above the header pressure")
        if b.blowdown_flash_header is not None:
            if need_header("boiler", n, "blowdown_flash_header", b.blowdown_flash_header) \
                    and ok and p(b.blowdown_flash_header) >= p(b.header):
                err("boiler", n, "blowdown_flash_header", "the flash header must be at a "
                    "lower pressure than the boiler")
        if ok:
            _check_superheated(err, "boiler", n, "steam_temperature", p(b.header),
                               b.steam_temperature)
        if b.mode == "fixed" and b.max_steam is not None and b.steam > b.max_steam:
            err("boiler", n, "steam", "fixed steam is above max_steam")
    for n, t in model.table("steam_transfer").items():
        ok = need_header("steam_transfer", n, "header", t.header)
        if ok and t.direction == "import":
            _check_superheated(err, "steam_transfer", n, "steam_temperature",
                               p(t.header), t.steam_temperature)
    # ------------------------------------------------------------------- turbines
    for n, t in model.table("turbine").items():
        a = need_header("turbine", n, "inlet", t.inlet)
        b = need_header("turbine", n, "outlet", t.outlet)
        if a and b and p(t.outlet) >= p(t.inlet):
            err("turbine", n, "outlet", f"outlet header '{t.outlet}' is not below the "
                f"inlet header '{t.inlet}'")
        if t.mode == "fixed_flow" and t.max_flow is not None and t.flow > t.max_flow:
            err("turbine", n, "flow", "fixed flow is above max_flow")
    for n, t in model.table("extraction_turbine").items():
        if not need_header("extraction_turbine", n, "inlet", t.inlet):
            continue
        last = p(t.inlet)
        seen = set()
        for i, e in enumerate(t.extractions):
            fld = f"extractions.{i}.header"
            if e.header in seen:
                err("extraction_turbine", n, fld, f"two extractions to '{e.header}'")
            seen.add(e.header)
            if need_header("extraction_turbine", n, fld, e.header):
                if p(e.header) >= last:
                    err("extraction_turbine", n, fld, f"extraction header '{e.header}' "
                        "is not below the previous section's pressure")
                last = p(e.header)
        if t.exhaust is not None:
            if need_header("extraction_turbine", n, "exhaust", t.exhaust) and \
                    p(t.exhaust) >= last:
                err("extraction_turbine", n, "exhaust", "exhaust header is not below the "
                    "last extraction")
        elif t.condenser_pressure is not None:
            if t.condenser_pressure >= last:
                err("extraction_turbine", n, "condenser_pressure", "condenser pressure "
                    "is not below the last extraction")
            if not props.P_MIN < t.condenser_pressure < props.P_CRIT:
                err("extraction_turbine", n, "condenser_pressure", "outside IAPWS-IF97")
        _check_liquid_temperature(err, "extraction_turbine", n, t.condensate_temperature)
        if t.exhaust is None and t.condensate_return > 0 and not deaerators:
            # only a condensing exhaust returns condensate (a backpressure exhaust
            # goes to its header as steam)
            err("extraction_turbine", n, "condensate_return", "condensate is returned "
                "but the model has no deaerator")
    # ------------------------------------------------------------------- let-downs
    for n, s in model.table("letdown").items():
        a = need_header("letdown", n, "inlet", s.inlet)
        b = need_header("letdown", n, "outlet", s.outlet)
        if a and b and p(s.outlet) >= p(s.inlet):
            err("letdown", n, "outlet", f"outlet header '{s.outlet}' is not below the "
                f"inlet header '{s.inlet}'")
        d = s.desuperheater
        if d is not None:
            if d.spray_supply not in supplies:
                err("letdown", n, "desuperheater.spray_supply",
                    f"water supply '{d.spray_supply}' does not exist")
            if b and d.outlet_temperature is not None:
                try:
                    ts = props.t_sat(p(s.outlet))
                    if d.outlet_temperature <= ts:
                        err("letdown", n, "desuperheater.outlet_temperature",
                            f"setpoint {d.outlet_temperature - 273.15:.1f} degC is at or "
                            f"below saturation at the outlet ({ts - 273.15:.1f} degC)")
                    else:
                        props.state_pt(p(s.outlet), d.outlet_temperature)
                except PropertyRangeError as exc:
                    err("letdown", n, "desuperheater.outlet_temperature", str(exc))
            if b and d.approach is not None:
                try:
                    props.state_pt(p(s.outlet), props.t_sat(p(s.outlet)) + d.approach)
                except PropertyRangeError as exc:
                    err("letdown", n, "desuperheater.approach", f"the setpoint is not "
                        f"a state of steam: {exc}")
        if s.mode == "fixed_flow" and s.max_flow is not None and s.flow > s.max_flow:
            err("letdown", n, "flow", "fixed flow is above max_flow")
    # ---------------------------------------------------------------- users, vents
    for n, u in model.table("user").items():
        need_header("user", n, "header", u.header)
        if u.condensate_return > 0 and not deaerators:
            err("user", n, "condensate_return", "condensate is returned but the model "
                "has no deaerator")
        _check_liquid_temperature(err, "user", n, u.condensate_temperature)
    for n, v in model.table("vent").items():
        need_header("vent", n, "header", v.header)
    errs.extend(_price_errors(model, case))
    if errs:
        raise ModelErrors(errs)
    _check_degrees_of_freedom(model, errs, case)
    _check_reachability(model, errs, case)
    if errs:
        raise ModelErrors(errs)


def _price_errors(model: Model, case: str = "") -> list[ModelError]:
    """A carbon price needs every running fired boiler's emission factor (there is no
    default factor); an export price needs the site's power demand."""
    out = []
    if model.prices.carbon > 0:
        for n, b in model.table("boiler").items():
            if b.kind == "fired" and b.emission_factor is None and _on(b):
                out.append(ModelError(
                    "prices.carbon is given but this fired boiler has no emission_factor "
                    "(kg of CO2 per unit of fuel energy, from the fuel's analysis or a "
                    "published inventory factor; there is no default)",
                    file=model.source, item=f"{case}boiler '{n}'", field="emission_factor"))
    if model.prices.electricity_export is not None and model.site.power_demand is None:
        out.append(ModelError("an export price needs the site's power_demand (power is "
                              "sold above it)", file=model.source, item=f"{case}prices",
                              field="electricity_export"))
    return out


def _check_liquid_temperature(err, table, name, t) -> None:
    """A returned condensate temperature must be one of liquid water."""
    if t is not None and not (props.T_MIN < t < props.T_CRIT - 1):
        err(table, name, "condensate_temperature", f"{t - 273.15:.6g} degC is not a "
            f"temperature of liquid water (0 to {props.T_CRIT - 274.15:.0f} degC)")


#: Fields that :func:`validate_model` never reads (table -> fields): a case that
#: changes only these, on a model that passed validation, passes it too. The make-up
#: temperature is read by one check only, :func:`_makeup_errors`.
VALIDATION_FREE_FIELDS = {
    "user": frozenset({"demand", "duty", "group"}),
    "header": frozenset({"heat_loss", "description"}),
    "prices": frozenset({"fuel", "electricity", "makeup_water"}),
}


def _makeup_errors(model: Model, case: str = "") -> list[ModelError]:
    """The make-up water must be liquid at the deaerator (or site) pressure."""
    deaerators = model.table("deaerator")
    mk_p = (next(iter(deaerators.values())).pressure if deaerators
            else model.site.atmospheric_pressure)
    t_mk = model.site.makeup_temperature
    try:
        if not (props.T_MIN < t_mk < props.t_sat(mk_p)):
            return [ModelError(
                f"{t_mk - 273.15:.6g} degC is not a temperature of liquid make-up water "
                f"(above 0 degC, below saturation {props.t_sat(mk_p) - 273.15:.1f} degC "
                "at the deaerator)", file=model.source, item=f"{case}site",
                field="makeup_temperature")]
    except PropertyRangeError:
        pass       # the deaerator pressure is reported by validate_model
    return []


def validate_value_changes(model: Model, changes) -> bool:
    """Validate ``model``, made from an already validated model by ``changes``, as far
    as those changes can matter; return False when they touch a field that needs the
    full :func:`validate_model` (the caller then runs it). Raises like it."""
    only_makeup = False
    for key in changes:
        parts = str(key).split(".")
        table, field = parts[0], parts[-1]
        if table == "site" and field == "makeup_temperature" and len(parts) == 2:
            only_makeup = True
            continue
        if field not in VALIDATION_FREE_FIELDS.get(table, ()) or \
                (table != "prices" and len(parts) != 3):
            return False
    if only_makeup:
        case = f"case '{model.case_name}': " if model.case_name else ""
        errs = _makeup_errors(model, case)
        if errs:
            raise ModelErrors(errs)
    return True


def _check_superheated(err, table, name, field, p, t) -> None:
    try:
        props.state_pt(p, t)
        ts = props.t_sat(p)
        if t <= ts:
            err(table, name, field, f"{t - 273.15:.1f} degC is at or below saturation "
                f"({ts - 273.15:.1f} degC) at the header pressure: steam must be "
                "superheated")
    except PropertyRangeError as exc:
        err(table, name, field, str(exc))


def _check_degrees_of_freedom(model: Model, errs: list, case: str) -> None:
    sw = swing_elements(model)
    ab = absorbers(model)
    for h in model.headers:
        item = f"{case}header '{h}'"
        node = ("header", h)
        if not sw.get(h) and not ab.get(h) and model.graph.degree(node) == 0:
            errs.append(ModelError(
                "nothing is connected to this header (no boiler, turbine, let-down, user, "
                "vent or deaerator names it, or all of them are out of service); remove "
                "it or connect it", file=model.source, item=item))
            continue
        if not sw.get(h) and not ab.get(h):
            errs.append(ModelError(
                "no element can close this header's balance: it needs a swing boiler, a "
                "let-down in mode 'auto', a swing turbine or extraction, a swing "
                "import/export, or a vent; every flow on it is fixed",
                file=model.source, item=item))
            continue
        by_prio: dict[int, list] = defaultdict(list)
        for table, n, prio, share in sw.get(h, []):
            by_prio[prio].append((table, n, share))
        for prio, group in by_prio.items():
            if len(group) > 1 and any(s is None for _, _, s in group):
                names = ", ".join(f"{ITEM_LABELS[t]} '{n}'" for t, n, _ in group)
                errs.append(ModelError(
                    f"{names} hold this header at the same priority {prio}: give each a "
                    "'share', or give them different priorities (sequence), so the split "
                    "is defined", file=model.source, item=item, field="priority"))
            elif len(group) > 1:
                _check_share_limits(model, errs, item, prio, group)
        by_prio_ab: dict[int, list] = defaultdict(list)
        for table, n, prio in ab.get(h, []):
            by_prio_ab[prio].append((table, n))
        for prio, group in by_prio_ab.items():
            if len(group) > 1:
                names = ", ".join(f"{ITEM_LABELS[t]} '{n}'" for t, n in group)
                errs.append(ModelError(
                    f"{names} take excess steam at the same priority {prio % VENT_RANK}: "
                    "give them "
                    "different priorities", file=model.source, item=item,
                    field="priority"))


def _swing_limits(model: Model, table: str, name: str) -> tuple[float, float]:
    """(minimum, maximum) flow [kg/s] of a swing element while it runs."""
    if table == "extraction_turbine":
        turbine, header = name.split("/", 1)
        e = next(x for x in model.table(table)[turbine].extractions if x.header == header)
        lo, hi = e.min_flow, e.max_flow
    else:
        it = model.table(table)[name]
        lo, hi = ((it.min_steam, it.max_steam) if table == "boiler"
                  else (it.min_flow, it.max_flow))
    return lo, math.inf if hi is None else hi


def _check_share_limits(model: Model, errs: list, item: str, prio: int, group) -> None:
    """Elements sharing load by set fractions run together: the group's flow must let
    each run within its own minimum and maximum, or no flow of the header can."""
    total = sum(s for _, _, s in group)
    need, room = [], []
    for table, n, share in group:
        lo, hi = _swing_limits(model, table, n)
        w = share / total
        need.append((lo / w, table, n, lo))
        room.append((hi / w, table, n, hi))
    lo_g, t_lo, n_lo, v_lo = max(need)
    hi_g, t_hi, n_hi, v_hi = min(room)
    if lo_g > hi_g * (1 + 1e-9):
        errs.append(ModelError(
            f"the shares at priority {prio} cannot be met within the limits: "
            f"{ITEM_LABELS[t_lo]} '{n_lo}' at its minimum {v_lo * T_H:.4g} t/h would need "
            f"{ITEM_LABELS[t_hi]} '{n_hi}' above its maximum {v_hi * T_H:.4g} t/h; lower "
            "a minimum, raise a maximum or change the shares", file=model.source,
            item=item, field="share"))


def _check_reachability(model: Model, errs: list, case: str) -> None:
    g = model.graph
    reach = steam_reach(g)
    for n, u in model.table("user").items():
        if _on(u) and ("header", u.header) in g and ("header", u.header) not in reach:
            errs.append(ModelError(f"user on header '{u.header}' has no path from any "
                                   "boiler or steam import", file=model.source,
                                   item=f"{case}user '{n}'", field="header"))
