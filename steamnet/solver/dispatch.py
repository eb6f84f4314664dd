"""The cheapest dispatch of one case at fixed enthalpies: one linear programme
(docs/howto-optimise.md, the method).

At the coefficients of given header enthalpies the balance is linear in the flows
(:mod:`steamnet.solver.linear`), and so is the operating cost of
:func:`steamnet.solver.results.case_cost`: fuel and its CO2 per boiler, make-up and
external water, imported and exported steam, and the net electric power (generators
less feed and spray pumps) at the electricity price up to the site's power demand and
the export price above it, up to the export cap. :func:`solve_dispatch` minimises it
over the flows the optimiser may move (:func:`movable`): every swing, auto and shared
element, every vent and swing export, and every element marked ``dispatchable``; the
others keep the values the balance gives them. The shares of the swing groups do not
hold (the optimiser replaces the control philosophy); every element's range, the
extraction turbines' joint limits, each pump-driving turbine's flow as its pump needs
it for the water the dispatch pumps (a row), each desuperheater's ``max_spray`` (a bound on its
let-down's steam at the present spray ratio), the export cap and the caps the caller
gives (the let-down valves' travel, :func:`steamnet.studies.optimise.station_caps`) do. Boilers marked
``can_stop`` either run within their range or stop: a mixed-integer programme
(HiGHS, :func:`steamnet.solver.lp.solve_lp`), after which the linear programme with the chosen boilers gives
the duals.

The duals of the header rows are the shadow prices of steam: the cost of one more t/h
used on a header (no condensate back), in currency per tonne.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .linear import (duty_header_rows, equality_rows, exhaust_inequalities, exhaust_rows,
                     dense_rows, flow_bounds, header_rows, held_flows)
from .lp import solve_bounds, solve_lp
from .network import Coeffs, Net
from .slack import slack_costs
from .results import _boiler

__all__ = ["DispatchLP", "Prepared", "movable", "cost_terms", "solve_dispatch",
           "prepare_dispatch", "solve_prepared", "supplied_header",
           "FLOW_TOL"]

#: A flow within this of a bound is at the bound [kg/s]
FLOW_TOL = 1e-7
#: Reduced costs and duals smaller than this are nought [currency/h per kg/s]
_PRICE_TOL = 1e-7


@dataclass
class DispatchLP:
    """The answer of one programme.

    Attributes
    ----------
    status : str
        ``optimal``, ``infeasible`` (no dispatch meets every limit: ``short`` and
        ``long`` say by how much each header misses), ``unbounded`` or ``failed``.
    x : numpy.ndarray
        The flows [kg/s] (of the least header slack when infeasible).
    cost_per_h : float
        The programme's cost at ``x`` [currency/h]
    shadow_per_t : list of float
        Per header (``net.headers`` order): the cost of one more t/h used on it
        [currency/t]
    binding : list of dict
        The limits that hold the cost up: ``item``, ``limit``, ``value`` (in
        ``unit``) and ``worth_per_h`` (what one more unit of the limit would save).
    gap : float
        Relative optimality gap of the last programme (0 for a linear programme).
    stopped : list of str
        Boilers the optimum stops.
    """

    status: str
    message: str
    x: np.ndarray
    cost_per_h: float = math.nan
    shadow_per_t: list = field(default_factory=list)
    binding: list = field(default_factory=list)
    gap: float = 0.0
    stopped: list = field(default_factory=list)
    short: list = field(default_factory=list)
    long: list = field(default_factory=list)
    #: the bounds of every flow the programme held [kg/s]
    lo: np.ndarray | None = None
    hi: np.ndarray | None = None


def _dispatchable(net: Net, v) -> bool:
    """Whether the element of flow ``v`` is marked dispatchable or may stop."""
    it = net.model.table(v.table).get(v.item)
    return bool(getattr(it, "dispatchable", False) or getattr(it, "can_stop", False))


def movable(net: Net) -> frozenset:
    """The flows the optimiser may move: swing group members, absorbers (vents, swing
    exports), swing extractions, and the flows of elements marked ``dispatchable``
    (for an extraction turbine, its throttle flow) or ``can_stop``. Worked out once
    per Net (a Net is never changed once built)."""
    got = net.__dict__.get("_movable")
    if got is None:
        got = net.__dict__["_movable"] = _movable(net)
    return got


def _movable(net: Net) -> frozenset:
    out = held_flows(net)
    for v in net.vars:
        if v.kind in ("boiler", "transfer", "turbine", "letdown", "xt_in") \
                and _dispatchable(net, v):
            out.add(v.index)
    return frozenset(out)


def supplied_header(net: Net, vi: int) -> tuple[str, int] | None:
    """The header whose balance flow ``vi`` can close, and how: ``("supply", h)`` for
    a boiler, an import, a turbine, a let-down or an extraction feeding header ``h``,
    ``("absorb", h)`` for a vent or an export on it; None for others."""
    for b in net.boilers:
        if b["var"] == vi:
            return "supply", b["header"]
    for t in net.transfers:
        if t["var"] == vi:
            return ("supply" if t["dir"] == "import" else "absorb"), t["header"]
    for t in net.turbines:
        if t["var"] == vi:
            return "supply", t["outlet"]
    for s in net.letdowns:
        if s["var"] == vi:
            return "supply", s["outlet"]
    for t in net.xturbines:
        for e in t["exts"]:
            if e["var"] == vi:
                return "supply", e["header"]
    for t in net.vents:
        if t["var"] == vi:
            return "absorb", t["header"]
    return None


def cost_parts(net: Net, co: Coeffs) -> dict:
    """The linear parts of the operating cost at the coefficients ``co``, apart: per
    kg/s of each flow, ``fuel`` (at the fuel price), ``carbon`` (the fuel's CO2),
    ``water`` (make-up and external water) and ``trade`` (imported less exported
    steam) [currency/s per kg/s]; the electric power of the generators ``power_gen``
    and of the motor-driven pumps ``power_pump`` (drawn: negative) [W per kg/s]; and
    the constant of the generators' power ``p0`` [W]. :func:`cost_terms` adds them up."""
    model = net.model
    pr = model.prices
    n = len(net.vars)
    fuel, carbon, water, trade = (np.zeros(n) for _ in range(4))
    gen, pump = np.zeros(n), np.zeros(n)
    p0 = 0.0
    for b in net.boilers:
        f = _boiler(b, 1.0).fuel                    # linear in the steam, no intercept
        ef = b["item"].emission_factor or 0.0
        fuel[b["var"]] += f * b["fuel_price"]
        carbon[b["var"]] += f * ef * pr.carbon
        fw = 1.0 / (1.0 - b["bd"])
        if "pump_turbine" not in b["supply"]:    # a steam-driven pump draws no power
            pump[b["var"]] -= fw * b["supply"]["pump_work"]
        if not b["supply"]["from_da"]:
            water[b["var"]] += fw * pr.makeup_water
    for s, k in zip(net.letdowns, co.ld):
        ds = s["ds"]
        if ds is None or not k["r"] > 0:
            continue
        if "pump_turbine" not in ds["supply"]:
            pump[s["var"]] -= k["r"] * ds["supply"]["pump_work"]
        if not ds["supply"]["from_da"]:
            water[s["var"]] += k["r"] * pr.makeup_water
    if net.deaerator is not None:
        water[net.deaerator["makeup_var"]] += pr.makeup_water
    for t in net.transfers:
        trade[t["var"]] += t["price"] if t["dir"] == "import" else -t["price"]
    for t, k in zip(net.turbines, co.turb):
        if t["item"].drive != "generator":
            continue
        if k["willans"]:           # output (m - m0) / k above the no-load steam
            gen[t["var"]] += 1.0 / k["k"]
            p0 -= k["m0"] / k["k"]
        else:
            gen[t["var"]] += k["dh"] * t["eta_mg"]
    for t, k in zip(net.xturbines, co.xturb):
        if t["item"].drive != "generator":
            continue
        dh = k["dh"]
        gen[t["in_var"]] += sum(dh) * t["eta_mg"]
        for i, e in enumerate(t["exts"]):
            gen[e["var"]] -= sum(dh[i + 1:]) * t["eta_mg"]
    return {"fuel": fuel, "carbon": carbon, "water": water, "trade": trade,
            "power_gen": gen, "power_pump": pump, "p0": p0}


def cost_terms(net: Net, co: Coeffs):
    """The linear parts of the operating cost at the coefficients ``co``: the cost per
    kg/s of each flow besides its power [currency/s per kg/s], and the net electric
    power (generators less pumps) as terms per kg/s and a constant [W per kg/s], [W].
    ``cost = c @ x - value(power @ x + p0)`` (:func:`steamnet.solver.results.case_cost`;
    the parts apart: :func:`cost_parts`)."""
    p = cost_parts(net, co)
    return (p["fuel"] + p["carbon"] + p["water"] + p["trade"],
            p["power_gen"] + p["power_pump"], p["p0"])


def _label(net: Net, vi: int) -> str:
    from ..model.schema import item_label
    v = net.vars[vi]
    if v.kind == "xt_ext":
        return f"extraction '{v.item}'"
    if v.kind in ("da_steam", "da_makeup"):
        return item_label("deaerator", v.item)
    return item_label(v.table, v.item)


_LIMIT_WORDS = {"boiler": ("min_steam", "max_steam")}


def _bound_name(net: Net, vi: int, upper: bool, spray_capped) -> str:
    v = net.vars[vi]
    if upper and vi in spray_capped:
        return spray_capped[vi]
    lo, hi = _LIMIT_WORDS.get(v.kind, ("min_flow", "max_flow"))
    return hi if upper else lo


@dataclass
class Programme:
    """One programme of the balance at fixed enthalpies, in the form of
    :func:`steamnet.solver.lp.solve_lp`. Columns: the flows (``n``), then, with the
    site's power demand, the power used at the site and the power sold (in MW), then
    one on/off column per boiler that may stop (from ``col_on``). Rows: the header
    rows first (``net.headers`` order), then the equality rows given, then the power
    row; inequality rows as given, then two per boiler that may stop. ``cost`` is per
    second of the scaled columns (``x = res.x * scale``), ``const`` the cost's
    constant [currency/s]."""

    cost: np.ndarray
    const: float
    a_eq: np.ndarray
    b_eq: list
    a_ub: np.ndarray | None
    b_ub: list
    lo: np.ndarray
    hi: np.ndarray
    scale: np.ndarray
    n: int
    nc: int
    col_on: int


def assemble(net: Net, co: Coeffs, h: list[float], lo: np.ndarray, hi: np.ndarray,
             eq: list, rows_ub: list, b_ub: list, *, energy: bool = True,
             stoppable: list = ()) -> Programme:
    """The programme of least operating cost (:func:`cost_terms`, the power valued as
    :func:`steamnet.solver.results.case_cost` values it) over the flows within ``lo``
    and ``hi`` [kg/s], subject to the header rows (:func:`~steamnet.solver.linear.
    duty_header_rows`, or with ``energy`` False the mass rows), the equality rows
    ``eq`` and the inequality rows ``rows_ub``, ``b_ub`` (``(terms, rhs)``; the lists
    are extended), and for each boiler of ``stoppable`` its on/off column."""
    model = net.model
    pr, site = model.prices, model.site
    n = len(net.vars)
    c, pw, p0 = cost_terms(net, co)
    hrows, users = (duty_header_rows(net, co, h) if energy else header_rows(net, co))
    # columns: flows (n), then power at the site (own use, sold) with a power demand,
    # then one on/off column per boiler that may stop
    demand = site.power_demand
    p_el = pr.electricity
    p_exp = p_el if pr.electricity_export is None else pr.electricity_export
    n_pw = 2 if demand is not None else 0
    col_on = n + n_pw
    nc = col_on + len(stoppable)
    cost = np.zeros(nc)
    cost[:n] = c
    const = 0.0
    rows_eq = [list(t) for t in hrows] + [t for t, _ in eq]
    b_eq = list(users) + [r for _, r in eq]
    if demand is None:
        cost[:n] -= p_el * pw
        const -= p_el * p0
    else:
        cost[n], cost[n + 1] = -p_el, -p_exp
        rows_eq.append([(n, 1.0), (n + 1, 1.0)] + [(vi, -w) for vi, w in enumerate(pw)
                                                     if w != 0.0])
        b_eq.append(p0)
    lo_all = np.concatenate([lo, np.zeros(nc - n)])
    hi_all = np.concatenate([hi, np.full(nc - n, math.inf)])
    if demand is not None:
        lo_all[n], hi_all[n] = -math.inf, demand
        if site.max_power_export is not None:
            hi_all[n + 1] = site.max_power_export
    for j, b in enumerate(stoppable):
        vi, col = b["var"], col_on + j
        rows_ub.append([(vi, 1.0), (col, -hi[vi])])      # steam <= max x on
        b_ub.append(0.0)
        rows_ub.append([(vi, -1.0), (col, lo[vi])])      # steam >= min x on
        b_ub.append(0.0)
        lo_all[vi] = 0.0
        hi_all[col] = 1.0
    # power in MW and cost per hour: coefficients of the size of the flows'
    scale = np.ones(nc)
    if demand is not None:
        scale[n:n + 2] = 1e6
    a_eq = dense_rows(rows_eq, nc)
    a_ub = dense_rows(rows_ub, nc) if rows_ub else None
    if demand is not None:
        # the power columns and the power row in MW
        a_eq[:, n:n + 2] *= 1e6
        a_eq[-1] *= 1e-6
        b_eq[-1] = p0 / 1e6
        cost = cost * scale
        lo_all, hi_all = lo_all / scale, hi_all / scale
    return Programme(cost, const, a_eq, b_eq, a_ub, b_ub, lo_all, hi_all, scale, n, nc,
                     col_on)


@dataclass(eq=False)
class Prepared:
    """The programme of one dispatch before a trust region (:func:`prepare_dispatch`):
    the flows' ranges and the limits that named them, the programme, and the copy of
    it HiGHS holds after its last solve (``kept``), which a solve with only other
    bounds (a trust region) starts from."""

    net: Net
    co: Coeffs
    h: list
    free: frozenset
    lo: np.ndarray
    hi: np.ndarray
    own_lo: np.ndarray
    own_hi: np.ndarray
    spray_capped: dict
    stoppable: list
    ex: list
    pg: Programme
    kept: object = None


def prepare_dispatch(net: Net, co: Coeffs, h: list[float], *, stop: bool = True,
                     energy: bool = True, caps: dict | None = None) -> Prepared:
    """The programme of :func:`solve_dispatch` at the coefficients ``co`` of header
    enthalpies ``h``, without a trust region: :func:`solve_prepared` solves it, with
    one or without, as often as needed."""
    free = movable(net)
    lo, hi = flow_bounds(net, co, free, pumps=True)
    own_lo, own_hi = lo.copy(), hi.copy()
    # a desuperheater's spray cap bounds its let-down's steam at the spray ratio
    spray_capped: dict[int, str] = {}
    for s, k in zip(net.letdowns, co.ld):
        d = s["item"].desuperheater
        if d is not None and d.max_spray is not None and k["r"] > 0:
            cap = d.max_spray / k["r"]
            if cap < hi[s["var"]]:
                hi[s["var"]] = cap
                spray_capped[s["var"]] = "max_spray"
    for vi, (cap, name) in (caps or {}).items():
        if vi in free and cap < hi[vi]:
            hi[vi] = max(cap, lo[vi])
            spray_capped[vi] = name
    own_hi = np.minimum(own_hi, hi)
    stoppable = []
    if stop:
        for b in net.boilers:
            if b["var"] in free and b["item"].can_stop and lo[b["var"]] > 0:
                stoppable.append(b)
    eq = equality_rows(net, co, h, shares=False, free=free, pumps=True)
    ex = exhaust_rows(net)
    rows_ub, b_ub = exhaust_inequalities(net)
    pg = assemble(net, co, h, lo, hi, eq, rows_ub, b_ub, energy=energy,
                  stoppable=stoppable)
    return Prepared(net, co, list(h), free, lo, hi, own_lo, own_hi, spray_capped,
                    stoppable, ex, pg)


def solve_dispatch(net: Net, co: Coeffs, h: list[float], *,
                   stop: bool = True, energy: bool = True,
                   around: tuple | None = None, caps: dict | None = None) -> DispatchLP:
    """The cheapest dispatch at the coefficients ``co`` of header enthalpies ``h``
    (see the module docstring). ``stop`` lets ``can_stop`` boilers stop; without
    ``energy`` every header has its mass row (the duty users' flows held), the
    programme of a first, longer step. ``around = (x, radius)`` keeps every moved flow
    (but a boiler's that may stop) within ``radius`` of ``x`` [kg/s]: a trust region,
    never reported as a binding limit. ``caps`` (flow -> (largest flow, limit name))
    adds limits found elsewhere, such as a station check's fail limit written as a
    bound [kg/s]. (:func:`prepare_dispatch` and :func:`solve_prepared` apart.)"""
    return solve_prepared(prepare_dispatch(net, co, h, stop=stop, energy=energy,
                                           caps=caps), around=around)


def solve_prepared(prep: Prepared, *, around: tuple | None = None) -> DispatchLP:
    """The programme ``prep`` solved, within the trust region ``around`` (see
    :func:`solve_dispatch`). A linear programme solved before goes back to HiGHS with
    only the new bounds, from its last basis (:func:`steamnet.solver.lp.solve_bounds`):
    the same optimum as a solve anew, found in fewer steps."""
    net, free, pg = prep.net, prep.free, prep.pg
    site = net.model.site
    n, nh = len(net.vars), len(net.headers)
    lo, hi = prep.lo.copy(), prep.hi.copy()
    lo_all, hi_all = pg.lo.copy(), pg.hi.copy()
    if around is not None:
        xc, radius = around
        skip = {b["var"] for b in prep.stoppable}
        for vi in free:
            if vi not in skip:
                lo[vi] = min(max(lo[vi], xc[vi] - radius), hi[vi])
                hi[vi] = max(min(hi[vi], xc[vi] + radius), lo[vi])
                # the flows' columns are not scaled
                lo_all[vi], hi_all[vi] = lo[vi], hi[vi]
    cost, const, a_eq, a_ub, b_eq, b_ub = pg.cost, pg.const, pg.a_eq, pg.a_ub, \
        pg.b_eq, pg.b_ub
    scale, nc, col_on = pg.scale, pg.nc, pg.col_on
    spray_capped, own_lo, own_hi = prep.spray_capped, prep.own_lo, prep.own_hi
    demand = site.power_demand
    hours = 3600.0
    if lo_all.size and (lo_all > hi_all + 1e-12).any():
        return _infeasible(net, prep.co, prep.h, free, lo, hi,
                           "a flow's range is empty", spray_capped)
    gap = 0.0
    stopped: list[str] = []
    if prep.stoppable:
        integrality = np.zeros(nc)
        integrality[col_on:] = 1
        res = solve_lp(cost * hours, A_ub=a_ub, b_ub=b_ub or None, A_eq=a_eq,
                       b_eq=np.array(b_eq), lo=lo_all, hi=hi_all,
                       integrality=integrality)
        if res.status == 2:
            return _infeasible(net, prep.co, prep.h, free, lo, hi,
                               named=spray_capped)
        if res.x is None:
            return DispatchLP("failed", f"the mixed-integer programme failed: "
                              f"{res.message}", np.full(n, np.nan))
        gap = float(getattr(res, "mip_gap", 0.0) or 0.0)
        on = np.round(res.x[col_on:])
        for j, b in enumerate(prep.stoppable):
            lo_all[col_on + j] = hi_all[col_on + j] = on[j]
            if on[j] == 0:
                stopped.append(b["name"])
    # a linear programme solved before starts from its last basis
    res = None if prep.stoppable else solve_bounds(prep.kept, lo_all, hi_all)
    if res is None:
        res = solve_lp(cost * hours, A_ub=a_ub, b_ub=b_ub or None, A_eq=a_eq,
                       b_eq=np.array(b_eq), lo=lo_all, hi=hi_all, keep=True)
    prep.kept = res.kept
    if res.status == 2:
        return _infeasible(net, prep.co, prep.h, free, lo, hi,
                           named=spray_capped)
    if res.status == 3:
        open_ = [_label(net, vi) for vi in sorted(free) if not math.isfinite(hi[vi])]
        return DispatchLP("unbounded", "the cost falls without end: a flow without a "
                          "maximum can always earn more (give a maximum to "
                          + (", ".join(open_[:4]) or "the moving elements") + ")",
                          np.full(n, np.nan))
    if res.status != 0:
        return DispatchLP("failed", f"the linear programme failed: {res.message}",
                          np.full(n, np.nan))
    xs = res.x * scale
    x = np.clip(xs[:n], lo_all[:n] * scale[:n], hi_all[:n] * scale[:n])
    x = np.where(np.abs(x) < 1e-12, 0.0, x)
    total = float(res.fun) + const * hours
    duals = [float(d) / 3.6 for d in res.eqlin.marginals[:nh]]
    binding = _binding(net, res, x, lo_all[:n], hi_all[:n], free, spray_capped, stopped,
                       own_lo, own_hi)
    if demand is not None and site.max_power_export is not None:
        sold = xs[n + 1]
        if sold >= site.max_power_export - 1e-3 and abs(res.upper.marginals[n + 1]) > 0:
            binding.append({"item": "site", "limit": "max_power_export",
                            "value": site.max_power_export / 1e6, "unit": "MW",
                            "worth_per_h": -float(res.upper.marginals[n + 1])})
    k = 0
    for ti, (terms, vmin, vmax) in enumerate(prep.ex):
        for side, lim in (("min_exhaust_flow", vmin), ("max_exhaust_flow", vmax)):
            if side == "max_exhaust_flow" and not math.isfinite(vmax):
                continue
            m = float(res.ineqlin.marginals[k])
            k += 1
            if abs(m) > _PRICE_TOL:
                binding.append({"item": _xt_label(net, ti), "limit": side,
                                "value": lim * 3.6, "unit": "t/h",
                                "worth_per_h": abs(m) / 3.6})
    return DispatchLP("optimal", "optimal", x, cost_per_h=total, shadow_per_t=duals,
                      binding=binding, gap=gap, stopped=stopped, lo=own_lo, hi=own_hi)


def _xt_label(net: Net, ti: int) -> str:
    from ..model.schema import item_label
    return item_label("extraction_turbine", net.xturbines[ti]["name"])


def _binding(net, res, x, lo, hi, free, spray_capped, stopped, own_lo,
             own_hi) -> list[dict]:
    out = []
    for vi in sorted(free):
        v = net.vars[vi]
        if v.kind in ("da_steam", "da_makeup") or own_hi[vi] - own_lo[vi] <= FLOW_TOL \
                or lo[vi] > own_lo[vi] + FLOW_TOL and hi[vi] < own_hi[vi] - FLOW_TOL:
            continue
        if x[vi] >= hi[vi] - FLOW_TOL and hi[vi] < own_hi[vi] - FLOW_TOL or \
                x[vi] <= lo[vi] + FLOW_TOL and lo[vi] > own_lo[vi] + FLOW_TOL \
                and v.item not in stopped:
            continue                # at the trust region's edge, not at a limit
        up = float(res.upper.marginals[vi])
        dn = float(res.lower.marginals[vi])
        if x[vi] >= hi[vi] - FLOW_TOL and abs(up) > _PRICE_TOL:
            out.append({"item": _label(net, vi), "limit": _bound_name(net, vi, True,
                                                                       spray_capped),
                        "value": hi[vi] * 3.6, "unit": "t/h",
                        "worth_per_h": -up / 3.6})
        elif x[vi] <= lo[vi] + FLOW_TOL and abs(dn) > _PRICE_TOL and lo[vi] > 0 \
                and v.item not in stopped:      # (an element at zero is just not used)
            out.append({"item": _label(net, vi), "limit": _bound_name(net, vi, False,
                                                                       spray_capped),
                        "value": lo[vi] * 3.6, "unit": "t/h",
                        "worth_per_h": dn / 3.6})
    out.sort(key=lambda b: -abs(b["worth_per_h"]))
    return out


def _infeasible(net, co, h, free, lo, hi, why: str = "",
                named: dict | None = None) -> DispatchLP:
    """No dispatch meets every limit: the least header slack that would let one (each
    header's slack supply and sink cost about 1 per kg/s, a little more down the
    pressures: :func:`~steamnet.solver.slack.slack_costs`), to name the headers, and the
    limits of ``named`` (flow -> limit name: spray caps, station checks' fail limits)
    at which that balance holds its flows."""
    n, nh = len(net.vars), len(net.headers)
    hrows, users = duty_header_rows(net, co, h)
    eq = equality_rows(net, co, h, shares=False, free=free, pumps=True)
    nc = n + 2 * nh
    rows_eq = [list(t) + [(n + i, 1.0), (n + nh + i, -1.0)] for i, t in enumerate(hrows)]
    rows_eq += [t for t, _ in eq]
    b_eq = list(users) + [r for _, r in eq]
    rows_ub, b_ub = exhaust_inequalities(net)
    cost = np.zeros(nc)
    cost[n:] = slack_costs(nh)
    res = None
    if not (lo > hi + 1e-12).any():
        res = solve_lp(cost, A_ub=dense_rows(rows_ub, nc) if rows_ub else None,
                       b_ub=b_ub or None, A_eq=dense_rows(rows_eq, nc),
                       b_eq=np.array(b_eq), lo=np.concatenate([lo, np.zeros(2 * nh)]),
                       hi=np.concatenate([hi, np.full(2 * nh, math.inf)]))
    if res is None or res.status != 0:
        return DispatchLP("infeasible", "no dispatch meets every limit" +
                          (f" ({why})" if why else " (not even with header slack: the "
                           "deaerator or a turbine's joint limits cannot hold)"),
                          np.full(n, np.nan))
    short = [float(v) for v in res.x[n:n + nh]]
    long = [float(v) for v in res.x[n + nh:]]
    parts = []
    for i, name in enumerate(net.headers):
        if short[i] > 1e-6:
            parts.append(f"header '{name}' short by {short[i] * 3.6:.3g} t/h")
        if long[i] > 1e-6:
            parts.append(f"header '{name}' long by {long[i] * 3.6:.3g} t/h")
    held = [f"{_label(net, vi)} at {name} ({hi[vi] * 3.6:.3g} t/h)"
            for vi, name in sorted((named or {}).items())
            if res.x[vi] >= hi[vi] - 1e-6]
    if held:
        parts.append("with " + ", ".join(held))
    return DispatchLP("infeasible", "no dispatch meets every limit: " +
                      ("; ".join(parts) or "the limits conflict"), res.x[:n],
                      short=short, long=long)

