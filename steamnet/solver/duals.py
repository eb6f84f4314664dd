"""The marginal cost of steam on each header under the control philosophy, from the
duals of one linear programme (docs/howto-marginal-cost.md, the method).

At the header enthalpies of a solved case every relation of the balance is linear in
the flows (:mod:`steamnet.solver.linear`), and so is its operating cost (the cost of
the cheapest dispatch, :func:`steamnet.solver.dispatch.assemble`). In the case's
operating modes the control sequences move one thing per header: the moving swing group
(its members at their shares) or the moving absorber (a swing export, a vent). The
programme of :func:`control_duals` leaves free only those, the deaerator's heating
steam and make-up, and the throttle flow of a fixed-power extraction turbine (which
follows its power row); every other flow is fixed at its value in the case. Its
solution is the case itself, and the dual of each header's row is the cost of one more
t/h drawn there with no condensate back, in currency per tonne: the marginal cost of
steam as the control philosophy supplies it, at the case's enthalpies.

HiGHS's row bound ranging tells how far the draw on each header may rise with the same
basis: until a moving element (or the deaerator's steam, an extraction turbine's
exhaust, the power the site uses) reaches its limit, which is a change of operating
mode. Within that range the dual is exact for the programme; it leaves out what the
added draw does to the header enthalpies (mixing, expansion lines, spray ratios), which
the perturbed balance of :func:`steamnet.studies.marginal.marginal_steam_cost` holds.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .balance import Solution, _extraction_bounds
from .dispatch import _label, assemble, cost_parts
from .linear import equality_rows, exhaust_rows, own_range
from .lp import solve_lp
from .results import _boiler

__all__ = ["ControlDuals", "control_duals", "moving_flows"]

#: The programme's flows may differ from the case's by this and still be the case
#: (the balance closes to about 1e-9 kg/s) [kg/s]
_SAME_X = 1e-6


@dataclass
class ControlDuals:
    """The duals of one case's control-philosophy programme.

    Attributes
    ----------
    status : str
        ``ok``, or ``failed`` (``message`` says why; no figure).
    per_t : list of float
        Per header (``net.headers`` order): the cost of one more t/h drawn there, no
        condensate back [currency/t]
    range_t_h : list of float
        Per header: the added draw for which the dual holds [t/h] (infinite: no limit)
    limit : list of str
        Per header: what reaches its limit at the end of the range ('' for none).
    response : list of dict
        Per header: the change per added t/h of the cost's parts (``fuel``, ``water``,
        ``power``, ``other`` [currency/t], adding up to ``per_t``), of the steam raised
        (``steam_raised`` [t/h per t/h]), the fuel fired (``fuel_mw``) and the power
        generated (``power_mw``) [MW per t/h].
    """

    status: str
    message: str = ""
    per_t: list = field(default_factory=list)
    range_t_h: list = field(default_factory=list)
    limit: list = field(default_factory=list)
    response: list = field(default_factory=list)


def moving_flows(sol: Solution) -> tuple[dict, list]:
    """The flows the control sequences move in the case's operating modes, with their
    ranges: flow -> (low, high) [kg/s], and the moving swing groups (whose shares
    hold). A moving group's members keep their own limits (the extraction flows their
    effective ranges within their turbine's joint limits, as the balance holds them);
    a moving absorber runs from zero to its maximum; the deaerator's steam and make-up
    and a fixed-power extraction turbine's throttle flow follow by their rows."""
    net, x = sol.net, sol.x
    eff = _extraction_bounds(net, sol.co, x)
    free: dict[int, tuple[float, float]] = {}
    groups = []
    for hs, (kind, k) in zip(net.swing, sol.modes):
        if kind == "supply":
            g = hs.groups[k]
            groups.append(g)
            for vi in g.members:
                v = net.vars[vi]
                free[vi] = eff.get(vi, (v.lo, v.hi))
        else:
            vi = hs.absorbers[k]
            free[vi] = (0.0, net.vars[vi].hi)
    if net.deaerator is not None:
        for key in ("steam_var", "makeup_var"):
            free[net.deaerator[key]] = (0.0, math.inf)
    for t in net.xturbines:
        if t["mode"] == "fixed_power":
            free[t["in_var"]] = own_range(net, t["in_var"])
    for t in net.turbines:      # its flow follows the water its pump delivers (a row)
        if t["mode"] == "pump":
            free[t["var"]] = own_range(net, t["var"])
    return free, groups


def control_duals(sol: Solution) -> ControlDuals:
    """The marginal cost of steam on every header of a solved case under its control
    philosophy, and how far each holds (see the module docstring)."""
    net, x, co, h = sol.net, np.asarray(sol.x, dtype=float), sol.co, list(sol.h)
    n, nh = len(net.vars), len(net.headers)
    free, groups = moving_flows(sol)
    lo, hi = x.copy(), x.copy()
    for vi, (a, b) in free.items():     # a case a hair beyond a limit: range nought
        lo[vi], hi[vi] = min(a, x[vi]), max(b, x[vi])
    eq = equality_rows(net, co, h, shares=groups, pumps=True)
    rows_ub, b_ub = [], []
    for terms, vmin, vmax in exhaust_rows(net):
        if not any(vi in free for vi, _ in terms):
            continue                    # nothing moves it
        now = sum(c * x[vi] for vi, c in terms)
        rows_ub.append([(vi, -c) for vi, c in terms])
        b_ub.append(-min(vmin, now))
        if math.isfinite(vmax):
            rows_ub.append(list(terms))
            b_ub.append(max(vmax, now))
    pg = assemble(net, co, h, lo, hi, eq, rows_ub, b_ub)
    hours = 3600.0
    res = solve_lp(pg.cost * hours, A_ub=pg.a_ub, b_ub=pg.b_ub or None, A_eq=pg.a_eq,
                   b_eq=np.array(pg.b_eq), lo=pg.lo, hi=pg.hi, ranging=True,
                   respond=range(nh))
    if res.status != 0:
        return ControlDuals("failed", f"the programme of the control philosophy has no "
                            f"solution ({res.message})")
    xs = res.x * pg.scale
    gap = float(np.max(np.abs(xs[:n] - x))) if n else 0.0
    if gap > _SAME_X:
        return ControlDuals("failed", f"the programme of the control philosophy does not "
                            f"give the case's flows back (by {gap * 3.6:.3g} t/h)")
    parts = cost_parts(net, co)
    fired = np.zeros(n)
    for b in net.boilers:
        fired[b["var"]] = _boiler(b, 1.0).fuel
    raised = np.zeros(n)
    raised[[b["var"] for b in net.boilers]] = 1.0
    model = net.model
    p_el = model.prices.electricity
    p_exp = p_el if model.prices.electricity_export is None \
        else model.prices.electricity_export
    out = ControlDuals("ok")
    for i in range(nh):
        # the programme's cost is per hour and its rows per kg/s: per t/h, / 3.6
        out.per_t.append(float(res.eqlin.marginals[i]) / 3.6)
        up = float(res.eq_up[i]) - pg.b_eq[i]
        out.range_t_h.append(max(0.0, up) * 3.6 if not math.isnan(up) else 0.0)
        d = res.eq_response[i] * pg.scale / 3.6           # per t/h added
        out.limit.append(_limit(net, res.eq_up_leaving[i], d))
        dx = d[:n]
        gen = float(parts["power_gen"] @ dx)
        pump = -float(parts["power_pump"] @ dx)            # pumps' power drawn [W]
        if pg.nc > n and model.site.power_demand is not None:
            worth = p_el * d[n] + p_exp * d[n + 1]         # own use, sold [W]
        else:
            worth = p_el * (gen - pump)
        fuel = float(parts["fuel"] @ dx) * hours
        water = float(parts["water"] @ dx) * hours
        power = -(worth + pump * p_el) * hours
        out.response.append({
            "fuel": fuel, "water": water, "power": power,
            "other": out.per_t[-1] - fuel - water - power,
            "steam_raised": float(raised @ dx) * 3.6,
            "fuel_mw": float(fired @ dx) / 1e6,
            "power_mw": gen / 1e6})
    return out


def _limit(net, leaving, d: np.ndarray) -> str:
    """What reaches its limit at the end of a header's range, in words (``d``: the
    columns' change per added t/h, which tells the side)."""
    if leaving is None:
        return ""
    kind, j = leaving
    n = len(net.vars)
    if kind == "col" and j < n:
        return f"{_label(net, j)} at its {'maximum' if d[j] > 0 else 'minimum'}"
    if kind == "col" and j == n:
        return "the power used at the site at the site's power_demand"
    if kind == "col" and j == n + 1:
        return "the power sold at site max_power_export"
    if kind == "ub":
        return "an extraction turbine's exhaust flow at its limit"
    return "a balance row"
