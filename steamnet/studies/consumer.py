"""A new consumer: add a steam user to one or all cases and report what changes.

The user (header, demand or heat duty, condensate return and its temperature) is added
with :meth:`~steamnet.model.Model.with_item`; the model file is not touched. Each case is
balanced without and with it (the second from a warm start of the first), and the
result lists, per case, the changes of the plant totals (steam raised, fuel, power,
spray, deaerator steam, make-up, venting, cost), of every header's throughput and
temperature, and of every equipment flow, spray, power and fuel.
"""

from __future__ import annotations

import math

import pandas as pd

from ..errors import ModelError
from ..evaluate import compare_findings, evaluate_one
from ..model.model import Model
from ..units import Kind
from ..model.cases import CaseSet
from .common import (Progress, condensate, free_name, quantity, resolve_cases, solve,
                     solved_cases, tick, warm, with_user)

__all__ = ["new_consumer_impact", "CONSUMER_COLUMNS", "TOTALS"]

#: Columns of the new-consumer table, in order (docs/studies.md).
CONSUMER_COLUMNS = ["case", "status_without", "status_with", "section", "item", "type",
                    "quantity", "unit", "without", "with", "change", "verdict_without",
                    "verdict_with", "effect", "source", "advice"]

#: Plant totals compared: summary key -> (quantity, unit).
TOTALS = {
    "steam_raised_t_h": ("steam raised", "t/h"), "fuel_mw": ("fuel", "MW"),
    "power_generated_mw": ("power generated", "MW"),
    "mechanical_power_mw": ("mechanical drive power", "MW"),
    "import_t_h": ("steam imported", "t/h"), "export_t_h": ("steam exported", "t/h"),
    "spray_t_h": ("spray water", "t/h"), "da_steam_t_h": ("deaerator steam", "t/h"),
    "makeup_t_h": ("make-up water", "t/h"), "vented_t_h": ("steam vented", "t/h"),
    "condensate_returned_t_h": ("condensate returned", "t/h"),
    "cost_per_h": ("cost", "{cur}/h"), "fuel_cost_per_h": ("fuel cost", "{cur}/h"),
}

#: Equipment columns compared: column -> (quantity, unit).
_EQUIPMENT = {"flow_t_h": ("flow", "t/h"), "spray_t_h": ("spray", "t/h"),
              "power_kw": ("power", "kW"), "fuel_mw": ("fuel", "MW")}
_HEADER = {"inflow_t_h": ("throughput", "t/h"), "t_degc": ("temperature", "degC")}


def _row(head, section, item, typ, q, unit, a, b) -> dict | None:
    """One compared quantity; None when it is zero (or absent) both without and with."""
    a = math.nan if a is None else float(a)
    b = math.nan if b is None else float(b)
    if (math.isnan(a) or a == 0) and (math.isnan(b) or b == 0):
        return None
    change = (0.0 if math.isnan(b) else b) - (0.0 if math.isnan(a) else a)
    return {**head, "section": section, "item": item, "type": typ, "quantity": q,
            "unit": unit, "without": a, "with": b, "change": change}


def _rows(case, r0, r1, user: str, cur: str) -> list[dict]:
    head = {"case": case, "status_without": r0.status, "status_with": r1.status}
    totals, headers, flows, others = [], [], [], []
    for k, (q, unit) in TOTALS.items():
        totals.append(_row(head, "total", "plant", "", q, unit.format(cur=cur),
                           r0.summary.get(k), r1.summary.get(k)))
    if len(r0.headers) and len(r1.headers):
        h0 = r0.headers.set_index("header")
        for rec in r1.headers.to_dict("records"):
            for col, (q, unit) in _HEADER.items():
                headers.append(_row(head, "header", rec["header"], "header", q, unit,
                                    h0[col].get(rec["header"]), rec[col]))
    if len(r1.equipment):
        e0 = r0.equipment.set_index("item") if len(r0.equipment) else pd.DataFrame()
        for rec in r1.equipment.to_dict("records"):
            for col, (q, unit) in _EQUIPMENT.items():
                b = rec.get(col)
                if b is None or (isinstance(b, float) and math.isnan(b)):
                    continue
                a = e0.at[rec["item"], col] if (rec["item"] in e0.index
                                                and col in e0) else None
                r = _row(head, "equipment", rec["item"], rec["type"], q, unit, a, b)
                if r and rec["type"] == "user" and rec["item"] != user \
                        and abs(r["change"]) < 1e-9:
                    continue        # users at a set demand do not change; duty users may
                (flows if unit == "t/h" else others).append(r)
    flows = sorted((r for r in flows if r), key=lambda r: -abs(r["change"]))
    others = sorted((r for r in others if r), key=lambda r: -abs(r["change"]))
    return [r for r in totals + headers if r] + flows + others


def _finding_rows(case, r0, r1, data) -> list[dict]:
    """The findings the addition creates, worsens, improves or clears (the same
    evaluation as every other balance), worst first."""
    head = {"case": case, "status_without": r0.status, "status_with": r1.status,
            "section": "finding"}
    out = []
    for f in compare_findings(evaluate_one(r0, data), evaluate_one(r1, data)) \
            .itertuples(index=False):
        a, b = f.value_without, f.value_with
        num = all(isinstance(v, (int, float)) and not isinstance(v, bool)
                  and v == v for v in (a, b))
        out.append({**head, "item": f.item, "type": f.type, "quantity": f.check,
                    "unit": f.unit, "without": a, "with": b,
                    "change": (b - a) if num else math.nan,
                    "verdict_without": f.status_without, "verdict_with": f.status_with,
                    "effect": f.effect, "source": f.source,
                    "advice": f.basis + (f"; {f.advice}" if f.advice else "")})
    return out


def new_consumer_impact(model: Model, header: str, *, demand=None, duty=None,
                        condensate_return=0.0, condensate_temperature=None,
                        name: str = "new consumer",
                        cases: CaseSet | list[str] | str | None = None,
                        progress: Progress | None = None,
                        solved: dict | None = None) -> pd.DataFrame:
    """What a new steam user changes in each case.

    Parameters
    ----------
    model : Model
        The plant (its file is not changed).
    header : str
        Header the user draws from.
    demand : float or str, optional
        Steam flow [kg/s] or text ``"12 t/h"``; or give ``duty``.
    duty : float or str, optional
        Heat duty [W] or text ``"8 MW"``; flow = duty / (h_header - h_f).
    condensate_return : float or str
        Fraction returned to the deaerator [-] or text ``"60 %"``.
    condensate_temperature : float or str, optional
        Temperature of the returned condensate [K] or text ``"90 degC"``; needed when
        the return is above zero.
    name : str
        Name of the new user in the results.
    cases : CaseSet, list of str, str or None
        Cases (None: every case of the model file, or the base model).
    progress : callable, optional
        ``progress(done, total, case)`` after each case.
    solved : dict, optional
        Balances of the cases already solved (name -> CaseResult), not solved again.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`CONSUMER_COLUMNS` (docs/studies.md): per case, the plant totals,
        then the headers, then the equipment flows by size of change, then the findings
        that the addition creates, worsens, improves or clears (``section ==
        'finding'``; ``quantity`` is the check id, ``effect`` what changed).
    """
    if (demand is None) == (duty is None):
        raise ModelError("give exactly one of a demand and a duty", item="option --demand")
    m_demand = quantity(demand, Kind.MASS_FLOW, model, "option --demand")
    m_duty = quantity(duty, Kind.POWER, model, "option --duty")
    ret, t_ret = condensate(model, condensate_return, condensate_temperature)
    cs = resolve_cases(model, cases)
    uname = free_name(model, name)
    if uname != name:
        raise ModelError(f"an item named '{name}' exists already; choose another name",
                         item="option --name")
    cur = model.site.currency
    rows: list[dict] = []
    data = model.stations
    for i, (case, m, r0) in enumerate(solved_cases(cs, solved)):
        mu = with_user(m, header, demand=m_demand, duty=m_duty, condensate_return=ret,
                       condensate_temperature=t_ret, name=uname, origin="new consumer")
        r1 = solve(mu, start=warm(r0))
        rows.extend(_rows(case, r0, r1, uname, cur))
        rows.extend(_finding_rows(case, r0, r1, data))
        tick(progress, i + 1, len(cs), case)
    return pd.DataFrame(rows, columns=CONSUMER_COLUMNS)
