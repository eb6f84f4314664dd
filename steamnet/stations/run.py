"""Run the station checks over solved cases: model data in, tables out.

The station data come from the model (:attr:`steamnet.model.model.Model.stations`);
:func:`station_points` takes each station's operating point from a solved case; :func:`run_checks` runs every check of
:mod:`steamnet.stations.checks` in every case and across cases and returns a
:class:`StationReport` of pandas tables.
"""

from __future__ import annotations

from dataclasses import dataclass
from itertools import chain

import pandas as pd

from .._gc import young_collections_only
from ..model.stations import StationData, StationPoint
from ..solver.results import letdown_points
from ..status import CaseStatus
from ..units import T_H as TH
from ._context import control_gains, gain_inputs
from .checks import POINT_CHECKS, check_across_cases, check_point
from .rows import CHECK_COLUMNS, SEVERITY, CheckRow, Status

__all__ = ["StationReport", "PointChecks", "station_points", "point_checks", "run_checks",
           "not_assessed_rows", "DOES_NOT_BALANCE", "across_checks"]

#: The basis of a station check on a balance that does not close.
DOES_NOT_BALANCE = "not assessed: the case does not balance"



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


def station_points(case_result) -> list[StationPoint]:
    """The operating point of every running let-down in one solved case (taken from the
    result's ``points`` when the solution itself was not kept, as in parallel sweeps)."""
    pts = getattr(case_result, "points", None)
    if pts:
        return list(pts)
    return letdown_points(case_result.case, case_result.status, case_result.solution)


GAIN_COLUMNS = ["case", "station", "steam_t_h", "spray_t_h", "ratio", "gain_k_per_t_h",
                "gain_per_ratio_k"]


def _gain_row(point: StationPoint) -> tuple | None:
    """The point's control gains in GAIN_COLUMNS order (None when not defined)."""
    got = gain_inputs(point)
    if got is None:
        return None
    g, gr = control_gains(got[0], point.h_in, point.h_out, got[1], point.m_steam,
                          point.m_spray)
    return (point.case, point.station, point.m_steam * TH, point.m_spray * TH,
            point.m_spray / point.m_steam, g / TH, gr)


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


def not_assessed_rows(case: str, stations: Iterable[str]) -> list[CheckRow]:
    """The station check rows of a balance that does not close: every single-point check
    of every station, not assessed."""
    return [CheckRow(case, s, chk.check_id, None, None, chk.unit, Status.NOT_ASSESSED,
                     DOES_NOT_BALANCE, "", "the case must balance before its stations "
                     "can be judged")
            for s in stations for chk in POINT_CHECKS]



def point_checks(data: dict[str, StationData], results) -> PointChecks:
    """Every single-point check of every station in each of ``results`` (CaseResults),
    and the control gains. A station that passes no steam has the same rows in every
    case (all not applicable): they are made once and copied with the case name."""
    rows: list[CheckRow] = []
    gains = []
    idle: dict[str, list] = {}
    for cr in results:
        if cr.status != CaseStatus.SOLVED:
            pts = station_points(cr)
            names = [p.station for p in pts if p.station in data] if pts else list(data)
            rows.extend(not_assessed_rows(cr.case, names))
            continue
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
    data = data if data is not None else model.stations
    blocks = _precomputed(study, data) or [point_checks(data, study.cases)]
    columns = [list(chain.from_iterable(b.columns[k] for b in blocks))
               for k in range(len(CHECK_COLUMNS))]
    gains = list(chain.from_iterable(b.gains for b in blocks))
    per_station: dict[str, list] = {}
    for cr in study.cases:
        if cr.status != CaseStatus.SOLVED:
            continue
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


def across_checks(data: dict[str, StationData], points) -> list[CheckRow]:
    """The checks across operating points (control gain spread, relief cover at the
    rated flow) of every station over ``points``: any mix of cases, hours and trips,
    as a study's balances give them."""
    per_station: dict[str, list] = {}
    for p in points:
        if p.station in data:
            per_station.setdefault(p.station, []).append(p)
    return [r for name, pts in per_station.items()
            for r in check_across_cases(data[name], pts, verdicts=())[0]]


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
