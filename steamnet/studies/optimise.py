"""The cheapest dispatch of each case, within every limit (docs/howto-optimise.md).

Method
------
Successive linear programming on the balance. The case is first balanced by its control
philosophy (swing orders and shares). At the enthalpies of that balance every relation
is linear in the flows, and :func:`steamnet.solver.dispatch.solve_dispatch` finds the
cheapest flows of the elements that may move (HiGHS through scipy; a mixed-integer
programme where boilers may stop), each let-down valve held at most at the fail limit
of its travel (:func:`station_caps`). That dispatch goes back to the ordinary balance as
fixed flows, as the changes of a case (:func:`fixed_dispatch_changes`): every moved
element fixed at its flow, except one per header, which holds the header in swing (a
matching of headers to the elements the programme left inside their range) and so takes
up what the enthalpies of the new balance change. A round is accepted only when that
balance costs less than the last accepted one; its enthalpies give the coefficients of
the next programme. A rejected round shrinks a trust region around the accepted
dispatch (each moved flow within a quarter of the rejected move). The rounds stop when
the programme moves the dispatch by less than :data:`DISPATCH_TOL` from the accepted
one, when the trust region is smaller than that, or after :data:`MAX_REJECTED` rejected
rounds in a row: the programme holds the enthalpies, so near some dispatches its
slopes point to a cheaper one that the balance does not confirm. The answer is a
dispatch no dearer than the control philosophy's at which the programme finds no
cheaper one that balances: a local optimum of the method, not a proven global one. The final point is an ordinary balance
of the case and is evaluated like every other (:func:`steamnet.evaluate.evaluate`): the
balance, its flags and every station check.

Per case the answer is the control-philosophy dispatch beside the optimal one, the cost
of each (:func:`steamnet.solver.results.case_cost`, the same function for both) and the
saving, the limits that bind, and the shadow price of steam on each header (the
programme's duals: the cost of one more t/h used there, no condensate back, at the
optimum). Over an hourly profile the cases run as a sweep with the same chunks and
workers as ``steamnet cases``, and the saving is summed per month.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property, partial

import numpy as np
import pandas as pd

from ..errors import ModelError
from ..evaluate import chunk_findings, evaluate
from ..model.cases import CaseSet, sweep_specs
from ..model.schema import SI
from ..model.validate import validate_model
from ..solve import CaseResult, StudyResult, solve_model
from ..solver.dispatch import (DispatchLP, movable, prepare_dispatch, solve_prepared,
                               supplied_header)
from ..solver.network import FLOW_FIELDS, coefficients
from ..status import CaseStatus
from ..sweep import warm_start_from
from .common import Progress, resolve_cases

__all__ = ["optimise", "optimise_result", "fixed_dispatch_changes", "CaseOptimum",
           "OptimiseResult", "DISPATCH_TOL", "MAX_ROUNDS",
           "CASE_COLUMNS", "DISPATCH_COLUMNS"]

#: The rounds stop when no moved flow changes by more than this between two
#: programmes [kg/s] (0.36 kg/h)
DISPATCH_TOL = 1e-4
#: Most rounds of programme and balance before a case is reported not settled [-]
MAX_ROUNDS = 30
#: Rounds in a row that do not lower the balance's cost after which the accepted
#: dispatch stands: the programme, which holds the enthalpies, finds no cheaper one
#: near it [-]
MAX_REJECTED = 2
#: A flow inside its range by more than this may hold its header in the re-solve [kg/s]
_INSIDE = 1e-6

#: Columns of the per-case table (docs/studies.md).
CASE_COLUMNS = ["case", "status", "control_cost_per_h", "optimal_cost_per_h",
                "saving_per_h", "lp_cost_per_h", "gap", "rounds",
                "last_move_t_h", "moves", "binding", "stopped", "message"]
#: Columns of the per-element dispatch table.
DISPATCH_COLUMNS = ["case", "item", "type", "control_t_h", "optimal_t_h", "change_t_h"]

_STATUS_OK = "optimal"


@dataclass(frozen=True)
class CaseOptimum:
    """The cheapest dispatch of one case.

    Attributes
    ----------
    case : str
    status : str
        ``optimal``; ``infeasible`` (no dispatch meets every limit, the message names
        the headers); ``not_settled`` (the rounds did not settle within
        :data:`MAX_ROUNDS`); ``error`` (the case or its optimum could not be balanced).
    control, optimum : CaseResult
        The balance by the control philosophy and the re-solved optimal balance (None
        when there is none).
    lp_cost_per_h, gap : float
        The last programme's cost [currency/h] and its relative optimality gap [-]
    rounds : int
        Programmes solved.
    last_move : float
        Largest change of a moved flow between the last two programmes [kg/s]
    dispatch : tuple of dict
        Per moved element: item, type, control and optimal flow [t/h].
    binding : tuple of dict
        The limits that bind at the optimum (item, limit, value, unit, worth_per_h).
    shadow_per_t : dict
        Header -> cost of one more t/h used on it at the optimum [currency/t]
    """

    case: str
    status: str
    message: str
    control: CaseResult
    optimum: CaseResult | None = None
    lp_cost_per_h: float = math.nan
    gap: float = math.nan
    rounds: int = 0
    last_move: float = math.nan
    dispatch: tuple = ()
    binding: tuple = ()
    shadow_per_t: dict = field(default_factory=dict)
    stopped: tuple = ()
    start_flows: tuple = ()

    @property
    def control_cost_per_h(self) -> float:
        return _cost(self.control)

    @property
    def optimal_cost_per_h(self) -> float:
        return _cost(self.optimum) if self.status == _STATUS_OK else math.nan

    @property
    def saving_per_h(self) -> float:
        return self.control_cost_per_h - self.optimal_cost_per_h

    @property
    def flows(self) -> dict:
        """The optimal flows of the moved elements by (kind, name) [kg/s] (a start for
        a similar case), empty unless optimal."""
        if self.status != _STATUS_OK:
            return {}
        return dict(self.start_flows)

    def lean(self) -> "CaseOptimum":
        """A copy without raw solutions (small to pickle from a worker)."""
        return replace(self, control=self.control.without_solution(),
                       optimum=None if self.optimum is None
                       else self.optimum.without_solution())


def _cost_or_inf(r: CaseResult) -> float:
    """The cost of a balance to beat: the control's, or infinite when it has none."""
    c = _cost(r)
    return c if math.isfinite(c) else math.inf


def _cost(r: CaseResult | None) -> float:
    if r is None or r.status != CaseStatus.SOLVED:
        return math.nan
    return float(r.summary.get("cost_per_h", math.nan))


# ------------------------------------------------------------ the fixed dispatch
def _closing(net, x: np.ndarray, lo: np.ndarray, hi: np.ndarray, free) -> dict:
    """Header index -> the moved flow that holds it in the re-solve: a matching of
    headers to flows that feed (or take from) them, flows inside their range first
    (augmenting paths), then any flow on the header."""
    cand: dict[int, list[tuple[int, bool, str]]] = {i: [] for i in range(len(net.headers))}
    for vi in sorted(free):
        sh = supplied_header(net, vi)
        if sh is None:
            continue
        how, hdr = sh
        inside = lo[vi] + _INSIDE < x[vi] < hi[vi] - _INSIDE
        cand[hdr].append((vi, inside, how))
    match: dict[int, int] = {}          # var -> header
    owner: dict[int, int] = {}          # header -> var

    def augment(hdr, seen) -> bool:
        for vi, inside, _ in cand[hdr]:
            if not inside or vi in seen:
                continue
            seen.add(vi)
            if vi not in match or augment(match[vi], seen):
                match[vi] = hdr
                owner[hdr] = vi
                return True
        return False

    for hdr in cand:
        augment(hdr, set())
    for hdr, lst in cand.items():
        if hdr in owner:
            continue
        for vi, _, _ in sorted(lst, key=lambda c: (c[2] != "absorb", -(hi[c[0]] - lo[c[0]]))):
            if vi not in match:
                match[vi] = hdr
                owner[hdr] = vi
                break
    return owner


#: Flow kind -> (table, mode holding a header, fixed mode) of the elements whose fixed
#: value is their 'flow'.
_MODES = {"transfer": ("steam_transfer", "swing", "fixed"),
          "turbine": ("turbine", "swing", "fixed_flow"),
          "letdown": ("letdown", "auto", "fixed_flow")}


def fixed_dispatch_changes(net, x, closing: dict) -> dict:
    """The case changes that give the balance the dispatch ``x`` of the moved flows of
    ``net`` (:func:`steamnet.solver.dispatch.movable`): each fixed at its flow (a
    boiler at zero stopped), except the flows of ``closing`` (header -> flow), which
    hold their header in swing; vents stay as they are (they take excess steam)."""
    free = movable(net)
    holds = set(closing.values())
    ch: dict = {}
    for vi in sorted(free):
        v = net.vars[vi]
        m = SI(max(float(x[vi]), 0.0))
        swing = vi in holds
        if v.kind == "boiler":
            key = f"boiler.{v.item}"
            if swing:
                ch[f"{key}.mode"] = "swing"
                ch[f"{key}.priority"] = 1
            elif m <= 0.0 and net.model.table("boiler")[v.item].can_stop:
                ch[f"{key}.mode"] = "off"
            else:
                ch[f"{key}.mode"] = "fixed"
                ch[f"{key}.steam"] = m
        elif v.kind in _MODES:
            table, on_swing, fixed = _MODES[v.kind]
            key = f"{table}.{v.item}"
            ch[f"{key}.mode"] = on_swing if swing else fixed
            if not swing:
                ch[f"{key}.flow"] = m
        elif v.kind == "xt_in":
            ch[f"extraction_turbine.{v.item}.mode"] = "fixed_flow"
            ch[f"extraction_turbine.{v.item}.flow"] = m
        elif v.kind == "xt_ext":
            turbine, header = v.item.split("/", 1)
            key = f"extraction_turbine.{turbine}.extractions.{header}"
            ch[f"{key}.mode"] = "swing" if swing else "fixed"
            if not swing:
                ch[f"{key}.flow"] = m
        if swing and v.kind in ("transfer", "turbine", "letdown", "xt_ext"):
            ch[f"{key}.priority"] = 1
    return ch


def _flows_by_name(sol) -> dict:
    return {(v.kind, v.item): float(sol.x[v.index]) for v in sol.net.vars}




class DispatchModels:
    """The models of fixed dispatches of one run (a case, or a chunk of an hourly
    profile), made and validated with as little repeated work as gives the same models.

    A dispatch's changes are modes and priorities (which element holds each header,
    which boiler stops) and flows. :func:`~steamnet.model.validate.validate_model` runs
    in full the first time a set of modes is met on a case structure (the case's network
    graph, shared by the hours of a profile that change only values); a dispatch with
    the same modes on the same structure differs only in flows, each within the range
    its element allows (the programme's bounds lie inside it), and the checks that read
    flows (a fixed flow above its maximum, a Willans line at the fixed flow) pass for
    such flows when they passed for the element swinging over that range. ``nets``
    holds the last Net solved with each set of modes, the template of the next
    (:func:`steamnet.solver.network.build`).

    An element whose item is the one met before (the hours of a profile share the items
    they do not change) with the same modes is not validated again either: its item is
    the one validated then with the new flows set (:meth:`_with_flows`), a flow field
    reading an SI value as the number itself; the item's checks across fields run on it.
    Every model shares the station data of ``base``
    (:func:`~steamnet.model.stations.station_data`), which reads none of the fields a
    dispatch changes (modes, priorities, flows).
    """

    def __init__(self):
        self._valid: dict = {}
        #: (table, item, its mode changes, its flow fields) -> (the item changed, the
        #: item validated with the changes)
        self._items: dict = {}
        #: the last Net solved per set of modes (the template of the next one with
        #: those modes: the models differ in flows, :func:`~steamnet.solver.network.
        #: rebuild_flows`), and the key of the last model made
        self.nets: dict = {}
        self.key = None
        #: per set of modes: the last trial balance (its flows and solution), and the
        #: last two balances of an hour's start (:func:`_resolve`)
        self.trials: dict = {}
        self.starts: dict = {}

    def model(self, base, changes: dict, origin: str):
        m = self._model(base, changes, origin)
        m.__dict__["stations"] = base.stations          # the cached_property's slot
        return m

    def _model(self, base, changes: dict, origin: str):
        modes = tuple(sorted((k, str(v)) for k, v in changes.items()
                             if k.rsplit(".", 1)[-1] not in FLOW_FIELDS))
        key = self.key = (id(base.graph), modes)
        if key in self._valid:
            m = self._with_flows(base, changes)
            if m is not None:
                return m
        m = base.with_changes(changes, origin=origin)
        if key not in self._valid:
            validate_model(m)
            self._valid[key] = base.graph       # kept, so that the id stays its own
        for (table, item), (ik, _, _) in _by_item(changes).items():
            self._items[ik] = (base.items[table][item], m.items[table][item])
        return m

    def _with_flows(self, base, changes: dict):
        """``base.with_changes(changes)`` from the items validated before, or None
        when an item changed is not one met before with the same modes."""
        items, raw = dict(base.items), dict(base.raw)
        copied: set = set()
        for (table, item), (ik, flows, every) in _by_item(changes).items():
            hit = self._items.get(ik)
            if hit is None or hit[0] is not base.items[table][item]:
                return None
            new = _set_flows(hit[1], flows)
            try:
                new.check()
            except ValueError:
                return None
            if table not in copied:
                items[table], raw[table] = dict(items[table]), dict(raw[table])
                copied.add(table)
            items[table][item] = new
            r = raw[table][item]
            for path, v, _ in every:
                r = _raw_set(r, path, v)
            raw[table][item] = r
        return replace(base, items=items, raw=raw)


def _by_item(changes: dict) -> dict:
    """(table, item) -> (the key of its validated item in :class:`DispatchModels`,
    its flow changes as (field path, value), and all its changes as (field path,
    value, change key) in their order)."""
    out: dict = {}
    for k, v in changes.items():
        table, item, *path = k.split(".")
        parts = out.setdefault((table, item), ([], [], []))
        parts[path[-1] in FLOW_FIELDS].append((tuple(path), v))
        parts[2].append((tuple(path), v, k))
    return {ti: ((ti[0], ti[1], tuple(sorted((p, str(v)) for p, v in modes)),
                  tuple(sorted(p for p, _ in flows))), flows, every)
            for ti, (modes, flows, every) in out.items()}


def _raw_set(raw: dict, path: tuple, value) -> dict:
    """A copy of the raw item ``raw`` (as read from the model file) with ``path`` set
    to ``value``: a field, or ``extractions.<header>.<field>`` (the extraction to that
    header); the parts not on the path are shared, as models share what they do not
    change."""
    out = dict(raw)
    if len(path) == 1:
        out[path[0]] = value
        return out
    _, header, name = path                      # extractions.<header>.<field>
    exts = list(out.get("extractions", []))
    for i, e in enumerate(exts):
        if isinstance(e, dict) and e.get("header") == header:
            exts[i] = {**e, name: value}
            break
    out["extractions"] = exts
    return out


def _set_flows(item, flows):
    """``item`` with the flow fields of ``flows`` ((path, value) pairs: ``flow``,
    ``steam`` or ``extractions.<header>.flow``) set to the values [kg/s]."""
    top = {p[-1]: float(v) for p, v in flows if len(p) == 1}
    ext = {p[1]: float(v) for p, v in flows if len(p) == 3 and p[0] == "extractions"}
    if ext:
        top["extractions"] = [e.model_copy(update={"flow": ext[e.header]})
                              if e.header in ext else e for e in item.extractions]
    return item.model_copy(update=top)


def _resolve(control: CaseResult, net, x, lo, hi, free, tables: bool, h_start,
             models: DispatchModels | None = None, *, above: float | None = None,
             x_start=None, warm: bool = False):
    """The ordinary balance of the case with the dispatch ``x`` as fixed flows, from
    the enthalpies ``h_start`` (of the dispatch ``x_start``). With ``above`` (the cost
    to beat [currency/h]) a trial balance first: None when the dispatch costs more
    than that (see :data:`ROUGH_TOL_X`). With ``warm`` (the start of an hour of a
    profile: the dispatch of the hour before) the balance starts instead from the
    last two balances so made with the same modes, as a sweep's case starts from the
    cases before it (:func:`steamnet.sweep.warm_start_from`: their modes, the slopes
    their iteration found and the enthalpies extrapolated): four iterations instead
    of six on the demo's hours."""
    closing = _closing(net, x, lo, hi, free)
    changes = fixed_dispatch_changes(net, x, closing)
    models = models or DispatchModels()
    m = models.model(net.model, changes, f"optimal dispatch of case '{control.case}'")
    key = models.key
    start = {"h": h_start, "modes": []}
    if above is not None and math.isfinite(above):
        # from the enthalpies of the nearer of the dispatches balanced before: the
        # accepted one (h_start) or the last trial's (in the hours of a profile, the
        # programme tends to propose the move it proposed the hour before)
        trial_start = start
        last = models.trials.get(key)
        if last is not None and x_start is not None:
            order = sorted(free)
            if np.abs(last[0][order] - x[order]).max(initial=0.0) < \
                    np.abs(np.asarray(x_start)[order] - x[order]).max(initial=0.0):
                trial_start = {"h": list(last[1].h), "modes": last[1].modes,
                               "accel": last[1].accel}
        rough = solve_model(m, control.case, start=trial_start,
                            tables=False, streams=False,
                            like=models.nets.get(key), tol_x=ROUGH_TOL_X,
                            tol_h=ROUGH_TOL_H, points=False)
        if rough.solution is not None:
            models.nets[key] = rough.solution.net
            models.trials[key] = (np.array(x, dtype=float), rough.solution)
        if _cost(rough) > above + ROUGH_MARGIN_REL * abs(above):
            return None
    if warm and key in models.starts:
        start = warm_start_from(*models.starts[key])
    r = solve_model(m, control.case, start=start, tables=tables,
                    streams=False, like=models.nets.get(key))
    if r.solution is not None:
        models.nets[key] = r.solution.net
        if warm:
            before = models.starts.get(key, (None,))[0]
            models.starts[key] = (r.solution, before)
    return r


@dataclass
class _Run:
    """One run of rounds from a start: the last programme and the accepted balance."""

    lp: DispatchLP | None = None
    res: CaseResult | None = None
    rounds: int = 0
    move: float = math.inf
    settled: bool = False
    failed: CaseOptimum | None = None

    @property
    def cost(self) -> float:
        return _cost(self.res) if self.failed is None and self.res is not None \
            else math.inf


#: A round is accepted when the balance's cost falls by more than this fraction [-]
_ACCEPT_REL = 1e-9
#: A round's balance is first solved to these looser tolerances (largest change of a
#: flow [kg/s] and of a header enthalpy [J/kg] between iterations, against 1e-9 kg/s
#: and about 3e-4 J/kg): a dispatch that costs more than the accepted one by more
#: than :data:`ROUGH_MARGIN_REL` there is rejected without the full balance, which
#: would reject it too. Two iterations (three in one of six) instead of six on the
#: demo's hours, the trial's cost within 9.4e-3 EUR/h of the full balance's (4.8e-6 of
#: it) in the 2,252 trials of the first 2,000 hours (docs/performance.md, "Fourth
#: round"). A trial within the margin, or one that does not balance, goes on to the
#: full balance, from the accepted dispatch's enthalpies as without the trial, so the
#: answer is the one without it.
ROUGH_TOL_X = 3e-3
ROUGH_TOL_H = 30.0
#: The margin by which a trial balance must cost more than the accepted one to be
#: rejected, a fraction of the accepted cost: 21 times the largest difference
#: between trial and full costs measured (above) [-]
ROUGH_MARGIN_REL = 1e-4


#: Steam flow at which a let-down valve is sized to find its flow at the fail limit of
#: its travel (the required Kv is proportional to the flow at a given inlet state) [kg/s]
_KV_REF_FLOW = 1.0


def station_caps(net, h: list[float]) -> dict:
    """Per let-down flow, the station checks' fail limits that depend on the flow,
    written as a largest steam flow at the inlet state of enthalpies ``h``: the
    let-down valve at the fail limit of its travel (``valve_travel_fail_high``,
    IEC 60534-2-1 as the check sizes it, docs/checks/letdown_valve_travel.md). A
    valve without the data the check needs, or with wet inlet steam, gives none; the
    spray capacity is the desuperheater's ``max_spray`` (a bound of the programme
    itself)."""
    from .. import properties as props
    from ..calc.valve import size_steam_valve
    from ..errors import PropertyRangeError
    out = {}
    stations = net.model.stations
    for s in net.letdowns:
        data = stations.get(s["name"])
        v = data.valve if data is not None else None
        if v is None or v.xt is None or v.rated_kv is None or v.characteristic is None \
                or (v.characteristic == "equal_percentage" and v.rangeability is None):
            continue
        fail = data.limits.valve_travel_fail_high
        full = v.diameter is not None and v.fl is not None and v.fd is not None
        p_in, p_out = net.p[s["inlet"]], net.p[s["outlet"]]
        try:
            sizing = size_steam_valve(p_in, p_out, _KV_REF_FLOW,
                                      props.state_ph(p_in, h[s["inlet"]]), fl=v.fl,
                                      xt=v.xt, fd=v.fd if full else None,
                                      d_valve=v.diameter if full else None)
        except (ModelError, PropertyRangeError):
            continue
        if not sizing.kv > 0:
            continue
        kv_fail = v.rated_kv * (fail if v.characteristic == "linear"
                                else v.rangeability ** (fail - 1.0))
        out[s["var"]] = (_KV_REF_FLOW * kv_fail / sizing.kv, "valve_travel_fail_high")
    return out


def _rounds(control: CaseResult, net, free, *, first_mass: bool, tol: float,
            max_rounds: int, tables: bool, start: dict | None = None,
            max_rejected: int = None, models: DispatchModels | None = None) -> _Run:
    """Rounds of programme and re-solve from the control balance, each accepted only
    when the re-solved balance costs less than the last accepted one; a rejected round
    shrinks the trust region around the accepted dispatch to a quarter of its move.
    Settled when the programme moves the dispatch by less than ``tol``, the trust
    region is smaller than that, or :data:`MAX_REJECTED` rounds in a row were rejected.
    With ``first_mass`` the first programme holds the duty users' flows (a longer first
    step, see :func:`optimise_result`). With
    ``start`` (moved flows by kind and name, the optimum of a similar case) that
    dispatch, balanced for this case, is the first accepted point when it costs less
    than the control's; a start that does not is left. ``max_rejected`` (default
    :data:`MAX_REJECTED`) rejected rounds in a row end the rounds."""
    sol = control.solution
    h, co = list(sol.h), sol.co
    x = np.array(sol.x, dtype=float)
    best = _cost(control) if control.status == CaseStatus.SOLVED else math.inf
    order = sorted(free)
    radius = math.inf
    caps_at: dict = {}          # the station caps of the enthalpies met (a rejected
                                # round leaves them as they were)

    def caps(h_now):
        key = tuple(h_now)
        if key not in caps_at:
            caps_at[key] = station_caps(net, h_now)
        return caps_at[key]
    made: dict = {}             # the programmes of the coefficients met, by form: a
                                # rejected round's next one differs in its bounds only

    def dispatch(energy: bool = True, around=None) -> DispatchLP:
        key = (id(co), energy)
        if key not in made:
            made.clear()
            made[key] = (co, prepare_dispatch(net, co, h, energy=energy, caps=caps(h)))
        return solve_prepared(made[key][1], around=around)
    rejected = 0
    run = _Run()
    if start is not None:
        x0 = np.array([start.get((v.kind, v.item), x[v.index]) if v.index in free
                       else x[v.index] for v in net.vars])
        lo, hi = _own_bounds(net, co, free)
        res = _resolve(control, net, x0, lo, hi, free, tables, h, models, warm=True)
        cost = _cost(res)
        if cost < best:
            run.res, best = res, cost
            named = _flows_by_name(res.solution)
            x = np.array([named.get((v.kind, v.item), 0.0) for v in net.vars])
            h = list(res.solution.h)
            co = coefficients(net, h, list(x))
    for run.rounds in range(1, max_rounds + 1):
        around = None if math.isinf(radius) else (x, radius)
        lp = dispatch(energy=not (first_mass and run.rounds == 1), around=around)
        if lp.status != "optimal":
            if around is None and run.res is None:
                run.failed = CaseOptimum(control.case, lp.status if lp.status ==
                                         "infeasible" else "error", lp.message, control,
                                         rounds=run.rounds)
                return run
            radius = radius / 4 if math.isfinite(radius) else tol
            continue
        run.move = float(np.abs(lp.x[order] - x[order]).max(initial=0.0))
        if run.move < tol:
            run.lp, run.settled = lp, True
            break
        res = _resolve(control, net, lp.x, lp.lo, lp.hi, free, tables, h, models,
                       above=best, x_start=x)
        cost = _cost(res) if res is not None else math.inf
        if cost < best - _ACCEPT_REL * abs(best) or (math.isinf(best) and
                                                     math.isfinite(cost)):
            run.lp, run.res, best = lp, res, cost
            named = _flows_by_name(res.solution)
            x = np.array([named.get((v.kind, v.item), 0.0) for v in net.vars])
            h = list(res.solution.h)
            co = coefficients(net, h, list(x))
            if math.isfinite(radius):
                radius = max(radius, 2 * run.move)
            rejected = 0
        else:
            radius = run.move / 4
            rejected += 1
            if radius < tol or rejected >= (max_rejected or MAX_REJECTED):
                run.settled = True
                break
    if not run.settled:
        return run
    if run.lp is None or run.res is None or run.move >= tol:
        # settled by a shrunk trust region (or nothing lowered the cost): the
        # programme held around the accepted dispatch gives its duals and limits
        run.lp = dispatch(around=(x, tol))
        if run.lp.status == "optimal":
            run.move = float(np.abs(run.lp.x[order] - x[order]).max(initial=0.0))
    if run.res is None:
        # the control dispatch is the optimum: re-solved as fixed flows like any other
        run.res = _resolve(control, net, x, run.lp.lo, run.lp.hi, free, tables, h,
                           models)
    return run


def _own_bounds(net, co, free):
    """The flows' ranges as the programme holds them (without a trust region)."""
    from ..solver.linear import flow_bounds
    return flow_bounds(net, co, free, pumps=True)


def optimise_result(control: CaseResult, *, tol: float = DISPATCH_TOL,
                    max_rounds: int = MAX_ROUNDS, tables: bool = True,
                    start: dict | None = None,
                    models: DispatchModels | None = None) -> CaseOptimum:
    """The cheapest dispatch of the case balanced as ``control`` (its raw solution
    kept), by successive linear programming (see the module docstring).

    The enthalpies couple the flows in a way that is not convex (a let-down's
    desuperheated steam serves a duty user less than a turbine's hotter exhaust), so
    the rounds can settle on a local optimum. Two runs start from the control
    balance: one with every header's programme in energy form from the first round,
    one whose first programme holds the duty users' flows (a longer first step); the
    cheaper settled optimum is kept. With ``start`` (:attr:`CaseOptimum.flows` of the
    case before: the hours of a profile within a chunk of the sweep) one run starts
    from that dispatch instead, balanced for this case, when it costs less than the
    control's, and one rejected round ends it; otherwise the two runs from the control
    balance are made as without a start."""
    sol = control.solution
    if sol is None or control.status not in (CaseStatus.SOLVED, CaseStatus.INFEASIBLE) \
            or not np.isfinite(sol.x).all():
        return CaseOptimum(control.case, "error", "the case has no balance to start "
                           f"from: {control.status}: {control.message}", control)
    net = sol.net
    free = movable(net)
    opts = {"tol": tol, "max_rounds": max_rounds, "tables": tables,
            "models": models or DispatchModels()}
    try:
        runs = []
        if start is not None:
            warm = _rounds(control, net, free, first_mass=False, start=start,
                           max_rejected=1, **opts)
            if warm.settled and math.isfinite(warm.cost) and warm.failed is None \
                    and warm.cost <= _cost_or_inf(control):
                runs = [warm]
        if not runs:
            runs = [_rounds(control, net, free, first_mass=False, **opts)]
            if runs[0].failed is None and any(u["duty"] is not None for u in net.users):
                runs.append(_rounds(control, net, free, first_mass=True, **opts))
    except ModelError as exc:
        return CaseOptimum(control.case, "error", f"the optimal dispatch could not be "
                           f"balanced: {exc}", control)
    if runs[0].failed is not None:
        return runs[0].failed
    settled = [r for r in runs if r.settled and math.isfinite(r.cost)]
    run = min(settled, key=lambda r: r.cost) if settled else runs[0]
    lp, res, move = run.lp, run.res, run.move
    rounds = sum(r.rounds for r in runs)
    status = _STATUS_OK if settled else (
        "not_settled" if res.status == CaseStatus.SOLVED else "error")
    msg = {_STATUS_OK: "optimal",
           "not_settled": f"the dispatch still moved {move * 3.6:.3g} t/h after "
                          f"{run.rounds} rounds (limit {tol * 3.6:g} t/h)",
           }.get(status, f"the optimal dispatch does not balance: {res.status}: "
                         f"{res.message}")
    return CaseOptimum(
        control.case, status, msg, control, res, lp_cost_per_h=lp.cost_per_h,
        gap=lp.gap, rounds=rounds, last_move=move,
        dispatch=tuple(_dispatch_rows(net, control, res, free)),
        binding=tuple(lp.binding),
        shadow_per_t={name: d for name, d in zip(net.headers, lp.shadow_per_t)},
        stopped=tuple(lp.stopped), start_flows=tuple(
            ((net.vars[vi].kind, net.vars[vi].item), float(lp.x[vi])) for vi in
            sorted(free)))


def _dispatch_rows(net, control: CaseResult, res: CaseResult, free) -> list[dict]:
    named = _flows_by_name(res.solution) if res.solution is not None else {}
    out = []
    for vi in sorted(free):
        v = net.vars[vi]
        typ = {"xt_in": "extraction_turbine", "xt_ext": "extraction",
               "transfer": "steam_transfer"}.get(v.kind, v.kind)
        a = float(control.solution.x[vi]) * 3.6
        b = named.get((v.kind, v.item), 0.0) * 3.6
        out.append({"item": v.item, "type": typ, "control_t_h": a, "optimal_t_h": b,
                    "change_t_h": b - a})
    return out


# -------------------------------------------------------------------- many cases
def _chunk_optimise(data: dict, opts: dict, results: list) -> tuple:
    """The sweep extra: the optimum of every case of a solved chunk (made where the
    chunk was solved) and the findings of the optimal balances."""
    found = []
    models = DispatchModels()
    for r in results:        # each case starts from the optimum of the one before
        start = found[-1].flows if found else None
        found.append(optimise_result(r, start=start or None, models=models, **opts))
    optima = [o.optimum for o in found if o.optimum is not None]
    blocks = chunk_findings(data, optima)
    return [o.lean() for o in found], blocks


@dataclass
class OptimiseResult:
    """The optimum of every case of a case set.

    Attributes
    ----------
    cases : list of CaseOptimum
    study : StudyResult
        The optimal balances (re-solved), for the workbook and the JSON export.
    evaluation : steamnet.evaluate.Evaluation
        The findings of the optimal balances (one findings table, docs/results.md).
    kind : str
        ``cases`` or ``profile`` (an hourly profile: the saving per month).
    """

    model: object
    cases: list
    study: StudyResult
    evaluation: object
    kind: str = "cases"
    timestamps: dict = field(default_factory=dict)

    @cached_property
    def table(self) -> pd.DataFrame:
        """One row per case (:data:`CASE_COLUMNS`), made once (the year and the months
        read it too)."""
        rows = []
        for o in self.cases:
            s = o.saving_per_h
            rows.append({
                "case": o.case, "status": o.status,
                "control_cost_per_h": o.control_cost_per_h,
                "optimal_cost_per_h": o.optimal_cost_per_h, "saving_per_h": s,
                "lp_cost_per_h": o.lp_cost_per_h,
                "gap": o.gap, "rounds": o.rounds, "last_move_t_h": o.last_move * 3.6,
                "moves": _moves_text(o), "binding": _binding_text(o),
                "stopped": ", ".join(o.stopped), "message": o.message})
        return pd.DataFrame(rows, columns=CASE_COLUMNS)

    @property
    def dispatch(self) -> pd.DataFrame:
        rows = [{"case": o.case, **d} for o in self.cases for d in o.dispatch]
        return pd.DataFrame(rows, columns=DISPATCH_COLUMNS)

    @property
    def binding(self) -> pd.DataFrame:
        rows = [{"case": o.case, **b} for o in self.cases for b in o.binding]
        return pd.DataFrame(rows, columns=["case", "item", "limit", "value", "unit",
                                           "worth_per_h"])

    @property
    def shadow(self) -> pd.DataFrame:
        """Per case and header: the shadow price of steam [currency/t]."""
        rows = [{"case": o.case, "header": hdr, "shadow_price_per_t": v}
                for o in self.cases for hdr, v in o.shadow_per_t.items()]
        return pd.DataFrame(rows, columns=["case", "header", "shadow_price_per_t"])

    @property
    def year(self) -> dict:
        """For an hourly profile: the hours, the optimal ones, the control and optimal
        cost and the saving over them [currency]."""
        t = self.table
        ok = t[t["status"] == _STATUS_OK]
        return {"hours": len(t), "optimal_hours": len(ok),
                "control_cost": float(ok["control_cost_per_h"].sum()),
                "optimal_cost": float(ok["optimal_cost_per_h"].sum()),
                "saving": float(ok["saving_per_h"].sum())}

    @property
    def monthly(self) -> pd.DataFrame:
        """For an hourly profile: per month (``YYYY-MM``) the hours optimised and the
        control cost, optimal cost and saving summed over them [currency]."""
        t = self.table
        t = t[t["status"] == _STATUS_OK]
        if self.kind != "profile" or not len(t):
            return pd.DataFrame(columns=["month", "hours", "control_cost",
                                         "optimal_cost", "saving"])
        stamps = pd.to_datetime(t["case"].map(lambda c: self.timestamps.get(c, c)),
                                errors="coerce")
        g = t.assign(month=stamps.dt.strftime("%Y-%m")).groupby("month", sort=True)
        return pd.DataFrame({"hours": g.size(),
                             "control_cost": g["control_cost_per_h"].sum(),
                             "optimal_cost": g["optimal_cost_per_h"].sum(),
                             "saving": g["saving_per_h"].sum()}).reset_index()


def _moves_text(o: CaseOptimum, most: int = 4) -> str:
    big = sorted((d for d in o.dispatch if abs(d["change_t_h"]) >= 0.05),
                 key=lambda d: -abs(d["change_t_h"]))
    return "; ".join(f"{d['item']} {d['change_t_h']:+.1f} t/h" for d in big[:most])


def _binding_text(o: CaseOptimum, most: int = 4) -> str:
    return "; ".join(f"{b['item']} {b['limit']}" for b in o.binding[:most])


def optimise(model, cases: CaseSet | list | str | None = None, *,
             progress: Progress | None = None, workers: int = 1,
             scheduler: str | None = None, tol: float = DISPATCH_TOL,
             max_rounds: int = MAX_ROUNDS) -> OptimiseResult:
    """The cheapest dispatch of every case of ``model`` (or ``cases``: names, or a
    case set from a case table or an hourly profile), within every limit.

    The cases run as a sweep (:func:`steamnet.sweep.run_sweep`, chunks of 24 with a
    warm start, serially, in ``workers`` processes or on a dask cluster, with the
    same answers); each is balanced by its control philosophy and then optimised
    (:func:`optimise_result`) where it was solved.

    >>> import steamnet
    >>> res = steamnet.optimise(steamnet.load_model("cases/orlewick.toml"), ["summer"])
    >>> res.table[["case", "status"]].values.tolist()
    [['summer', 'optimal']]
    >>> bool(res.table["saving_per_h"].iloc[0] >= 0)
    True
    """
    from ..sweep import run_sweep
    _check_prices(model)
    cs = resolve_cases(model, cases)
    many = len(cs) > 200
    opts = {"tol": tol, "max_rounds": max_rounds, "tables": not many}
    out, per_chunk = run_sweep(cs.model, sweep_specs(cs), workers=workers,
                               scheduler=scheduler, tables=not many, streams=False,
                               progress=progress,
                               extra=partial(_chunk_optimise, cs.model.stations, opts),
                               keep_solutions=False)
    found = [o for chunk, _ in per_chunk for o in chunk]
    blocks = [b for _, b in per_chunk]
    optima = [o.optimum for o in found if o.optimum is not None]
    study = StudyResult(cs.model, optima, [b.points for b in blocks],
                        findings_blocks=blocks)
    ev = evaluate(study)
    stamps = {}
    if cs.kind == "profile":
        stamps = {name: cs.description(name) or name for name in cs}
    return OptimiseResult(cs.model, found, study, ev, kind=cs.kind, timestamps=stamps)


def _check_prices(model) -> None:
    pr = model.prices
    if pr.electricity_export is not None and pr.electricity_export > pr.electricity:
        raise ModelError("the optimiser values power above the site's demand at the "
                         "export price and needs it at or below the electricity price "
                         "(a dearer sale would need the demand split in a mixed-integer "
                         "programme, which it does not do)", file=model.source,
                         item="prices", field="electricity_export")
