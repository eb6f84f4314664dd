"""Solve a case set (model-file cases, a case table or an hourly profile).

:func:`solve_case_set` balances every case with a warm start from the case before;
:func:`case_results` turns the result into one DataFrame row per case: the totals of the
case and, for each boiler, turbine, let-down station and vent, its flow (columns named
``'<item> flow_t_h'``, ``'<station> spray_t_h'``), so that a year of hours is one table.
"""

from __future__ import annotations

from functools import partial

import functools
from dataclasses import dataclass, field, replace

import pandas as pd

from ..model.cases import CaseSet, sweep_specs
from ..solve import CaseResult, StudyResult
from ..errors import ModelError
from ..evaluate import chunk_findings
from .common import Progress
from ..status import CaseStatus

__all__ = ["CaseSetResult", "solve_case_set", "case_results",
           "SUMMARY_COLUMNS", "LEAN_ABOVE"]

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
    return _flow_row_of(eq[[c for c in ("item", "type", "flow_t_h", "spray_t_h",
                                        "power_kw") if c in eq]].to_dict("records"))


def _flow_row_of(rows: list[dict]) -> dict:
    """Flow (and spray, power) columns from equipment rows (dicts of
    :func:`steamnet.solver.results.equipment_rows`)."""
    row = {}
    for r in rows:
        typ = r["type"]
        if typ not in _FLOW_TYPES:
            continue
        item = r["item"]
        row[_column(item, "flow_t_h")] = float(r["flow_t_h"])
        if typ == "letdown":
            row[_column(item, "spray_t_h")] = float(r["spray_t_h"])
        if typ in ("turbine", "extraction_turbine"):
            row[_column(item, "power_kw")] = float(r["power_kw"])
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
                   keep_tables: bool | None = None, warm_start: bool = True,
                   workers: int = 1, scheduler: str | None = None) -> CaseSetResult:
    """Balance every case of ``cs`` in order; a case that cannot balance is reported
    (status) and the others still run.

    The cases run as a sweep (:mod:`steamnet.sweep`): in chunks of 24, each case
    warm-started from the one before, serially, in ``workers`` processes or on a dask
    cluster, with the same answers. A row based on other rows is made with their
    changes and its own, in that order, on the model-file case at the root.

    Parameters
    ----------
    cs : CaseSet
        From :func:`~steamnet.studies.casetable.read_case_table` or
        :func:`~steamnet.studies.casetable.model_case_set`.
    progress : callable, optional
        ``progress(done, total, case)`` after each chunk of cases.
    keep_tables : bool, optional
        Keep each case's header, equipment and stream tables (default: when the set has
        at most :data:`LEAN_ABOVE` cases). Without them each case keeps its summary;
        the flows are in ``study.flows`` either way.
    warm_start : bool
        Start each balance from the enthalpies and modes of the case before.
    workers : int
        Processes to solve in [-]
    scheduler : str, optional
        Address of a dask.distributed scheduler to run on (extra ``dask``).

    Returns
    -------
    CaseSetResult
    """
    from ..sweep import run_sweep
    keep = len(cs) <= LEAN_ABOVE if keep_tables is None else keep_tables
    out, per_chunk = run_sweep(cs.model, sweep_specs(cs), workers=workers,
                               scheduler=scheduler, tables=keep, streams=False,
                               progress=progress, warm_start=warm_start,
                               extra=partial(_chunk_extra, cs.model.stations),
                               keep_solutions=keep)
    flows = [f for chunk, _ in per_chunk for f in chunk]
    blocks = [b for _, b in per_chunk]
    for i, (r, f) in enumerate(zip(out, flows)):
        if isinstance(f, str):              # its equipment rows left IAPWS-IF97
            out[i], flows[i] = CaseResult.failed(r.case, CaseStatus.ERROR, f), {}
        elif r.status == CaseStatus.ERROR and r.input_errors:
            out[i] = replace(r, message=_row_message(cs, r))
    if not keep:
        out = [_lean(r) for r in out]
    return CaseSetResult(cs.model, out, [b.points for b in blocks],
                         findings_blocks=blocks, flows=flows, case_set=cs)


def _chunk_extra(data: dict, results: list[CaseResult]) -> tuple:
    """Per solved chunk, made where it was solved: the equipment flows of each case and
    the chunk's findings (:func:`steamnet.evaluate.chunk_findings`)."""
    return _chunk_flows(results), chunk_findings(data, results)


def _row_message(cs: CaseSet, r: CaseResult) -> str:
    """The error of a case whose model is not valid, as the case set words it (naming
    the table file, the row and the column); made again on its own, only for such
    cases."""
    try:
        cs.build(r.case)
    except ModelError as exc:
        return str(exc)
    return r.message


def _chunk_flows(results: list[CaseResult]) -> list:
    """The equipment flow columns of each case of a solved chunk, read from its raw
    solution (so also for cases solved without tables); for a case whose equipment
    states leave IAPWS-IF97, the error text instead (the case is then reported as an
    error, as when its tables are built)."""
    from ..errors import PropertyRangeError
    from ..solver.network import ItemPropertyError
    from ..solver.results import equipment_rows
    out = []
    for r in results:
        sol = r.solution
        if r.status == CaseStatus.ERROR or sol is None or sol.status not in (CaseStatus.SOLVED,
                                                                    CaseStatus.INFEASIBLE):
            out.append({})
            continue
        try:
            out.append(_flow_row_of(equipment_rows(sol, r.case)))
        except (ItemPropertyError, PropertyRangeError) as exc:
            out.append(f"outside IAPWS-IF97: {exc}")     # the case is an error
    return out


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
        order = (df["status"] == CaseStatus.SOLVED).astype(int)
        df = df.iloc[order.argsort(kind="stable")].reset_index(drop=True)
    return df
