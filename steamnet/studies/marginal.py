"""Marginal cost of steam on each header, beside the average cost of steam.

Method
------
Two methods, both per header and case, each named beside its figure
(docs/howto-marginal-cost.md):

* **Finite difference** (``finite_difference_per_t``): the change of the case's
  operating cost when one more tonne per hour is drawn from the header and none of it
  comes back, per tonne::

      finite difference = (cost(case + step) - cost(case)) / step     [currency/t]

  ``cost`` is the operating cost of the balance (:func:`steamnet.solver.results.
  case_cost`: fuel and its CO2, make-up and external water, imported steam and
  feed-pump power, less exported steam and the electric power generated), ``step`` a
  steam user of 1 t/h (by default) with zero condensate return added on the header,
  balanced from a warm start of the case. It holds everything the balance holds,
  the header enthalpies the step moves too, but it describes one operating mode only
  while no limit is met within the step (``limit_in_step`` names one that is).
* **Dual** (``dual_marginal_cost_per_t``): the dual of the header's row in the linear
  programme of the case's control philosophy at its enthalpies
  (:func:`steamnet.solver.duals.control_duals`, one programme per case for every
  header): the slope of the cost in the case's operating mode, exact for the
  programme, and ``dual_range_t_h``, how much more may be drawn before a moving
  element reaches its limit (``dual_limit``). It leaves out how the draw moves the
  header enthalpies.

The figure of the study, ``marginal_cost_per_t``, is the dual (``method`` "dual") where
the step lies within the dual's range and the two methods agree within
:data:`AGREEMENT` (relative, or :data:`AGREEMENT_FLOOR` for figures near nought), and
the finite difference (``method`` "finite difference") everywhere else: where a limit
is met within the step, or the enthalpy shift the dual leaves out is larger. Its parts
(fuel, water, power, other) come from the same method and add up to it.

The *average* cost of steam is the case's operating cost divided by the steam raised by
its boilers; it is the same for every header of a case and is shown for comparison.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ..errors import ModelError
from ..model.model import Model
from ..solver.duals import control_duals
from ..units import Kind
from ..model.cases import CaseSet
from .common import (Progress, free_name, header_list, quantity, resolve_cases, solve,
                     solved_cases, tick, warm, with_user)
from ..solver.limits import TH, limit_checks, newly_binding

__all__ = ["marginal_steam_cost", "MARGINAL_COLUMNS", "DEFAULT_STEP", "AGREEMENT",
           "AGREEMENT_FLOOR", "DUAL", "FINITE_DIFFERENCE"]

#: Default step [kg/s] (1 t/h).
DEFAULT_STEP = 1 / TH

#: The dual is the figure where it agrees with the finite difference within this,
#: relative [-]: the share of the tonne's cost that the enthalpy shift the dual leaves
#: out may take (docs/howto-marginal-cost.md: a header of 100 t/h whose mixed
#: enthalpy moves by 0.14 kJ/kg per added t/h carries 0.5 % of the 2,800 kJ/kg a
#: tonne of steam takes from feedwater), below what fuel prices and boiler
#: efficiencies are known to.
AGREEMENT = 5e-3
#: ... or within this, for figures near nought: the hundredth to which the study
#: prints its figures [currency/t]
AGREEMENT_FLOOR = 0.01
#: Words of the ``method`` column.
DUAL, FINITE_DIFFERENCE = "dual", "finite difference"

_PARTS = ("fuel", "water", "power", "other")

#: Columns of the marginal-cost table, in order (docs/studies.md).
MARGINAL_COLUMNS = [
    "case", "header", "p_barg", "status", "currency", "marginal_cost_per_t", "method",
    "average_cost_per_t", "fuel_part_per_t", "water_part_per_t", "power_part_per_t",
    "other_part_per_t", "finite_difference_per_t", "dual_marginal_cost_per_t",
    "dual_range_t_h", "dual_limit", "step_t_h", "cost_per_h", "cost_with_step_per_h",
    "steam_raised_change_t_h", "fuel_change_mw", "power_change_mw", "limit_in_step",
    "message",
]


def _parts(r) -> dict:
    """The operating cost of a balance and its parts [currency/h] (the summary holds
    :func:`steamnet.solver.results.case_cost`)."""
    c = r.summary
    other = c["cost_per_h"] - c["fuel_cost_per_h"] - c["water_cost_per_h"] \
        + c["power_credit_per_h"]
    return {"cost": c["cost_per_h"], "fuel": c["fuel_cost_per_h"],
            "water": c["water_cost_per_h"], "power": -c["power_credit_per_h"],
            "other": other}


def agree(dual: float, difference: float) -> bool:
    """Whether the dual and the finite difference agree (:data:`AGREEMENT`)."""
    return abs(dual - difference) <= max(AGREEMENT * abs(difference), AGREEMENT_FLOOR)


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
    step_th = d * TH
    for name, m, base in solved_cases(cs, solved):
        start = warm(base)
        probe = free_name(m, "marginal probe")
        p0 = _parts(base) if base.ok else None
        raised = base.summary.get("steam_raised_t_h") or 0.0
        avg = p0["cost"] / raised if (p0 and raised > 0) else math.nan
        base_checks = limit_checks(base) if base.ok else []
        duals = control_duals(base.solution) if base.ok else None
        for h in hdrs:
            row = {"case": name, "header": h, "status": base.status, "currency": cur,
                   "p_barg": (m.headers[h].pressure - m.site.atmospheric_pressure) / 1e5,
                   "step_t_h": step_th, "average_cost_per_t": avg,
                   "cost_per_h": p0["cost"] if p0 else math.nan,
                   "limit_in_step": "", "dual_limit": "", "method": "", "message": ""}
            if not base.ok:
                row["message"] = f"the case does not balance: {base.message}"
            else:
                dual, dual_parts, why = _dual_row(duals, base, h)
                row.update(dual)
                mp = with_user(m, h, demand=d, name=probe, origin="marginal step")
                r = solve(mp, start=start, tables=False)
                if not r.ok:
                    row["status"] = r.status
                    row["message"] = (f"the case cannot take {step_th:.3g} t/h more on "
                                      f"'{h}': {r.message}")
                else:
                    p1 = _parts(r)
                    fd = (p1["cost"] - p0["cost"]) / step_th
                    row.update({
                        "finite_difference_per_t": fd,
                        "cost_with_step_per_h": p1["cost"],
                        "steam_raised_change_t_h": r.summary["steam_raised_t_h"] - raised,
                        "fuel_change_mw": r.summary["fuel_mw"] - base.summary["fuel_mw"],
                        "power_change_mw": r.summary["power_generated_mw"]
                        - base.summary["power_generated_mw"],
                    })
                    hit = newly_binding(base_checks, limit_checks(r))
                    if hit:
                        row["limit_in_step"] = hit[0].describe()
                    _choose(row, fd, {k: (p1[k] - p0[k]) / step_th for k in _PARTS},
                            dual_parts, why, step_th, hit)
            rows.append(row)
            done += 1
            tick(progress, done, total, f"{name}: {h}")
    df = pd.DataFrame(rows, columns=MARGINAL_COLUMNS)
    if len(df):
        key = -df["marginal_cost_per_t"].fillna(np.inf).to_numpy(float)
        order = np.lexsort((key, pd.Categorical(df["case"], categories=list(cs)).codes))
        df = df.iloc[order].reset_index(drop=True)
    return df


def _dual_row(duals, base, header: str) -> tuple[dict, dict | None, str]:
    """The dual's columns of one header, its parts (None when the programme failed)
    and why it failed."""
    if duals is None or duals.status != "ok":
        return {}, None, duals.message if duals is not None else ""
    i = base.solution.net.hidx[header]
    return ({"dual_marginal_cost_per_t": duals.per_t[i],
             "dual_range_t_h": duals.range_t_h[i], "dual_limit": duals.limit[i]},
            {k: duals.response[i][k] for k in _PARTS}, "")


def _choose(row: dict, fd: float, fd_parts: dict, dual_parts: dict | None, why: str,
            step_th: float, hit) -> None:
    """The figure of the row and its method (module docstring): the dual where the
    step lies within its range and it agrees with the finite difference, else the
    finite difference; the parts from the same method, and a message saying why the
    dual was not taken."""
    method, figure, parts = FINITE_DIFFERENCE, fd, fd_parts
    if dual_parts is None:
        note = f"no dual: {why}" if why else ""
    elif row["dual_range_t_h"] < step_th:
        note = (f"the dual holds for {row['dual_range_t_h']:.3g} t/h only, less than "
                f"the step (until {row['dual_limit'] or 'a limit'}): a change of "
                "operating mode within the step")
    elif not agree(row["dual_marginal_cost_per_t"], fd):
        diff = row["dual_marginal_cost_per_t"] - fd
        by = f"{100 * diff / fd:+.2g} %" if fd else f"{diff:+.3g} per t"
        note = (f"the dual differs from the finite difference by {by}: the step "
                "moves the header enthalpies, which the dual holds")
    else:
        method, figure, parts, note = DUAL, row["dual_marginal_cost_per_t"], dual_parts, ""
    row["method"] = method
    row["marginal_cost_per_t"] = figure
    for k in _PARTS:
        row[f"{k}_part_per_t"] = parts[k]
    if hit:
        note = ("a limit is met within the step: the finite difference mixes two "
                "operating modes (see the headroom study)")
    row["message"] = note
