"""Solve one case of one model into a :class:`CaseResult` (many cases: :mod:`steamnet.sweep`).

>>> import steamnet
>>> model = steamnet.load_model("cases/orlewick.toml")
>>> study = steamnet.solve_cases(model)
>>> [c.case for c in study.cases], study.all_solved
(['summer', 'winter', 'winter-TG1-trip'], True)
>>> table = study.summary[["case", "status", "fuel_mw"]]        # one row per case
>>> len(table)
3
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import pandas as pd

from .model.model import Model
from .model.validate import validate_model
from .solver.balance import Solution, solve_net
from .solver.network import ItemPropertyError, build
from .solver.results import (TH, case_cost, equipment_table, header_table, letdown_points,
                             residuals, stream_table, totals)
from .status import CaseStatus

__all__ = ["CaseResult", "StudyResult", "solve_case", "solve_model"]

#: Relative closure every solved case must meet (docs/method.md, "The balance").
CLOSURE = 1e-6


@dataclass(frozen=True)
class CaseResult:
    """The balance of one case.

    Attributes
    ----------
    case : str
        Case name (``"base"`` for the model without changes).
    status : str
        A :class:`~steamnet.status.CaseStatus`: solved, infeasible, not_converged or
        error.
    message : str
        One line: what happened; for an infeasible case, which header is short or long,
        by how much, and which limits bind.
    findings : list of dict
        Structured infeasibility findings (header, side, amount_kg_s, limits, message).
    iterations : int
        Fixed-point iterations used.
    summary : dict
        Case totals (see docs/results.md).
    headers, equipment, streams : pandas.DataFrame
        Result tables (empty when the case did not solve).
    water : dict
        The plant water balance (kg/s).
    residuals : dict
        Mass/energy residuals (relative maxima and per header).
    solution : Solution or None
        The raw solution (flows, enthalpies, modes) for studies and station checks.
    input_errors : tuple of (message, item, field)
        For a case whose model was not valid (status error): each problem found,
        as :class:`~steamnet.errors.ModelError` gives it (empty otherwise).
    """

    case: str
    status: str
    message: str
    findings: list
    iterations: int
    summary: dict
    headers: pd.DataFrame
    equipment: pd.DataFrame
    streams: pd.DataFrame
    water: dict
    residuals: dict
    solution: Solution | None = field(default=None, repr=False, compare=False)
    points: tuple = field(default=(), repr=False, compare=False)
    input_errors: tuple = field(default=(), repr=False, compare=False)

    @classmethod
    def failed(cls, case: str, status: CaseStatus, message: str, *, findings=None,
               iterations: int = 0, solution=None, input_errors=()) -> "CaseResult":
        """The result of a case that has no balance to show (``status`` error or
        not_converged): summary and message only, empty tables of its own."""
        return cls(case=case, status=status, message=message, findings=findings or [],
                   iterations=iterations,
                   summary={"case": case, "status": status, "message": message,
                            "iterations": iterations},
                   headers=pd.DataFrame(), equipment=pd.DataFrame(),
                   streams=pd.DataFrame(), water={}, residuals={}, solution=solution,
                   input_errors=tuple(input_errors))

    def without_solution(self) -> "CaseResult":
        """A copy without the raw solution (small to pickle; station points kept)."""
        return replace(self, solution=None)

    @property
    def ok(self) -> bool:
        return self.status == CaseStatus.SOLVED


@dataclass
class StudyResult:
    """Results of many cases; the tables concatenate those of the solved cases."""

    model: Model
    cases: list[CaseResult]
    #: single-point station checks made while solving (``station_checks=``), one
    #: :class:`~steamnet.stations.run.PointChecks` per chunk; :func:`run_checks` uses them
    point_checks: list | None = None
    #: the same chunks' :class:`~steamnet.evaluate.ChunkFindings` (station rows and
    #: balance rows), which :func:`steamnet.evaluate.evaluate` uses
    findings_blocks: list | None = None

    def _cat(self, attr: str) -> pd.DataFrame:
        frames = [getattr(c, attr) for c in self.cases if len(getattr(c, attr))]
        return pd.concat(frames, ignore_index=True) if frames else pd.DataFrame()

    @property
    def summary(self) -> pd.DataFrame:
        return pd.DataFrame([c.summary for c in self.cases])

    @property
    def headers(self) -> pd.DataFrame:
        return self._cat("headers")

    @property
    def equipment(self) -> pd.DataFrame:
        return self._cat("equipment")

    @property
    def streams(self) -> pd.DataFrame:
        return self._cat("streams")

    @property
    def water(self) -> pd.DataFrame:
        return pd.DataFrame([{"case": c.case, **{k.replace("_kg_s", "_t_h"): v * TH
                                                  for k, v in c.water.items()
                                                  if k.endswith("_kg_s")}}
                             for c in self.cases if c.water])

    @property
    def all_solved(self) -> bool:
        return all(c.ok for c in self.cases)

    def case(self, name: str) -> CaseResult:
        for c in self.cases:
            if c.case == name:
                return c
        raise KeyError(name)


def solve_case(model: Model, case: str | None = None, *, start: dict | None = None,
               tables: bool = True, streams: bool = True, max_iter: int = 200,
               tol_h: float | None = None, reference: bool = False,
               sequence_shortfall: bool = True) -> CaseResult:
    """Solve one case of ``model`` (the base model when ``case`` is None).

    Never raises for a case that cannot balance: the result's status says
    ``infeasible`` (with the header, the amount and the binding limits),
    ``not_converged`` or ``error`` (for example a state outside IAPWS-IF97, naming the
    equipment). Raises :class:`ModelError` only for a case that does not exist or whose
    changes are invalid.

    Parameters
    ----------
    tables : bool
        Build the result DataFrames (headers, equipment, streams). Long sweeps turn it
        off and keep only the summary, the water balance and the solution [-]
    tol_h : float, optional
        Convergence tolerance on header enthalpies [J/kg]; default
        :data:`steamnet.solver.balance.TOL_H_REL` times the enthalpy.
    reference : bool
        Solve with the reference assembly of the balance system (the code path before
        the compiled assembly), to check that the fast one gives the same answers [-]
    sequence_shortfall : bool
        For a case that cannot balance, also give the imbalance under the control
        sequences (:func:`steamnet.solver.balance.solve_net`) [-]
    """
    name = case or model.case_name or "base"
    m = model.for_case(case) if case is not None else model
    if case is not None:
        validate_model(m)
    return solve_model(m, name, start=start, tables=tables, streams=streams,
                       max_iter=max_iter, tol_h=tol_h, reference=reference,
                       sequence_shortfall=sequence_shortfall)


_EMPTY = pd.DataFrame()


def _empty() -> pd.DataFrame:
    """A new empty table (a copy of one: a quarter of the time of making one)."""
    return _EMPTY.copy()


def solve_model(m: Model, name: str, *, start: dict | None = None, tables: bool = True,
                streams: bool = True, max_iter: int = 200,
                tol_h: float | None = None, like=None,
                reference: bool = False, sequence_shortfall: bool = True,
                tol_x: float | None = None, points: bool = True) -> CaseResult:
    """Solve an already validated model (one case) under the case name ``name``.

    ``like`` is the Net of a similar case (the previous one of a sweep), from which the
    Net of this one is made with less work (:func:`steamnet.solver.network.build`);
    ``reference`` selects the reference assembly (see :func:`solve_case`); ``tol_h``
    and ``tol_x`` are :func:`steamnet.solver.balance.solve_net`'s (its defaults when
    None); without ``points`` the result has no let-down operating points (for a
    balance that only its cost is asked of).
    """
    from .errors import PropertyRangeError
    try:
        net = build(m, like=None if reference else like)
        sol = solve_net(net, start=start, max_iter=max_iter, tol_h=tol_h,
                        **({} if tol_x is None else {"tol_x": tol_x}),
                        reference=reference, sequence_shortfall=sequence_shortfall)
    except ItemPropertyError as exc:
        return CaseResult.failed(name, CaseStatus.ERROR, f"outside IAPWS-IF97: {exc}")
    if sol.status in (CaseStatus.ERROR, CaseStatus.NOT_CONVERGED):
        return CaseResult.failed(name, sol.status, sol.message,
                                 iterations=sol.iterations, solution=sol)
    try:
        res = residuals(sol)
        tot = totals(sol)
        if tables:
            eq = equipment_table(sol, name)
            hd = header_table(sol, name, res)
            st = stream_table(sol, name) if streams else _empty()
        else:
            eq, hd, st = _empty(), _empty(), _empty()
    except (ItemPropertyError, PropertyRangeError) as exc:
        return CaseResult.failed(name, CaseStatus.ERROR, f"outside IAPWS-IF97: {exc}",
                                 solution=sol)
    wb = res["water"]
    status, message, findings = sol.status, sol.message, list(sol.findings)
    if status == CaseStatus.SOLVED:
        worst = max(res["mass_rel"], res["energy_rel"], res["water_rel"])
        if not (worst <= CLOSURE):
            status = CaseStatus.NOT_CONVERGED
            message = (f"balance does not close: mass {res['mass_rel']:.2e}, energy "
                       f"{res['energy_rel']:.2e}, water {res['water_rel']:.2e} relative "
                       f"(limit {CLOSURE:g})")
    cost = case_cost(m, wb, sol, tot)
    summary = _summary(name, status, message, sol, tot, wb, res, cost)
    # an infeasible case keeps its tables: they show where it stands (marked by status)
    return CaseResult(case=name, status=status, message=message, findings=findings,
                      iterations=sol.iterations, summary=summary, headers=hd,
                      equipment=eq, streams=st, water=wb, residuals=res, solution=sol,
                      points=tuple(letdown_points(name, status, sol)) if points else ())


def _summary(name, status, message, sol, tot, wb, res, cost) -> dict:
    return {
        "case": name, "status": status, "message": message,
        "iterations": sol.iterations,
        "steam_raised_t_h": tot["steam_raised"] * TH,
        "fuel_mw": tot["fuel"] / 1e6,
        "power_generated_mw": tot["power_generated"] / 1e6,
        "mechanical_power_mw": tot["mechanical_power"] / 1e6,
        "import_t_h": tot["imports"] * TH, "export_t_h": tot["exports"] * TH,
        "spray_t_h": wb["spray_kg_s"] * TH, "da_steam_t_h": wb["da_steam_kg_s"] * TH,
        "makeup_t_h": (wb["makeup_kg_s"] + wb["external_water_kg_s"]) * TH,
        "vented_t_h": wb["vented_kg_s"] * TH,
        "condensate_returned_t_h": wb["condensate_returned_kg_s"] * TH,
        "cost_per_h": cost["cost_per_h"], "fuel_cost_per_h": cost["fuel_cost_per_h"],
        "carbon_cost_per_h": cost["carbon_cost_per_h"],
        "water_cost_per_h": cost["water_cost_per_h"],
        "import_cost_per_h": cost["import_cost_per_h"],
        "power_bought_per_h": cost["pump_power_cost_per_h"],
        "export_credit_per_h": cost["export_credit_per_h"],
        "power_credit_per_h": cost["power_value_per_h"],
        "mass_residual_rel": res["mass_rel"], "energy_residual_rel": res["energy_rel"],
        "water_residual_rel": res["water_rel"], "solve_ms": sol.seconds * 1e3,
    }
