"""Solve a case set (model-file cases, a case table or an hourly profile).

:func:`solve_case_set` balances every case with a warm start from the case before;
:func:`case_results` turns the result into one DataFrame row per case: the totals of the
case and, for each boiler, turbine, let-down station and vent, its flow (columns named
``'<item> flow_t_h'``, ``'<station> spray_t_h'``), so that a year of hours is one table.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field, replace

import pandas as pd

from ..solve import CaseResult, StudyResult
from .casetable import CaseSet
from .common import Progress, solve, tick, warm

__all__ = ["CaseSetResult", "solve_case_set", "case_results", "SUMMARY_COLUMNS",
           "LEAN_ABOVE"]

#: Totals copied from each case's summary, in this order.
SUMMARY_COLUMNS = ["steam_raised_t_h", "fuel_mw", "power_generated_mw",
                   "mechanical_power_mw", "import_t_h", "export_t_h", "spray_t_h",
                   "da_steam_t_h", "makeup_t_h", "vented_t_h", "cost_per_h",
                   "fuel_cost_per_h"]

#: Above this many cases, only the totals and the flow columns are kept per case (a
#: year of hours would otherwise hold 8,760 sets of tables in memory).
LEAN_ABOVE = 200

_FLOW_TYPES = ("boiler", "import", "export", "turbine", "extraction_turbine",
               "extraction", "letdown", "vent")


@dataclass
class CaseSetResult(StudyResult):
    """A :class:`~steamnet.solve.StudyResult` of a case set, with the equipment flows
    of every case (one dict per case, kept even when the tables are dropped)."""

    flows: list = field(default_factory=list)
    case_set: CaseSet | None = None


def _flow_row(r: CaseResult) -> dict:
    eq = r.equipment
    if not len(eq):
        return {}
    cols = {c: eq[c].to_numpy() if c in eq else None
            for c in ("item", "type", "flow_t_h", "spray_t_h", "power_kw")}
    row = {}
    for i, typ in enumerate(cols["type"]):
        if typ not in _FLOW_TYPES:
            continue
        item = cols["item"][i]
        row[_column(item, "flow_t_h")] = float(cols["flow_t_h"][i])
        if typ == "letdown":
            row[_column(item, "spray_t_h")] = float(cols["spray_t_h"][i])
        if typ in ("turbine", "extraction_turbine"):
            row[_column(item, "power_kw")] = float(cols["power_kw"][i])
    return row


@functools.lru_cache(maxsize=4096)
def _column(item: str, what: str) -> str:
    """One string object per column name, shared by every case (memory of long sets)."""
    return f"{item} {what}"


_EMPTY = pd.DataFrame()
_RESIDUALS = ("mass_rel", "energy_rel", "water_rel", "da_mass_kg_s", "da_energy_w")


def _lean(r: CaseResult) -> CaseResult:
    """The case without its tables, raw solution and per-header residuals (summary,
    water balance, findings and the relative residuals stay)."""
    return replace(r, headers=_EMPTY, equipment=_EMPTY, streams=_EMPTY, solution=None,
                   residuals={k: r.residuals[k] for k in _RESIDUALS if k in r.residuals})


def solve_case_set(cs: CaseSet, *, progress: Progress | None = None,
                   keep_tables: bool | None = None,
                   warm_start: bool = True) -> CaseSetResult:
    """Balance every case of ``cs`` in order; a case that cannot balance is reported
    (status) and the others still run.

    Parameters
    ----------
    cs : CaseSet
        From :func:`~steamnet.studies.casetable.read_case_table` or
        :func:`~steamnet.studies.casetable.model_case_set`.
    progress : callable, optional
        ``progress(done, total, case)`` after each case.
    keep_tables : bool, optional
        Keep each case's header and equipment tables (default: when the set has at most
        :data:`LEAN_ABOVE` cases). Without them each case keeps its summary; the flows
        are in ``study.flows`` either way.
    warm_start : bool
        Start each balance from the enthalpies and modes of the case before.

    Returns
    -------
    CaseSetResult
    """
    keep = len(cs) <= LEAN_ABOVE if keep_tables is None else keep_tables
    out: list[CaseResult] = []
    flows: list[dict] = []
    start = None
    n = len(cs)
    for i, name in enumerate(cs):
        m = cs.build(name)
        r = solve(m, start=start if warm_start else None)
        if r.ok and warm_start:
            start = warm(r)
        flows.append(_flow_row(r))
        if not keep:
            r = _lean(r)
        out.append(r)
        tick(progress, i + 1, n, name)
    return CaseSetResult(cs.model, out, flows=flows, case_set=cs)


def case_results(study: StudyResult) -> pd.DataFrame:
    """One row per case: ``case``, ``based_on``, ``description``, ``status``,
    ``message``, the totals of :data:`SUMMARY_COLUMNS` and the equipment flow columns.
    Cases that did not balance come first, then the set's order."""
    rows = []
    cs = getattr(study, "case_set", None)
    flows = getattr(study, "flows", None) or [_flow_row(r) for r in study.cases]
    for r, f in zip(study.cases, flows):
        spec = cs.specs.get(r.case) if cs is not None else None
        row = {"case": r.case,
               "based_on": (spec.based_on or cs.base or "") if spec is not None and
               spec.row is not None else "",
               "description": cs.description(r.case) if cs is not None and spec else "",
               "status": r.status, "message": r.message}
        for k in SUMMARY_COLUMNS:
            row[k] = r.summary.get(k)
        row.update(f)
        rows.append(row)
    df = pd.DataFrame(rows)
    if len(df):
        order = (df["status"] == "solved").astype(int)
        df = df.iloc[order.argsort(kind="stable")].reset_index(drop=True)
    return df
