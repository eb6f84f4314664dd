"""Checks across items, run on the base model and on every case before any solve.

Each problem is a :class:`ModelError` naming the file, the item and the field; all are
collected and raised together as :class:`ModelErrors`.
"""

from __future__ import annotations

import math
from collections import defaultdict
from typing import NamedTuple


from .. import properties as props
from ..calc.pump import pump_work
from ..status import beyond
from ..units import T_H
from ..errors import ModelError, ModelErrors, PropertyRangeError
from ..graph import steam_reach
from .model import Model
from .schema import ITEM_LABELS, VENT_RANK

__all__ = ["validate_model", "swing_elements", "willans_efficiency", "willans_max_efficiency",
           "InputWarning", "input_warnings", "user_errors"]


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
    _check_pump_turbines(model, err)
    # -------------------------------------------------------------------- boilers
    for n, b in model.table("boiler").items():
        ok = need_header("boiler", n, "header", b.header)
        if b.feedwater not in supplies:
            err("boiler", n, "feedwater", f"water supply '{b.feedwater}' does not exist "
                f"(water supplies: {', '.join(supplies) or 'none'})")
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
        if ok and b.drum_pressure is not None:
            if b.drum_pressure < p(b.header):
                err("boiler", n, "drum_pressure", "the drum pressure is below the header "
                    "pressure: the steam flows from the drum through the superheater to "
                    "the header")
            elif not b.drum_pressure < props.P_CRIT:
                err("boiler", n, "drum_pressure", f"{b.drum_pressure / 1e5:.4g} bar(a) "
                    "is not below the critical pressure 220.64 bar(a): a drum holds "
                    "water and steam at saturation (IAPWS-IF97)")
        if b.mode == "fixed" and b.max_steam is not None and \
                beyond(b.steam, b.max_steam, above=True):     # not by a rounding
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
        if t.mode == "fixed_flow" and t.max_flow is not None and \
                beyond(t.flow, t.max_flow, above=True):
            err("turbine", n, "flow", "fixed flow is above max_flow")
        if a and b and t.willans_slope is not None and p(t.outlet) < p(t.inlet):
            _check_willans(err, model, n, t, p(t.inlet), p(t.outlet))
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
        if t.condenser_pressure is not None and \
                props.P_MIN < t.condenser_pressure < props.P_CRIT:
            _check_not_above_saturation(err, "extraction_turbine", n,
                                        t.condensate_temperature, t.condenser_pressure,
                                        "the condenser")
        if t.exhaust is None and t.condensate_return > 0 and not deaerators:
            # only a condensing exhaust returns condensate (a backpressure exhaust
            # goes to its header as steam)
            err("extraction_turbine", n, "condensate_return", "condensate is returned "
                "but the model has no deaerator")
    _check_section_willans(model, err)
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
                    f"water supply '{d.spray_supply}' does not exist (water supplies: "
                    f"{', '.join(supplies) or 'none'})")
            elif b and _on(s) and supplies[d.spray_supply].pressure <= p(s.outlet):
                ws_p = supplies[d.spray_supply].pressure
                err("letdown", n, "desuperheater.spray_supply",
                    f"spray water supply '{d.spray_supply}' at {ws_p / 1e5:.4g} bar(a) "
                    f"is not above the outlet header '{s.outlet}' at "
                    f"{p(s.outlet) / 1e5:.4g} bar(a): no spray can flow; raise the "
                    "supply pressure or feed the spray from another supply")
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
        if s.mode == "fixed_flow" and s.max_flow is not None and \
                beyond(s.flow, s.max_flow, above=True):
            err("letdown", n, "flow", "fixed flow is above max_flow")
    # ---------------------------------------------------------------- users, vents
    for n, u in model.table("user").items():
        need_header("user", n, "header", u.header)
        _user_checks(err, model, n, u)
    for n, v in model.table("vent").items():
        need_header("vent", n, "header", v.header)
    errs.extend(_price_errors(model, case))
    if errs:
        raise ModelErrors(errs)
    _check_degrees_of_freedom(model, errs, case)
    _check_reachability(model, errs, case)
    if errs:
        raise ModelErrors(errs)


def willans_max_efficiency(no_load: float, slope: float, eta_mg: float,
                           max_flow: float | None, dh_is: float) -> float:
    """The largest isentropic efficiency a Willans line implies over its range [-].

    The line m = m0 + k W gives the internal power W / eta_mg = (m - m0) / (k eta_mg),
    so the implied efficiency (m - m0) / (k eta_mg m dh_is) rises with the flow m: its
    largest value is at ``max_flow``, or 1 / (k eta_mg dh_is) without a maximum.

    Parameters
    ----------
    no_load : float
        Steam at zero output, m0 [kg/s]
    slope : float
        Extra steam per unit output, k [kg/J]
    eta_mg : float
        Mechanical (times generator) efficiency between internal power and output [-]
    max_flow : float or None
        Largest flow of the range [kg/s]
    dh_is : float
        Isentropic enthalpy drop of the expansion [J/kg]

    Examples
    --------
    2 t/h no-load, 3 t/MWh, 110 t/h at most: 36 MW from a 400 kJ/kg drop

    >>> round(willans_max_efficiency(2 / 3.6, 3e3 / 3.6e9, 1.0, 110 / 3.6, 400e3), 3)
    2.945
    """
    m = math.inf if max_flow is None or not math.isfinite(max_flow) else max_flow
    share = 1.0 if math.isinf(m) else max(0.0, (m - no_load) / m)
    return share / (slope * eta_mg * dh_is)


def isentropic_drop(p_in: float, h_in: float, p_out: float) -> float:
    """h_in - h(p_out, s(p_in, h_in)), the isentropic enthalpy drop [J/kg]."""
    return h_in - props.state_ps(p_out, props.state_ph(p_in, h_in).s).h


def _largest_drop(p_in: float, h_in: float, p_out: float) -> float | None:
    """Isentropic drop from (p_in, h_in) to p_out [J/kg]: at a given inlet pressure it
    grows with the inlet enthalpy, so from the hottest steam of the plant
    (:func:`_hottest_steam`) it bounds every real one from above; None outside
    IAPWS-IF97."""
    try:
        return isentropic_drop(p_in, h_in, p_out)
    except PropertyRangeError:
        return None


def _check_section_willans(model: Model, err) -> None:
    """The Willans line of an extraction turbine's section must not imply an
    isentropic efficiency above 1 anywhere in its range, even from the hottest steam
    the plant raises (docs/method.md, "extraction turbine")."""
    h_max = _hottest_steam(model)
    if h_max is None:
        return
    for n, t in model.table("extraction_turbine").items():
        if t.section_willans_no_load is None:
            continue
        hdr = model.headers
        ps = [hdr[t.inlet].pressure] + [hdr[e.header].pressure for e in t.extractions
                                        if e.header in hdr]
        if t.inlet not in hdr or len(ps) != len(t.extractions) + 1:
            continue                       # a missing header is reported already
        ps.append(t.condenser_pressure if t.exhaust is None
                  else hdr[t.exhaust].pressure if t.exhaust in hdr else None)
        if ps[-1] is None:
            continue
        eta_mg = t.mechanical_efficiency * (t.generator_efficiency
                                            if t.drive == "generator" else 1.0)
        for j, (m0, k) in enumerate(zip(t.section_willans_no_load,
                                        t.section_willans_slope)):
            top = t.max_flow
            if j == len(t.extractions) and t.max_exhaust_flow is not None:
                top = t.max_exhaust_flow if top is None else min(top, t.max_exhaust_flow)
            drop = _largest_drop(ps[j], h_max, ps[j + 1])
            if drop is None or not drop > 0:
                continue
            eta = willans_max_efficiency(m0, k, eta_mg, top, drop)
            if eta > 1.0:
                at = ("without a maximum flow" if top is None
                      else f"at its maximum {top * T_H:.4g} t/h")
                err("extraction_turbine", n, "section_willans_slope", f"section {j + 1}: "
                    f"the Willans line implies an isentropic efficiency of {eta:.3g} "
                    f"{at}, above 1 even from the hottest steam of the plant "
                    f"({h_max / 1e3:.0f} kJ/kg): raise the slope or the no-load flow "
                    "(the maker's data)")


def _check_pump_turbines(model: Model, err) -> None:
    """A water supply's ``pump_turbine`` names a mechanical-drive turbine in mode
    'pump' (or tripped, or out of service: the pump then runs on its motor), and every
    turbine in mode 'pump' drives exactly one supply's pump."""
    turbines = model.table("turbine")
    driven: dict[str, list[str]] = defaultdict(list)
    for n, ws in model.table("water_supply").items():
        tn = ws.pump_turbine
        if tn is None:
            continue
        t = turbines.get(tn)
        if t is None:
            known = ", ".join(turbines) or "none"
            err("water_supply", n, "pump_turbine", f"turbine '{tn}' does not exist "
                f"(turbines: {known}); a pump is driven by a [[turbine]]")
            continue
        driven[tn].append(n)
        if t.drive != "mechanical":
            err("water_supply", n, "pump_turbine", f"turbine '{tn}' drives a "
                "generator: a pump needs a turbine with drive = 'mechanical'")
        elif t.mode not in ("pump", "tripped"):
            err("water_supply", n, "pump_turbine", f"turbine '{tn}' is in mode "
                f"'{t.mode}': a turbine driving a pump takes mode = 'pump' (its power "
                "follows the pumped flow), or 'tripped'")
    for tn, names in driven.items():
        if len(names) > 1:
            err("turbine", tn, "mode", "drives the pumps of water supplies "
                f"{', '.join(repr(x) for x in names)}: one turbine drives one pump")
    for tn, t in turbines.items():
        if t.mode == "pump" and tn not in driven:
            err("turbine", tn, "mode", "mode 'pump' but no water supply names this "
                "turbine in its 'pump_turbine'")
def _user_checks(err, model: Model, n: str, u) -> None:
    """The checks of one user beyond its own fields (its header is checked apart)."""
    if u.condensate_return > 0 and not model.table("deaerator"):
        err("user", n, "condensate_return", "condensate is returned but the model "
            "has no deaerator")
    _check_liquid_temperature(err, "user", n, u.condensate_temperature)
    if u.header in model.headers:
        _check_not_above_saturation(err, "user", n, u.condensate_temperature,
                                    model.headers[u.header].pressure,
                                    f"its header '{u.header}'")


def user_errors(model: Model, name: str) -> list[tuple[str | None, str]]:
    """(field, message) of every problem of user ``name`` of ``model`` that
    :func:`validate_model` would report (an added user of a study is checked as a user
    of the model file is)."""
    found: list[tuple[str | None, str]] = []
    u = model.table("user")[name]
    if u.header not in model.headers:
        found.append(("header", f"header '{u.header}' does not exist (headers: "
                      f"{', '.join(model.headers) or 'none'})"))
    _user_checks(lambda table, n, field, msg: found.append((field, msg)), model, name, u)
    return found


def _check_not_above_saturation(err, table, name, t, p, where: str) -> None:
    """Returned condensate is liquid where it leaves: not hotter than saturation at
    the pressure it condenses at (a header, the condenser)."""
    if t is None or not (props.T_MIN < t < props.T_CRIT - 1):
        return          # reported by _check_liquid_temperature
    try:
        ts = props.t_sat(p)
    except PropertyRangeError:
        return          # the pressure is reported where it is read
    if beyond(t, ts, above=True):
        err(table, name, "condensate_temperature", f"{t - 273.15:.6g} degC is above "
            f"saturation at {where} ({ts - 273.15:.1f} degC at {p / 1e5:.4g} bar(a)): "
            "condensate cannot be hotter than the steam it condenses from")


def willans_efficiency(t, p_in: float, p_out: float, h_in: float,
                       m: float) -> float:
    """Isentropic efficiency that turbine ``t``'s Willans line implies at flow ``m``
    from inlet enthalpy ``h_in`` (the expansion of docs/method.md, "Equipment
    equations"): output (m - m0) / k, internal power output / (eta_mech eta_gen),
    divided by m (h_in - h_is) [-]; ``m`` may be ``inf`` (the line's limit 1 / (k eta
    dh_is))."""
    eta_mg = t.mechanical_efficiency * (t.generator_efficiency
                                        if t.drive == "generator" else 1.0)
    return willans_max_efficiency(t.willans_no_load, t.willans_slope, eta_mg, m,
                                  isentropic_drop(p_in, h_in, p_out))


def _hottest_steam(model: Model) -> float | None:
    """The largest enthalpy of steam entering the plant (boilers and imports) [J/kg]:
    no header's steam can be hotter (throttling, mixing, expansion and heat loss never
    add enthalpy)."""
    hs = []
    for b in model.table("boiler").values():
        if b.header in model.headers:
            hs.append((model.headers[b.header].pressure, b.steam_temperature))
    for t in model.table("steam_transfer").values():
        if t.direction == "import" and t.header in model.headers:
            hs.append((model.headers[t.header].pressure, t.steam_temperature))
    out = []
    for p, t in hs:
        try:
            out.append(props.h_pt(p, t))
        except PropertyRangeError:
            pass        # reported by _check_superheated
    return max(out) if out else None


def _check_willans(err, model: Model, name: str, t, p_in: float, p_out: float) -> None:
    """A Willans line may not imply an isentropic efficiency above 1 anywhere in the
    turbine's range. The efficiency rises with the flow, so it is checked at the top of
    the range (max_flow, the fixed flow or power, or the line's limit), and from the
    hottest inlet steam the plant can have, where it is lowest: a line refused here
    implies more than 1 in every case."""
    h_max = _hottest_steam(model)
    if h_max is None:
        return
    if t.max_flow is not None:
        m, where = t.max_flow, f"at max_flow {t.max_flow * T_H:.4g} t/h"
    elif t.mode == "fixed_flow" and t.flow:
        m, where = t.flow, f"at the fixed flow {t.flow * T_H:.4g} t/h"
    elif t.mode == "fixed_power" and t.power is not None:
        m = t.willans_no_load + t.willans_slope * t.power
        where = f"at the fixed power ({m * T_H:.4g} t/h)"
    else:
        m, where = math.inf, "at high flow (no max_flow given)"
    try:
        eta = willans_efficiency(t, p_in, p_out, h_max, m)
    except PropertyRangeError:
        return
    if beyond(eta, 1.0, above=True):
        err("turbine", name, "willans_slope", f"the Willans line implies an isentropic "
            f"efficiency of {eta:.3g} {where}, even from the hottest steam of the plant: "
            "more power than an ideal expansion gives; check willans_no_load, "
            "willans_slope and their units (e.g. t/MWh)")
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


# ------------------------------------------------------------------ input warnings
class InputWarning(NamedTuple):
    """Input that is possible but probably not meant: reported as a ``warn`` finding
    and by ``steamnet check``, never refused (docs/checks/index.md, "Checks of the
    input")."""

    item: str
    type: str
    field: str
    check: str
    value: float
    limit: float
    unit: str
    message: str
    source: str
    advice: str

    def line(self, file: str, case: str = "") -> str:
        """One line naming the file, the item and the field, like an error's."""
        where = f"case '{case}': " if case else ""
        return (f"{file}: {where}{ITEM_LABELS[self.type]} '{self.item}': field "
                f"'{self.field}': {self.message}")


def input_warnings(model: Model) -> list[InputWarning]:
    """The warnings of ``model``'s input: a condenser at or above atmospheric pressure;
    a spray water supply whose margin over a station's outlet pressure is below that
    station's minimum spray pressure difference."""
    out: list[InputWarning] = []
    p_atm = model.site.atmospheric_pressure
    for n, t in model.table("extraction_turbine").items():
        pc = t.condenser_pressure
        if pc is not None and not beyond(pc, p_atm, above=False):
            out.append(InputWarning(
                n, "extraction_turbine", "condenser_pressure",
                "condenser_pressure", pc / 1e5, p_atm / 1e5, "bar(a)",
                f"condenser at {pc / 1e5:.4g} bar(a), not below the atmospheric "
                f"{p_atm / 1e5:.4g} bar(a): a condenser runs under vacuum",
                "common practice, no source",
                "check the condenser pressure and its unit (bar(a), not bar(g)); an "
                "exhaust at or above atmospheric pressure is a backpressure exhaust"))
    supplies, headers = model.table("water_supply"), model.headers
    stations = model.stations
    for n, s in model.table("letdown").items():
        d = s.desuperheater
        if d is None or d.spray_supply not in supplies or s.outlet not in headers \
                or n not in stations:
            continue
        if d.atomisation in ("steam_assisted", "other"):
            continue    # the maker's margin applies (check spray_water_pressure)
        margin = supplies[d.spray_supply].pressure - headers[s.outlet].pressure
        least = stations[n].limits.spray_pressure_margin_fail
        if 0 < margin and beyond(margin, least, above=False):
            out.append(InputWarning(
                n, "letdown", "desuperheater.spray_supply",
                "spray_supply_margin", margin / 1e5, least / 1e5, "bar",
                f"spray water supply '{d.spray_supply}' is only {margin / 1e5:.3g} bar "
                f"above the outlet header '{s.outlet}', below the station's minimum "
                f"spray pressure difference {least / 1e5:.3g} bar",
                stations[n].limits.source("spray_pressure_margin_fail"),
                "a mechanical nozzle atomises poorly with so little pressure: raise "
                "the supply pressure, or give the maker's margin (station limit "
                "spray_pressure_margin_fail) and atomisation"))
    return out
