"""Findings: one row per thing a reader must look at, worst first.

The same evaluation as every command (:mod:`steamnet.evaluate`): a case that did not
balance (infeasible, not converged, error); what the balance itself flags (a wet header,
a turbine exhaust wetter than its limit, a desuperheater whose setpoint the steam cannot
reach, steam vented, an element at its maximum); and every station check that did not
pass (fail, warn, not assessed), each with the source of its limit.

Order: the cases that did not balance first, then by severity (fail, warn, not
assessed), then in case order, then by item.
"""

from __future__ import annotations

import math

from ..evaluate import case_rows
from . import style
from .columns import Column, col
from .sheet import Table

__all__ = ["build_findings", "findings_table", "FINDING_KEYS"]

FINDING_KEYS = ("severity", "case", "case_status", "item", "check", "value", "limit",
                "unit", "advice", "basis", "source")



def _f(severity, case, status, item, check, value=None, limit=None, unit="", advice="",
       basis="", source="") -> dict:
    return {"severity": severity, "case": case, "case_status": status, "item": item,
            "check": check, "value": value, "limit": limit, "unit": unit,
            "advice": advice, "basis": basis, "source": source}


def _label(typ: str, item: str) -> str:
    return f"{typ.replace('_', ' ')} '{item}'" if typ and typ != "case" else str(item)


def _case_findings(c) -> list[dict]:
    """The balance rows of one case that are not ok (the same rows every command
    prints: :func:`steamnet.evaluate.case_rows`)."""
    out = []
    for (case, item, typ, check, value, limit, unit, status, basis, source,
         advice) in case_rows(c):
        if status in ("ok", "not_applicable"):
            continue
        text = f"{basis}: {advice}" if check == "balance" and advice else \
            (advice or basis)
        out.append(_f(status, case, c.status, _label(typ, item), check, value, limit,
                      unit, text, basis, source))
    return out


def _check_findings(run) -> list[dict]:
    df = run.checks
    if df is None:
        return []
    bad = df[df["status"].map(lambda s: style.rank(s) in (0, 1, 2))]
    out = []
    get = (lambda r, k: r.get(k) if k in bad.columns else None)
    for r in bad.to_dict("records"):
        case = str(r["case"])
        advice = get(r, "advice") or ""
        if not advice or (isinstance(advice, float) and math.isnan(advice)):
            advice = (f"Check '{r['check']}' is {style.display(r['status'])}: review the "
                      "station against its limit.")
        out.append(_f(style.normalise(r["status"]), case, run.status_of.get(case, ""),
                      f"letdown '{r['station']}'", str(r["check"]), get(r, "value"),
                      get(r, "limit"), get(r, "unit") or "", str(advice),
                      get(r, "basis") or "", get(r, "source") or ""))
    return out


def _in_unbalanced_case(f: dict) -> dict:
    """A finding of a case that does not balance says so: its numbers show where the
    balance stopped, not an operating point."""
    status = f["case_status"]
    if status and style.is_bad_status(status) and f["check"] != "balance":
        f["advice"] = (f"the case does not balance ({style.display(status)}): this shows "
                       f"where it stands, not an operating point; {f['advice']}")
    return f


def build_findings(run) -> list[dict]:
    """Every finding of ``run`` (a :class:`~steamnet.workbook.run.Run`), sorted."""
    rows = []
    for c in run.cases:
        rows.extend(_case_findings(c))
    rows.extend(_check_findings(run))
    rows = [_in_unbalanced_case(f) for f in rows]
    order = run.case_order
    rows.sort(key=lambda f: (0 if style.is_bad_status(f["case_status"] or "solved") else 1,
                             style.rank(f["severity"]),
                             order.get(f["case"], len(order)), f["item"], f["check"]))
    return rows


def findings_table(run) -> Table:
    cur = run.currency
    cols: list[Column] = [
        Column("severity", "Severity", "verdict"), col("case"), col("case_status"),
        col("item"), col("check"), Column("value", "Value", "num", None, "unit"),
        Column("limit", "Limit", "num", None, "unit"), col("unit"), col("advice"),
        col("basis", currency=cur), Column("source", "Source of the limit", "text")]
    n = len(run.findings)
    note = (f"{n} finding(s), worst first: cases that did not balance, then fail, warn "
            "and not assessed. The value and limit are in the row's unit."
            if n else "No findings: every case balanced and no check reported a problem.")
    if run.checks is None:
        note += " Station checks were not run for this workbook."
    return Table("Findings", "findings", "Findings", note, cols,
                 lambda: ([f[k] for k in FINDING_KEYS] for f in run.findings),
                 freeze_cols=2)
