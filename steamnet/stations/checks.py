"""Checks of a let-down station with its desuperheater, one function per check.

Each check takes the station's data and one operating point (or, for the control gain,
all of the station's points) and returns :class:`CheckRow` objects; a broken limit is a
``fail`` or ``warn`` row, never an exception. Missing data give ``not_assessed`` with
the data needed; a station without desuperheater gives ``not_applicable`` for the spray
checks, and so does every check of a case in which the station passes no steam.

Pressure basis used throughout: the steam pressure at the spray nozzle is the outlet
header pressure ``p_out`` (the pipe between valve, desuperheater and header is not
modelled); the spray water valve is sized across ``p_water - p_out`` with the whole
difference taken by the valve, i.e. the nozzle's own pressure drop is not deducted, so
the required spray valve Kv is a lower bound.

Warnings
--------
Unevaporated spray causes water hammer, thermal shock and erosion. These checks support
a study; the desuperheater and valve makers' data, the site's codes and licensed
engineering practice govern.

References
----------
.. [1] docs/checks/index.md (checks, default limits, their sources).
.. [2] IEC 60534-2-1:2011, sizing equations for fluid flow under installed conditions.
.. [3] IAPWS R7-97(2012), Revised Release on IF97 (all steam and water states).
"""

from __future__ import annotations

from dataclasses import replace
from typing import Iterable

from .. import properties as props
from ..calc.desuperheater import evaporation_distance, mixed_enthalpy, spray_water_flow
from ..calc.valve import ValveSizing, size_steam_valve, size_water_valve, valve_travel
from ..errors import InternalError, ModelError
from ..units import T_H
from ..model.stations import StationData, StationLimits, StationPoint, ValveData
from ._context import (Ctx, control_gains, gain_inputs, limit_source, needs_row, outlet,
                       outlet_velocity, point_check, row, water_enthalpy, water_state)
from ..status import beyond
from .rows import CheckRow, Status, grade_high, grade_low, worst
from .safety import SAFETY_POINT_CHECKS, check_relief_cover_rated

__all__ = [
    "CheckRow", "Status", "ALL_CASES", "POINT_CHECKS", "check_spray_capacity",
    "check_approach_to_saturation", "check_steam_turndown", "check_spray_turndown",
    "check_letdown_valve", "check_spray_valve", "check_spray_water_pressure",
    "check_downstream_velocity", "check_sensor_distance", "check_gain_spread",
    "check_point", "check_across_cases",
]

#: Case name of the rows that compare a station's points across cases.
ALL_CASES = "all cases"
MAKERS_DATA = "maker's data"
_SRC = StationLimits.LIMIT_SOURCES


# ------------------------------------------------------------------ single point
@point_check("spray_capacity", "%", spray=True)
def check_spray_capacity(c: Ctx) -> CheckRow:
    """Required spray as a share of the desuperheater's maximum spray flow."""
    source = c.lim.source("spray_capacity_fail")
    if c.ds.max_spray is None:
        return c.needs(["the desuperheater's maximum spray flow"], source=source)
    share = c.point.m_spray / c.ds.max_spray
    status, limit = grade_high(share, c.lim.spray_capacity_warn,
                               c.lim.spray_capacity_fail)
    advice = {
        Status.FAIL: "required spray exceeds the maximum spray flow: the outlet "
                     "setpoint cannot be held; check a larger nozzle or a lower "
                     "steam flow",
        Status.WARN: "little spray capacity left for upsets; confirm the nozzle "
                     "rating with the maker",
        Status.OK: "spray within the desuperheater's capacity",
    }[status]
    if share > 1:
        advice += "; " + _at_max_spray(c)
    source = limit_source(c.lim, status, "spray_capacity_warn", "spray_capacity_fail")
    return c.row(status, value=100 * share, limit=100 * limit, source=source,
                 advice=advice, basis=f"spray {c.point.m_spray * T_H:.3g} t/h of "
                                      f"maximum {c.ds.max_spray * T_H:.3g} t/h")


def _at_max_spray(c: Ctx) -> str:
    """What the outlet, and the header it feeds, reach with the spray at its maximum
    (docs/checks/spray_capacity.md): the desuperheater's energy balance with the
    maximum spray, and the header's mixing balance with this station's outlet replaced
    by that one, its other inflows and its heat loss held."""
    pt, m_max = c.point, c.ds.max_spray
    h_w = water_enthalpy(pt)
    if h_w is None:
        return "the spray water's state is not known, so the outlet at the maximum " \
               "spray is not given"
    h_max = mixed_enthalpy([pt.m_steam, m_max], [pt.h_in, h_w])
    t_max = props.state_ph(pt.p_out, h_max).t
    text = (f"at the maximum spray {m_max * T_H:.3g} t/h the outlet reaches "
            f"{t_max - 273.15:.1f} degC (setpoint {outlet(pt).t - 273.15:.1f} degC)")
    if None in (pt.header_inflow, pt.header_h, pt.header_heat_loss, pt.out_header):
        return text
    # the header's other inflows: its inflow less this station's outlet, and their
    # energy, sum m h = inflow h_header + heat loss less the station's outlet
    m_st, m_st_max = pt.m_steam + pt.m_spray, pt.m_steam + m_max
    m_other = pt.header_inflow - m_st
    e_other = pt.header_inflow * pt.header_h + pt.header_heat_loss - m_st * pt.h_out
    if m_other > 1e-9 * pt.header_inflow:
        h_hdr = mixed_enthalpy([m_other, m_st_max], [e_other / m_other, h_max],
                               pt.header_heat_loss)
    else:
        h_hdr = mixed_enthalpy([m_st_max], [h_max], pt.header_heat_loss)
    t_hdr = props.state_ph(pt.p_out, h_hdr).t
    return (text + f" and header {pt.out_header} {t_hdr - 273.15:.1f} degC (its other "
            "inflows and heat loss held)")


@point_check("approach_to_saturation", "K")
def check_approach_to_saturation(c: Ctx) -> CheckRow:
    """Outlet temperature minus saturation temperature at the outlet pressure.

    Applies to every station, with or without desuperheater.
    """
    out = outlet(c.point)
    t_sat = props.t_sat(c.point.p_out)
    approach = 0.0 if out.is_wet else out.t - t_sat
    status, limit = grade_low(approach, c.lim.approach_warn, c.lim.approach_fail)
    if out.is_wet:
        advice = (f"outlet steam is wet (quality {out.x:.3f}): water reaches the "
                  "header; raise the outlet setpoint")
    else:
        advice = {
            Status.FAIL: "outlet too close to saturation: spray may not evaporate; "
                         "raise the outlet setpoint",
            Status.WARN: "outlet close to saturation; a higher setpoint gives more "
                         "margin for evaporation",
            Status.OK: "outlet far enough above saturation",
        }[status]
    if not c.point.setpoint_reachable:
        advice += "; the steam arrives colder than the setpoint, no spray is possible"
    return c.row(status, value=approach, limit=limit, source=limit_source(
                     c.lim, status, "approach_warn", "approach_fail"),
                 advice=advice,
                 basis=f"T_out {out.t - 273.15:.2f} degC, Tsat {t_sat - 273.15:.2f} "
                       f"degC at {c.point.p_out / 1e5:.4g} bar(a), IAPWS-IF97")


@point_check("steam_turndown", "t/h", spray=True)
def check_steam_turndown(c: Ctx) -> CheckRow:
    """Steam flow against the desuperheater's rated minimum and maximum.

    With one bound missing, a flow beyond the given bound still fails; otherwise the
    row is not assessed.
    """
    lo, hi = c.ds.rated_min_steam, c.ds.rated_max_steam
    m = c.point.m_steam
    value = m * T_H
    basis = f"steam {value:.3g} t/h"
    if lo is not None and beyond(m, lo, above=False):
        return c.row(Status.FAIL, value=value, limit=lo * T_H, basis=basis,
                     source=MAKERS_DATA,
                     advice="steam flow below the desuperheater's rated minimum: poor "
                            "atomisation and mixing; consider a smaller parallel "
                            "station")
    if hi is not None and beyond(m, hi, above=True):
        return c.row(Status.FAIL, value=value, limit=hi * T_H, basis=basis,
                     source=MAKERS_DATA,
                     advice="steam flow above the desuperheater's rated maximum; "
                            "confirm the rating with the maker")
    needs = [f"the desuperheater's rated {w} steam flow"
             for w, v in (("minimum", lo), ("maximum", hi)) if v is None]
    if needs:
        return c.needs(needs, source=MAKERS_DATA, value=value, basis=basis)
    nearer = lo if m / lo < hi / m else hi
    return c.row(Status.OK, value=value, limit=nearer * T_H, source=MAKERS_DATA,
                 basis=basis + f" within rated {lo * T_H:.3g} to {hi * T_H:.3g} t/h",
                 advice="steam flow within the rated range")


@point_check("spray_turndown", "t/h", spraying=True)
def check_spray_turndown(c: Ctx) -> CheckRow:
    """Spray flow against the nozzle's minimum controllable spray."""
    lo = c.ds.min_spray
    value = c.point.m_spray * T_H
    if lo is None:
        return c.needs(["the nozzle's minimum controllable spray flow"],
                       source=MAKERS_DATA, value=value)
    if beyond(c.point.m_spray, lo, above=False):
        return c.row(Status.FAIL, value=value, limit=lo * T_H, source=MAKERS_DATA,
                     basis="spray flow",
                     advice="spray below the nozzle's minimum controllable flow: poor "
                            "atomisation and unsteady control; consider a smaller or "
                            "a variable-area nozzle")
    return c.row(Status.OK, value=value, limit=lo * T_H, source=MAKERS_DATA,
                 basis="spray flow",
                 advice="spray above the nozzle's minimum controllable flow")


def _size_basis(sizing: ValveSizing, valve: ValveData, full: bool) -> ValveSizing:
    """The sizing, its basis saying what was used: a valve size given without the FL
    and Fd that the valve Reynolds number needs is not used, and the basis says so
    (rather than "no diameters given")."""
    if full or valve.diameter is None:
        return sizing
    missing = " and ".join(n for n, v in (("FL", valve.fl), ("Fd", valve.fd)) if v is None)
    note = (f"valve size {valve.diameter * 1e3:.4g} mm given without {missing}: size not "
            "used, turbulent flow assumed, no piping geometry factor")
    return replace(sizing, notes=tuple(note if n.startswith("no diameters given") else n
                                       for n in sizing.notes))


def _travel_row(c: Ctx, what: str, valve: ValveData, sizing: ValveSizing,
                extra_basis: str) -> CheckRow:
    """Travel verdict from a required coefficient, shared by both valve checks."""
    lim = c.lim
    source = lim.source("valve_travel_fail_high")
    basis = f"{sizing.basis}; {'; '.join(sizing.notes)}{extra_basis}; " \
            f"required Kv {sizing.kv:.4g} m3/h"
    needs = []
    if valve.rated_kv is None:
        needs.append(f"the {what}'s rated Kv")
    if valve.characteristic is None:
        needs.append(f"the {what}'s characteristic")
    elif valve.characteristic == "equal_percentage" and valve.rangeability is None:
        needs.append(f"the {what}'s rangeability")
    if needs:
        return c.needs(needs, source=source, basis=basis,
                       extra=f" (required Kv {sizing.kv:.4g} m3/h)")
    travel = valve_travel(sizing.kv, valve.rated_kv, valve.characteristic,
                          valve.rangeability)
    basis += f" of rated {valve.rated_kv:.4g} m3/h, {valve.characteristic}"
    status, limit = grade_high(travel, lim.valve_travel_warn_high,
                               lim.valve_travel_fail_high)
    source = limit_source(lim, status, "valve_travel_warn_high", "valve_travel_fail_high")
    if status is Status.OK and beyond(travel, lim.valve_travel_warn_low, above=False):
        status, limit = Status.WARN, lim.valve_travel_warn_low
        source = lim.source("valve_travel_warn_low")
        advice = (f"{what} below {100 * limit:.0f} % travel: poor control near the seat "
                  "and trim erosion; consider a smaller trim or a split-range pair")
    elif travel > 1:
        advice = (f"the {what}'s rated Kv {valve.rated_kv:.4g} m3/h is below the "
                  f"required {sizing.kv:.4g} m3/h: it cannot pass this flow")
    else:
        advice = {
            Status.FAIL: f"{what} almost fully open: no margin left for control",
            Status.WARN: f"{what} high in its travel: limited margin for upsets",
            Status.OK: f"{what} travel within the usual control range",
        }[status]
    if sizing.choked and c.check == "letdown_valve_travel":
        advice += "; flow is choked, so check valve noise (IEC 60534-8-3)"
    return c.row(status, value=100 * travel, limit=100 * limit, basis=basis,
                 source=source, advice=advice)


@point_check("letdown_valve_travel", "%")
def check_letdown_valve(c: Ctx) -> CheckRow:
    """Let-down valve: required Kv (IEC 60534-2-1, compressible) and travel.

    Diameters (for the Reynolds number) are used when the valve's diameter, FL and
    Fd are all given; the valve is taken without attached fittings. Wet inlet steam
    is not assessed (the compressible equations need a single-phase vapour).
    """
    source = c.lim.source("valve_travel_fail_high")
    valve, pt = c.data.valve, c.point
    if valve is None or valve.xt is None:
        return c.needs(["the let-down valve's data (xT, rated Kv, characteristic)"
                        if valve is None else "the let-down valve's xT"], source=source)
    full = valve.diameter is not None and valve.fl is not None and valve.fd is not None
    try:
        sizing = size_steam_valve(pt.p_in, pt.p_out, pt.m_steam,
                                  props.state_ph(pt.p_in, pt.h_in), fl=valve.fl,
                                  xt=valve.xt, fd=valve.fd if full else None,
                                  d_valve=valve.diameter if full else None)
    except ModelError as exc:
        return c.needs(["superheated inlet steam"], source=source,
                       extra=f" ({exc.message})")
    sizing = _size_basis(sizing, valve, full)
    return _travel_row(c, "let-down valve", valve, sizing,
                       f"; dP = {(pt.p_in - pt.p_out) / 1e5:.4g} bar")


@point_check("spray_valve_travel", "%", spraying=True)
def check_spray_valve(c: Ctx) -> CheckRow:
    """Spray water valve: required Kv (IEC 60534-2-1, liquid) and travel.

    Sized across ``p_water - p_out`` (see the module notes: the nozzle's pressure
    drop is not deducted, so the required Kv is a lower bound).
    """
    source = c.lim.source("valve_travel_fail_high")
    valve, pt = c.data.spray_valve, c.point
    needs = []
    if valve is None or valve.fl is None:
        needs.append("the spray valve's data (FL, rated Kv, characteristic)"
                     if valve is None else "the spray valve's FL")
    if pt.p_water is None:
        needs.append("the spray water supply pressure")
    elif pt.t_water is None and pt.h_water is None:
        needs.append("the spray water temperature")
    if needs:
        return c.needs(needs, source=source)
    if pt.p_water <= pt.p_out:
        return c.row(Status.FAIL, source=source, basis="dP = p_water - p_out",
                     advice="spray water supply pressure is not above the steam "
                            "pressure: no spray can flow")
    full = valve.diameter is not None and valve.fd is not None
    sizing = size_water_valve(pt.p_water, pt.p_out, pt.m_spray, water_state(pt),
                              fl=valve.fl, fd=valve.fd if full else None,
                              d_valve=valve.diameter if full else None)
    sizing = _size_basis(sizing, valve, full)
    return _travel_row(c, "spray valve", valve, sizing,
                       f"; dP = p_water - p_out = {(pt.p_water - pt.p_out) / 1e5:.4g} "
                       "bar, nozzle drop not deducted")


@point_check("spray_water_pressure", "bar", spraying=True)
def check_spray_water_pressure(c: Ctx) -> CheckRow:
    """Spray water supply pressure minus steam pressure at the nozzle (``p_out``).

    The default limit is for mechanically atomised nozzles; it is also applied when
    the atomisation is not given (and the basis says so). For other nozzles the
    margin is reported but not judged.
    """
    source = c.lim.source("spray_pressure_margin_fail")
    if c.point.p_water is None:
        return c.needs(["the spray water supply pressure"], source=source)
    margin = c.point.p_water - c.point.p_out
    kind = c.ds.atomisation
    basis = "p_water - p_out"
    if kind in ("steam_assisted", "other"):
        return c.needs([f"the maker's minimum spray pressure margin for {kind} "
                        "atomisation"], source=MAKERS_DATA, value=margin / 1e5,
                       basis=basis)
    if kind is None:
        basis += "; atomisation not given, mechanical-nozzle limit applied"
    status, limit = grade_low(margin, None, c.lim.spray_pressure_margin_fail)
    advice = ("spray water pressure margin too small for mechanical atomisation: "
              "coarse spray that may not evaporate; raise the supply pressure"
              if status is Status.FAIL else "spray water pressure margin sufficient")
    return c.row(status, value=margin / 1e5, limit=limit / 1e5, basis=basis,
                 source=source, advice=advice)


@point_check("downstream_velocity", "m/s")
def check_downstream_velocity(c: Ctx) -> CheckRow:
    """Mean velocity in the outlet pipe, (m_steam + m_spray) v(p_out, h_out) / area.

    The low limit (poor atomisation) applies only to stations with a desuperheater.
    """
    lim = c.lim
    source = c.lim.source("velocity_warn_high")
    if c.data.outlet_pipe_diameter is None:
        return c.needs(["the outlet pipe's inside diameter"], source=source)
    velocity = outlet_velocity(c.data, c.point)
    basis = f"outlet flow / pipe area, ID {c.data.outlet_pipe_diameter * 1e3:.0f} mm"
    status, limit = grade_high(velocity, lim.velocity_warn_high, None)
    if status is Status.OK and c.ds is not None:
        status, limit = grade_low(velocity, lim.velocity_warn_low, None)
        limit = lim.velocity_warn_high if status is Status.OK else limit
        if status is Status.WARN:
            source = lim.source("velocity_warn_low")
    elif c.ds is None:
        basis += "; no desuperheater, low limit not applied"
    advice = {
        Status.WARN: ("outlet velocity high: erosion and noise; check a larger outlet "
                      "pipe" if beyond(velocity, lim.velocity_warn_high, above=True) else
                      "outlet velocity low: poor atomisation and spray fall-out; "
                      "check a smaller outlet pipe or a steam-assisted nozzle"),
        Status.OK: "outlet velocity within the usual range",
    }[status]
    return c.row(status, value=velocity, limit=limit, basis=basis, source=source,
                 advice=advice)


@point_check("sensor_distance", "m", spraying=True)
def check_sensor_distance(c: Ctx) -> CheckRow:
    """Straight run to the temperature element against velocity x evaporation time.

    The value is the run available, the limit the run needed.
    """
    t_evap = c.ds.evaporation_time
    source = (MAKERS_DATA if t_evap is not None
              else c.lim.source("evaporation_time_default"))
    t_evap = c.lim.evaporation_time_default if t_evap is None else t_evap
    needs = [w for w, v in (("the straight run to the temperature element",
                             c.data.sensor_distance),
                            ("the outlet pipe's inside diameter",
                             c.data.outlet_pipe_diameter)) if v is None]
    if needs:
        return c.needs(needs, source=source)
    velocity = outlet_velocity(c.data, c.point)
    needed = evaporation_distance(velocity, t_evap)
    short = beyond(c.data.sensor_distance, needed, above=False)
    return c.row(Status.FAIL if short else Status.OK, value=c.data.sensor_distance,
                 limit=needed, source=source,
                 basis=f"{velocity:.3g} m/s x {t_evap:.3g} s evaporation time",
                 advice="temperature element closer than the spray's evaporation "
                        "length: it reads wet steam and the loop over-sprays; move it "
                        "downstream or confirm the maker's evaporation time" if short
                        else "temperature element beyond the evaporation length")


#: The single-point checks in report order.
POINT_CHECKS = (check_approach_to_saturation, check_steam_turndown,
                check_spray_capacity, check_spray_turndown, check_letdown_valve,
                check_spray_valve, check_spray_water_pressure,
                check_downstream_velocity, check_sensor_distance, *SAFETY_POINT_CHECKS)


def check_point(data: StationData, point: StationPoint) -> list[CheckRow]:
    """All single-point checks of one station in one case.

    Parameters
    ----------
    data : StationData
        Station data [-]
    point : StationPoint
        Operating point of this station [-]

    Returns
    -------
    rows : list of CheckRow
        One row per check, in :data:`POINT_CHECKS` order [-]
    """
    _same_station(data, point)
    return [check(data, point) for check in POINT_CHECKS]


def _same_station(data: StationData, point: StationPoint) -> None:
    if point.station != data.name:
        raise InternalError(f"case '{point.case}': the point of station "
                            f"'{point.station}' was given to the checks of station "
                            f"'{data.name}'")


# ----------------------------------------------------------------- across cases
def _gains(data: StationData, points: list[StationPoint]):
    """(label, |dT/dm_w|, |dT/dR|) per usable point, plus the rated minimum flow. The
    label is a point's case (a str) or "rated minimum flow"; see :func:`_label`."""
    out = []
    usable = []
    for p in points:
        got = gain_inputs(p)
        if got is not None:
            usable.append((p, *got))
    for p, h_w, cp in usable:
        out.append((p.case, p.m_steam, p.m_spray, p.h_in, p.h_out, h_w, cp))
    m_min = data.desuperheater.rated_min_steam
    if m_min is not None and usable:
        p, h_w, cp = min(usable, key=lambda u: u[0].m_steam)
        m_w = spray_water_flow(m_min, p.h_in, p.h_out, h_w)
        out.append((_RATED_MIN, m_min, m_w, p.h_in, p.h_out, h_w, cp))
    return [(label, *map(abs, control_gains(h_w, h_in, h_out, cp, m_s, m_w)))
            for label, m_s, m_w, h_in, h_out, h_w, cp in out]


_RATED_MIN = object()      # the label of the rated-minimum-flow point in _gains


def _label(key) -> str:
    """How a point of :func:`_gains` is named in the check's basis."""
    return "rated minimum flow" if key is _RATED_MIN else f"case '{key}'"


def check_gain_spread(data: StationData, points: list[StationPoint]) -> list[CheckRow]:
    """Spread of the outlet temperature control gain across a station's points.

    Two rows: the gain to spray flow, dT_out/dm_w = (h_w - h_out)/(cp_out (m_s + m_w)),
    and the gain to the spray/steam ratio, dT_out/dR = (h_w - h_s)/(cp_out (1 + R)^2).
    The points are every case with steam flow plus, when known, the rated minimum
    steam flow (with the enthalpies of the case with least steam).

    Parameters
    ----------
    data : StationData
        Station data [-]
    points : list of StationPoint
        All operating points of this station [-]

    Returns
    -------
    rows : list of CheckRow
        ``gain_spread_spray`` and ``gain_spread_ratio``, largest over smallest
        gain [-]
    """
    lim = data.limits
    source = lim.source("gain_spread_warn")
    ids = ("gain_spread_spray", "gain_spread_ratio")
    if data.desuperheater is None:
        return [row(data, ALL_CASES, c, "-", Status.NOT_APPLICABLE,
                     advice="the station has no desuperheater") for c in ids]
    gains = _gains(data, points)
    if not any(p.m_steam > 0 for p in points):
        return [row(data, ALL_CASES, c, "-", Status.NOT_APPLICABLE, source=source,
                    advice="the station carries no steam in the studied cases")
                for c in ids]
    if len(gains) < 2:
        return [needs_row(data, ALL_CASES, c, "-",
                       ["two or more points with steam flow and spray water enthalpy "
                        "or temperature, or the rated minimum steam flow"],
                       source=source) for c in ids]
    rows = []
    for idx, check in enumerate(ids, start=1):
        lo = min(gains, key=lambda g: g[idx])
        hi = max(gains, key=lambda g: g[idx])
        spread = hi[idx] / lo[idx]
        status, limit = grade_high(spread, lim.gain_spread_warn, None)
        basis = (f"energy balance over {len(gains)} points; largest at "
                 f"{_label(hi[0])}, smallest at {_label(lo[0])}")
        if check == "gain_spread_spray":
            advice = (f"the loop's gain at low flow is {spread:.1f} times its gain at "
                      "full flow: a loop tuned at full flow becomes aggressive at low "
                      "flow; spray in ratio to steam flow (steam-flow feedforward) or "
                      "schedule the controller gain"
                      if status is Status.WARN else
                      "gain to spray flow varies little across the points")
        else:
            advice = (f"even the gain to spray/steam ratio varies {spread:.1f}:1; "
                      "review the tuning at the extreme points"
                      if status is Status.WARN else
                      "spraying in ratio to steam flow keeps the gain nearly constant")
        rows.append(row(data, ALL_CASES, check, "-", status, value=spread, limit=limit,
                         basis=basis, source=source, advice=advice))
    return rows


def _extreme(points: list[StationPoint], attr: str, pick) -> dict | None:
    if not points:
        return None
    p = pick(points, key=lambda q: getattr(q, attr))
    return {"value": getattr(p, attr), "case": p.case}


def check_across_cases(data: StationData, points: list[StationPoint], *,
                       verdicts: Iterable[tuple[str, Status]] | None = None
                       ) -> tuple[list[CheckRow], dict]:
    """Checks across a station's cases and the station's operating envelope.

    Parameters
    ----------
    data : StationData
        Station data [-]
    points : list of StationPoint
        All operating points of this station [-]
    verdicts : iterable of (check, Status), optional
        The (check id, verdict) pairs of the :func:`check_point` rows of these points,
        each pair once or more, when they are already known (else they are checked
        here) [-]

    Returns
    -------
    rows : list of CheckRow
        The control gain spread rows [-]
    envelope : dict
        ``station``; ``cases`` (those with steam flow); ``steam_min``,
        ``steam_max``, ``spray_min``, ``spray_max`` (each ``{"value": kg/s,
        "case": name}`` or None); ``turndown_used`` (most over least steam) and
        ``turndown_rated`` (rated maximum over minimum), None when unknown;
        ``worst`` mapping each check id to its worst :class:`Status` [-]
    """
    for p in points:
        _same_station(data, p)
    if verdicts is None:
        verdicts = ((r.check, r.status) for p in points for r in check_point(data, p))
    rows = [*check_gain_spread(data, points), check_relief_cover_rated(data, points,
                                                                case=ALL_CASES)]
    flowing = [p for p in points if p.m_steam > 0]
    ds = data.desuperheater
    steam_min = _extreme(flowing, "m_steam", min)
    steam_max = _extreme(flowing, "m_steam", max)
    rated = (ds.rated_max_steam / ds.rated_min_steam
             if ds is not None and ds.rated_min_steam and ds.rated_max_steam else None)
    worst_by_check: dict[str, Status] = {}
    # each (check, verdict) pair once, in order of first appearance (a year of cases
    # repeats a handful of pairs a hundred thousand times)
    pairs = [*verdicts, *((r.check, r.status) for r in rows)]
    for check, status in dict.fromkeys(pairs):
        worst_by_check[check] = worst([worst_by_check.get(check, Status.NOT_APPLICABLE),
                                       status])
    envelope = {
        "station": data.name,
        "cases": [p.case for p in flowing],
        "steam_min": steam_min,
        "steam_max": steam_max,
        "spray_min": _extreme(flowing, "m_spray", min),
        "spray_max": _extreme(flowing, "m_spray", max),
        "turndown_used": (steam_max["value"] / steam_min["value"]
                          if steam_min and len(flowing) > 1 else None),
        "turndown_rated": rated,
        "worst": worst_by_check,
    }
    return rows, envelope
