"""Run the station checks over solved cases: model data in, tables out.

:func:`station_data` turns each let-down of the model (with its valve, desuperheater,
spray valve, pipe and limits) into a :class:`StationData`; :func:`station_points` takes
each station's operating point from a solved case; :func:`run_checks` runs every check of
:mod:`steamnet.stations.checks` in every case and across cases and returns a
:class:`StationReport` of pandas tables.
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import chain

import pandas as pd

from .. import properties as props
from .._gc import young_collections_only
from ..calc.desuperheater import gain_per_ratio, gain_per_spray
from ..errors import ModelError, ModelErrors
from ..calc.relief import orifice_area
from ..units import Kind, parse_quantity
from .checks import check_across_cases, check_point
from .data import (DesuperheaterData, ReliefData, ReliefDevice, StationData,
                   StationLimits, StationPoint, ValveData)
from .rows import SEVERITY, CheckRow, Status

__all__ = ["StationReport", "PointChecks", "station_data", "station_points",
           "points_from_solution", "point_checks", "run_checks", "parse_limits"]

TH = 3.6
CHECK_COLUMNS = ["case", "station", "check", "value", "limit", "unit", "status", "basis",
                 "source", "advice"]


@dataclass(frozen=True)
class StationReport:
    """Station check results.

    Attributes
    ----------
    checks : pandas.DataFrame
        One row per check, station and case (and ``"all cases"`` rows for the checks
        across cases): CHECK_COLUMNS; ``status`` is ok, warn, fail, not_assessed or
        not_applicable; ``value`` and ``limit`` are in ``unit``.
    envelopes : pandas.DataFrame
        One row per station: least and most steam and spray with their cases, the
        turndown used against the rated one, and the worst verdict of every check.
    gains : pandas.DataFrame
        Control gain of each station in each case: per unit spray flow [K per t/h] and
        per unit spray-to-steam ratio [K], against the steam flow.
    """

    checks: pd.DataFrame
    envelopes: pd.DataFrame
    gains: pd.DataFrame

    @property
    def failed(self) -> bool:
        return bool(len(self.checks)) and bool((self.checks["status"] == "fail").any())

    def worst_first(self) -> pd.DataFrame:
        """Checks sorted fail, warn, not assessed, ok; not-applicable rows dropped."""
        c = self.checks[self.checks["status"] != "not_applicable"].copy()
        c["_sev"] = c["status"].map({s.value: v for s, v in SEVERITY.items()})
        return c.sort_values(["_sev", "station", "case"], ascending=[False, True, True],
                             kind="stable").drop(columns="_sev")


def parse_limits(table: dict, *, base: StationLimits | None = None, file=None,
                 item="station_limits", origin: str | None = None) -> StationLimits:
    """StationLimits from a table of overrides written with units; ``origin`` (e.g.
    ``"model file, [station_limits]"``) becomes the source label of each limit set."""
    base = base or StationLimits()
    kinds = StationLimits.LIMIT_KINDS
    values = {}
    errors = []
    for key, raw in (table or {}).items():
        if key not in kinds:
            errors.append(ModelError(f"unknown station limit '{key}' (known: "
                                     f"{', '.join(kinds)})", file=file, item=item,
                                     field=key))
            continue
        try:
            values[key] = parse_quantity(raw, Kind(kinds[key]))
        except ModelError as exc:
            errors.append(exc.with_context(file=file, item=item, field=key))
    if errors:
        raise ModelErrors(errors)
    try:
        return base.with_overrides(origin, **values)
    except ModelError as exc:
        raise ModelErrors([exc.with_context(file=file, item=item)]) from None


def _valve(v) -> ValveData | None:
    if v is None:
        return None
    return ValveData(rated_kv=v.rated_coefficient, characteristic=v.characteristic,
                     rangeability=v.rangeability, fl=v.fl, xt=v.xt, fd=v.fd,
                     diameter=v.diameter, pipe_diameter=v.pipe_diameter,
                     pipe_wall=v.pipe_wall, pipe_density=v.pipe_density,
                     pipe_sound_speed=v.pipe_sound_speed)


def _relief(model, name: str, s) -> ReliefData:
    """The relief devices of the station's outlet header and its failure assumptions.

    Raises
    ------
    ModelError
        A credited outflow that names no user or turbine drawing from the outlet
        header.
    """
    header = model.table("header")[s.outlet]
    devices = tuple(
        ReliefDevice(name=r.name, p_set=r.set_pressure, overpressure=r.overpressure,
                     capacity=r.capacity,
                     area=orifice_area(r.orifice) if r.orifice else r.orifice_area,
                     orifice=r.orifice, kd=r.discharge_coefficient)
        for r in header.relief_valves)
    credits = []
    users, turbines = model.table("user"), model.table("turbine")
    xturbines = model.table("extraction_turbine")
    for k, c in enumerate(s.relief_credit):
        item = f"letdown '{name}' relief_credit {k + 1}"
        if c.user is not None:
            u = users.get(c.user)
            if u is None or u.header != s.outlet:
                raise ModelError(f"no user '{c.user}' on the outlet header "
                                 f"'{s.outlet}'", file=model.source, item=item,
                                 field="user")
            credits.append((f"user '{c.user}'", c.flow))
        else:
            t = turbines.get(c.turbine) or xturbines.get(c.turbine)
            if t is None or t.inlet != s.outlet:
                raise ModelError(f"no turbine '{c.turbine}' drawing from the outlet "
                                 f"header '{s.outlet}'", file=model.source, item=item,
                                 field="turbine")
            credits.append((f"turbine '{c.turbine}'", c.flow))
    return ReliefData(header=s.outlet, devices=devices,
                      p_atm=model.site.atmospheric_pressure,
                      spray_fails_open=s.spray_fails == "open", credits=tuple(credits),
                      max_inlet_pressure=s.max_inlet_pressure,
                      max_inlet_temperature=s.max_inlet_temperature)


def station_data(model) -> dict[str, StationData]:
    """StationData of every let-down of ``model``, limits site-wide then per station.

    Raises
    ------
    ModelErrors
        A limit that is unknown, has a wrong unit or breaks the order of the limits,
        naming the file and the station.
    """
    site = parse_limits(model.station_limits, file=model.source,
                        origin="model file, [station_limits]")
    out = {}
    errors = []
    for name, s in model.table("letdown").items():
        try:
            limits = parse_limits(s.limits, base=site, file=model.source,
                                  item=f"letdown '{name}' limits",
                                  origin=f"model file, letdown '{name}' limits"
                                  ) if s.limits else site
        except ModelErrors as exc:
            errors.extend(exc.errors)
            continue
        d = s.desuperheater
        ds = None
        if d is not None:
            rated_min = d.rated_min_steam
            if rated_min is None and d.turndown and d.rated_max_steam:
                rated_min = d.rated_max_steam / d.turndown
            ds = DesuperheaterData(atomisation=d.atomisation, rated_min_steam=rated_min,
                                   rated_max_steam=d.rated_max_steam,
                                   max_spray=d.max_spray, min_spray=d.min_spray,
                                   evaporation_time=d.evaporation_time)
        try:
            out[name] = StationData(name=name, valve=_valve(s.valve), desuperheater=ds,
                                    spray_valve=_valve(s.spray_valve),
                                    outlet_pipe_diameter=s.outlet_pipe_diameter,
                                    sensor_distance=s.sensor_distance, limits=limits,
                                    relief=_relief(model, name, s))
        except ModelError as exc:
            errors.append(exc.with_context(file=model.source, item=f"letdown '{name}'"))
    if errors:
        raise ModelErrors(errors)
    return out


def station_points(case_result) -> list[StationPoint]:
    """The operating point of every running let-down in one solved case (taken from the
    result's ``points`` when the solution itself was not kept, as in parallel sweeps)."""
    pts = getattr(case_result, "points", None)
    if pts:
        return list(pts)
    return points_from_solution(case_result.case, case_result.status,
                                case_result.solution)


def points_from_solution(case: str, status: str, sol) -> list[StationPoint]:
    """Station operating points from a raw solution (empty unless solved or
    infeasible)."""
    if sol is None or status not in ("solved", "infeasible"):
        return []
    net, x, co = sol.net, sol.x, sol.co
    pts = []
    for s, c in zip(net.letdowns, co.ld):
        ds = s["ds"]
        m = float(x[s["var"]])
        pts.append(StationPoint(
            case=case, station=s["name"], p_in=net.p[s["inlet"]],
            h_in=sol.h[s["inlet"]], p_out=net.p[s["outlet"]], m_steam=max(m, 0.0),
            m_spray=max(m * c["r"], 0.0), h_out=c["h_out"],
            h_water=ds["supply"]["h"] if ds else None,
            t_water=ds["supply"]["t"] if ds else None,
            p_water=ds["supply"]["p"] if ds else None,
            setpoint_reachable=bool(c["reachable"])))
    return pts


GAIN_COLUMNS = ["case", "station", "steam_t_h", "spray_t_h", "ratio", "gain_k_per_t_h",
                "gain_per_ratio_k"]


def _gain_row(point: StationPoint) -> tuple | None:
    """The point's control gains in GAIN_COLUMNS order (None when not defined)."""
    if point.h_water is None or point.m_steam <= 0:
        return None
    st = props.state_ph(point.p_out, point.h_out)
    if st.is_wet:
        return None
    g = gain_per_spray(point.h_water, point.h_out, st.cp, point.m_steam, point.m_spray)
    r = point.m_spray / point.m_steam
    gr = gain_per_ratio(point.h_water, point.h_in, st.cp, r)
    return (point.case, point.station, point.m_steam * TH, point.m_spray * TH, r, g / TH,
            gr)


@dataclass(frozen=True)
class PointChecks:
    """The single-point check rows and gain rows of some consecutive cases, as columns.

    Made by :func:`point_checks` where the cases were solved (in a sweep's worker when
    ``solve_cases(..., station_checks=True)`` runs in processes) and joined by
    :func:`run_checks`: a million rows as ten columns cross between processes some
    twenty times faster than as row objects.

    Attributes
    ----------
    data : dict of StationData
        The station data the rows were checked against [-]
    cases : tuple of str
        The cases covered, in order [-]
    columns : tuple of tuples
        One tuple per CHECK_COLUMNS entry (status as its text) [-]
    gains : tuple of tuples
        Gain rows in GAIN_COLUMNS order [-]
    """

    data: dict
    cases: tuple
    columns: tuple
    gains: tuple


def point_checks(data: dict[str, StationData], results) -> PointChecks:
    """Every single-point check of every station in each of ``results`` (CaseResults),
    and the control gains. A station that passes no steam has the same rows in every
    case (all not applicable): they are made once and copied with the case name."""
    rows: list[CheckRow] = []
    gains = []
    idle: dict[str, list] = {}
    for cr in results:
        for p in station_points(cr):
            if p.station not in data:
                continue
            if p.m_steam <= 0 and p.station in idle:
                r = [CheckRow(p.case, *x[1:]) for x in idle[p.station]]
            else:
                r = check_point(data[p.station], p)
                if p.m_steam <= 0:
                    idle[p.station] = r
            rows.extend(r)
            g = _gain_row(p)
            if g:
                gains.append(g)
    columns = tuple(zip(*rows)) if rows else tuple(() for _ in CHECK_COLUMNS)
    if rows:
        columns = (*columns[:6], tuple(_STATUS_TEXT[x] for x in columns[6]), *columns[7:])
    return PointChecks(data=data, cases=tuple(cr.case for cr in results),
                       columns=columns, gains=tuple(gains))


def run_checks(study, *, data: dict[str, StationData] | None = None) -> StationReport:
    """Every station check in every solved (or infeasible) case, and across cases.

    Cases that did not solve are skipped; their stations get no rows. The single-point
    rows that ``solve_cases(..., station_checks=True)`` made while solving are used
    when they were checked against the same station data (the same rows, made where
    the cases were solved).
    """
    with young_collections_only():
        return _run_checks(study, data)


def _precomputed(study, data) -> list[PointChecks] | None:
    blocks = getattr(study, "point_checks", None)
    if not blocks or any(b.data != data for b in blocks):
        return None
    if tuple(c for b in blocks for c in b.cases) != tuple(cr.case for cr in study.cases):
        return None
    return blocks


def _run_checks(study, data) -> StationReport:
    model = study.model
    data = data if data is not None else station_data(model)
    blocks = _precomputed(study, data) or [point_checks(data, study.cases)]
    columns = [list(chain.from_iterable(b.columns[k] for b in blocks))
               for k in range(len(CHECK_COLUMNS))]
    gains = list(chain.from_iterable(b.gains for b in blocks))
    per_station: dict[str, list] = {}
    for cr in study.cases:
        for p in station_points(cr):
            if p.station in data:
                per_station.setdefault(p.station, []).append(p)
    verdicts: dict[str, list] = {}
    for station, check, status in dict.fromkeys(zip(columns[1], columns[2], columns[6])):
        verdicts.setdefault(station, []).append((check, status))
    across_rows = []
    envs = []
    for name, pts in per_station.items():
        across, env = check_across_cases(data[name], pts, verdicts=verdicts.get(name, []))
        across_rows.extend(across)
        envs.append(_flatten_envelope(env, across))
    for r in across_rows:
        for k, v in enumerate(r):
            columns[k].append(_STATUS_TEXT[v] if k == 6 else v)
    return StationReport(checks=pd.DataFrame(dict(zip(CHECK_COLUMNS, columns)),
                                             columns=CHECK_COLUMNS),
                         envelopes=pd.DataFrame(envs),
                         gains=pd.DataFrame(gains, columns=GAIN_COLUMNS))


#: Status (or its text: a str Enum member hashes and compares as its text) -> its text
#: (a dict lookup: Status(s).value costs more)
_STATUS_TEXT = {s: s.value for s in Status}


def _flatten_envelope(env: dict, across) -> dict:
    out = {"station": env["station"], "cases_with_flow": len(env.get("cases") or [])}
    for key in ("steam_min", "steam_max", "spray_min", "spray_max"):
        v = env.get(key)
        out[f"{key}_t_h"] = v["value"] * TH if v else None
        out[f"{key}_case"] = v["case"] if v else None
    out["turndown_used"] = env.get("turndown_used")
    out["turndown_rated"] = env.get("turndown_rated")
    worst = env.get("worst") or {}
    for r in across:
        worst[r.check] = max([worst.get(r.check, Status.NOT_APPLICABLE), Status(r.status)],
                             key=SEVERITY.__getitem__)
    overall = max(worst.values(), key=SEVERITY.__getitem__, default=Status.NOT_APPLICABLE)
    out["worst"] = Status(overall).value
    for k, v in worst.items():
        out[f"worst_{k}"] = Status(v).value
    return out
