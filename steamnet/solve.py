"""Public solve API: one case, or all cases of a model, into result tables.

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
from typing import Callable, Iterable

import pandas as pd

from .model.model import Model
from .model.validate import validate_model
from .solver.balance import Solution, solve_net
from .solver.network import ItemPropertyError, build
from .solver.results import TH, equipment_table, header_table, residuals, stream_table

__all__ = ["CaseResult", "StudyResult", "solve_case", "solve_model", "solve_cases",
           "case_cost", "totals"]

#: The empty table of a case solved without tables (long sweeps), shared by all such
#: results because making an empty DataFrame costs more than a lean balance's bookkeeping;
#: treat result tables as read-only.
_NO_TABLE = pd.DataFrame()

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
        ``"solved"``, ``"infeasible"``, ``"not_converged"`` or ``"error"``.
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
        For a case whose model was not valid (status ``"error"``): each problem found,
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

    def without_solution(self) -> "CaseResult":
        """A copy without the raw solution (small to pickle; station points kept)."""
        return replace(self, solution=None)

    @property
    def ok(self) -> bool:
        return self.status == "solved"


@dataclass
class StudyResult:
    """Results of many cases; the tables concatenate those of the solved cases."""

    model: Model
    cases: list[CaseResult]
    #: single-point station checks made while solving (``station_checks=``), one
    #: :class:`~steamnet.stations.run.PointChecks` per chunk; :func:`run_checks` uses them
    point_checks: list | None = None

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


def totals(sol: Solution) -> dict:
    """Plant totals straight from the solution [SI]: steam raised, fuel, power by drive,
    imports and exports (the same numbers the tables sum up)."""
    net, x, co = sol.net, sol.x, sol.co
    fuel = sum(_fuel_w(b, sol) for b in net.boilers)
    gen = mech = 0.0
    for t, c in zip(net.turbines, co.turb):
        p = x[t["var"]] * c["dh"] * t["eta_mg"]
        if t["item"].drive == "generator":
            gen += p
        else:
            mech += p
    for t, c in zip(net.xturbines, co.xturb):
        flow = x[t["in_var"]]
        shaft = flow * c["dh"][0]
        for e, dh in zip(t["exts"], c["dh"][1:]):
            flow -= x[e["var"]]
            shaft += flow * dh
        if t["item"].drive == "generator":
            gen += shaft * t["eta_mg"]
        else:
            mech += shaft * t["eta_mg"]
    return {
        "steam_raised": float(sum(x[b["var"]] for b in net.boilers)),
        "fuel": fuel, "power_generated": gen, "mechanical_power": mech,
        "imports": float(sum(x[t["var"]] for t in net.transfers if t["dir"] == "import")),
        "exports": float(sum(x[t["var"]] for t in net.transfers if t["dir"] == "export")),
    }


def case_cost(model: Model, water: dict, sol: Solution, tot: dict | None = None) -> dict:
    """Operating cost per hour and its parts, in the site currency.

    cost = fuel + make-up and external water + imported steam + pump power
    - exported steam - electric power generated (valued at the electricity price).
    """
    pr = model.prices
    net = sol.net
    tot = tot or totals(sol)
    fuel = sum(_fuel_w(b, sol) * b["fuel_price"] for b in net.boilers)
    water_cost = (water["makeup_kg_s"] + water["external_water_kg_s"]) * pr.makeup_water
    imp = sum(sol.x[t["var"]] * t["price"] for t in net.transfers if t["dir"] == "import")
    exp = sum(sol.x[t["var"]] * t["price"] for t in net.transfers if t["dir"] == "export")
    gen = tot["power_generated"]
    pump = sum(ws["pump_work"] * _supply_flow(sol, name)
               for name, ws in net.supplies.items())
    per_s = fuel + water_cost + imp - exp - gen * pr.electricity + pump * pr.electricity
    return {"cost_per_h": per_s * 3600, "fuel_cost_per_h": fuel * 3600,
            "water_cost_per_h": water_cost * 3600, "power_value_per_h": gen * pr.electricity
            * 3600, "pump_power_kw": pump / 1e3}


def _fuel_w(b: dict, sol: Solution) -> float:
    m = sol.x[b["var"]]
    fw = m / (1 - b["bd"])
    duty = m * (b["h"] - b["supply"]["h"]) + (fw - m) * (b["h_bd"] - b["supply"]["h"])
    return duty / b["eff"] if b["eff"] else 0.0


def _supply_flow(sol: Solution, name: str) -> float:
    net, x, co = sol.net, sol.x, sol.co
    m = sum(x[b["var"]] / (1 - b["bd"]) for b in net.boilers if b["supply"]["name"] == name)
    m += sum(x[s["var"]] * c["r"] for s, c in zip(net.letdowns, co.ld)
             if s["ds"] is not None and s["ds"]["supply"]["name"] == name)
    return m


def _empty(case: str, status: str, message: str, findings=None, iterations=0,
           solution=None, input_errors=()) -> CaseResult:
    return CaseResult(case=case, status=status, message=message, findings=findings or [],
                      iterations=iterations,
                      summary={"case": case, "status": status, "message": message,
                               "iterations": iterations},
                      headers=_NO_TABLE, equipment=_NO_TABLE,
                      streams=_NO_TABLE, water={}, residuals={}, solution=solution,
                      input_errors=tuple(input_errors))


def solve_case(model: Model, case: str | None = None, *, start: dict | None = None,
               tables: bool = True, streams: bool = True, max_iter: int = 200,
               tol_h: float | None = None, reference: bool = False) -> CaseResult:
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
    """
    name = case or model.case_name or "base"
    m = model.for_case(case) if case is not None else model
    if case is not None:
        validate_model(m)
    return solve_model(m, name, start=start, tables=tables, streams=streams,
                       max_iter=max_iter, tol_h=tol_h, reference=reference)


def solve_model(m: Model, name: str, *, start: dict | None = None, tables: bool = True,
                streams: bool = True, max_iter: int = 200,
                tol_h: float | None = None, like=None,
                reference: bool = False) -> CaseResult:
    """Solve an already validated model (one case) under the case name ``name``.

    ``like`` is the Net of a similar case (the previous one of a sweep), from which the
    Net of this one is made with less work (:func:`steamnet.solver.network.build`);
    ``reference`` selects the reference assembly (see :func:`solve_case`).
    """
    from .errors import PropertyRangeError
    try:
        net = build(m, like=None if reference else like)
        sol = solve_net(net, start=start, max_iter=max_iter, tol_h=tol_h,
                        reference=reference)
    except ItemPropertyError as exc:
        return _empty(name, "error", f"outside IAPWS-IF97: {exc}")
    if sol.status in ("error", "not_converged"):
        return _empty(name, sol.status, sol.message, iterations=sol.iterations,
                      solution=sol)
    try:
        res = residuals(sol)
        tot = totals(sol)
        if tables:
            eq = equipment_table(sol, name)
            hd = header_table(sol, name, res)
            st = stream_table(sol, name) if streams else pd.DataFrame()
        else:
            eq = hd = st = _NO_TABLE
    except (ItemPropertyError, PropertyRangeError) as exc:
        return _empty(name, "error", f"outside IAPWS-IF97: {exc}", solution=sol)
    wb = res["water"]
    status, message, findings = sol.status, sol.message, list(sol.findings)
    if status == "solved":
        worst = max(res["mass_rel"], res["energy_rel"], res["water_rel"])
        if not (worst <= CLOSURE):
            status = "not_converged"
            message = (f"balance does not close: mass {res['mass_rel']:.2e}, energy "
                       f"{res['energy_rel']:.2e}, water {res['water_rel']:.2e} relative "
                       f"(limit {CLOSURE:g})")
    cost = case_cost(m, wb, sol, tot)
    summary = _summary(name, status, message, sol, tot, wb, res, cost)
    # an infeasible case keeps its tables: they show where it stands (marked by status)
    from .stations.run import points_from_solution
    return CaseResult(case=name, status=status, message=message, findings=findings,
                      iterations=sol.iterations, summary=summary, headers=hd,
                      equipment=eq, streams=st, water=wb, residuals=res, solution=sol,
                      points=tuple(points_from_solution(name, status, sol)))


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
        "mass_residual_rel": res["mass_rel"], "energy_residual_rel": res["energy_rel"],
        "water_residual_rel": res["water_rel"], "solve_ms": sol.seconds * 1e3,
    }


def solve_cases(model: Model, cases: Iterable | None = None, *,
                progress: Callable[[int, int, str], None] | None = None,
                warm_start: bool = True, workers: int = 1, scheduler: str | None = None,
                tables: bool = True, reference: bool = False,
                station_checks: "bool | dict" = False) -> StudyResult:
    """Solve every case of ``model`` (or the given ones; the base model when it has no
    cases). A case that cannot balance is reported and the others still run.

    Parameters
    ----------
    cases : iterable, optional
        Case names of the model, or ``(name, changes)`` pairs (changes to the base
        model, as in :meth:`Model.with_changes`), or ``(name, changes, based_on)``.
    workers : int
        Processes to solve in; results are identical for any number [-]
    scheduler : str, optional
        Address of a dask.distributed scheduler to run the sweep on (extra ``dask``).
    tables : bool
        Build the result tables of each case (off for long sweeps) [-]
    reference : bool
        Make, build and solve every case from scratch with the reference assembly (the
        code path before the speed work), to check that the fast path gives the same
        answers [-]
    station_checks : bool or dict
        Also run the single-point station checks of every case where it is solved (in
        the workers of a parallel sweep), for :func:`steamnet.stations.run.run_checks`
        to join; True checks against ``station_data(model)``, a dict against the
        station data given. The report is the same as without [-]
    """
    from .sweep import run_sweep
    specs = list(cases) if cases is not None else [c.name for c in model.cases]
    extra = None
    if station_checks is not False and station_checks is not None:
        from functools import partial
        from .stations.run import point_checks, station_data
        extra = partial(point_checks, station_data(model) if station_checks is True
                        else station_checks)
    if not specs:
        one = [solve_case(model, reference=reference)]
        return StudyResult(model, one, None if extra is None else [extra(one)])
    out, blocks = run_sweep(model, specs, workers=workers, scheduler=scheduler,
                            tables=tables, progress=progress, warm_start=warm_start,
                            reference=reference, extra=extra)
    return StudyResult(model, out, blocks)

