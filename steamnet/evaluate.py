"""One evaluation of solved balances, wherever they come from.

A case of the model file, a row of a case table or an hourly profile, a trip, a new
consumer, a headroom or marginal probe: every balance goes through :func:`evaluate`
(many balances of one study) or :func:`case_rows` plus the station checks (one balance),
and gives rows of one findings table, :data:`FINDING_COLUMNS`, in one vocabulary:

* the balance itself (check ``balance``): ok when it closes, fail when it is infeasible,
  did not converge or could not be computed;
* what the balance flags (``header_wet``, ``exhaust_quality``, ``outlet_setpoint``,
  ``steam_vented``, ``at_limit``);
* every station check of every let-down (docs/checks/index.md), and the checks across
  the cases of the study (``gain_spread_*``). On a balance that does not close the
  station checks are "not assessed: the case does not balance".

The check ids, verdict words (ok, warn, fail, not assessed, not applicable) and source
labels are the same in the console, the JSON export and the workbook. Each check has a
page under docs/checks/.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import chain

import pandas as pd

from .errors import ModelError
from .solver.limits import vent_flows, willans_efficiencies
from .solver.results import operating_flags, wet_text
from .stations.checks import ALL_CASES
from .stations.rows import SEVERITY, Status
from .stations.run import PointChecks, StationReport, point_checks, run_checks
from .status import CaseStatus, beyond
from .units import C0, T_H

__all__ = ["FINDING_COLUMNS", "CASE_CHECKS", "INPUT_CHECKS", "input_rows", "case_input_warnings", "RANK", "sort_findings", "Evaluation", "ChunkFindings", "case_rows",
           "chunk_findings", "evaluate", "evaluate_one", "new_fails", "compare_findings"]

#: Columns of the findings table (docs/results.md).
FINDING_COLUMNS = ("case", "item", "type", "check", "value", "limit", "unit", "status",
                   "basis", "source", "advice")

#: The checks of a balance beyond the station checks, with their docs pages.
CASE_CHECKS = ("balance", "header_wet", "exhaust_quality", "outlet_setpoint",
               "steam_vented", "at_limit", "turbine_efficiency")

#: The checks of the input (warnings of ``steamnet.model.validate.input_warnings``).
INPUT_CHECKS = ("condenser_pressure", "spray_supply_margin")

#: Implied isentropic efficiency of a Willans line above which it is flagged (common
#: practice, no source); above 1 it fails (more than an ideal expansion).
WILLANS_ETA_WARN = 0.9


_BALANCE_SOURCE = "steady-state mass and energy balance (docs/method.md)"
_ADVICE = {
    CaseStatus.INFEASIBLE: "the case cannot balance within the limits: see the header "
                           "named and its binding limits; relieve one of them, add supply "
                           "or shed demand before relying on this case",
    CaseStatus.NOT_CONVERGED: "the balance did not converge: its numbers are not a "
                              "result; check the case's changes and limits",
    CaseStatus.ERROR: "the case could not be computed: correct the input named in the "
                      "message",
}


def _status_text(s) -> str:
    return s.value if isinstance(s, Status) else str(s)


def case_rows(result, model=None) -> list[tuple]:
    """The balance-level findings of one solved (or failed) case, as tuples in
    :data:`FINDING_COLUMNS` order: the ``balance`` row, then the operating flags read
    from its solution (or, for a result whose solution was not kept, from its tables)."""
    case = result.case
    st = result.status
    if st == CaseStatus.SOLVED:
        rows = [(case, case, "case", "balance", None, None, "", Status.OK.value,
                 "balances: every header's mass and energy balance closes",
                 _BALANCE_SOURCE, "")]
    else:
        rows = []
        if st == CaseStatus.INFEASIBLE and result.findings:
            for f in result.findings:
                amount = f.get("amount_kg_s")
                hdr = f.get("header") or case
                rows.append((case, hdr, "header" if f.get("header") else "case",
                             "balance", amount * T_H if amount is not None else None, None,
                             "t/h", Status.FAIL.value, f.get("message", result.message),
                             _BALANCE_SOURCE, _ADVICE[CaseStatus.INFEASIBLE]))
        else:
            rows.append((case, case, "case", "balance", None, None, "", Status.FAIL.value,
                         f"{st}: {result.message}", _BALANCE_SOURCE,
                         _ADVICE.get(st, "")))
    sol = result.solution
    if sol is not None and st in (CaseStatus.SOLVED, CaseStatus.INFEASIBLE) \
            and sol.x is not None and all(math.isfinite(v) for v in sol.x):
        rows.extend(_flag_rows(case, operating_flags(sol), sol))
    elif len(getattr(result, "equipment", ())) or len(getattr(result, "headers", ())):
        rows.extend(_table_flag_rows(result, model))
    return rows


def _flag_rows(case: str, flags, sol) -> list[tuple]:
    out = []
    for f in flags:
        out.append(_flag(case, f.item, f.type, f.kind, f.value, f.limit))
    for name, eta, m in willans_efficiencies(sol):
        out.append(_willans_row(case, name, eta, m))
    # vents that pass steam (a loss, always reported)
    for name, m, cap in vent_flows(sol):
        if m > 1e-6:
            out.append(_flag(case, name, "vent", "steam_vented", m, cap))
    return out


def _willans_row(case: str, item: str, eta: float, m: float) -> tuple:
    """The implied isentropic efficiency of a turbine's Willans line in one balance."""
    status = (Status.FAIL if beyond(eta, 1.0, above=True) else
              Status.WARN if beyond(eta, WILLANS_ETA_WARN, above=True) else Status.OK)
    limit = 1.0 if status is Status.FAIL else WILLANS_ETA_WARN
    advice = {
        Status.FAIL: "the Willans line gives more power than an ideal expansion of this "
                     "steam: check willans_no_load, willans_slope and their units",
        Status.WARN: "the Willans line implies an efficiency few turbines reach: check "
                     "it against the maker's data",
        Status.OK: "",
    }[status]
    return (case, item, "turbine", "turbine_efficiency", eta, limit, "-", status.value,
            f"Willans line: implied isentropic efficiency {eta:.3f} at {m * T_H:.4g} t/h "
            "from the inlet header's state", "common practice, no source", advice)


def _flag(case, item, typ, kind, value, limit) -> tuple:
    """One flag as a finding row (value and limit from SI into the row's unit)."""
    if kind == "header_wet":
        return (case, item, typ, "header_wet", value, 1.0, "-", Status.FAIL.value,
                f"{wet_text(value)}: header enthalpy below saturated vapour",
                "IAPWS-IF97 saturation at the header pressure",
                "condensate forms in the header and its users: check heat loss, "
                "desuperheater setpoints and drainage")
    if kind == "exhaust_quality" and limit is None:
        return (case, item, typ, "exhaust_quality", value, None, "-", Status.OK.value,
                f"wet exhaust, quality {value:.4f}; the model gives this turbine no "
                "lowest acceptable quality", "no limit in the model file",
                "give the maker's lowest exhaust quality to have it checked")
    if kind == "exhaust_quality":
        low = beyond(value, limit, above=False)
        return (case, item, typ, "exhaust_quality", value, limit, "-",
                (Status.FAIL if low else Status.OK).value,
                f"wet exhaust, quality {value:.4f} against the lowest acceptable "
                f"{limit:.3f}", "model file min_exhaust_quality (default 0.88, from "
                "memory; the maker's limit wins)",
                "exhaust wetter than the turbine's limit: blade erosion; reduce the "
                "condensing flow or raise the inlet temperature" if low else "")
    if kind == "outlet_setpoint":
        return (case, item, typ, "outlet_setpoint", value - C0, limit - C0, "degC",
                Status.WARN.value, f"outlet {value - C0:.1f} degC below the setpoint "
                f"{limit - C0:.1f} degC with no spray", "desuperheater energy balance",
                "the steam arrives colder than the outlet setpoint: no spray is possible "
                "and the outlet runs below it")
    if kind == "steam_vented":
        return (case, item, typ, "steam_vented", value * T_H,
                limit * T_H if limit is not None else None, "t/h", Status.WARN.value,
                f"{value * T_H:.3g} t/h vented", "vented steam is always a loss",
                "steam is vented: fuel and treated water lost; look for a user, less "
                "let-down or a lower fixed boiler load")
    at_max = kind == "at_maximum"
    return (case, item, typ, "at_limit", value * T_H, limit * T_H, "t/h",
            (Status.WARN if at_max else Status.OK).value,
            f"at its {'maximum' if at_max else 'minimum'} {limit * T_H:.3g} t/h",
            "model file limit",
            "no margin left: any more load goes to the next element of the header's "
            "sequence, or the case cannot balance" if at_max else "")


def _table_flag_rows(result, model=None) -> list[tuple]:
    """The flags of a result that kept its tables but not its solution (worker
    results): the same rows as :func:`_flag_rows`, read from the tables."""
    out = []
    hd, eq = result.headers, result.equipment
    if len(hd) and "wet" in hd:
        for r in hd[hd["wet"].astype(bool)].to_dict("records"):
            out.append(_flag(result.case, r["header"], "header", "header_wet",
                             r["quality"], 1.0))
    if not len(eq):
        return out
    for r in eq.to_dict("records"):
        q = r.get("exhaust_quality")
        if q is not None and not (isinstance(q, float) and math.isnan(q)) \
                and r.get("flow_t_h", 0) > 0:
            it = model.table(r["type"]).get(r["item"]) if model is not None else None
            out.append(_flag(result.case, r["item"], r["type"], "exhaust_quality", q,
                             getattr(it, "min_exhaust_quality", None)))
        if r["type"] == "letdown" and r.get("setpoint_reachable") is False \
                and r.get("flow_t_h", 0) > 0:
            out.append(_flag(result.case, r["item"], "letdown", "outlet_setpoint",
                             r["t_out_degc"] + C0, r["t_set_degc"] + C0))
        if r["type"] == "vent" and r.get("flow_t_h", 0) > 1e-6 * T_H:
            cap = r.get("max_t_h")
            out.append(_flag(result.case, r["item"], "vent", "steam_vented",
                             r["flow_t_h"] / T_H, None if cap is None or
                             (isinstance(cap, float) and math.isnan(cap)) else cap / T_H))
        it = (model.table(r["type"]).get(r["item"])
              if model is not None and r["type"] == "turbine" else None)
        eta = r.get("isentropic_efficiency")
        if getattr(it, "willans_slope", None) is not None and r.get("flow_t_h", 0) > \
                1e-6 * T_H and eta is not None and math.isfinite(eta):
            out.append(_willans_row(result.case, r["item"], eta, r["flow_t_h"] / T_H))
        lim = r.get("limit") or ""
        if lim in ("at maximum", "at minimum"):
            key = "max_t_h" if lim == "at maximum" else "min_t_h"
            out.append(_flag(result.case, r["item"], r["type"],
                             lim.replace(" ", "_"), r["flow_t_h"] / T_H,
                             r.get(key, r["flow_t_h"]) / T_H))
    return out


@dataclass(frozen=True)
class ChunkFindings:
    """What one chunk of a sweep contributes to its study's evaluation, made where the
    chunk was solved: the station check rows (as :class:`PointChecks`) and the balance
    rows (tuples in :data:`FINDING_COLUMNS` order)."""

    points: PointChecks
    rows: tuple


def chunk_findings(data: dict, results) -> ChunkFindings:
    """The sweep extra of the evaluation: station checks and balance rows of every case
    of a solved chunk."""
    return ChunkFindings(point_checks(data, results),
                         tuple(chain.from_iterable(case_rows(r) for r in results)))


@dataclass(frozen=True)
class Evaluation:
    """The findings of the balances of one study.

    Attributes
    ----------
    findings : pandas.DataFrame
        :data:`FINDING_COLUMNS`, one row per check of every balance (not-applicable
        station checks left out), worst first.
    stations : StationReport
        The station checks behind it (every row, envelopes, gains).
    """

    findings: pd.DataFrame
    stations: StationReport

    @property
    def failed(self) -> bool:
        """Whether any check fails (a balance that does not close included)."""
        return bool(len(self.findings)) and bool((self.findings["status"] == "fail").any())

    def count(self, status: str) -> int:
        return int((self.findings["status"] == status).sum()) if len(self.findings) else 0

    def of_case(self, case: str) -> pd.DataFrame:
        return self.findings[self.findings["case"] == case]

    def worst(self) -> dict[str, str]:
        """The worst verdict of each case (ok when it has only passes)."""
        out: dict[str, str] = {}
        if not len(self.findings):
            return out
        for case, s in zip(self.findings["case"], self.findings["status"]):
            cur = out.get(case)
            if cur is None or RANK[s] > RANK[cur]:
                out[case] = s
        return out

    def problems(self) -> pd.DataFrame:
        """The findings that are not ok: fail, warn, not assessed."""
        f = self.findings
        return f[f["status"].isin(("fail", "warn", "not_assessed"))] if len(f) else f


#: Severity of each verdict word (fail highest): the one ranking of findings.
RANK = {s.value: v for s, v in SEVERITY.items()}


def evaluate(study, *, data: dict | None = None, results=None,
             blocks: list | None = None) -> Evaluation:
    """Evaluate every balance of ``study`` (a StudyResult, or any object with ``model``
    and ``cases``): the balance rows of each case, every station check in every case
    and across the study's cases.

    ``data`` is the station data (default the model's); ``blocks`` the
    :class:`ChunkFindings` made while solving (``solve_cases(..., station_checks=True)``
    keeps them on the study), used when they cover the same cases.
    """
    data = data if data is not None else study.model.stations
    blocks = blocks if blocks is not None else getattr(study, "findings_blocks", None)
    cases = study.cases
    if blocks and tuple(c for b in blocks for c in b.points.cases) == \
            tuple(cr.case for cr in cases) and all(b.points.data == data for b in blocks):
        rows = list(chain.from_iterable(b.rows for b in blocks))
        points = [b.points for b in blocks]
    else:
        rows = list(chain.from_iterable(case_rows(r, study.model) for r in cases))
        points = [point_checks(data, cases)]
    report = run_checks(_Study(study.model, cases, points), data=data)
    rows.extend(input_rows(study.model, [c.case for c in cases]))
    return Evaluation(findings=_table(rows, report), stations=report)


def case_input_warnings(model, cases=()) -> list[tuple[str, object]]:
    """(case, warning) of the input warnings
    (:func:`steamnet.model.validate.input_warnings`): those of the base model for
    ``"all cases"``, and those that only a case of the model file among ``cases`` has,
    for that case."""
    from .model.validate import input_warnings
    base = input_warnings(model)
    out = [(ALL_CASES, w) for w in base]
    named = {c.name for c in getattr(model, "cases", ())}
    for case in dict.fromkeys(cases):
        if case in named:
            try:
                m = model.for_case(case)
            except ModelError:
                continue        # the case's result says why it could not be solved
            out.extend((case, w) for w in input_warnings(m) if w not in base)
    return out


def input_rows(model, cases=()) -> list[tuple]:
    """The input warnings as finding rows (:func:`case_input_warnings`)."""
    return [(case, w.item, w.type, w.check, w.value, w.limit, w.unit, Status.WARN.value,
             f"{w.message} (field '{w.field}')", w.source, w.advice)
            for case, w in case_input_warnings(model, cases)]


@dataclass(frozen=True)
class _Study:
    model: object
    cases: list
    point_checks: list


def _table(rows: list[tuple], report: StationReport) -> pd.DataFrame:
    bal = pd.DataFrame(rows, columns=FINDING_COLUMNS)
    st = report.checks
    st = st[st["status"] != Status.NOT_APPLICABLE.value]
    st = pd.DataFrame({"case": st["case"], "item": st["station"], "type": "letdown",
                       "check": st["check"], "value": st["value"], "limit": st["limit"],
                       "unit": st["unit"], "status": st["status"], "basis": st["basis"],
                       "source": st["source"], "advice": st["advice"]},
                      columns=FINDING_COLUMNS)
    frames = [f for f in (bal, st) if len(f)]
    df = pd.concat(frames, ignore_index=True) if frames else bal
    if not len(df):
        return df
    return sort_findings(df, ["item", "check"])


def sort_findings(df: pd.DataFrame, keys: list[str]) -> pd.DataFrame:
    """``df`` worst verdict first, then its cases in the order they first appear, then
    ``keys``."""
    if not len(df):
        return df
    order = {c: i for i, c in enumerate(dict.fromkeys(df["case"]))}
    df = df.assign(_sev=-df["status"].map(RANK).fillna(0), _case=df["case"].map(order))
    return df.sort_values(["_sev", "_case", *keys], kind="stable") \
        .drop(columns=["_sev", "_case"]).reset_index(drop=True)


def evaluate_one(result, data: dict) -> pd.DataFrame:
    """The findings of one balance (a probe, a what-if, a trip): its balance rows and
    every single-point station check, as :data:`FINDING_COLUMNS` (not-applicable rows
    left out; no checks across cases)."""
    rows = case_rows(result)
    pc = point_checks(data, [result])
    if pc.columns and len(pc.columns[0]):
        for case, st, chk, val, lim, unit, status, basis, source, advice in zip(
                *pc.columns):
            if status != Status.NOT_APPLICABLE.value:
                rows.append((case, st, "letdown", chk, val, lim, unit, status, basis,
                             source, advice))
    return pd.DataFrame(rows, columns=FINDING_COLUMNS)


def new_fails(before: pd.DataFrame, after: pd.DataFrame) -> pd.DataFrame:
    """The rows of ``after`` that fail where the same (item, check) did not fail in
    ``before`` (the balance row included)."""
    if not len(after):
        return after
    failed_before = set(zip(before["item"], before["check"],
                            before["status"] == "fail")) if len(before) else set()
    mask = [(s == "fail" and (i, c, True) not in failed_before)
            for i, c, s in zip(after["item"], after["check"], after["status"])]
    return after[mask]


def compare_findings(before: pd.DataFrame, after: pd.DataFrame) -> pd.DataFrame:
    """How the findings of a balance change from ``before`` to ``after`` (the same case
    without and with a change): one row per (item, check) whose verdict differs, with
    ``effect`` created (a problem that was not there), worsened, improved or cleared,
    and both verdicts and values."""
    key = ["item", "check"]
    b = before.drop_duplicates(key).set_index(key) if len(before) else None
    a = after.drop_duplicates(key).set_index(key) if len(after) else None
    keys = list(dict.fromkeys(list(a.index if a is not None else []) +
                              list(b.index if b is not None else [])))
    out = []
    for k in keys:
        ra = a.loc[k] if a is not None and k in a.index else None
        rb = b.loc[k] if b is not None and k in b.index else None
        sa = ra["status"] if ra is not None else "ok"
        sb = rb["status"] if rb is not None else "ok"
        if sa == sb:
            continue
        bad = {"fail", "warn", "not_assessed"}
        if sb not in bad and sa in bad:
            effect = "created"
        elif sb in bad and sa not in bad:
            effect = "cleared"
        else:
            effect = "worsened" if RANK[sa] > RANK[sb] else "improved"
        ref = ra if ra is not None else rb
        out.append({"item": k[0], "type": ref["type"], "check": k[1], "effect": effect,
                    "status_without": sb, "status_with": sa,
                    "value_without": rb["value"] if rb is not None else None,
                    "value_with": ra["value"] if ra is not None else None,
                    "limit": ref["limit"], "unit": ref["unit"],
                    "basis": ref["basis"], "source": ref["source"],
                    "advice": ref["advice"]})
    df = pd.DataFrame(out, columns=["item", "type", "check", "effect", "status_without",
                                    "status_with", "value_without", "value_with",
                                    "limit", "unit", "basis", "source", "advice"])
    if len(df):
        rank = df["status_with"].map(RANK).fillna(0)
        df = df.assign(_r=-rank).sort_values(["_r", "item", "check"], kind="stable") \
            .drop(columns="_r").reset_index(drop=True)
    return df
