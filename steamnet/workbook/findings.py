"""Findings: one row per thing a reader must look at, worst first.

From three places: a case that did not balance (infeasible, not converged, error); what
the balance itself flags (a wet header, a turbine exhaust wetter than its limit, a
desuperheater whose setpoint the steam cannot reach, steam vented); and every station
check that did not pass (fail, warn, not assessed).

Order: the cases that did not balance first, then by severity (fail, warn, not
assessed), then in case order, then by item.
"""

from __future__ import annotations

import math

from ..units import T_H as _TH
from . import style
from .columns import Column, col
from .sheet import Table

__all__ = ["build_findings", "findings_table", "FINDING_KEYS"]

FINDING_KEYS = ("severity", "case", "case_status", "item", "check", "value", "limit",
                "unit", "advice", "basis")



def _f(severity, case, status, item, check, value=None, limit=None, unit="", advice="",
       basis="") -> dict:
    return {"severity": severity, "case": case, "case_status": status, "item": item,
            "check": check, "value": value, "limit": limit, "unit": unit,
            "advice": advice, "basis": basis}


def _case_findings(c) -> list[dict]:
    out = []
    if c.status == "solved":
        return out
    if c.status == "infeasible" and c.findings:
        for f in c.findings:
            side = f.get("side", "")
            hdr = f.get("header", "")
            amount = f.get("amount_kg_s")
            limits = "; ".join(str(x) for x in f.get("limits", []) or [])
            if side == "short":
                advice = (f"Header '{hdr}' is short of steam with every supply at a "
                          "limit: raise a binding limit, add supply or shed demand before "
                          "relying on this case.")
            else:
                advice = (f"Header '{hdr}' has steam it cannot pass on or vent: review "
                          "vent capacity, let-down sequence and fixed loads.")
            out.append(_f("fail", c.case, c.status, f"header '{hdr}'" if hdr else "",
                          f"balance ({side or 'infeasible'})",
                          amount * _TH if amount is not None else None, limits, "t/h",
                          f"{advice} {f.get('message', '')}".strip(),
                          "steady-state mass and energy balance"))
        return out
    advice = {"infeasible": "The case cannot balance; see the message.",
              "not_converged": "The balance did not converge: its numbers are not a "
                               "result. Check the case's changes and limits.",
              "error": "The case could not be computed; correct the input named in the "
                       "message."}.get(c.status, "")
    out.append(_f("fail", c.case, c.status, "", f"balance ({style.display(c.status)})",
                  None, None, "", f"{advice} {c.message}".strip(),
                  "steady-state mass and energy balance"))
    return out


def _where(df, mask) -> list[dict]:
    """The rows of ``df`` where ``mask`` holds (cheap when none does, the usual case)."""
    return df[mask].to_dict("records") if mask.any() else []


def _balance_flags(c) -> list[dict]:
    """What the balance's own tables flag, for any case that has tables."""
    out = []
    hd, eq = c.headers, c.equipment
    if len(hd) and "wet" in hd and hd["wet"].astype(bool).any():
        for _, h in hd[hd["wet"].astype(bool)].iterrows():
            out.append(_f("warn", c.case, c.status, f"header '{h['header']}'",
                          "header wet", h.get("quality"), 1.0, "-",
                          "Steam in this header is wet: condensate in the header and "
                          "its users; check heat loss, desuperheater setpoints and traps.",
                          "header enthalpy below saturated vapour (IAPWS-IF97)"))
    if not len(eq):
        return out
    typ = eq["type"].to_numpy()
    flow = eq["flow_t_h"].to_numpy(dtype=float)
    if "quality_below_limit" in eq:
        wet = eq["quality_below_limit"].to_numpy(dtype=object) == True  # noqa: E712
        for r in _where(eq, wet):
            out.append(_f("warn", c.case, c.status, f"{r['type'].replace('_', ' ')} "
                          f"'{r['item']}'", "exhaust quality", r.get("exhaust_quality"),
                          None, "-", "Exhaust wetter than the turbine's limit: blade "
                          "erosion; reduce condensing flow or raise inlet temperature.",
                          "turbine's minimum exhaust quality (model file)"))
    if "setpoint_reachable" in eq:
        cold = ((typ == "letdown") & (flow > 0)
                & (eq["setpoint_reachable"].to_numpy(dtype=object) == False))  # noqa: E712
        for r in _where(eq, cold):
            out.append(_f("warn", c.case, c.status, f"letdown '{r['item']}'",
                          "setpoint reachable", r.get("t_out_degc"), r.get("t_set_degc"),
                          "°C", "The steam arrives colder than the outlet setpoint: no "
                          "spray is possible and the outlet runs below setpoint.",
                          "desuperheater energy balance"))
    vented = (typ == "vent") & (flow > 1e-6)
    for r in _where(eq, vented):
        out.append(_f("warn", c.case, c.status, f"vent '{r['item']}'", "steam vented",
                      r["flow_t_h"], r.get("max_t_h"), "t/h",
                      "Steam is vented: fuel and treated water lost. Look for a user, "
                      "less let-down, or a lower fixed boiler load.",
                      "vented flow is always a loss"))
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
                      get(r, "basis") or ""))
    return out


def build_findings(run) -> list[dict]:
    """Every finding of ``run`` (a :class:`~steamnet.workbook.run.Run`), sorted."""
    rows = []
    for c in run.cases:
        rows.extend(_case_findings(c))
        rows.extend(_balance_flags(c))
    rows.extend(_check_findings(run))
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
        col("basis", currency=cur)]
    n = len(run.findings)
    note = (f"{n} finding(s), worst first: cases that did not balance, then fail, warn "
            "and not assessed. The value and limit are in the row's unit."
            if n else "No findings: every case balanced and no check reported a problem.")
    if run.checks is None:
        note += " Station checks were not run for this workbook."
    return Table("Findings", "findings", "Findings", note, cols,
                 lambda: ([f[k] for k in FINDING_KEYS] for f in run.findings),
                 freeze_cols=2)
