"""The balance of one case as linear rows in the flows, at fixed enthalpies.

At the coefficients of given header enthalpies (turbine expansion lines, let-down
outlet flows ``1 + r``, duty-user flows, the deaerator's enthalpies) every relation of
the balance is linear in the flows. This module writes them once, for the linear
programmes that need them: the balance of least header slack of an infeasible case
(:mod:`steamnet.solver.slack`) and the cheapest dispatch (:mod:`steamnet.studies.optimise`).

* :func:`header_rows`: one mass row per header, the users' flows on the right
  (:func:`duty_header_rows`: in energy form on the headers with duty users);
* :func:`equality_rows`: the deaerator's mass and energy rows, the shares of the swing
  groups and the fixed-power extraction turbines at their shaft power;
* :func:`exhaust_rows`: each extraction turbine's exhaust flow and its range (as
  inequality rows: :func:`exhaust_inequalities`);
* :func:`flow_bounds`: every flow's range as the balance holds it, or, for the flows
  named free, the element's own range whatever its mode;
* :func:`sparse_rows`, :func:`dense_rows`: rows of ``(column, coefficient)`` terms as a
  sparse or a dense matrix.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.sparse as sp

from .network import (Coeffs, Net, header_inflows, power_row, pump_flow_line,
                      pump_weights)
from .reference import _da_rows, _header_terms

__all__ = ["ENERGY_SCALE", "header_rows", "duty_header_rows", "equality_rows",
           "held_flows", "pump_rows",
           "exhaust_rows",
           "exhaust_inequalities", "flow_bounds",
           "own_range", "sparse_rows", "dense_rows"]

#: The deaerator's energy row is divided by this so its coefficients are of the size of
#: the mass rows' (enthalpies of about 1e6 J/kg) [J/kg]
ENERGY_SCALE = 1e6


def header_rows(net: Net, co: Coeffs):
    """Per header (``net.headers`` order): its mass-balance terms ``[(var,
    coefficient)]`` (inflows positive) and the users' flow on it [kg/s]."""
    return _header_terms(net, co)


def duty_header_rows(net: Net, co: Coeffs, h: list[float]):
    """:func:`header_rows`, with the row of every header that has a duty user in its
    energy form: subtracting ``h_f`` times the mass balance from the energy balance of
    the header (``h`` its enthalpy, ``h_f`` saturated liquid) and dividing by
    ``h - h_f``,

        sum in  m (h_in - h_f) / (h - h_f)  -  sum out m  =  users + heat loss / (h - h_f)

    where a duty user's flow, ``Q / (h - h_f)``, is exact whatever ``h``. At fixed
    ``h`` the row is linear in the flows and carries what the mass row leaves out: an
    inflow of lower enthalpy serves the duty users less. At the enthalpy the header
    mixes to it holds together with the mass row, which it replaces (the duty users'
    flow closes the mass)."""
    rows, const = header_rows(net, co)
    duty = sorted({u["header"] for u in net.users if u["duty"] is not None})
    if not duty:
        return rows, const
    n = len(net.vars)
    dh = {k: h[k] - net.sat[k].hf for k in duty}
    if any(not d > 0 for d in dh.values()):
        return rows, const              # a condensed header: keep the mass rows
    inflow = {k: {} for k in duty}      # header -> var -> sum of m (h_in - h_f)
    inmass = {k: {} for k in duty}      # header -> var -> inflow mass coefficient
    # the inflows are linear in the flows: with the unit vectors as the flows, each
    # inflow's "flow" is its row of coefficients per flow (one pass for all flows)
    ins = header_inflows(net, co, np.eye(n), labels=False)
    for k in duty:
        hf = net.sat[k].hf
        for _, f, hh in ins[k]:
            for vi in np.flatnonzero(f).tolist():
                c = float(f[vi])
                inflow[k][vi] = inflow[k].get(vi, 0.0) + c * (hh - hf)
                inmass[k][vi] = inmass[k].get(vi, 0.0) + c
    for k in duty:
        terms: dict[int, float] = {}
        for vi, c in rows[k]:               # outflows: what the mass row has beyond
            terms[vi] = terms.get(vi, 0.0) + c   # the inflows, leaving at h
        for vi, c in inmass[k].items():
            terms[vi] = terms.get(vi, 0.0) - c
        for vi, e in inflow[k].items():
            terms[vi] = terms.get(vi, 0.0) + e / dh[k]
        rows[k] = [(vi, c) for vi, c in terms.items() if c != 0.0]
        const[k] += net.q_loss[k] / dh[k]
    return rows, const


def equality_rows(net: Net, co: Coeffs, h: list[float], *, shares=True,
                  free: frozenset = frozenset(), pumps: bool = False):
    """Equality rows ``(terms, rhs)`` besides the header balances: the deaerator's mass
    and energy rows (the energy row over :data:`ENERGY_SCALE`; these two first, when
    there is a deaerator), the shares of the swing groups (with ``shares`` True; a
    list of groups: of those only), the
    fixed-power extraction turbines at their shaft power (those whose throttle flow is
    not in ``free``), and with ``pumps`` each pump-driving turbine's flow as its pump
    needs it for the water the flows pump (:func:`pump_rows`; give
    :func:`flow_bounds` the same ``pumps``)."""
    eq: list[tuple[list[tuple[int, float]], float]] = []
    if net.deaerator is not None:
        (mass, r_mass), (energy, r_energy) = _da_rows(net, co, h)
        eq.append((mass, r_mass))
        eq.append(([(vi, c / ENERGY_SCALE) for vi, c in energy], r_energy / ENERGY_SCALE))
    if shares:
        groups = [g for hs in net.swing for g in hs.groups] if shares is True else shares
        for g in groups:
            first = g.members[0]
            for vi, w in zip(g.members[1:], g.weights[1:]):
                eq.append(([(vi, 1.0), (first, -w / g.weights[0])], 0.0))
    for t, c in zip(net.xturbines, co.xturb):
        if t["mode"] == "fixed_power" and t["in_var"] not in free:
            dh, rhs = power_row(t, c)
            terms = [(t["in_var"], sum(dh))]
            terms += [(e["var"], -sum(dh[i + 1:])) for i, e in enumerate(t["exts"])]
            eq.append((terms, rhs))
    if pumps:
        eq += pump_rows(net, co, h)
    return eq


def pump_rows(net: Net, co: Coeffs, h: list[float]):
    """Per pump-driving turbine (not in a sequence): ``x_t - a1 w.x = a0``, its steam
    flow as the power of its pump needs it, the power linear in the flows of the
    boilers and sprays the pump feeds at the enthalpies ``h``
    (:func:`~steamnet.solver.network.pump_flow_line`,
    :func:`~steamnet.solver.network.pump_weights`)."""
    held = held_flows(net)
    rows = []
    for t, c in zip(net.turbines, co.turb):
        if t["mode"] != "pump" or t["var"] in held:
            continue
        a0, a1 = pump_flow_line(t, c)
        w = pump_weights(net, t["pump"], h)
        terms = [(t["var"], 1.0)] + [(i, -a1 * wi) for i, wi in enumerate(w.tolist())
                                     if wi != 0.0]
        rows.append((terms, a0))
    return rows


def held_flows(net: Net) -> set:
    """Flows in a swing group or absorbing in a sequence."""
    held = {vi for hs in net.swing for g in hs.groups for vi in g.members}
    held.update(vi for hs in net.swing for vi in hs.absorbers)
    return held


def exhaust_rows(net: Net):
    """Per extraction turbine: the terms of its exhaust flow (throttle less the
    extractions), its minimum and maximum [kg/s]."""
    out = []
    for t in net.xturbines:
        it = t["item"]
        top = math.inf if it.max_exhaust_flow is None else it.max_exhaust_flow
        out.append(([(t["in_var"], 1.0)] + [(e["var"], -1.0) for e in t["exts"]],
                    it.min_exhaust_flow, top))
    return out


def exhaust_inequalities(net: Net):
    """The extraction turbines' exhaust ranges as ``A_ub x <= b_ub`` rows: terms and
    right-hand sides (the minimum, then the maximum where there is one)."""
    rows_ub, b_ub = [], []
    for terms, vmin, vmax in exhaust_rows(net):
        rows_ub.append([(vi, -c) for vi, c in terms])
        b_ub.append(-vmin)
        if math.isfinite(vmax):
            rows_ub.append(list(terms))
            b_ub.append(vmax)
    return rows_ub, b_ub


def own_range(net: Net, vi: int) -> tuple[float, float]:
    """The range of flow ``vi`` while its element runs, from the element's own limits
    whatever its mode (minimum and maximum steam or flow) [kg/s]."""
    v = net.vars[vi]
    model = net.model
    if v.kind == "xt_ext":
        turbine, header = v.item.split("/", 1)
        for e in model.table("extraction_turbine")[turbine].extractions:
            if e.header == header:
                return e.min_flow, math.inf if e.max_flow is None else e.max_flow
    it = model.table(v.table)[v.item]
    if v.kind == "boiler":
        lo, hi = it.min_steam, it.max_steam
    elif v.kind == "vent":
        lo, hi = 0.0, it.max_flow
    elif v.kind in ("da_steam", "da_makeup"):
        lo, hi = 0.0, None
    else:
        lo, hi = it.min_flow, it.max_flow
    return lo, math.inf if hi is None else hi


def flow_bounds(net: Net, co: Coeffs, free: frozenset = frozenset(),
                pumps: bool = False):
    """Bounds of every flow: its own limits, fixed flows fixed, fixed-power turbines at
    their power flow (held within their range: a power the range cannot give is a
    finding of its own), extraction-turbine throttle flows within their range, and
    the flows the balance holds at zero (boilers, transfers and let-downs that are
    neither fixed nor in a sequence). A flow in ``free`` takes its element's own range
    (:func:`own_range`) instead, whatever its mode. Pump-driving turbines are held at
    the flow of the coefficients ``co``, or with ``pumps`` (their flow a row of the
    programme, :func:`pump_rows`) within their own range."""
    lo = np.array([v.lo for v in net.vars], dtype=float)
    hi = np.array([v.hi for v in net.vars], dtype=float)
    held = held_flows(net)
    for v in net.vars:
        if v.fixed is not None:
            lo[v.index] = hi[v.index] = v.fixed
        elif v.kind in ("boiler", "transfer", "letdown") and v.index not in held:
            lo[v.index] = hi[v.index] = 0.0
    for t, c in zip(net.turbines, co.turb):
        if t["mode"] in ("fixed_power", "pump") and t["var"] not in held:
            it = t["item"]
            top = math.inf if it.max_flow is None else it.max_flow
            if pumps and t["mode"] == "pump":
                lo[t["var"]], hi[t["var"]] = own_range(net, t["var"])
            else:
                lo[t["var"]] = hi[t["var"]] = min(max(c["flow"], it.min_flow), top)
    for t in net.xturbines:
        it, vi = t["item"], t["in_var"]
        if net.vars[vi].fixed is None:
            lo[vi] = max(lo[vi], it.min_flow)
            if it.max_flow is not None:
                hi[vi] = min(hi[vi], it.max_flow)
    for vi in free:
        lo[vi], hi[vi] = own_range(net, vi)
    return lo, hi


def dense_rows(rows, n_cols: int) -> np.ndarray:
    """Rows of ``(column, coefficient)`` terms as a dense array (small programmes)."""
    a = np.zeros((len(rows), n_cols))
    for i, terms in enumerate(rows):
        for col, val in terms:
            a[i, col] += val
    return a


def sparse_rows(rows, n_cols: int):
    """Rows of ``(column, coefficient)`` terms as a CSR matrix."""
    cols, vals, starts = [], [], [0]
    for terms in rows:
        for col, val in terms:
            cols.append(col)
            vals.append(val)
        starts.append(len(cols))
    a = sp.csr_matrix((np.array(vals, dtype=float), np.array(cols, dtype=np.int32),
                       np.array(starts, dtype=np.int32)), shape=(len(rows), n_cols))
    a.sum_duplicates()          # a column named twice in a row: its terms add
    return a
