"""Why a case does not balance, in words: the findings of an infeasible case.

Each finding is a dict with the header concerned, the side (``short``, ``long``,
``deaerator``, ``turbine``, ``user``, ``heat_loss``), the amount [kg/s], the limits that
bind (as text) and a one-line message.
"""

from __future__ import annotations

import numpy as np

from ..calc.turbine import section_flows
from ..units import T_H
from .network import INF, Coeffs, Net, group_bounds as _group_bounds, header_inflows
from .reference import _header_terms

__all__ = ["exhausted_findings", "slack_findings", "sequence_amounts", "derived_findings", "cold_findings",
           "fmt_th"]


def _item_label(net: Net, vi: int) -> str:
    v = net.vars[vi]
    labels = {"boiler": "boiler", "transfer": "steam transfer", "turbine": "turbine",
              "xt_in": "extraction turbine", "xt_ext": "extraction",
              "letdown": "letdown", "vent": "vent", "da_steam": "deaerator",
              "da_makeup": "deaerator"}
    return f"{labels[v.kind]} '{v.item}'"


def fmt_th(kg_s: float) -> str:
    """A flow [kg/s] as text in t/h."""
    return f"{kg_s * T_H:.2f} t/h"


def _limit_text(net: Net, vi: int, which: str, eff) -> str:
    lo, hi = eff.get(vi, (net.vars[vi].lo, net.vars[vi].hi))
    val = hi if which == "max" else lo
    return f"{_item_label(net, vi)} at its {which}imum {fmt_th(val)}"


def _group_limit_texts(net: Net, g, which: str, eff) -> list[str]:
    """The limit of each member of a swing group. A member sharing load with others is
    held by the group's limit, which is its own only for the member that binds; the
    others are named at their share (not at a maximum of their own, maybe infinite)."""
    if len(g.members) == 1:
        return [_limit_text(net, g.members[0], which, eff)]
    glo, ghi = _group_bounds(net, g, eff)
    level = ghi if which == "max" else glo
    out = []
    for vi, w in zip(g.members, g.weights):
        lo, hi = eff.get(vi, (net.vars[vi].lo, net.vars[vi].hi))
        own = (hi if which == "max" else lo) / w
        if abs(own - level) <= 1e-9 * max(1.0, abs(level)):
            out.append(_limit_text(net, vi, which, eff))
        else:
            out.append(f"{_item_label(net, vi)} at its share {100 * w:.3g} % of the "
                       f"group, {fmt_th(level * w)}")
    return out


def _imbalance(net: Net, hi: int, side: str, amount: float, limits: list[str]) -> dict:
    """The finding of header ``hi`` short or long by ``amount`` [kg/s]."""
    name = net.headers[hi]
    if side == "short":
        msg = (f"header '{name}' is short of steam by {fmt_th(amount)}: every "
               "element that can supply it is at its limit")
    else:
        if not net.swing[hi].absorbers:
            limits = limits + ["no vent or swing export on this header"]
        msg = (f"header '{name}' has {fmt_th(amount)} of steam in excess: its "
               "suppliers are at their minimum and nothing more can take it")
    return {"kind": "infeasible", "header": name, "side": side, "amount_kg_s": amount,
            "limits": limits,
            "message": msg + (" (" + "; ".join(limits) + ")" if limits else "")}


def exhausted_findings(net: Net, exhausted, modes, eff) -> list[dict]:
    out = []
    for hi, side, amount in exhausted:
        hs = net.swing[hi]
        if side == "short":
            limits = [t for g in hs.groups for t in _group_limit_texts(net, g, "max", eff)]
        else:
            limits = [t for g in hs.groups for t in _group_limit_texts(net, g, "min", eff)]
            limits += [f"{_item_label(net, vi)} at its capacity "
                       f"{fmt_th(net.vars[vi].hi)}" for vi in hs.absorbers]
        out.append(_imbalance(net, hi, side, amount, limits))
    return out


def _near(a: float, b: float) -> bool:
    return abs(a - b) <= 1e-9 * max(1.0, abs(b))


def _bound_text(net: Net, bal, vi: int, upper: bool) -> str | None:
    """How flow ``vi`` of the least-slack balance ``bal`` sits at its upper (or lower)
    bound, or None when it does not. A lower bound of zero on an outflow of a short
    header is no limit of the equipment (it is closed) and is not named."""
    x, lo, hi = bal.x[vi], bal.lo[vi], bal.hi[vi]
    label = _item_label(net, vi)
    if lo == hi:
        if not _near(x, lo):
            return None
        if net.vars[vi].fixed is not None:
            return f"{label} fixed at {fmt_th(lo)}"
        if any(t["var"] == vi and t["mode"] == "fixed_power" for t in net.turbines):
            return f"{label} at the flow its fixed power needs, {fmt_th(lo)}"
        if any(t["var"] == vi and t["mode"] == "pump" for t in net.turbines):
            return f"{label} at the flow its pump needs, {fmt_th(lo)}"
        # held by its header's sequence (slack.min_slack with modes); closed: no limit
        return f"{label} held by its sequence at {fmt_th(lo)}" if lo > 0 else None
    if upper:
        if not (np.isfinite(hi) and _near(x, hi)):
            return None
        word = "capacity" if net.vars[vi].kind == "vent" else "maximum"
        return f"{label} at its {word} {fmt_th(hi)}"
    return f"{label} at its minimum {fmt_th(lo)}" if _near(x, lo) else None


def sequence_amounts(net: Net, found: list[dict], seq, tol: float) -> list[dict]:
    """The findings of the least imbalance, each with the imbalance of its header when
    the swing elements run in the order of their control sequences (``seq``, the
    least-slack balance with the sequences held: :func:`steamnet.solver.slack.
    min_slack` with ``modes``) where that is larger by more than ``tol`` [kg/s].

    The least imbalance lets every element move within its limits in any order: it is
    what must be found to balance the case if the operators re-distribute the load. The
    sequence figure is what the controllers as configured would leave short (or long).
    """
    out = []
    for f in found:
        if f["side"] not in ("short", "long"):
            out.append(f)
            continue
        hi = net.headers.index(f["header"])
        amount = (seq.short if f["side"] == "short" else seq.long)[hi]
        if amount <= f["amount_kg_s"] + tol:
            out.append(f)
            continue
        word = "short" if f["side"] == "short" else "long"
        out.append({**f, "amount_in_sequence_kg_s": amount,
                    "message": f"{f['message']}; this is the least imbalance with the "
                    f"elements re-distributed within their limits: with the swing "
                    f"elements in the order of their control sequences the header is "
                    f"{word} by {fmt_th(amount)}"})
    return out


def slack_findings(net: Net, co: Coeffs, bal, tol: float) -> list[dict]:
    """The headers the least-slack balance ``bal`` (:func:`steamnet.solver.slack.
    min_slack`) leaves short or long by more than ``tol`` [kg/s], with the elements on
    each that sit at the bound that keeps it so: for a short header its inflows at
    their maximum and its outflows at their (non-zero) minimum, for a long header the
    other way round; a member of a swing group sharing load is named at its share."""
    rows, _ = _header_terms(net, co)
    group_of = {vi: g for hs in net.swing for g in hs.groups for vi in g.members}
    eff = {vi: (bal.lo[vi], bal.hi[vi]) for vi in range(len(net.vars))}
    out = []
    for hi, name in enumerate(net.headers):
        for side, amount in (("short", bal.short[hi]), ("long", bal.long[hi])):
            if amount <= tol:
                continue
            coef: dict[int, float] = {}
            for vi, c in rows[hi]:
                coef[vi] = coef.get(vi, 0.0) + c
            limits, groups = [], set()
            for vi, c in coef.items():
                if c == 0.0:
                    continue
                upper = (c > 0) == (side == "short")
                text = _bound_text(net, bal, vi, upper)
                if text is None or (not upper and side == "short"
                                    and bal.lo[vi] == 0.0 and bal.hi[vi] > 0.0):
                    continue
                g = group_of.get(vi)
                if g is not None and len(g.members) > 1 and bal.lo[vi] != bal.hi[vi]:
                    if id(g) not in groups:
                        groups.add(id(g))
                        limits += _group_limit_texts(net, g, "max" if upper else "min",
                                                     eff)
                    continue
                limits.append(text)
            for t, (ex, vmin, vmax) in zip(net.xturbines, bal.exhaust):
                touches = hi in {t["inlet"], t["exhaust"], *(e["header"] for e in t["exts"])}
                for word, bound in (("minimum", vmin), ("maximum", vmax)):
                    if touches and np.isfinite(bound) and bound > 0 and _near(ex, bound):
                        limits.append(f"extraction turbine '{t['name']}' exhaust at its "
                                      f"{word} {fmt_th(bound)}")
            out.append(_imbalance(net, hi, side, amount, limits))
    da = net.deaerator
    if da is not None and bal.overflow > tol:
        out.append({"kind": "infeasible", "header": net.headers[da["header"]],
                    "side": "deaerator", "amount_kg_s": bal.overflow,
                    "limits": [f"deaerator '{da['name']}' make-up at its minimum 0.00 t/h"],
                    "message": f"deaerator '{da['name']}' has {fmt_th(bal.overflow)} of "
                    "water in excess with no make-up: more water returns than the plant "
                    "uses"})
    return out


def derived_findings(net: Net, co: Coeffs, x: np.ndarray, tol: float) -> list[dict]:
    """Flows that are not swing variables but must still be physical."""
    out = []
    da = net.deaerator
    if da is not None:
        d, mu = x[da["steam_var"]], x[da["makeup_var"]]
        if d < -tol:
            out.append({"kind": "infeasible", "header": net.headers[da["header"]],
                        "side": "deaerator", "amount_kg_s": -d, "limits": [],
                        "message": f"deaerator '{da['name']}' would need negative heating "
                        f"steam ({fmt_th(d)}): returns and make-up bring more heat than "
                        "the feedwater takes"})
        if mu < -tol:
            out.append({"kind": "infeasible", "header": net.headers[da["header"]],
                        "side": "deaerator", "amount_kg_s": -mu, "limits": [],
                        "message": f"deaerator '{da['name']}' would need negative make-up "
                        f"({fmt_th(mu)}): more water returns than the plant uses"})
    for t, c in zip(net.turbines, co.turb):
        it = t["item"]
        if t["mode"] in ("fixed_power", "pump"):
            m = c["flow"]       # what its power needs (the flow may be held in range)
            hi = INF if it.max_flow is None else it.max_flow
            if m > hi + tol or m < it.min_flow - tol:
                out.append({"kind": "infeasible", "header": net.headers[t["inlet"]],
                            "side": "turbine", "amount_kg_s": m, "limits": [],
                            "message": f"turbine '{t['name']}' needs {fmt_th(m)} for its "
                            f"{'pump' if t['mode'] == 'pump' else 'fixed power'}, outside "
                            f"its range {fmt_th(it.min_flow)} to {fmt_th(hi)}"})
    for t, c in zip(net.xturbines, co.xturb):
        it = t["item"]
        s1 = x[t["in_var"]]
        ex = s1 - sum(x[e["var"]] for e in t["exts"])
        hi = INF if it.max_flow is None else it.max_flow
        hx = INF if it.max_exhaust_flow is None else it.max_exhaust_flow
        bad = []
        if s1 > hi + tol or s1 < it.min_flow - tol:
            bad.append(f"throttle flow {fmt_th(s1)} outside {fmt_th(it.min_flow)} to "
                       f"{fmt_th(hi)}")
        if ex > hx + tol or ex < it.min_exhaust_flow - tol:
            bad.append(f"exhaust flow {fmt_th(ex)} outside "
                       f"{fmt_th(it.min_exhaust_flow)} to {fmt_th(hx)}")
        for e in t["exts"]:
            if x[e["var"]] < -tol:
                bad.append(f"extraction to '{net.headers[e['header']]}' negative")
        wl = t["willans"]
        if wl is not None and t["mode"] == "fixed_power":
            # the fixed-power row follows the lines linearly, below no-load too
            flows = section_flows(s1, [x[e["var"]] for e in t["exts"]])
            for j, (m, m0) in enumerate(zip(flows, wl["m0"])):
                if m < m0 - tol:
                    bad.append(f"section {j + 1} carries {fmt_th(m)}, below its Willans "
                               f"no-load flow {fmt_th(m0)}: its line would give negative "
                               "power")
        if bad:
            out.append({"kind": "infeasible", "header": net.headers[t["inlet"]],
                        "side": "turbine", "amount_kg_s": 0.0, "limits": bad,
                        "message": f"extraction turbine '{t['name']}': " + "; ".join(bad)})
    for u, starved in zip(net.users, co.user_starved):
        if starved:
            out.append({"kind": "infeasible", "header": net.headers[u["header"]],
                        "side": "user", "amount_kg_s": 0.0, "limits": [],
                        "message": f"user '{u['name']}': header steam carries (almost) "
                        "no heat above saturated liquid (under 1 % of the latent heat), so "
                        "its duty cannot be met"})
    return out


def cold_findings(net: Net, co: Coeffs, x: np.ndarray, cold: list[int]) -> list[dict]:
    out = []
    ins = header_inflows(net, co, x, labels=False)
    for i in cold:
        name = net.headers[i]
        m = sum(max(f, 0.0) for _, f, _ in ins[i])
        lim = f"heat loss {net.q_loss[i] / 1e3:.4g} kW"
        out.append({"kind": "infeasible", "header": name, "side": "heat_loss",
                    "amount_kg_s": 0.0, "limits": [lim],
                    "message": f"header '{name}': its {lim} is more than its steam "
                    f"inflow of {fmt_th(m)} brings above saturated liquid; the steam "
                    "would condense in the header"})
    return out
