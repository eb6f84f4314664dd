"""Marginal cost of steam on each header, beside the average cost of steam.

Method
------
The marginal cost of steam on a header is the change of the case's operating cost when
one more tonne per hour is drawn from that header and none of it comes back, per tonne:

    marginal cost = (cost(case + step) - cost(case)) / step       [currency/t]

``cost`` is the operating cost of the balance (:func:`steamnet.solve.case_cost`: fuel,
make-up and external water, imported steam and feed-pump power, less exported steam and
the electric power generated at the electricity price), ``step`` is a steam user of
1 t/h (by default) with zero condensate return added on the header, and the perturbed
case is balanced from a warm start of the case. Everything the plant does to supply that
tonne is in the difference: the swing boiler's extra fuel and feedwater, the extra spray
and deaerator steam, the power a turbine in the path generates or no longer generates,
the make-up water that replaces the lost condensate. The result is split into its fuel,
water and power parts, and ``other`` (imports, exports, pump power).

A finite difference is exact only while the plant stays in one operating mode across the
step. When a limit is met within the step (a swing element reaching its maximum, a vent
closing), the column ``limit_in_step`` names it: the figure then mixes two modes, and
the headroom study shows where the change lies.

The *average* cost of steam is the case's operating cost divided by the steam raised by
its boilers; it is the same for every header of a case and is shown for comparison.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ..errors import ModelError
from ..model.model import Model
from ..solver.results import case_cost
from ..units import Kind
from ..model.cases import CaseSet
from .common import (Progress, free_name, header_list, quantity, resolve_cases, solve,
                     solved_cases, tick, warm, with_user)
from ..solver.limits import TH, limit_checks, newly_binding

__all__ = ["marginal_steam_cost", "MARGINAL_COLUMNS", "DEFAULT_STEP"]

#: Default step [kg/s] (1 t/h).
DEFAULT_STEP = 1 / TH

#: Columns of the marginal-cost table, in order (docs/studies.md).
MARGINAL_COLUMNS = [
    "case", "header", "p_barg", "status", "currency", "marginal_cost_per_t",
    "average_cost_per_t", "fuel_part_per_t", "water_part_per_t", "power_part_per_t",
    "other_part_per_t", "step_t_h", "cost_per_h", "cost_with_step_per_h",
    "steam_raised_change_t_h", "fuel_change_mw", "power_change_mw", "limit_in_step",
    "message",
]


def _parts(model: Model, r) -> dict:
    c = case_cost(model, r.water, r.solution)
    other = c["cost_per_h"] - c["fuel_cost_per_h"] - c["water_cost_per_h"] \
        + c["power_value_per_h"]
    return {"cost": c["cost_per_h"], "fuel": c["fuel_cost_per_h"],
            "water": c["water_cost_per_h"], "power": -c["power_value_per_h"],
            "other": other}


def marginal_steam_cost(model: Model, cases: CaseSet | list[str] | str | None = None, *,
                        headers: list[str] | None = None, step=DEFAULT_STEP,
                        progress: Progress | None = None,
                        solved: dict | None = None) -> pd.DataFrame:
    """Marginal cost of one more tonne of steam on each header of each case (method in
    the module docstring and docs/howto-marginal-cost.md).

    Parameters
    ----------
    model : Model
        The plant, with its prices (``[prices]``, boilers' ``fuel_price``).
    cases : CaseSet, list of str, str or None
        Cases (None: every case of the model file, or the base model).
    headers : list of str, optional
        Headers (default all).
    step : float or str
        Added demand [kg/s] or text ``"1 t/h"``.
    progress : callable, optional
        ``progress(done, total, label)`` after each header.
    solved : dict, optional
        Balances of the cases already solved (name -> CaseResult), not solved again.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`MARGINAL_COLUMNS` (docs/studies.md); per case, the headers from
        the dearest marginal steam to the cheapest.
    """
    d = quantity(step, Kind.MASS_FLOW, model, "option --step")
    if not d > 0:
        raise ModelError("the step must be above zero", item="option --step")
    hdrs = header_list(model, headers)
    cs = resolve_cases(model, cases)
    cur = model.site.currency
    total = len(cs) * len(hdrs)
    done = 0
    rows = []
    for name, m, base in solved_cases(cs, solved):
        start = warm(base)
        probe = free_name(m, "marginal probe")
        p0 = _parts(m, base) if base.solution is not None and len(base.equipment) else None
        raised = base.summary.get("steam_raised_t_h") or 0.0
        avg = p0["cost"] / raised if (p0 and base.ok and raised > 0) else math.nan
        base_checks = limit_checks(base)
        for h in hdrs:
            row = {"case": name, "header": h, "status": base.status, "currency": cur,
                   "p_barg": (m.headers[h].pressure - m.site.atmospheric_pressure) / 1e5,
                   "step_t_h": d * TH, "average_cost_per_t": avg,
                   "cost_per_h": p0["cost"] if p0 and base.ok else math.nan,
                   "limit_in_step": "", "message": ""}
            if not base.ok:
                row["message"] = f"the case does not balance: {base.message}"
            else:
                mp = with_user(m, h, demand=d, name=probe, origin="marginal step")
                r = solve(mp, start=start)
                if not r.ok:
                    row["status"] = r.status
                    row["message"] = (f"the case cannot take {d * TH:.3g} t/h more on "
                                      f"'{h}': {r.message}")
                else:
                    p1 = _parts(mp, r)
                    step_th = d * TH
                    row.update({
                        "marginal_cost_per_t": (p1["cost"] - p0["cost"]) / step_th,
                        "fuel_part_per_t": (p1["fuel"] - p0["fuel"]) / step_th,
                        "water_part_per_t": (p1["water"] - p0["water"]) / step_th,
                        "power_part_per_t": (p1["power"] - p0["power"]) / step_th,
                        "other_part_per_t": (p1["other"] - p0["other"]) / step_th,
                        "cost_with_step_per_h": p1["cost"],
                        "steam_raised_change_t_h": r.summary["steam_raised_t_h"] - raised,
                        "fuel_change_mw": r.summary["fuel_mw"] - base.summary["fuel_mw"],
                        "power_change_mw": r.summary["power_generated_mw"]
                        - base.summary["power_generated_mw"],
                    })
                    hit = newly_binding(base_checks, limit_checks(r))
                    if hit:
                        row["limit_in_step"] = hit[0].describe()
                        row["message"] = ("a limit is met within the step: the figure "
                                          "mixes two operating modes (see the headroom "
                                          "study)")
            rows.append(row)
            done += 1
            tick(progress, done, total, f"{name}: {h}")
    df = pd.DataFrame(rows, columns=MARGINAL_COLUMNS)
    if len(df):
        key = -df["marginal_cost_per_t"].fillna(np.inf).to_numpy(float)
        order = np.lexsort((key, pd.Categorical(df["case"], categories=list(cs)).codes))
        df = df.iloc[order].reset_index(drop=True)
    return df
