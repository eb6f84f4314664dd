"""Safety checks of a let-down station: relief cover of a failed-open let-down, valve
noise and spray valve cavitation.

Same conventions as :mod:`steamnet.stations.checks`: each check returns one
:class:`CheckRow`; missing data give ``not_assessed`` naming the model-file field;
a case in which the station passes no steam gives ``not_applicable``. The pages
``docs/checks/relief_cover.md``, ``relief_cover_rated.md``, ``letdown_valve_noise.md``,
``spray_valve_noise.md`` and ``spray_valve_cavitation.md`` give the formulas.

Failure assumptions of the relief cover (docs/checks/relief_cover.md): the let-down valve
stuck fully open passes, at its rated Kv, what IEC 60534-2-1 gives from the upstream
header's state to the lowest relieving pressure of the downstream header's safety
valves (the most flow); the spray adds its maximum when its valve can fail open; only
the stated minimum of the credited outflows is deducted. Each safety valve's capacity is
taken at its own relieving pressure and at the temperature of the let-down's discharge
there (isenthalpic throttling, mixed with the spray).

Warnings
--------
Relief systems protect people. These checks screen a station for a study; the certified
capacities of the relief valves, the makers' data, the pressure vessel, piping and
relief-device codes in force at the site and a licensed engineer govern.

References
----------
.. [1] IEC 60534-2-1:2011 (valve flow), IEC 60534-8-3:2010 and IEC 60534-8-4:2015
   (valve noise), through :mod:`steamnet.calc.relief` and :mod:`steamnet.calc.noise`.
.. [2] API Standard 520 Part I (steam relief capacity from the orifice).
.. [3] IAPWS R7-97(2012) (all steam and water states).
"""

from __future__ import annotations

from dataclasses import replace
from functools import lru_cache

from .. import properties as props
from ..calc.noise import PipeWall, STEEL, steam_valve_noise, water_valve_noise
from ..calc.relief import relieving_pressure, steam_relief_capacity, steam_valve_flow
from ..calc.valve import size_steam_valve, size_water_valve
from ..errors import ModelError
from ._context import (Ctx, limit_source, needs_row, point_check, row, water_enthalpy,
                       water_state)
from ..units import T_H
from ..model.stations import StationData, StationPoint
from .rows import CheckRow, Status, grade_high

__all__ = ["check_relief_cover", "check_relief_cover_rated", "check_letdown_noise",
           "check_spray_noise", "check_spray_cavitation", "SAFETY_POINT_CHECKS"]

_CAVITATION_SOURCE = "IEC 60534-8-4 (xFz), IEC 60534-2-1 (choked liquid flow)"


# ---------------------------------------------------------------- relief cover
def _relief_temperature(p_rel: float, h_mix: float) -> float:
    """Temperature of the discharge at the relieving pressure [K]; saturation when it
    is wet (the steam equation is for dry steam)."""
    st = props.state_ph(p_rel, h_mix)
    return props.t_sat(p_rel) if st.is_wet or st.phase == "liquid" else st.t


def _capacity(dev, p_rel: float, h_mix: float) -> tuple[float, str]:
    """(capacity [kg/s], basis) of one safety valve at its relieving pressure."""
    if dev.capacity is not None:
        return dev.capacity, f"'{dev.name}' rated {dev.capacity * T_H:.4g} t/h"
    t = _relief_temperature(p_rel, h_mix)
    cap = steam_relief_capacity(dev.area, p_rel, t, kd=dev.kd)
    what = f"orifice {dev.orifice}" if dev.orifice else "orifice"
    return cap.flow, (f"'{dev.name}' {what} {cap.flow * T_H:.4g} t/h ({cap.basis}, "
                      f"T {t - 273.15:.0f} degC)")


def _relief_needs(data: StationData) -> list[str]:
    """The data the relief cover lacks, naming the model-file fields."""
    r, valve = data.relief, data.valve
    needs = []
    if r is None or not r.devices:
        header = r.header if r is not None else "outlet"
        needs.append(f"the relief valves of header '{header}' "
                     "([[header.relief_valves]])")
    else:
        for d in r.devices:
            if d.capacity is None and d.area is None:
                needs.append(f"relief valve '{d.name}' capacity, or its orifice or "
                             "orifice_area")
            elif d.capacity is None and d.kd is None:
                needs.append(f"relief valve '{d.name}' discharge_coefficient")
    if valve is None or valve.rated_kv is None:
        needs.append("the let-down valve's rated Kv (valve.rated_coefficient)")
    if valve is None or valve.xt is None:
        needs.append("the let-down valve's xT (valve.xt)")
    if (r is not None and r.spray_fails_open and data.desuperheater is not None
            and data.desuperheater.max_spray is None):
        needs.append("the desuperheater's max_spray (spray_fails = 'open')")
    return needs


def _relief_row(data: StationData, case: str, p_in: float, state_in: props.State,
                h_water: float | None, check: str, rated: bool = False) -> CheckRow:
    """Relief cover of a failed-open let-down from one upstream state."""
    lim, r, valve = data.limits, data.relief, data.valve
    needs = _relief_needs(data)
    if needs:
        return needs_row(data, case, check, "%", needs,
                         source=lim.source("relief_cover_fail"))
    if state_in.phase != "vapour":
        return needs_row(data, case, check, "%", ["superheated inlet steam"],
                         source=lim.source("relief_cover_fail"))
    p_rels = [relieving_pressure(d.p_set, d.overpressure, r.p_atm) for d in r.devices]
    p_rel = min(p_rels)
    if p_rel >= p_in:
        return row(data, case, check, "%", Status.OK, value=0.0,
                   limit=100 * lim.relief_cover_warn,
                   source=lim.source("relief_cover_warn"),
                   basis=f"the lowest relieving pressure {p_rel / 1e5:.4g} bar(a) is "
                         f"not below the upstream {p_in / 1e5:.4g} bar(a)",
                   advice="the let-down cannot raise the header to its relieving "
                          "pressure")
    full = valve.diameter is not None and valve.fl is not None and valve.fd is not None
    ds = data.desuperheater
    spray = ds.max_spray if (ds is not None and r.spray_fails_open) else 0.0
    try:
        flow = steam_valve_flow(valve.rated_kv, p_in, p_rel, state_in, fl=valve.fl,
                                xt=valve.xt, fd=valve.fd if full else None,
                                d_valve=valve.diameter if full else None)
        h_w = h_water if h_water is not None else state_in.h
        h_mix = (flow.flow * state_in.h + spray * h_w) / (flow.flow + spray)
        caps = [_capacity(d, p, h_mix) for d, p in zip(r.devices, p_rels)]
    except ModelError as exc:
        return needs_row(data, case, check, "%", ["a state within the equations' range"],
                         source=lim.source("relief_cover_fail"),
                         extra=f" ({exc.message})")
    credit = sum(f for _, f in r.credits)
    load = max(flow.flow + spray - credit, 0.0)
    capacity = sum(c for c, _ in caps)
    share = load / capacity
    status, limit = grade_high(share, lim.relief_cover_warn, lim.relief_cover_fail)
    where = "at the rated maximum upstream state: " if rated else ""
    parts = [f"{where}valve failed open at rated Kv {valve.rated_kv:.4g} m3/h: "
             f"{flow.flow * T_H:.4g} t/h ({'choked' if flow.choked else 'not choked'}) "
             f"from {p_in / 1e5:.4g} bar(a), {state_in.t - 273.15:.0f} degC to "
             f"{p_rel / 1e5:.4g} bar(a)"]
    if spray:
        parts.append(f"+ maximum spray {spray * T_H:.3g} t/h (spray valve fails open)")
    elif ds is not None:
        parts.append("spray valve fails closed")
    for what, f in r.credits:
        parts.append(f"- credited {what} {f * T_H:.3g} t/h")
    parts.append(f"= load {load * T_H:.4g} t/h; relieving capacity of header "
                 f"'{r.header}' {capacity * T_H:.4g} t/h: " + "; ".join(b for _, b in caps))
    advice = {
        Status.FAIL: f"relief load exceeds the relieving capacity of header "
                     f"'{r.header}': a failed-open let-down overpressures it; add relief "
                     "capacity, limit the let-down valve's Kv (travel stop, smaller "
                     "trim) or credit only outflows that cannot stop",
        Status.WARN: "little margin between the relief load and the relieving "
                     "capacity; confirm the certified capacities with the makers",
        Status.OK: "the downstream relief valves cover a failed-open let-down",
    }[status]
    return row(data, case, check, "%", status, value=100 * share, limit=100 * limit,
               basis="; ".join(parts), advice=advice,
               source=limit_source(lim, status, "relief_cover_warn", "relief_cover_fail"))


@point_check("relief_cover", "%")
def check_relief_cover(c: Ctx) -> CheckRow:
    """Relief load of the let-down valve failed open, as a share of the downstream
    header's relieving capacity, from the case's upstream state."""
    pt = c.point
    return _relief_row(c.data, pt.case, pt.p_in, props.state_ph(pt.p_in, pt.h_in),
                       water_enthalpy(pt), c.check)


def check_relief_cover_rated(data: StationData, points: list[StationPoint], *,
                             case: str) -> CheckRow:
    """Relief cover at the station's rated maximum upstream state (case-independent).

    Parameters
    ----------
    data : StationData
        Station data [-]
    points : list of StationPoint
        The station's points; the spray water enthalpy is taken from the first with
        one (the steam's own enthalpy otherwise) [-]
    case : str
        Case name of the row: that of the rows across cases [-]

    Returns
    -------
    row : CheckRow
        Check ``relief_cover_rated``; value and limit in % [%]
    """
    check = "relief_cover_rated"
    r = data.relief
    needs = [f"the station's {w} (letdown.{f})" for w, f, v in (
        ("rated maximum upstream pressure", "max_inlet_pressure",
         r.max_inlet_pressure if r else None),
        ("rated maximum upstream temperature", "max_inlet_temperature",
         r.max_inlet_temperature if r else None)) if v is None]
    if needs:
        return needs_row(data, case, check, "%", needs,
                         source=data.limits.source("relief_cover_fail"))
    h_w = next((h for h in map(water_enthalpy, points) if h is not None), None)
    state = props.state_pt(r.max_inlet_pressure, r.max_inlet_temperature)
    return _relief_row(data, case, r.max_inlet_pressure, state, h_w, check,
                       rated=True)


# ----------------------------------------------------------------------- noise
def _noise_row(c: Ctx, what: str, noise) -> CheckRow:
    lim = c.lim
    status, limit = grade_high(noise.level, lim.noise_warn, lim.noise_fail)
    advice = {
        Status.FAIL: f"{what} noise at the level where acoustic fatigue of the pipe "
                     "becomes a concern: have it reviewed by a specialist; a low-noise "
                     "trim, a diffuser or staged pressure reduction",
        Status.WARN: f"{what} louder than the usual 85 dB(A) at 1 m: low-noise trim, "
                     "silencer, acoustic insulation or a heavier pipe wall; compare the "
                     "maker's prediction",
        Status.OK: f"{what} noise within the usual specification",
    }[status]
    return c.row(status, value=noise.level, limit=limit, basis=noise.basis,
                 advice=advice, source=limit_source(lim, status, "noise_warn", "noise_fail"))


def _pipe(valve, diameter, field: str) -> tuple[PipeWall | None, list[str], str]:
    """(pipe, missing data, material note) of the pipe after a valve."""
    needs = []
    if diameter is None:
        needs.append(f"the pipe diameter after the valve ({field}.pipe_diameter)")
    if valve.pipe_wall is None:
        needs.append(f"the pipe wall thickness after the valve ({field}.pipe_wall)")
    if needs:
        return None, needs, ""
    kw = {k: v for k, v in (("density", valve.pipe_density),
                            ("sound_speed", valve.pipe_sound_speed)) if v is not None}
    note = "pipe material given" if len(kw) == 2 else f"pipe material default {STEEL}"
    return PipeWall(diameter, valve.pipe_wall, **kw), [], note


def _valve_needs(valve, field: str, what: str, keys) -> list[str]:
    if valve is None:
        return [f"the {what}'s data ({field})"]
    names = {"xt": "xT", "fl": "FL", "fd": "Fd", "diameter": "size"}
    return [f"the {what}'s {names[k]} ({field}.{k})" for k in keys
            if getattr(valve, k) is None]


@point_check("letdown_valve_noise", "dB(A)")
def check_letdown_noise(c: Ctx) -> CheckRow:
    """A-weighted level 1 m downstream of the let-down valve and 1 m from the pipe,
    IEC 60534-8-3, at the Kv the case's flow needs."""
    valve, pt = c.data.valve, c.point
    source = c.lim.source("noise_warn")
    needs = _valve_needs(valve, "valve", "let-down valve", ("xt", "fl", "fd", "diameter"))
    pipe = None
    if valve is not None:
        d_pipe = valve.pipe_diameter or c.data.outlet_pipe_diameter
        pipe, more, note = _pipe(valve, d_pipe, "valve")
        needs += more
    if needs:
        return c.needs(needs, source=source)
    try:
        st = props.state_ph(pt.p_in, pt.h_in)
        sizing = size_steam_valve(pt.p_in, pt.p_out, pt.m_steam, st, fl=valve.fl,
                                  xt=valve.xt, fd=valve.fd, d_valve=valve.diameter)
        noise = steam_valve_noise(pt.m_steam, pt.p_in, pt.p_out, st, kv=sizing.kv,
                                  fl=valve.fl, fd=valve.fd, d_valve=valve.diameter,
                                  pipe=pipe)
    except ModelError as exc:
        return c.needs(["superheated inlet steam"], source=source,
                       extra=f" ({exc.message})")
    noise = replace(noise, basis=f"{noise.basis}; {note}")
    return _noise_row(c, "let-down valve", noise)


def _spray_noise(c: Ctx):
    """(noise or None, missing data) of the spray valve at the point (worked out once
    for the noise and the cavitation rows)."""
    return _spray_noise_of(c.data, c.point)


@lru_cache(maxsize=16)
def _spray_noise_of(data: StationData, pt: StationPoint):
    valve = data.spray_valve
    needs = _valve_needs(valve, "spray_valve", "spray valve", ("fl", "fd", "diameter"))
    if pt.p_water is None:
        needs.append("the spray water supply pressure")
    elif pt.t_water is None and pt.h_water is None:
        needs.append("the spray water temperature")
    pipe = None
    if valve is not None:
        pipe, more, note = _pipe(valve, valve.pipe_diameter or valve.diameter,
                                 "spray_valve")
        needs += more
    if needs or pt.p_water <= pt.p_out:
        return None, needs
    ws = water_state(pt)
    try:
        sizing = size_water_valve(pt.p_water, pt.p_out, pt.m_spray, ws, fl=valve.fl,
                                  fd=valve.fd, d_valve=valve.diameter)
        noise = water_valve_noise(pt.m_spray, pt.p_water, pt.p_out, ws, kv=sizing.kv,
                                  fl=valve.fl, fd=valve.fd, d_valve=valve.diameter,
                                  pipe=pipe)
    except ModelError as exc:
        return None, [f"a spray water state the liquid equations cover ({exc.message})"]
    return replace(noise, basis=f"{noise.basis}; {note}; dP = p_water - p_out, nozzle "
                                "drop not deducted"), []


@point_check("spray_valve_noise", "dB(A)", spraying=True)
def check_spray_noise(c: Ctx) -> CheckRow:
    """A-weighted level 1 m downstream of the spray water valve and 1 m from the pipe,
    IEC 60534-8-4, cavitation included, at the Kv the case's spray needs."""
    noise, needs = _spray_noise(c)
    if noise is None:
        return c.needs(needs or ["a spray water supply pressure above the steam "
                                 "pressure"], source=c.lim.source("noise_warn"))
    return _noise_row(c, "spray valve", noise)


@point_check("spray_valve_cavitation", "-", spraying=True)
def check_spray_cavitation(c: Ctx) -> CheckRow:
    """Pressure ratio xF = dP / (p1 - pv) of the spray valve against the ratio xFz at
    which cavitation begins (IEC 60534-8-4); choked flow (IEC 60534-2-1) noted."""
    noise, needs = _spray_noise(c)
    if noise is None:
        return c.needs(needs or ["a spray water supply pressure above the steam "
                                 "pressure"], source=_CAVITATION_SOURCE)
    if noise.choked:
        status, advice = Status.WARN, (
            "spray valve flow is choked: it cavitates or flashes (erosion, noise, "
            "capacity limited); take the pressure drop in stages, use an anti-cavitation "
            "trim or lower the supply pressure")
    elif noise.cavitating:
        status, advice = Status.WARN, (
            "spray valve cavitates: erosion of the trim and noise; consider an "
            "anti-cavitation trim or a restriction orifice to share the drop")
    else:
        status, advice = Status.OK, "no cavitation expected in the spray valve"
    pt = c.point
    dp = pt.p_water - pt.p_out
    basis = (f"{noise.basis}; dP {dp / 1e5:.4g} bar against the choked-flow limit "
             f"FL^2 (p1 - FF pv) = {noise.dp_choked / 1e5:.4g} bar "
             f"({'choked' if noise.choked else 'not choked'})")
    return c.row(status, value=noise.x_f, limit=noise.x_fz, basis=basis,
                 source=_CAVITATION_SOURCE, advice=advice)


#: The safety checks of a single point, in report order.
SAFETY_POINT_CHECKS = (check_relief_cover, check_letdown_noise, check_spray_noise,
                       check_spray_cavitation)
