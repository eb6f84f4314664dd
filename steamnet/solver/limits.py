"""The limits a balance can run into, read from a solved case.

Every study that asks "how far can we go" (headroom, trips, marginal cost) reads the same
list of :class:`Check` from a :class:`~steamnet.solve.CaseResult`: each flow with a limit,
its value and its limit, and whether the balance itself holds the flow at the limit (a
bound of the balance: swing boilers, let-down max_flow, turbine ranges, vents) or the
limit is only checked (spray above a desuperheater's max_spray: the balance keeps the
outlet at its setpoint and reports the spray it needs).

A limit *binds* when the margin to it is used up (``margin <= tolerance``); a study
compares the checks of a changed case with those of the case it started from, so an
element that already sat at its limit is not news (:func:`newly_binding`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..model.schema import ITEM_LABELS
from ..units import T_H as TH

__all__ = ["Check", "limit_checks", "newly_binding", "station_loads", "running_units",
           "vent_flows", "willans_efficiencies", "TH"]

_TOL = {"kg/s": 1e-6, "J/kg": 1e-3}


@dataclass(frozen=True)
class Check:
    """One limit of one item in one solved case.

    Attributes
    ----------
    table, item : str
        The item (``'letdown'``, ``'PRV-HL'``); ``'header'`` for header superheat.
    kind : str
        The limit, named as the model-file field where there is one: ``max_steam``,
        ``min_steam``, ``max_flow``, ``min_flow``, ``max_exhaust_flow``,
        ``min_exhaust_flow``, ``max_spray``, ``rated_max_steam``; or ``closes`` (a vent
        stops venting), ``setpoint`` (a desuperheater's inlet steam is too cold to
        reach its outlet setpoint), ``superheat`` (a header's steam reaches
        saturation).
    value, limit : float
        Value and limit in ``unit`` (kg/s or J/kg).
    upper : bool
        True when the value must stay at or below the limit.
    enforced : bool
        True when the balance holds the value at the limit (a bound); False when the
        limit is only checked.
    unit : str
        ``'kg/s'`` or ``'J/kg'``.
    """

    table: str
    item: str
    kind: str
    value: float
    limit: float
    upper: bool
    enforced: bool
    unit: str = "kg/s"

    @property
    def key(self) -> tuple[str, str, str]:
        return (self.table, self.item, self.kind)

    @property
    def margin(self) -> float:
        """Distance to the limit in ``unit``; negative beyond it."""
        return self.limit - self.value if self.upper else self.value - self.limit

    @property
    def binds(self) -> bool:
        return self.margin <= _TOL[self.unit]

    @property
    def limit_t_h(self) -> float:
        return self.limit * TH if self.unit == "kg/s" else math.nan

    def describe(self) -> str:
        """One phrase: what binds."""
        who = f"{_LABEL.get(self.table, self.table)} '{self.item}'"
        lim = f"{self.limit * TH:.1f} t/h" if self.unit == "kg/s" else ""
        return {
            "closes": f"{who} closes (no steam left to vent)",
            "setpoint": f"{who}: inlet steam too cold to reach the outlet setpoint",
            "superheat": f"{who}: steam reaches saturation (no superheat left)",
            "max_spray": f"{who} needs more spray than its max_spray {lim}",
            "rated_max_steam": f"{who} passes more steam than its rated_max_steam {lim}",
        }.get(self.kind, f"{who} reaches its {self.kind} {lim}")


_LABEL = {**ITEM_LABELS, "extraction": "extraction"}


def station_loads(sol) -> list[dict]:
    """Per let-down station in the balance: steam and spray [kg/s] and the limits of
    the station (None where not given)."""
    out = []
    for s, c in zip(sol.net.letdowns, sol.co.ld):
        it = s["item"]
        d = it.desuperheater
        m = float(sol.x[s["var"]])
        out.append({"name": s["name"], "inlet": sol.net.headers[s["inlet"]],
                    "outlet": sol.net.headers[s["outlet"]], "mode": it.mode,
                    "steam": m, "spray": m * c["r"], "max_flow": it.max_flow,
                    "min_flow": it.min_flow,
                    "max_spray": d.max_spray if d is not None else None,
                    "rated_max_steam": d.rated_max_steam if d is not None else None,
                    "desuperheater": d is not None, "h_in": sol.h[s["inlet"]],
                    "h_set": s["ds"]["h_set"] if s["ds"] is not None else None})
    return out


def running_units(sol, boilers: bool) -> list[tuple[str, str, float]]:
    """(table, name, steam kg/s) of every turbine (and, with ``boilers``, boiler) passing
    steam in a solution: the units a trip screening trips in turn."""
    out = [("turbine", t["name"], float(sol.x[t["var"]])) for t in sol.net.turbines]
    out += [("extraction_turbine", t["name"], float(sol.x[t["in_var"]]))
            for t in sol.net.xturbines]
    if boilers:
        out += [("boiler", b["name"], float(sol.x[b["var"]])) for b in sol.net.boilers]
    return [u for u in out if u[2] > 1e-9]


def vent_flows(sol) -> list[tuple[str, float, float | None]]:
    """(name, vented kg/s, capacity kg/s or None) of every vent in a solution."""
    out = []
    for v in sol.net.vents:
        cap = sol.net.vars[v["var"]].hi
        out.append((v["name"], float(sol.x[v["var"]]), cap if math.isfinite(cap) else None))
    return out


def willans_efficiencies(sol) -> list[tuple[str, float, float]]:
    """(name, implied isentropic efficiency [-], steam kg/s) of every running turbine
    whose flow follows a Willans line: its enthalpy drop over the isentropic one from
    its inlet header's state."""
    out = []
    for t, c in zip(sol.net.turbines, sol.co.turb):
        m = float(sol.x[t["var"]])
        h_in = sol.h[t["inlet"]]
        if c.get("willans") and m > 1e-6 and h_in > c["h_is"]:
            out.append((t["name"], c["dh"] / (h_in - c["h_is"]), m))
    return out


def _range(out, table, item, value, lo, hi, *, lo_kind, hi_kind, enforced=True):
    if hi is not None and math.isfinite(hi):
        out.append(Check(table, item, hi_kind, value, hi, True, enforced))
    if lo is not None and lo > 0:
        out.append(Check(table, item, lo_kind, value, lo, False, enforced))


def limit_checks(result) -> list[Check]:
    """Every limit of the moving elements of a solved (or infeasible) case."""
    sol = result.solution
    if sol is None or sol.x is None or not all(math.isfinite(v) for v in sol.x):
        return []
    net, x = sol.net, sol.x
    out: list[Check] = []
    for b in net.boilers:
        it = b["item"]
        if it.mode == "swing":
            _range(out, "boiler", b["name"], x[b["var"]], it.min_steam, it.max_steam,
                   lo_kind="min_steam", hi_kind="max_steam")
    for t in net.transfers:
        it = t["item"]
        if it.mode == "swing":
            _range(out, "steam_transfer", t["name"], x[t["var"]], it.min_flow,
                   it.max_flow, lo_kind="min_flow", hi_kind="max_flow")
    for t in net.turbines:
        it = t["item"]
        if it.mode in ("swing", "fixed_power", "pump"):
            _range(out, "turbine", t["name"], x[t["var"]], it.min_flow, it.max_flow,
                   lo_kind="min_flow", hi_kind="max_flow", enforced=it.mode == "swing")
    for t in net.xturbines:
        it = t["item"]
        s1 = x[t["in_var"]]
        _range(out, "extraction_turbine", t["name"], s1, it.min_flow, it.max_flow,
               lo_kind="min_flow", hi_kind="max_flow")
        ex = s1 - sum(x[e["var"]] for e in t["exts"])
        _range(out, "extraction_turbine", t["name"], ex, it.min_exhaust_flow,
               it.max_exhaust_flow, lo_kind="min_exhaust_flow", hi_kind="max_exhaust_flow")
        for e in t["exts"]:
            if e["mode"] == "swing":
                _range(out, "extraction", f"{t['name']}/{net.headers[e['header']]}",
                       x[e["var"]], e["lo"], e["hi"], lo_kind="min_flow",
                       hi_kind="max_flow")
    for st in station_loads(sol):
        if st["mode"] == "auto":
            _range(out, "letdown", st["name"], st["steam"], st["min_flow"],
                   st["max_flow"], lo_kind="min_flow", hi_kind="max_flow")
        if st["max_spray"] is not None:
            out.append(Check("letdown", st["name"], "max_spray", st["spray"],
                             st["max_spray"], True, False))
        if st["rated_max_steam"] is not None:
            out.append(Check("letdown", st["name"], "rated_max_steam", st["steam"],
                             st["rated_max_steam"], True, False))
        if st["desuperheater"] and st["steam"] > _TOL["kg/s"]:
            out.append(Check("letdown", st["name"], "setpoint", st["h_in"], st["h_set"],
                             False, False, unit="J/kg"))
    for v in net.vents:
        m = x[v["var"]]
        cap = net.vars[v["var"]].hi
        if math.isfinite(cap):
            out.append(Check("vent", v["name"], "max_flow", m, cap, True, True))
        out.append(Check("vent", v["name"], "closes", m, 0.0, False, True))
    for i, name in enumerate(net.headers):
        out.append(Check("header", name, "superheat", sol.h[i], net.sat[i].hg, False,
                         False, unit="J/kg"))
    return out


def newly_binding(before: list[Check] | dict, after: list[Check]) -> list[Check]:
    """Checks that bind in ``after`` but did not in ``before`` (most used-up first).

    A limit that already bound before (an element resting at its limit, a vent that
    was closed, a spray already above its maximum) is not counted again.
    """
    prev = before if isinstance(before, dict) else {c.key: c for c in before}
    out = [c for c in after if c.binds and not (c.key in prev and prev[c.key].binds)]
    return sorted(out, key=lambda c: c.margin / _TOL[c.unit])
