"""Trip screening: trip each running turbine (and, on request, each running boiler) in
turn and re-balance; report every let-down station against its limits.

Method
------
For each case the untripped balance is solved first. Every turbine and extraction
turbine that passes steam in it is then set to mode ``tripped`` (a boiler: mode
``off``), one at a time, and the case is balanced again: the header the turbine
exhausted to is now held by the next swing element in its sequence, usually a let-down
station, whose spray and the deaerator's heating steam follow. For every station the
post-trip steam and spray flows are compared with the station's limits (``max_flow``;
the desuperheater's ``max_spray`` and ``rated_max_steam`` where given) and with the
untripped case. Rows are sorted worst first: trips that leave the plant unable to
balance, then by the largest use of any limit.

Every tripped balance goes through the one evaluation (:func:`steamnet.evaluate.evaluate_one`),
and the checks across cases run over every untripped and tripped balance of the screening
together: a station that runs at a small flow normally and takes a turbine's steam after
its trip shows the control gain spread between the two.

A trip that leaves the plant infeasible is a finding row naming the header that runs
short (or long) and by how much, taken from the balance's findings; the station rows of
that trip show where the stations stood when the balance ran out.
"""

from __future__ import annotations

import math
import re
from functools import partial
from typing import NamedTuple

import numpy as np
import pandas as pd

from ..model.model import Model
from ..model.cases import CaseSet
from .common import Progress, resolve_cases
from ..solver.limits import TH, running_units, station_loads
from ..solver.results import letdown_points
from ..evaluate import FINDING_COLUMNS, RANK, evaluate_one, sort_findings
from ..stations.checks import ALL_CASES
from ..stations.rows import Status
from ..stations.run import across_checks
from ..status import CaseStatus

__all__ = ["trip_screening", "screen_trips", "TripScreening", "TRIP_COLUMNS",
           "TRIP_FINDING_COLUMNS", "EVERY_TRIP"]

#: Columns of the trip screening table, in order (docs/studies.md).
TRIP_COLUMNS = [
    "case", "trip", "trip_type", "trip_flow_t_h", "status", "row", "station", "inlet",
    "outlet", "steam_before_t_h", "steam_t_h", "steam_change_t_h", "max_flow_t_h",
    "steam_use_percent", "spray_before_t_h", "spray_t_h", "spray_change_t_h",
    "max_spray_t_h", "spray_use_percent", "rated_max_steam_t_h",
    "rated_steam_use_percent", "worst_use_percent", "worst_limit", "verdict",
    "header", "side", "amount_t_h", "message", "trip_verdict", "trip_fails",
    "trip_warnings", "trip_worst_check",
]

#: Columns of the trip findings table: the trip, then the findings table's columns.
TRIP_FINDING_COLUMNS = ["case", "trip", "trip_type", *FINDING_COLUMNS[1:]]


class TripScreening(NamedTuple):
    """The trip screening: the station loads per trip (:data:`TRIP_COLUMNS`) and every
    finding of every tripped balance (:data:`TRIP_FINDING_COLUMNS`, worst first), the
    same evaluation ``steamnet stations`` gives on that balance written as a case."""

    table: pd.DataFrame
    findings: pd.DataFrame

_TRIP = {"turbine": ("turbine", "tripped"),
         "extraction_turbine": ("extraction_turbine", "tripped"),
         "boiler": ("boiler", "off")}


def _pct(value: float, limit: float | None) -> float:
    if limit is None or not math.isfinite(limit):
        return math.nan
    if limit <= 0:
        return math.inf if value > 1e-9 else 0.0
    return 100.0 * value / limit


def _station_rows(case, trip, ttype, tflow, status, before, after) -> list[dict]:
    prev = {s["name"]: s for s in before} if before else {}
    rows = []
    for s in after:
        b = prev.get(s["name"])
        steam_b = b["steam"] if b else 0.0
        spray_b = b["spray"] if b else 0.0
        use = {"max_flow": _pct(s["steam"], s["max_flow"]),
               "max_spray": _pct(s["spray"], s["max_spray"]),
               "rated_max_steam": _pct(s["steam"], s["rated_max_steam"])}
        given = {k: v for k, v in use.items() if not math.isnan(v)}
        worst_k = max(given, key=given.get) if given else ""
        worst = given.get(worst_k, math.nan)
        verdict = ""
        if given:
            verdict = ("over limit" if worst > 100.0 + 1e-6 else
                       "at limit" if worst >= 100.0 - 1e-6 else "within limits")
        rows.append({
            "case": case, "trip": trip, "trip_type": ttype, "trip_flow_t_h": tflow * TH,
            "status": status, "row": "station", "station": s["name"], "inlet": s["inlet"],
            "outlet": s["outlet"], "steam_before_t_h": steam_b * TH,
            "steam_t_h": s["steam"] * TH, "steam_change_t_h": (s["steam"] - steam_b) * TH,
            "max_flow_t_h": _th(s["max_flow"]), "steam_use_percent": use["max_flow"],
            "spray_before_t_h": spray_b * TH, "spray_t_h": s["spray"] * TH,
            "spray_change_t_h": (s["spray"] - spray_b) * TH,
            "max_spray_t_h": _th(s["max_spray"]), "spray_use_percent": use["max_spray"],
            "rated_max_steam_t_h": _th(s["rated_max_steam"]),
            "rated_steam_use_percent": use["rated_max_steam"],
            "worst_use_percent": worst, "worst_limit": worst_k, "verdict": verdict,
        })
    return rows


def _header_named(items) -> str | None:
    """The header an error is about: the first item written "... header 'NAME'"."""
    for item in items:
        m = re.search(r"header '([^']+)'$", item or "")
        if m:
            return m.group(1)
    return None


def _th(v):
    return v * TH if v is not None else math.nan


def _finding_rows(case, trip, ttype, tflow, result) -> list[dict]:
    base = {"case": case, "trip": trip, "trip_type": ttype, "trip_flow_t_h": tflow * TH,
            "status": result.status, "row": "finding", "verdict": "cannot balance"}
    if result.status == CaseStatus.INFEASIBLE and result.findings:
        return [{**base, "header": f.get("header"), "side": f.get("side"),
                 "amount_t_h": f.get("amount_kg_s", math.nan) * TH,
                 "message": f.get("message", result.message)} for f in result.findings]
    return [{**base, "message": result.message}]


def trip_screening(model: Model, cases: CaseSet | list[str] | str | None = None, *,
                   boilers: bool = False, progress: Progress | None = None,
                   workers: int = 1, scheduler: str | None = None) -> pd.DataFrame:
    """The table of :func:`screen_trips` (its findings left out)."""
    return screen_trips(model, cases, boilers=boilers, progress=progress,
                        workers=workers, scheduler=scheduler).table


def screen_trips(model: Model, cases: CaseSet | list[str] | str | None = None, *,
                 boilers: bool = False, progress: Progress | None = None,
                 workers: int = 1, scheduler: str | None = None) -> TripScreening:
    """Trip each running turbine (and boiler, with ``boilers=True``) of each case in
    turn; the post-trip load of every let-down station.

    Parameters
    ----------
    model : Model
        The plant.
    cases : CaseSet, list of str, str or None
        Cases to screen: None for every case of the model file (or the base model when
        it has none), names of model-file cases, or a case set from a case table.
    boilers : bool
        Also trip (set mode ``off``) each running boiler.
    progress : callable, optional
        ``progress(done, total, label)`` as the balances go (the total grows once the
        untripped cases are known).
    workers : int
        Processes to solve in; results are the same for any number [-]
    scheduler : str, optional
        Address of a dask.distributed scheduler to run on (extra ``dask``).

    Returns
    -------
    TripScreening
        ``table``: columns :data:`TRIP_COLUMNS` (see docs/studies.md): one
        ``row == 'station'`` row per station per trip, and ``row == 'finding'`` rows for
        trips after which the plant cannot balance; worst first; ``trip_verdict`` is the
        worst verdict of every finding of the tripped balance. A case that does not
        balance untripped gives one finding row with ``trip == ''``. ``findings``: every
        finding of every tripped balance (:data:`TRIP_FINDING_COLUMNS`).

    Notes
    -----
    Both stages run as sweeps (:mod:`steamnet.sweep`): first the untripped cases, then
    every trip, unit by unit, so that a trip starts from the same trip of the case
    before (the hour before, in a profile).
    """
    from ..sweep import run_sweep
    from ..model.cases import sweep_specs
    cs = resolve_cases(model, cases)
    model = cs.model                    # a case set is solved on its own model
    specs = sweep_specs(cs)
    n = len(specs)

    def stage(offset, total):
        if progress is None:
            return None
        return lambda done, _, label: progress(offset + done, total, label)

    base, per_chunk = run_sweep(model, specs, workers=workers, scheduler=scheduler,
                                tables=False, progress=stage(0, n),
                                extra=partial(_untripped, boilers),
                                keep_solutions=False)
    info = [x for chunk in per_chunk for x in chunk]
    by_unit: dict[tuple, list] = {}     # (table, unit) -> [(case index, table, unit, flow)]
    for i, x in enumerate(info):
        for table, unit, flow in (x[1] if x else ()):
            by_unit.setdefault((table, unit), []).append((i, table, unit, flow))
    trips = [t for unit_trips in by_unit.values() for t in unit_trips]  # unit by unit
    trip_specs = [_trip_spec(specs[i], table, unit) for i, table, unit, _ in trips]
    done, per_chunk = run_sweep(model, trip_specs, workers=workers, scheduler=scheduler,
                                tables=False, progress=stage(n, n + len(trip_specs)),
                                extra=partial(_tripped, model.stations),
                                keep_solutions=False) \
        if trip_specs else ([], [])
    after = {(i, unit): (r, *x) for (i, _, unit, _), r, x in zip(
        trips, done, (x for chunk in per_chunk for x in chunk))}
    rows: list[dict] = []
    found: list[tuple] = []
    points = [p for x in info if x for p in x[2]]
    points += [p for (_, _, _, pts) in after.values() for p in pts]
    for i, (name, r0) in enumerate(zip(cs.names, base)):
        if info[i] is None:
            rows.extend(_finding_rows(name, "", "", 0.0, r0))
            continue
        before, units, _ = info[i]
        for table, unit, flow in units:
            r, loads, fnd, _ = after[i, unit]
            verdict = _trip_verdict(fnd)
            found.extend((name, unit, table, *f[1:]) for f in fnd)
            if r.status == CaseStatus.ERROR and r.input_errors:
                rows.append({**_invalid_trip(name, table, unit, flow, r.input_errors),
                             **verdict})
                continue
            if r.status != CaseStatus.SOLVED:
                rows.extend({**x, **verdict}
                            for x in _finding_rows(name, unit, table, flow, r))
            if loads is not None:
                rows.extend({**x, **verdict} for x in _station_rows(
                    name, unit, table, flow, r.status, before, loads))
    found.extend(_across(model.stations, points))
    findings = sort_findings(pd.DataFrame(found, columns=TRIP_FINDING_COLUMNS),
                             ["trip", "item", "check"])
    df = pd.DataFrame(rows, columns=TRIP_COLUMNS)
    if not len(df):
        return TripScreening(df, findings)
    rank = np.where(df["row"] == "finding", 0, np.where(df["status"] != CaseStatus.SOLVED, 1, 2))
    worst = df["worst_use_percent"].fillna(-1.0).to_numpy(float)
    order = np.lexsort((-worst, rank))
    return TripScreening(df.iloc[order].reset_index(drop=True), findings)


def _trip_verdict(findings: list[tuple]) -> dict:
    """The worst verdict of a tripped balance's findings, the counts, and the check."""
    if not findings:
        return {"trip_verdict": "", "trip_fails": 0, "trip_warnings": 0,
                "trip_worst_check": ""}
    worst = max(findings, key=lambda f: RANK.get(f[7], 0))
    return {"trip_verdict": worst[7],
            "trip_fails": sum(f[7] == "fail" for f in findings),
            "trip_warnings": sum(f[7] == "warn" for f in findings),
            "trip_worst_check": f"{worst[3]} ({worst[1]})" if worst[7] != "ok" else ""}


#: The trip label of the checks across every case and trip of a screening.
EVERY_TRIP = "every case and trip"


def _across(data: dict, points) -> list[tuple]:
    """The checks across the untripped and tripped balances of a screening (a station's
    control gain spread between its normal and its post-trip flows, its relief cover at
    the rated flow), as rows of :data:`TRIP_FINDING_COLUMNS`: those that are not ok."""
    return [(ALL_CASES, EVERY_TRIP, "", r.station, "letdown", r.check, r.value, r.limit,
             r.unit, Status(r.status).value, r.basis, r.source, r.advice)
            for r in across_checks(data, points)
            if r.status not in (Status.OK, Status.NOT_APPLICABLE)]


def _solved_points(r) -> list:
    return letdown_points(r.case, r.status, r.solution) \
        if r.status == CaseStatus.SOLVED and r.solution is not None else []


def _untripped(boilers: bool, results) -> list:
    """Per untripped case of a solved chunk: (station loads, running units, station
    operating points), or None when the case did not balance (made where the chunk was
    solved)."""
    return [(station_loads(r.solution), running_units(r.solution, boilers),
             _solved_points(r)) if r.ok else None for r in results]


def _tripped(data: dict, results) -> list:
    """Per trip of a solved chunk: the station loads after it (None when the balance
    gave no flows to read), every finding of the tripped balance that is not ok (tuples
    in :data:`~steamnet.evaluate.FINDING_COLUMNS` order) and its station operating
    points (for the checks across the screening), made where it was solved."""
    out = []
    for r in results:
        loads = station_loads(r.solution) if r.solution is not None and r.status in \
            (CaseStatus.SOLVED, CaseStatus.INFEASIBLE) else None
        f = evaluate_one(r, data)
        out.append((loads, list(f[f["status"] != "ok"].itertuples(index=False,
                                                                    name=None)),
                    _solved_points(r)))
    return out


def _trip_spec(spec, table: str, unit: str):
    """The sweep spec of case ``spec`` with ``unit`` tripped."""
    tbl, mode = _TRIP[table]
    change = {f"{tbl}.{unit}.mode": mode}
    if isinstance(spec, str):
        return (f"{spec}: trip of {unit}", change, spec)
    name, changes, based_on = spec
    return (f"{name}: trip of {unit}", {**changes, **change}, based_on)


def _invalid_trip(name: str, table: str, unit: str, flow: float,
                  errors: tuple) -> dict:
    """The finding row of a trip whose model is not valid (the plant cannot balance
    without the unit: e.g. a header left with nothing to close its balance), from the
    problems the sweep found in it (message, item, field)."""
    return {"case": name, "trip": unit, "trip_type": table, "trip_flow_t_h": flow * TH,
            "status": "invalid", "row": "finding", "verdict": "cannot balance",
            "header": _header_named(item for _, item, _ in errors),
            "message": "after the trip: " + "; ".join(msg for msg, _, _ in errors)}
