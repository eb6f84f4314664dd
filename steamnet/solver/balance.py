"""The steam and water balance of one case: the iteration (docs/method.md).

Method
------
Each header's pressure controller moves its swing elements in sequence: groups of equal
priority (split by set shares) fill from their minimum to their maximum, the next group
taking over when one runs out; excess steam goes to swing exports and then to vents, and
only then. For a given *operating mode* of every header (which group, or which absorber,
is the one moving) and given enthalpies, the balance is a square linear system in the
flows: one mass balance per header, the deaerator's mass and energy balances, and one
defining equation for every other flow (fixed value, at a limit, or a share of its
group). The solver alternates

1. solve that system (numpy, or scipy.sparse for large networks);
2. move the mode of any header whose moving group left its range (one step in the
   sequence), and clamp extraction flows to the limits of their turbine sections;
3. recompute the header enthalpies by mixing (h = (sum m_in h_in - heat loss) / sum
   m_in), and from them the turbine expansion lines, spray ratios and duty-based flows;

until the modes no longer change and the enthalpies and flows stop moving. The answer is
unique because the sequence and the shares decide every split; a header whose sequence is
exhausted is reported short (or long) by the amount left over, with the limits that bind
(:mod:`steamnet.solver.findings`). The linear system of an iteration is compiled by
:mod:`steamnet.solver.assembly`; :mod:`steamnet.solver.reference` builds the same system
term by term.
"""

from __future__ import annotations

import math
import time
from operator import lt, mul, sub

import numpy as np
from scipy.linalg.lapack import dgesv as _dgesv

from ..calc.desuperheater import mix
from ..status import CaseStatus
from . import reference as _reference
from .assembly import Plan
from .findings import (cold_findings, derived_findings, exhausted_findings, sequence_amounts,
                       slack_findings)
from .network import (INF, Coeffs, ItemPropertyError, Net, build, coefficients,
                      header_inflows, pump_flow_line, pump_power,
                      pump_weights)
from .network import group_bounds as _group_bounds, power_row
from .slack import beyond_limits, min_slack, slack_tolerance

__all__ = ["solve_net", "Solution", "build"]

_SPARSE_ABOVE = 250
#: Default convergence tolerance on header enthalpies, relative to the enthalpy [-]:
#: 1e-10 of about 2.8e6 J/kg is 2.8e-4 J/kg, far inside the 1e-6 closure of a case.
TOL_H_REL = 1e-10
#: Iterations a header must stay exhausted on the same side for a case that does not
#: settle to be reported infeasible on its account.
_PERSIST = 20


class Solution:
    """Raw result of :func:`solve_net`."""

    def __init__(self, net: Net, x: np.ndarray, h: list[float], co: Coeffs,
                 modes: list, iterations: int, status: str, findings: list[dict],
                 message: str, seconds: float):
        self.net, self.x, self.h, self.co = net, x, h, co
        self.modes, self.iterations, self.status = modes, iterations, status
        self.findings, self.message, self.seconds = findings, message, seconds
        self.accel: list = []       # Anderson's differences at the end (a warm start)


# --------------------------------------------------------------------------- modes
#: Largest change of a pump-driving turbine's flow between two solves of one iteration
#: at which it is taken as consistent [kg/s]: a hundredth of the iteration's own flow
#: tolerance (tol_x, 1e-9 kg/s), so the enthalpy map sees no lag above its noise.
_PUMP_TOL = 1e-11


def _pumps_consistent(net: Net, co: Coeffs, h, pumps, x, solve, rounds: int = 20):
    """The flows of one solve with each pump-driving turbine's flow consistent with the
    water its pump delivers in those same flows, at the enthalpies ``h``.

    The pump's power (v dP / eta times the pumped water) sets the turbine's flow, a
    small part of the flows it depends on: re-solving with the turbine flows of the last
    solve contracts fast (by the turbine's share of the feedwater per kg pumped, about
    a hundredth). Without this the enthalpy map would depend on the flows of the
    iteration before, and the acceleration of the enthalpy iteration would not see it.
    """
    for _ in range(rounds):
        xs = x.tolist()
        moved = False
        for k, t in pumps:
            c = co.turb[k]
            a0, a1 = pump_flow_line(t, c)
            flow = a0 + a1 * pump_power(net, t["pump"], h, xs)
            if abs(flow - c["flow"]) > _PUMP_TOL:
                c["flow"] = flow
                moved = True
        if not moved:
            return x
        x_new = solve()
        if x_new is None:
            return x
        x = x_new
    return x


def _pump_solve(net: Net, co: Coeffs, h, pumps, a: np.ndarray, b: np.ndarray,
                flow_row: dict) -> np.ndarray | None:
    """The flows of the dense system ``a x = b`` with each pump-driving turbine's flow
    consistent with the water its pump delivers in those same flows, at the enthalpies
    ``h``, in one factorisation.

    At fixed coefficients the flows are affine in the turbines' flows, which are the
    right-hand sides of their rows: ``x = x0 + E (f - f0)``, ``E`` the columns of the
    inverse at those rows (solved with ``b`` as more right-hand sides). A turbine's
    flow is affine in its pump's power, ``f = A0 + A1 w.x`` (its Willans line, or
    power / (eta dh)), and the power linear in the flows (:func:`pump_weights`); the
    consistent flows solve a system of one row per such turbine."""
    rows = [flow_row[k] for k, _ in pumps]
    rhs = np.zeros((len(b), 1 + len(rows)))
    rhs[:, 0] = b
    for j, r in enumerate(rows):
        rhs[r, 1 + j] = 1.0
    sol = _dense_solve(a, rhs)
    if sol is None:
        return None
    x0, e = sol[:, 0], sol[:, 1:]
    f0 = np.array([co.turb[k]["flow"] for k, _ in pumps])
    w = np.array([pump_weights(net, t["pump"], h) for _, t in pumps])
    a0, a1 = np.array([pump_flow_line(t, co.turb[k]) for k, t in pumps]).T
    we = w @ e
    rhs_f = a0 + a1 * (w @ x0 - we @ f0)
    if len(rows) == 1:                  # one such turbine (the usual plant): a division
        f = rhs_f / (1.0 - a1 * we[0])
    else:
        f = np.linalg.solve(np.eye(len(rows)) - a1[:, None] * we, rhs_f)
    for (k, _), fk in zip(pumps, f.tolist()):
        co.turb[k]["flow"] = fk
    return x0 + e @ (f - f0)


def _initial_modes(net: Net) -> list[tuple[str, int]]:
    modes = []
    for hs in net.swing:
        modes.append(("supply", 0) if hs.groups else ("absorb", 0))
    return modes


def _linear_solve(n: int, triplets, b: np.ndarray) -> np.ndarray | None:
    r, c, v = triplets
    if n > _SPARSE_ABOVE:
        import scipy.sparse as sp
        import scipy.sparse.linalg as spla
        a = sp.csc_matrix((v, (r, c)), shape=(n, n))
        try:
            x = spla.spsolve(a, b)
        except Exception:
            return None
        if not np.isfinite(x).all():
            return None
        return np.asarray(x)
    return _dense_solve(_dense(n, triplets), b)


def _dense(n: int, triplets) -> np.ndarray:
    """The dense matrix of the triplets (entries in one place summed)."""
    r, c, v = triplets
    a = np.zeros((n, n))
    np.add.at(a, (r, c), v)
    return a


def _dense_solve(a: np.ndarray, b: np.ndarray) -> np.ndarray | None:
    """Solve a dense system by LU with partial pivoting (LAPACK dgesv, the routine
    numpy.linalg.solve calls, here without numpy's wrapper: a third of its cost for
    the 15 flows of a plant); None when it is singular or nearly so."""
    if not len(b):                  # nothing to solve (dgesv rejects an empty system)
        return np.zeros(0)
    _, _, x, info = _dgesv(a, b)
    if info != 0 or not np.isfinite(x).all():   # nearly singular: as the sparse branch
        return None
    return x


#: A header whose steam inflow is at most this is idle: no steam, so no heat loss to make
#: up, and its enthalpy stays as it was [kg/s].
IDLE_FLOW = 1e-9


def _mix(net: Net, co: Coeffs, x: "np.ndarray | list[float]",
         h_old: list[float]) -> tuple[list[float], list[int]]:
    """Header enthalpies by mixing, and the headers whose heat loss is more than their
    steam brings above saturated liquid (held at saturated liquid; reported).

    Negative inflows, which only intermediate iterates have (before the modes settle),
    are left out: they would give enthalpies no state of water has.
    """
    ins = header_inflows(net, co, x, labels=False)
    out, cold = [], []
    for i, lst in enumerate(ins):
        flows = [max(f, 0.0) for _, f, _ in lst]
        if sum(flows) > IDLE_FLOW:
            hm = mix(flows, [hh for _, _, hh in lst], net.q_loss[i])
            if hm < net.sat[i].hf:
                cold.append(i)
                hm = net.sat[i].hf
            out.append(hm)
        else:
            out.append(h_old[i])
    return out, cold


def _initial_h(net: Net) -> list[float]:
    """First estimate of the header enthalpies, walking the network graph downhill:
    a header fed by boilers or imports starts at their steam; a header fed from others
    starts at the highest enthalpy throttled down from them (never below saturated
    vapour)."""
    g = net.model.graph
    h = [s.hg for s in net.sat]
    src = {("boiler", b["name"]): b["h"] for b in net.boilers}
    src.update({("steam_transfer", t["name"]): t["h"] for t in net.transfers
                if t["dir"] == "import"})
    for i in range(len(net.headers)):          # net.headers: highest pressure first
        node = ("header", net.headers[i])
        best = None
        for eq in g.predecessors(node) if node in g else ():
            if eq in src:
                best = max(best or 0.0, src[eq])
                continue
            for up in g.predecessors(eq):
                if up[0] == "header" and up[1] in net.hidx:
                    best = max(best or 0.0, h[net.hidx[up[1]]])
        if best is not None:
            h[i] = max(best, net.sat[i].hg)
    return h


# -------------------------------------------------------------- extraction limits
def _extraction_bounds(net: Net, co: Coeffs, x: "np.ndarray | list[float] | None") -> dict:
    """Effective range of each swing extraction flow given the other extractions of
    its turbine, so that the throttle and exhaust flows stay within their limits.

    When the turbine's joint limits (throttle maximum, exhaust minimum) bind, the
    extractions are served in their order in the model file, highest pressure first:
    extraction i counts the ones before it at their present flow and the ones after it
    at their minimum, so the split of the turbine's capacity is defined."""
    eff: dict[int, tuple[float, float]] = {}
    if x is None:
        return eff
    for t, c in zip(net.xturbines, co.xturb):
        it = t["item"]
        dh, row_rhs = power_row(t, c) if t["mode"] == "fixed_power" else (c["dh"], 0.0)
        tot = sum(dh)
        for i, e in enumerate(t["exts"]):
            if e["mode"] != "swing":
                continue
            others = [(j, o) for j, o in enumerate(t["exts"]) if j != i]
            val = {j: (x[o["var"]] if (j < i or o["mode"] == "fixed") else o["lo"])
                   for j, o in others}
            lo, hi = e["lo"], e["hi"]
            after_i = sum(dh[i + 1:])
            if t["mode"] == "fixed_power":
                base = row_rhs + sum(val[j] * sum(dh[j + 1:])
                                                    for j, o in others)
                # throttle s1 = (base + e after_i) / tot ; exhaust = s1 - e - sum others
                a_s1, b_s1 = after_i / tot, base / tot
            else:
                a_s1, b_s1 = 0.0, it.flow
            s_oth = sum(val[j] for j, _ in others)
            a_ex, b_ex = a_s1 - 1.0, b_s1 - s_oth
            cons = [(a_s1, b_s1, it.min_flow, INF if it.max_flow is None else it.max_flow),
                    (a_ex, b_ex, it.min_exhaust_flow,
                     INF if it.max_exhaust_flow is None else it.max_exhaust_flow)]
            for a, bb, vmin, vmax in cons:
                # vmin <= a e + bb <= vmax
                if abs(a) < 1e-15:
                    continue
                l1, l2 = (vmin - bb) / a, (vmax - bb) / a
                if a < 0:
                    l1, l2 = l2, l1
                lo, hi = max(lo, l1), min(hi, l2)
            if lo > hi:
                # the turbine's limits cannot all hold with the other extractions where
                # they are: hold this one at the tighter end, so the header's sequence
                # stays ordered; the turbine's own limits are then reported
                # (_derived_findings) if the case settles there
                lo = hi = max(min(hi, e["hi"]), e["lo"])
            eff[e["var"]] = (lo, hi)
    return eff


# ---------------------------------------------------------------------------- main
def _update_modes(net: Net, x: "np.ndarray | list[float]", modes, eff, tol: float):
    """Move each header whose moving element left its range; return the new modes and
    the list of headers whose sequence is exhausted (short or long)."""
    new = list(modes)
    exhausted = []
    for hi, (hs, (kind, k)) in enumerate(zip(net.swing, modes)):
        if kind == "supply":
            g = hs.groups[k]
            glo, ghi = _group_bounds(net, g, eff)
            val = x[g.members[0]] / g.weights[0]
            if val > ghi + tol:
                if k + 1 < len(hs.groups):
                    new[hi] = ("supply", k + 1)
                else:
                    exhausted.append((hi, "short", val - ghi))
            elif val < glo - tol:
                if k > 0:
                    new[hi] = ("supply", k - 1)
                elif hs.absorbers:
                    new[hi] = ("absorb", 0)
                else:
                    exhausted.append((hi, "long", glo - val))
        else:
            vi = hs.absorbers[k]
            val = x[vi]
            cap = net.vars[vi].hi
            if val < -tol:
                if k > 0:
                    new[hi] = ("absorb", k - 1)
                elif hs.groups:
                    new[hi] = ("supply", 0)
                else:
                    exhausted.append((hi, "short", -val))
            elif val > cap + tol:
                if k + 1 < len(hs.absorbers):
                    new[hi] = ("absorb", k + 1)
                else:
                    exhausted.append((hi, "long", val - cap))
    return new, exhausted


class Anderson:
    """Anderson's acceleration (type II, Walker and Ni 2011) of the fixed-point map of
    the header enthalpies, h -> G(h) = mix(solve(coefficients(h))).

    It keeps the differences of the last iterates' residuals f = G(h) - h (columns
    of dF, scaled to unit length) and of their images G(h) (dG, scaled alike); the
    next iterate is G(h_k) - dG gamma, where gamma minimises |f_k - dF gamma| (least
    squares, by the normal equations): a quasi-Newton step whose
    Jacobian is known on the directions the iterates have moved in. A difference too
    small to rise above rounding (``noise``) is not kept. The columns may come from
    the previous case of a sweep (``columns``, same modes): its map differs from this
    one by little, so the first step already knows its slopes.

    No step is made while the largest residual is above ``near`` [J/kg]: far from
    the fixed point, where desuperheaters switch and states cross saturation, the map
    is not nearly linear and the plain step is the safe one. A step is refused (None:
    the caller takes the plain or relaxed step, and the memory starts afresh) when the
    residual grew since the last step, or the step would move more than ``reach``
    times the plain step away from G(h_k), or put a header below saturated liquid.
    """

    def __init__(self, floor: list[float], noise: float, columns=None, memory: int = 5,
                 reach: float = 30.0, near: float = 2e3):
        self.floor, self.noise, self.memory, self.reach = floor, noise, memory, reach
        self.near = near
        # the differences (dF, dG), newest last, and the dot products of the dFs
        self.cols: list[tuple[list[float], list[float]]] = []
        self.gram: list[list[float]] = []
        for c in (columns or [])[-memory:]:
            self._add(*c)
        self.last: tuple[list[float], list[float]] | None = None
        self.size = math.inf            # largest residual of the last step

    def columns(self) -> list:
        """The kept differences (dF, dG), for the next case of a sweep."""
        return list(self.cols)

    def _add(self, df: list[float], dg: list[float]) -> None:
        if len(self.cols) == self.memory:
            del self.cols[0], self.gram[0]
            for row in self.gram:
                del row[0]
        dots = [sum(map(mul, c[0], df)) for c in self.cols]
        for row, d in zip(self.gram, dots):
            row.append(d)
        self.gram.append(dots + [sum(map(mul, df, df))])
        self.cols.append((df, dg))

    def _clear(self) -> None:
        self.cols, self.gram = [], []

    def step(self, h: list[float], g: list[float], f: list[float],
             reset: bool = False) -> list[float] | None:
        # plain floats: for the few headers of a plant each numpy call would cost
        # more than the arithmetic it does
        if reset:
            self._clear()
            self.last, self.size = None, math.inf
        size = max(map(abs, f), default=0.0)
        if self.last is not None and size > self.size:
            # the residual grew: the linear model does not hold here
            self._clear()
            self.last = None
        self.size = size
        if self.last is not None:
            df = list(map(sub, f, self.last[0]))
            norm = math.sqrt(sum(map(mul, df, df)))
            if norm > self.noise:
                # scaled to unit length: the steps of one solve span many decades
                inv = 1.0 / norm
                self._add([d * inv for d in df],
                          [(a - b) * inv for a, b in zip(g, self.last[1])])
        self.last = (f, g)
        if not self.cols or not f or size > self.near:
            return None
        gamma = _solve_small([row[:] for row in self.gram],
                             [sum(map(mul, c[0], f)) for c in self.cols])
        out = list(g)
        for gm, (_, dg) in zip(gamma, self.cols):
            out = [o - gm * d for o, d in zip(out, dg)]
        if (not all(map(math.isfinite, out))
                or max(map(abs, map(sub, out, g))) > self.reach * size
                or any(map(lt, out, self.floor))):
            self._clear()
            return None
        return out


def _solve_small(a: list[list[float]], b: list[float]) -> list[float]:
    """Solve the small symmetric system a x = b, its diagonal raised by 1e-12 (of the
    unit diagonal of scaled differences: nearly parallel ones then get a least-norm
    share instead of a singular system), by Gaussian elimination with partial
    pivoting."""
    m = len(b)
    for i in range(m):
        a[i][i] += 1e-12
    for k in range(m):
        p = k
        for i in range(k + 1, m):
            if abs(a[i][k]) > abs(a[p][k]):
                p = i
        if p != k:
            a[k], a[p], b[k], b[p] = a[p], a[k], b[p], b[k]
        piv = a[k][k]
        rk = a[k]
        for i in range(k + 1, m):
            r = a[i][k] / piv
            if r:
                ri = a[i]
                for j in range(k, m):
                    ri[j] -= r * rk[j]
                b[i] -= r * b[k]
    x = [0.0] * m
    for k in range(m - 1, -1, -1):
        acc = b[k]
        rk = a[k]
        for j in range(k + 1, m):
            acc -= rk[j] * x[j]
        x[k] = acc / rk[k]
    return x


def solve_net(net: Net, *, max_iter: int = 200, tol_h: float | None = None,
              tol_x: float = 1e-9, start: dict | None = None,
              reference: bool = False, accelerate: bool = True,
              sequence_shortfall: bool = True) -> Solution:
    """Solve the balance of one case (see the module docstring).

    Parameters
    ----------
    net : Net
        Numeric structure from :func:`build`.
    max_iter : int
        Iteration limit; beyond it the case is reported not converged [-]
    tol_h : float, optional
        Largest change of any header enthalpy between iterations at convergence; default
        TOL_H_REL x the largest header enthalpy (about 3e-4 J/kg) [J/kg]
    tol_x : float
        Largest change of any flow between iterations at convergence [kg/s]
    start : dict, optional
        ``{"h": [...], "modes": [...]}`` from a previous, similar case (warm start),
        and optionally ``"accel"``: the previous solution's ``accel`` (Anderson's
        differences, used when the start's modes are taken).
    reference : bool
        Assemble the linear system with the reference code (:func:`steamnet.solver.reference.assemble`) instead
        of the compiled :class:`~steamnet.solver.assembly.Plan`; the systems, and so
        the answers, are the same [-]
    accelerate : bool
        Accelerate the enthalpy iteration (:class:`Anderson`); without, the plain
        fixed-point steps, relaxed where they overshoot (the method before; the same
        fixed point, within the tolerances) [-]
    sequence_shortfall : bool
        For a case that cannot balance, also find the imbalance with the swing elements
        in the order of their control sequences (one more linear programme); a study's
        probes that only need to know whether a case balances leave it out [-]
    """
    t0 = time.perf_counter()
    n = len(net.vars)
    if reference:
        def assemble(co, h, modes, eff):
            return _reference.assemble(net, co, h, modes, eff)

        def solve_system(co, h, modes, eff, pumps_too: bool = False):
            trip, b = _reference.assemble(net, co, h, modes, eff)
            if pumps_too and n <= _SPARSE_ABOVE:
                # the same rows as the plan's (the systems are the same)
                rows = (net.plan or Plan(net)).flow_row
                if all(k in rows for k, _ in pumps):
                    consistent[0] = True
                    return _pump_solve(net, co, h, pumps, _dense(n, trip), b, rows)
            return _linear_solve(n, trip, b)
    else:
        if net.plan is None:
            net.plan = Plan(net)
        plan = net.plan

        def assemble(co, h, modes, eff):
            return plan.assemble(net, co, h, modes, eff)

        def solve_system(co, h, modes, eff, pumps_too: bool = False):
            dense = plan.dense(net, co, h, modes, eff) if n <= _SPARSE_ABOVE else None
            if dense is None:
                trip, b = plan.assemble(net, co, h, modes, eff)
                return _linear_solve(n, trip, b)
            if pumps_too and all(k in plan.flow_row for k, _ in pumps):
                consistent[0] = True
                return _pump_solve(net, co, h, pumps, *dense, plan.flow_row)
            return _dense_solve(*dense)
    if tol_h is None:
        tol_h = TOL_H_REL * max(abs(s.hg) for s in net.sat)
    h = list(start["h"]) if start and len(start["h"]) == len(net.headers) else _initial_h(net)
    modes = (list(start["modes"]) if start and len(start["modes"]) == len(net.swing)
             and _modes_valid(net, start["modes"]) else _initial_modes(net))
    x: np.ndarray | None = None
    xl: list[float] = []
    exhausted: list = []
    history: dict = {}
    co = coefficients(net, h, None)
    # the size of the plant: what its users draw and its fixed flows carry (not the
    # boilers' maxima, which may be written huge for "no limit" and would then hide
    # every mode change below them)
    scale = max(1.0, sum(m for m in co.user_flow if math.isfinite(m))
                + sum(v.fixed for v in net.vars if v.fixed is not None))
    tol_mode = 1e-9 * scale
    it = 0
    relax, r_prev = 1.0, None
    warm = bool(start) and len(start["h"]) == len(net.headers) and \
        modes == list(start["modes"])
    # turbines driving a pump: their power follows the pumped water, a flow of the
    # same solve (_pump_solve on the dense system, else _pumps_consistent)
    pumps = [(k, t) for k, t in enumerate(net.turbines) if t["mode"] == "pump"]
    consistent = [False]        # whether the last solve made the pump flows consistent
    accel = Anderson([s.hf for s in net.sat], noise=1e-2 * tol_h,
                     columns=start.get("accel") if warm else None)
    recent: list[set] = []      # exhausted (header, side) of the last iterations
    still = 0                   # iterations in a row in which nothing moved
    for it in range(1, max_iter + 1):
        # before the first solve, bound the extractions as if the others were at zero
        eff = _extraction_bounds(net, co, xl if x is not None else [0.0] * n)
        consistent[0] = False
        x_new = solve_system(co, h, modes, eff, bool(pumps))
        if pumps and x_new is not None and not consistent[0]:
            x_new = _pumps_consistent(net, co, h, pumps, x_new,
                                      lambda: solve_system(co, h, modes, eff))
        if x_new is None:
            rescued = _rescue_modes(net, co, h, modes, eff, solve_system)
            if rescued is None:
                trip, _ = assemble(co, h, modes, eff)
                return Solution(net, np.full(n, np.nan), h, co, modes, it, CaseStatus.ERROR,
                                [], _singular_message(net, trip), time.perf_counter() - t0)
            modes, x_new = rescued
        # the flows as Python floats for the per-item loops below: the same values and
        # the same arithmetic as numpy's scalars, several times faster
        xl_new = x_new.tolist()
        new_modes, exhausted = _update_modes(net, xl_new, modes, eff, tol_mode)
        recent = (recent + [{(e[0], e[1]) for e in exhausted}])[-_PERSIST:]
        h_new, cold = _mix(net, co, xl_new, h)
        dh = max((abs(a - bb) for a, bb in zip(h_new, h)), default=0.0)
        dx = float(np.abs(x_new - x).max()) if x is not None else INF
        mode_changed = new_modes != modes
        # Where the plain fixed point overshoots (small flows carrying large heat losses,
        # deaerator steam strongly coupled to a wet header), relax the enthalpy update
        # by Aitken's dynamic factor (Irons and Tuck): it estimates the slope of the
        # fixed-point map from the last two updates. The fixed point, and so the
        # answer, is the same; on well-behaved networks the factor stays 1.
        r = [a - bb for a, bb in zip(h_new, h)]
        if r_prev is not None and not mode_changed:
            dr = [a - bb for a, bb in zip(r, r_prev)]
            den = sum(d * d for d in dr)
            if den > 0:
                relax = -relax * sum(a * d for a, d in zip(r_prev, dr)) / den
                relax = min(1.0, max(1 / 64, relax))
        r_prev = None if mode_changed else r
        # Anderson's acceleration of the same map (docs/method.md, the enthalpy
        # step): the next enthalpies combine the last few updates so that their
        # residuals cancel as far as a linear model of the map says. Its memory is
        # cleared when the modes change (the map changes with them).
        h_acc = accel.step(h, h_new, r, reset=mode_changed) if accelerate else None
        if h_acc is not None:
            h_new = h_acc
        elif relax < 1:
            h_new = [a + relax * d for a, d in zip(h, r)]
        x, xl, h = x_new, xl_new, h_new
        if mode_changed:
            key = tuple(new_modes)
            history[key] = history.get(key, 0) + 1
            if history[key] > 3:
                # cycling between modes: stay in the present ones, so the enthalpies
                # and flows settle and the stopping rule below can end the solve
                new_modes = list(modes)
            modes = new_modes
        co = coefficients(net, h, xl)
        still = still + 1 if (dh < tol_h and dx < tol_x) else 0
        if dh < tol_h and dx < tol_x and (not mode_changed
                                          or history.get(tuple(modes), 0) > 2
                                          or still >= 5):
            break   # settled; or headers flip between modes that balance alike (the
            #         flows and enthalpies no longer move, so the answer is the same)
    else:
        msg = (f"not converged after {max_iter} iterations (last enthalpy change "
               f"{dh:.3g} J/kg, flow change {dx:.3g} kg/s)")
        # A case that cannot balance can keep the iteration from settling: a deaerator
        # that would need negative steam or make-up, or headers whose sequence stays
        # exhausted (their negative flows starve the headers around them). That, not
        # the iteration, is what the user must hear about.
        found = [f for f in derived_findings(net, co, x, tol_mode)
                 if f["side"] == "deaerator"]
        stuck = []
        if len(recent) == _PERSIST:
            keep = set.intersection(*recent)
            stuck = [e for e in exhausted if (e[0], e[1]) in keep]
        least = _least_slack(net, co, h, x, scale, modes, sequence_shortfall) \
            if stuck else None
        if least is not None:
            x, found = least[0], least[1] + derived_findings(net, co, least[0], tol_mode)
            return Solution(net, x, h, co, modes, it, CaseStatus.INFEASIBLE, found,
                            "; ".join(f["message"] for f in found) + f" ({msg}; the "
                            "amounts are those of the last iteration's enthalpies)",
                            time.perf_counter() - t0)
        found += exhausted_findings(net, stuck, modes, _extraction_bounds(net, co, x))
        if found:
            return Solution(net, x, h, co, modes, it, CaseStatus.INFEASIBLE, found,
                            "; ".join(f["message"] for f in found) + f" ({msg}; the "
                            "amounts are those of the last iteration)",
                            time.perf_counter() - t0)
        return Solution(net, x, h, co, modes, it, CaseStatus.NOT_CONVERGED, [], msg,
                        time.perf_counter() - t0)
    x = np.where(np.abs(x) < 1e-12, 0.0, x)     # no -0.0 or 1e-16 flows in reports
    least = None
    if exhausted or beyond_limits(net, co, x, tol_mode):
        least = _least_slack(net, co, h, x, scale, modes if exhausted else None,
                             sequence_shortfall)
    if least is not None:
        # the case cannot balance: report the balance of least header slack, every
        # element within its limits (docs/method.md, infeasible cases)
        x, findings = least[0], list(least[1])
    else:
        findings = exhausted_findings(net, exhausted, modes, _extraction_bounds(net, co, x))
    findings += derived_findings(net, co, x, tol_mode)
    findings += cold_findings(net, co, x, cold)
    status = CaseStatus.INFEASIBLE if findings else CaseStatus.SOLVED
    msg = "; ".join(f["message"] for f in findings) if findings else "solved"
    sol = Solution(net, x, h, co, modes, it, status, findings, msg,
                   time.perf_counter() - t0)
    sol.accel = accel.columns()     # the slopes the iteration found, for the next case
    return sol


def _least_slack(net: Net, co: Coeffs, h: list[float], x, scale: float, modes=None,
                 sequence_shortfall: bool = True):
    """The flows and findings of the balance of least header slack at the present
    coefficients (:mod:`steamnet.solver.slack`), or None when it needs no slack (the
    limits can all hold: the iteration's findings stand) or cannot be found.

    With ``modes`` (a header's sequence is exhausted), a balance that needs no slack
    only because it runs the elements in another order than the control sequence is
    sought again with the sequences held in those modes."""
    tol = slack_tolerance(scale)
    for held in (None, modes) if modes is not None else (None,):
        bal = min_slack(net, co, h, x, held)
        found = slack_findings(net, co, bal, tol) if bal is not None else []
        if found:
            if held is None and modes is not None and sequence_shortfall:
                seq = min_slack(net, co, h, x, modes)
                if seq is not None:
                    found = sequence_amounts(net, found, seq, tol)
            return bal.x, found
    return None


def _neighbours(net: Net, hi: int, mode) -> list:
    """Modes next to ``mode`` in header ``hi``'s sequence (down first, then up)."""
    hs = net.swing[hi]
    kind, k = mode
    out = []
    if kind == "supply":
        if k > 0:
            out.append(("supply", k - 1))
        elif hs.absorbers:
            out.append(("absorb", 0))
        if k + 1 < len(hs.groups):
            out.append(("supply", k + 1))
    else:
        if k + 1 < len(hs.absorbers):
            out.append(("absorb", k + 1))
        if k > 0:
            out.append(("absorb", k - 1))
        elif hs.groups:
            out.append(("supply", 0))
    return out


def _rescue_modes(net: Net, co: Coeffs, h, modes, eff, solve_system):
    """When the system of the current modes is singular (two headers whose moving
    elements only shift steam between them, so their joint balance is closed by
    neither), try the neighbouring mode of one header at a time, lowest pressure first.
    Returns (modes, x) of the first regular system, or None."""
    for hi in reversed(range(len(net.headers))):
        for alt in _neighbours(net, hi, modes[hi]):
            trial = list(modes)
            trial[hi] = alt
            x = solve_system(co, h, trial, eff)
            if x is not None:
                return trial, x
    return None


def _singular_message(net: Net, trip) -> str:
    """Name the headers whose balances depend on each other (left null space)."""
    r, c, v = trip
    n = len(net.vars)
    names = []
    if n <= 2000:
        a = np.zeros((n, n))
        np.add.at(a, (r, c), v)
        try:
            u, sv, _ = np.linalg.svd(a)
            null = u[:, -1]
            names = [net.headers[i] for i in range(len(net.headers))
                     if abs(null[i]) > 1e-6]
        except np.linalg.LinAlgError:
            names = []
    which = (" of headers " + ", ".join(f"'{x}'" for x in names)) if names else ""
    return ("the balance equations are singular: the balances" + which + " depend on "
            "each other, and no element closes them jointly (their moving elements "
            "only shift steam between them); give one of them a vent, a swing supplier "
            "from outside the group, or fix one of the flows")


def _modes_valid(net: Net, modes) -> bool:
    """Whether warm-start ``modes`` fit ``net``: every header's moving group or absorber
    exists, and every one before it, held at its maximum, has a finite maximum (a case
    with other equipment in service may not)."""
    for hs, (kind, k) in zip(net.swing, modes):
        if kind == "supply" and not (0 <= k < len(hs.groups)):
            return False
        if kind == "absorb" and not (0 <= k < len(hs.absorbers)):
            return False
        if kind == "supply" and any(not math.isfinite(_group_bounds(net, g, {})[1])
                                    for g in hs.groups[:k]):
            return False
        if kind == "absorb" and any(not math.isfinite(net.vars[vi].hi)
                                    for vi in hs.absorbers[:k]):
            return False
    return True


__all__ += ["ItemPropertyError", "IDLE_FLOW"]
