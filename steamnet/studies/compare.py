"""Case differences: two solved cases side by side, with the difference of every number.

:func:`compare_cases` sets each case of a solved study against a reference case (by
default the first): the plant totals, every header's state and throughput, every
equipment item's flow, spray, power, fuel and outlet temperature, and the station checks
whose verdict (or, for a check that warns or fails, whose value) differs. A pair in which
either case did not balance gets one status row instead: its numbers are not an
operating point to subtract. docs/studies.md describes the columns.

Results support studies; they do not replace design by a licensed engineer, the
equipment maker's data, or the codes in force at the site.
"""

from __future__ import annotations

import math
from typing import Iterable

import pandas as pd

from ..errors import ModelError
from ..evaluate import RANK
from ..stations.rows import Status
from .consumer import TOTALS

__all__ = ["compare_cases", "COMPARE_COLUMNS", "SECTIONS", "changed",
           "SAME_REL"]

#: Columns of the case-differences table, in order (docs/studies.md).
COMPARE_COLUMNS = ["case", "reference", "status", "reference_status", "section", "item",
                   "type", "quantity", "unit", "reference_value", "value", "difference",
                   "reference_verdict", "verdict", "message"]

#: Sections in the order they stand within each pair of cases.
SECTIONS = ("status", "total", "header", "equipment", "finding")

#: Header quantities: column -> (quantity, unit).
_HEADER = {"p_barg": ("pressure", "bar(g)"), "t_degc": ("temperature", "degC"),
           "superheat_k": ("superheat", "K"), "quality": ("steam quality", "-"),
           "inflow_t_h": ("throughput", "t/h")}

#: Equipment quantities: column -> (quantity, unit, a missing value counts as zero).
#: An item that is out of service in one case passes no flow there; its outlet
#: temperature is then not a number to subtract.
_EQUIPMENT = {"flow_t_h": ("flow", "t/h", True), "spray_t_h": ("spray", "t/h", True),
              "power_kw": ("power", "kW", True), "fuel_mw": ("fuel", "MW", True),
              "t_out_degc": ("outlet temperature", "degC", False)}

#: Verdicts whose value is worth following when it changes (a limit is near or crossed).
_FINDING = {Status.FAIL.value, Status.WARN.value}


def _num(v) -> float:
    """A float, NaN for missing."""
    if v is None or isinstance(v, str):
        return math.nan
    try:
        return float(v)
    except (TypeError, ValueError):
        return math.nan


#: Relative difference below which two values count as the same when the rows that
#: changed are picked (rounding of the solve, far below its closure of 1e-6) [-]
SAME_REL = 1e-9


def changed(reference_value: float, value: float, difference: float) -> bool:
    """Whether a row's quantity changed: a difference beyond rounding
    (:data:`SAME_REL` of the larger value), or a value on one side only."""
    if math.isnan(reference_value) != math.isnan(value):
        return True
    if math.isnan(difference):
        return False
    scale = max(abs(_zero_nan(reference_value)), abs(_zero_nan(value)))
    return abs(difference) > SAME_REL * scale


def _difference(a: float, b: float, absent_is_zero: bool) -> float:
    if absent_is_zero:
        a = 0.0 if math.isnan(a) else a
        b = 0.0 if math.isnan(b) else b
    return b - a


def _case_names(study, reference, cases) -> tuple[str, list[str]]:
    names = [c.case for c in study.cases]
    known = ", ".join(names) or "none"
    if not names:
        raise ModelError("the study holds no case to compare", item="cases")
    ref = names[0] if reference is None else str(reference)
    if ref not in names:
        raise ModelError(f"no case '{ref}' to compare against (cases: {known})",
                         item="reference")
    if cases is None:
        others = [n for n in names if n != ref]
    else:
        others = [cases] if isinstance(cases, str) else [str(c) for c in cases]
        for n in others:
            if n not in names:
                raise ModelError(f"no case '{n}' to compare (cases: {known})",
                                 item="cases")
        others = [n for n in dict.fromkeys(others) if n != ref]
    return ref, others


def _checks_of(study, report) -> pd.DataFrame:
    """The station checks' long table: from ``report`` (a StationReport or its checks
    table), or run on the study when None."""
    if report is None:
        from ..stations.run import run_checks
        report = run_checks(study)
    return report.checks if hasattr(report, "checks") else report


def _totals(head: dict, r0, r1, cur: str) -> list[dict]:
    return [{**head, "section": "total", "item": "plant", "type": "", "quantity": q,
             "unit": unit.format(cur=cur), **_values(r0.summary.get(k),
                                                     r1.summary.get(k), False)}
            for k, (q, unit) in TOTALS.items()]


def _values(a, b, absent_is_zero: bool) -> dict:
    a, b = _num(a), _num(b)
    return {"reference_value": a, "value": b,
            "difference": _difference(a, b, absent_is_zero)}


def _records(df: pd.DataFrame, key: str) -> dict[str, dict]:
    return {str(r[key]): r for r in df.to_dict("records")} if len(df) else {}


def _headers(head: dict, r0, r1) -> list[dict]:
    h0, h1 = _records(r0.headers, "header"), _records(r1.headers, "header")
    out = []
    for name in dict.fromkeys([*h0, *h1]):
        a, b = h0.get(name, {}), h1.get(name, {})
        for k, (q, unit) in _HEADER.items():
            v = _values(a.get(k), b.get(k), False)
            if k == "quality" and math.isnan(v["reference_value"]) \
                    and math.isnan(v["value"]):
                continue                     # dry in both cases: superheat says it
            out.append({**head, "section": "header", "item": name, "type": "header",
                        "quantity": q, "unit": unit, **v})
    return out


def _equipment(head: dict, r0, r1) -> list[dict]:
    e0, e1 = _records(r0.equipment, "item"), _records(r1.equipment, "item")
    by_quantity: dict[str, list[dict]] = {q: [] for q, _, _ in _EQUIPMENT.values()}
    for name in dict.fromkeys([*e0, *e1]):
        a, b = e0.get(name, {}), e1.get(name, {})
        typ = str(b.get("type") or a.get("type") or "")
        for k, (q, unit, zero) in _EQUIPMENT.items():
            v = _values(a.get(k), b.get(k), zero)
            ra, rb = v["reference_value"], v["value"]
            if (math.isnan(ra) or (zero and ra == 0)) and \
                    (math.isnan(rb) or (zero and rb == 0)):
                continue                     # does not apply, or nothing in both
            by_quantity[q].append({**head, "section": "equipment", "item": name,
                                   "type": typ, "quantity": q, "unit": unit, **v})
    out = []
    for rows in by_quantity.values():        # flow, spray, power, fuel, temperature
        out += sorted(rows, key=lambda r: -abs(_zero_nan(r["difference"])))
    return out


def _zero_nan(v: float) -> float:
    return 0.0 if math.isnan(v) else v


def _checks_by_case(checks: pd.DataFrame) -> dict[str, dict[tuple[str, str], tuple]]:
    """case -> (station, check) -> (value, unit, verdict)."""
    out: dict[str, dict] = {}
    if checks is None or not len(checks):
        return out
    unit = checks["unit"] if "unit" in checks else [""] * len(checks)
    for case, st, chk, v, u, s in zip(checks["case"].astype(str),
                                      checks["station"].astype(str),
                                      checks["check"].astype(str), checks["value"], unit,
                                      checks["status"].astype(str)):
        out.setdefault(case, {})[(st, chk)] = (v, "" if u is None or u != u else str(u), s)
    return out


def _findings(head: dict, c0: dict, c1: dict) -> list[dict]:
    """Checks whose verdict differs, and checks that warn or fail in either case and
    whose value changed; the worse verdict first, a changed verdict before a changed
    value, then by size of the change."""
    out = []
    for key in dict.fromkeys([*c0, *c1]):
        a0, u0, s0 = c0.get(key, (None, "", Status.NOT_APPLICABLE.value))
        a1, u1, s1 = c1.get(key, (None, "", Status.NOT_APPLICABLE.value))
        v = _values(a0, a1, False)
        moved = changed(v["reference_value"], v["value"], v["difference"])
        if s0 == s1 and not (moved and (s0 in _FINDING or s1 in _FINDING)):
            continue
        out.append({**head, "section": "finding", "item": key[0],
                    "type": "station check", "quantity": key[1], "unit": u1 or u0, **v,
                    "reference_verdict": s0, "verdict": s1})
    out.sort(key=lambda r: (-max(RANK.get(r["verdict"], 0),
                                 RANK.get(r["reference_verdict"], 0)),
                            r["verdict"] == r["reference_verdict"],
                            -abs(_zero_nan(r["difference"]))))
    return out


def _status_row(head: dict, r0, r1) -> dict:
    bad = [(n, r) for n, r in (("reference", r0), ("case", r1)) if not r.ok]
    message = "; ".join(f"{'reference ' if n == 'reference' else ''}case '{r.case}' "
                        f"{r.status}: {r.message}" for n, r in bad)
    return {**head, "section": "status", "item": "balance", "type": "",
            "quantity": "case status", "unit": "", "reference_value": math.nan,
            "value": math.nan, "difference": math.nan,
            "reference_verdict": r0.status, "verdict": r1.status,
            "message": message + " (not compared number by number)"}


def compare_cases(study, report=None, *, reference: str | None = None,
                  cases: Iterable[str] | str | None = None) -> pd.DataFrame:
    """Each case of ``study`` against a reference case, quantity by quantity.

    Parameters
    ----------
    study : StudyResult
        Solved cases (:func:`steamnet.sweep.solve_cases`), with their tables.
    report : StationReport or pandas.DataFrame, optional
        The station checks of the same study (:func:`steamnet.stations.run.run_checks`)
        or their ``checks`` table; run on ``study`` when None. An empty table gives no
        finding rows.
    reference : str, optional
        The case compared against; default the study's first case.
    cases : str or iterable of str, optional
        The cases set against it; default every other case of the study, in order.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`COMPARE_COLUMNS` (docs/studies.md). Per case, in the order of
        :data:`SECTIONS`: the plant totals, each header, the equipment (flows, then
        spray, power, fuel and outlet temperature, each largest difference first), the
        station checks that differ (worst verdict first). ``difference`` is ``value``
        minus ``reference_value``; for flows, power and fuel an item missing in one
        case counts as zero there. When either case did not balance the pair has one
        ``status`` row with both statuses and the message instead.

    Raises
    ------
    ModelError
        A case named that is not in the study (the message lists the known cases).
    """
    ref, others = _case_names(study, reference, cases)
    r0 = study.case(ref)
    checks = _checks_by_case(_checks_of(study, report)) if others else {}
    cur = study.model.site.currency
    rows: list[dict] = []
    for name in others:
        r1 = study.case(name)
        head = {"case": name, "reference": ref, "status": r1.status,
                "reference_status": r0.status, "reference_verdict": "", "verdict": "",
                "message": ""}
        if not (r0.ok and r1.ok):
            rows.append(_status_row(head, r0, r1))
            continue
        rows += _totals(head, r0, r1, cur)
        rows += _headers(head, r0, r1)
        rows += _equipment(head, r0, r1)
        rows += _findings(head, checks.get(ref, {}), checks.get(name, {}))
    return pd.DataFrame(rows, columns=COMPARE_COLUMNS)
