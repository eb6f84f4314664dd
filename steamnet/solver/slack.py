"""The smallest header imbalances that let a case balance (docs/method.md, infeasible
cases).

When a header's swing sequence is exhausted, the last iterate of the solve is not a
state of the plant: the moving elements run past their limits. This module finds the
balance nearest to possible instead. Every header gets a slack supply ``s+`` and a slack
sink ``s-`` [kg/s]; at the enthalpies of the last iterate (its coefficients: turbine
expansion lines, let-down outlet flows ``1 + r``, duty-user flows, deaerator rows) the
balance is linear in the flows, and the linear programme

    minimise    sum over headers of (s+ + s-)  +  0.5 w   (a millionth more per
                                                       header down the pressures)
    subject to  header mass balances + s+ - s- = user flows
                deaerator mass and energy balances, less an overflow w >= 0 of
                saturated water (returns the plant cannot use)
                shares of the swing groups (a member is its share of the group)
                fixed-power extraction turbines at their shaft power
                extraction-turbine exhaust flow within its range
                every flow within its bounds (fixed flows fixed, fixed-power turbines at
                their power flow, throttle flows within range, vents within capacity,
                deaerator steam and make-up >= 0)

is solved with HiGHS (:func:`steamnet.solver.lp.solve_lp`). A second programme, with the slacks of the first
held, picks the flows nearest (in the sum of absolute differences) to the last iterate
held within the bounds, so the split the control sequence made is kept where the limits
allow. The headers with slack above :func:`slack_tolerance` are short
(``s+``) or long (``s-``) by that amount; the elements on them sitting at a bound are
the limits that bind.

The programme ignores the priorities of the sequences: it finds the least imbalance
with the elements run in any order. When that needs none although a sequence is
exhausted (the limits hold only in another order), ``modes`` holds each header's
sequence in its operating mode instead (:func:`_hold_sequence`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .linear import ENERGY_SCALE as _ENERGY_SCALE
from .linear import (equality_rows, exhaust_inequalities, exhaust_rows, flow_bounds,
                     header_rows, sparse_rows)
from .lp import solve_lp
from .network import Coeffs, Net, group_bounds

__all__ = ["SlackBalance", "min_slack", "slack_tolerance", "slack_costs", "beyond_limits"]

#: Slack below this fraction of the plant's size is no imbalance: the closure a solved
#: case is allowed (1e-6 relative, docs/method.md), far above the 1e-7 kg/s to which
#: HiGHS holds its rows [-]
SLACK_TOL_REL = 1e-6
#: Cost of a kg/s of the deaerator's water overflow against a kg/s of header slack
#: [-]. Under 1/(1 + vent fraction) x (1 - blowdown), so returns the plant cannot use
#: are named as such, not as steam raised (and left in excess) to use their water; and
#: over (h_f - h_mk) / (h_g - h_mk), at most 1/3 for make-up under 100 degC, so a header's
#: excess steam is not hidden by condensing it in the deaerator with make-up and
#: overflowing the water.
OVERFLOW_COST = 0.5


def slack_tolerance(scale: float) -> float:
    """Smallest slack reported as an imbalance, for a plant of size ``scale`` (at least
    1 kg/s) [kg/s]."""
    return SLACK_TOL_REL * max(1.0, scale)


def slack_costs(nh: int) -> np.ndarray:
    """Costs of the slack supplies and then the slack sinks of ``nh`` headers.

    Each kg/s of slack costs 1, and a millionth more on each header down the
    pressures: where an imbalance can sit on either of two headers alike (a let-down
    without a maximum between them), it is put on the higher one, whose suppliers are
    the limit (the let-down would pass what the lower one needs)."""
    rank = 1.0 + 1e-6 * np.arange(nh) / max(1, nh)
    return np.concatenate([rank, rank])


@dataclass
class SlackBalance:
    """The balance of least total slack.

    Attributes
    ----------
    x : numpy.ndarray
        Flows, each within its bounds [kg/s]
    short, long : list of float
        Slack supply and slack sink of each header, in the order of ``net.headers``
        [kg/s]
    overflow : float
        Water the deaerator cannot use, with its make-up at zero (returns more than
        the plant's feedwater) [kg/s]
    lo, hi : numpy.ndarray
        The bounds of every flow the programme held [kg/s]
    exhaust : list of tuple
        Per extraction turbine (in ``net.xturbines`` order): exhaust flow, its minimum
        and maximum [kg/s]
    """

    x: np.ndarray
    short: list[float]
    long: list[float]
    overflow: float
    lo: np.ndarray
    hi: np.ndarray
    exhaust: list[tuple[float, float, float]]


def _hold_sequence(net: Net, modes, lo: np.ndarray, hi: np.ndarray) -> None:
    """Tighten ``lo``/``hi`` to the operating ``modes`` of the headers' sequences: the
    groups before the moving one at their maximum, those after it at their minimum,
    the absorbers before the moving one at capacity and the others closed; only the
    moving group or absorber of each header is free within its range."""
    for hs, (kind, k) in zip(net.swing, modes):
        for gi, g in enumerate(hs.groups):
            if kind == "supply" and gi == k:
                continue
            glo, ghi = group_bounds(net, g, {})
            level = ghi if (kind == "supply" and gi < k) else glo
            if math.isfinite(level):
                for vi, w in zip(g.members, g.weights):
                    lo[vi] = hi[vi] = w * level
        for ai, vi in enumerate(hs.absorbers):
            if kind == "absorb" and ai == k:
                continue
            cap = net.vars[vi].hi if (kind == "absorb" and ai < k) else 0.0
            if math.isfinite(cap):
                lo[vi] = hi[vi] = cap


def min_slack(net: Net, co: Coeffs, h: list[float], x_last,
              modes=None) -> SlackBalance | None:
    """The balance of least total header slack at the coefficients ``co`` of the header
    enthalpies ``h`` (see the module docstring).

    Parameters
    ----------
    net, co, h
        The case and the coefficients and header enthalpies [J/kg] of its last iterate.
    x_last : array_like
        The flows of the last iterate [kg/s]; among the balances of least slack, the one
        nearest to them (held within the bounds) is returned.
    modes : list, optional
        Hold the headers' sequences in these operating modes (:func:`_hold_sequence`):
        the least imbalance with the control sequence as it runs, for a case whose
        limits could all hold only in another order.

    Returns
    -------
    SlackBalance or None
        None when no balance exists even with the slacks (a deaerator whose heating
        steam would have to be negative, turbines whose joint limits cannot hold), or
        when HiGHS fails.
    """
    n, nh = len(net.vars), len(net.headers)
    lo, hi = flow_bounds(net, co)
    if modes is not None:
        _hold_sequence(net, modes, lo, hi)
    if (lo > hi).any():
        return None
    hrows, hconst = header_rows(net, co)
    eq, exhaust = equality_rows(net, co, h), exhaust_rows(net)
    # columns: flows x (n), slack supply s+ (nh), slack sink s- (nh), the deaerator's
    # water overflow (1, with a deaerator), deviations d (n)
    da = net.deaerator
    ns = 2 * nh + (1 if da is not None else 0)
    nc = 2 * n + ns
    rows_eq = [terms + [(n + i, 1.0), (n + nh + i, -1.0)]
               for i, terms in enumerate(hrows)] + [terms for terms, _ in eq]
    if da is not None:
        # overflow leaves as saturated liquid: out of the mass and the energy row
        rows_eq[nh] = rows_eq[nh] + [(n + 2 * nh, -1.0)]
        rows_eq[nh + 1] = rows_eq[nh + 1] + [(n + 2 * nh, -da["sat"].hf / _ENERGY_SCALE)]
    b_eq = np.array(list(hconst) + [rhs for _, rhs in eq], dtype=float)
    rows_ub, b_ub = exhaust_inequalities(net)
    a_eq = sparse_rows(rows_eq, nc)
    bounds = ([(a if math.isfinite(a) else None, b if math.isfinite(b) else None)
               for a, b in zip(lo, hi)] + [(0.0, None)] * ns + [(0.0, 0.0)] * n)
    cost = np.zeros(nc)
    cost[n:n + 2 * nh] = slack_costs(nh)
    if da is not None:
        cost[n + 2 * nh] = OVERFLOW_COST
    a_ub = sparse_rows(rows_ub, nc) if rows_ub else None
    first = solve_lp(cost, A_ub=a_ub, b_ub=b_ub or None, A_eq=a_eq, b_eq=b_eq,
                    bounds=bounds)
    if first.status != 0:
        return None
    # second programme: the slacks of the first held, the flows nearest to the last
    # iterate within the bounds: d >= x - c and d >= c - x, minimise sum d (holding
    # only the total would let a rounding's worth of slack move to other headers)
    target = np.clip(np.nan_to_num(np.asarray(x_last, dtype=float)), lo, hi)
    near = []
    near_b = []
    for i in range(n):
        near.append([(i, 1.0), (n + ns + i, -1.0)])
        near_b.append(target[i])
        near.append([(i, -1.0), (n + ns + i, -1.0)])
        near_b.append(-target[i])
    rows2 = rows_ub + near
    b2 = b_ub + near_b
    bounds2 = bounds[:n] + [(v, v) for v in first.x[n:n + ns]] + [(0.0, None)] * n
    cost2 = np.zeros(nc)
    cost2[n + ns:] = 1.0
    second = solve_lp(cost2, A_ub=sparse_rows(rows2, nc), b_ub=b2, A_eq=a_eq, b_eq=b_eq,
                     bounds=bounds2)
    res = second if second.status == 0 else first
    # HiGHS holds bounds to its feasibility tolerance: clip, so no flow is reported
    # past its limit by a rounding
    x = np.clip(res.x[:n], lo, hi)
    x = np.where(np.abs(x) < 1e-12, 0.0, x)
    # the imbalance of each header from the flows themselves, so that it is what the
    # mass residuals of the reported balance show
    s_in, s_out = [], []
    for terms, users in zip(hrows, hconst):
        gap = users - sum(c * x[vi] for vi, c in terms)
        s_in.append(max(gap, 0.0))
        s_out.append(max(-gap, 0.0))
    overflow = 0.0
    if da is not None:
        terms, r_mass = eq[0]
        overflow = max(sum(c * x[vi] for vi, c in terms) - r_mass, 0.0)
    ex = []
    for terms, vmin, vmax in exhaust:
        ex.append((float(sum(c * x[vi] for vi, c in terms)), vmin, vmax))
    return SlackBalance(x=x, short=s_in, long=s_out, overflow=overflow, lo=lo, hi=hi,
                        exhaust=ex)


def beyond_limits(net: Net, co: Coeffs, x, tol: float) -> bool:
    """Whether any flow of ``x`` is outside the bounds :func:`min_slack` holds, or an
    extraction turbine's exhaust outside its range, by more than ``tol`` [kg/s]; the
    deaerator's steam and make-up are left out (:func:`~steamnet.solver.findings.
    derived_findings` reports them)."""
    lo, hi = flow_bounds(net, co)
    if net.deaerator is not None:    # its negative flows are findings of their own
        for key in ("steam_var", "makeup_var"):
            lo[net.deaerator[key]] = -math.inf
    xa = np.asarray(x, dtype=float)
    if (xa < lo - tol).any() or (xa > hi + tol).any():
        return True
    exhaust = exhaust_rows(net)
    return any(not (vmin - tol <= sum(c * xa[vi] for vi, c in terms) <= vmax + tol)
               for terms, vmin, vmax in exhaust)
