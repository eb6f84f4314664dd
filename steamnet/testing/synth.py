"""Seeded random plant models, for property tests, fuzzing and benchmarks.

:func:`random_model` builds a model as a TOML-ready dict (every quantity written with
its unit, as a user would), :func:`random_model_text` the same as TOML text. The same
seed and sizes always give the same model. Every model produced passes validation
(:func:`steamnet.loads_model`); whether each case *balances* is left to chance and to
``slack``: some random networks are short of steam or have steam in excess, which the
solver must report as infeasible with the header and the limits.

How a model is laid out
-----------------------
The headers are split into *sub-plants* of 1 to ``max_depth`` headers at falling
pressures (1 to 100 bar(g)), so that a large network (100 headers) stays a few levels
deep, as real sites are. Each sub-plant has

* a swing boiler on its top header and, for every lower header, a let-down station in
  automatic mode from the header above it (together these give every header a way to
  close its balance and a path from a steam source);
* a steam user of at least 1 t/h (a sub-plant without load would carry grams per
  second against its heat losses);
* a feedwater supply above the top header's pressure, pumped from the deaerator or
  taken from outside.

The rest of the ``n_items`` are drawn from every equipment type: more boilers (swing,
fixed, off; fired or waste heat; blowdown flash), steam imports and exports, backpressure
turbines (isentropic efficiency or Willans line; swing, fixed flow, fixed power,
tripped), extraction turbines (extractions to lower headers, exhaust to a header or a
condenser), let-downs (with and without desuperheater, also across sub-plants), users
(flow or duty, with condensate return), vents and spray-water supplies. Swing elements
of one header get distinct priorities, or share a priority with set shares; absorbers
(vents, swing exports) get distinct priorities. Desuperheater setpoints lie above
saturation at the outlet and spray supplies above the outlet pressure. The one
deaerator (when present) sits on the lowest header of the first sub-plant, below that
header's pressure. Cases change demands, the make-up temperature, heat losses, and take
non-essential equipment out of service.

Names are generated (``S01-1`` for the top header of sub-plant 1, ``B3`` for boiler 3
...). The figures are synthetic test data, physically plausible but not those of any
plant.

>>> from steamnet import loads_model
>>> m = loads_model(random_model_text(7, n_headers=4, n_items=25))
>>> len(m.headers), sum(len(t) for t in m.items.values()) - len(m.headers)
(4, 25)
"""

from __future__ import annotations

import json
import math
import random
import re
from dataclasses import dataclass, field
from typing import Any

from .. import properties as props

__all__ = ["random_model", "random_model_text", "to_toml", "min_items",
           "MAX_PRESSURE_BARG", "MIN_PRESSURE_BARG"]

MIN_PRESSURE_BARG = 1.0
MAX_PRESSURE_BARG = 100.0
_BAR = 1e5
_C0 = 273.15

#: Relative weights of the optional equipment types drawn after the essential items.
_WEIGHTS = {
    "user": 34, "letdown": 10, "turbine": 11, "boiler": 8, "vent": 10,
    "extraction_turbine": 5, "import": 4, "export": 4, "water_supply": 4,
}


def min_items(n_headers: int, max_depth: int = 5) -> int:
    """Fewest items :func:`random_model` can build for ``n_headers`` headers: per
    sub-plant a feedwater supply, a swing boiler and a steam user, a let-down into every
    lower header, and the deaerator; with the fewest sub-plants ``max_depth`` allows."""
    return 2 * math.ceil(n_headers / max_depth) + n_headers + 1


# ------------------------------------------------------------------- text of values
def _g(x: float, nd: int = 4) -> str:
    return f"{x:.{nd}g}"


def _barg(x: float) -> str:
    return f"{_g(x)} bar(g)"


def _th(x: float) -> str:
    return f"{_g(x)} t/h"


def _degc(x: float) -> str:
    return f"{x:.1f} degC"


def _t_h(text: str | None, default: float = 0.0) -> float:
    """The number of a flow written by :func:`_th`."""
    return default if text is None else float(text.split()[0])


def _pct(x: float) -> str:
    return f"{_g(100 * x, 3)} %"


@dataclass
class _Header:
    name: str
    sub: int
    level: int
    p_barg: float
    p_abs: float
    t_sat_c: float
    t_est_c: float = 0.0          # rough steam temperature, for sizing only
    demand: float = 0.0           # t/h of users on this header


@dataclass
class _Sub:
    index: int
    headers: list[_Header]
    supply: str = ""
    supply_p_barg: float = 0.0
    demand: float = 0.0           # t/h, estimated steam the sub-plant must raise
    boiler_t_c: float = 0.0


@dataclass
class _Builder:
    rng: random.Random
    p_atm: float
    slack: float
    doc: dict = field(default_factory=dict)
    subs: list[_Sub] = field(default_factory=list)
    by_name: dict[str, _Header] = field(default_factory=dict)
    counters: dict[str, int] = field(default_factory=dict)
    # per header: swing groups {priority: [item dicts]} and used absorber priorities
    swing: dict[str, dict[int, list[dict]]] = field(default_factory=dict)
    absorb: dict[str, set[int]] = field(default_factory=dict)
    supplies: list[tuple[str, float, int]] = field(default_factory=list)  # name, barg, sub
    has_da: bool = False
    essential: set[str] = field(default_factory=set)

    # --------------------------------------------------------------- helpers
    def name(self, prefix: str) -> str:
        self.counters[prefix] = self.counters.get(prefix, 0) + 1
        return f"{prefix}{self.counters[prefix]}"

    def add(self, table: str, item: dict) -> dict:
        self.doc.setdefault(table, []).append(item)
        return item

    def t_sat_c(self, p_barg: float) -> float:
        return props.t_sat(p_barg * _BAR + self.p_atm) - _C0

    def swing_priority(self, header: str, item: dict, join: float = 0.25) -> None:
        """Give ``item`` a priority on ``header``: a new one, or (with probability
        ``join``) that of an existing group, whose members then all get shares."""
        groups = self.swing.setdefault(header, {})
        if groups and self.rng.random() < join:
            prio = self.rng.choice(sorted(groups))
        else:
            free = [p for p in range(1, 100) if p not in groups]
            prio = self.rng.choice(free[:8])
        groups.setdefault(prio, []).append(item)
        item["priority"] = prio

    def absorber_priority(self, header: str, item: dict) -> None:
        used = self.absorb.setdefault(header, set())
        free = [p for p in range(1, 100) if p not in used]
        prio = self.rng.choice(free[:6])
        used.add(prio)
        item["priority"] = prio

    def finish_shares(self) -> None:
        """Shares for every group of equal priority; where the members' minimum and
        maximum flows leave the group no range at those shares, drop the minima."""
        for groups in self.swing.values():
            for members in groups.values():
                if len(members) < 2:
                    continue
                shares = [self.rng.uniform(0.1, 0.9) for _ in members]
                for it, sh in zip(members, shares):
                    it["share"] = _pct(sh)
                total = sum(float(it["share"].split()[0]) for it in members)
                lo_g, hi_g = 0.0, math.inf
                for it in members:
                    w = float(it["share"].split()[0]) / total
                    lo_key, hi_key = ("min_steam", "max_steam") if "min_steam" in it or \
                        "max_steam" in it else ("min_flow", "max_flow")
                    lo_g = max(lo_g, _t_h(it.get(lo_key)) / w)
                    hi_g = min(hi_g, _t_h(it.get(hi_key), math.inf) / w)
                if lo_g > hi_g * (1 - 1e-6):
                    for it in members:
                        it.pop("min_steam", None)
                        it.pop("min_flow", None)

    def sub_demand(self, sub: int) -> float:
        return max(1.0, self.subs[sub].demand)

    def lower_pairs(self, sub: _Sub) -> list[tuple[_Header, _Header]]:
        hs = sub.headers
        return [(a, b) for i, a in enumerate(hs) for b in hs[i + 1:]]

    def spray_supply(self, outlet_barg: float) -> str | None:
        """A water supply whose pressure is well above the desuperheater outlet."""
        ok = [n for n, p, _ in self.supplies if p >= outlet_barg + 4.0]
        return self.rng.choice(ok) if ok else None


# ------------------------------------------------------------------------ pressures
def _pressures(rng: random.Random, depth: int) -> list[float]:
    """``depth`` gauge pressures in [1, 100] bar(g), highest first, each at least 25 %
    below the one above it (before rounding to 0.1 bar)."""
    lo, span = math.log(MIN_PRESSURE_BARG), math.log(MAX_PRESSURE_BARG / MIN_PRESSURE_BARG)
    if depth == 1:
        return [round(math.exp(rng.uniform(math.log(3.0), lo + span)), 1)]
    gap = math.log(1.25)
    spare = span - gap * (depth - 1)
    used = rng.uniform(0, spare)                       # extra spread beyond the gaps
    cuts = sorted(rng.uniform(0, used) for _ in range(depth - 2))
    parts = [b - a for a, b in zip([0.0, *cuts], [*cuts, used])]
    v = lo + rng.uniform(0, spare - used)              # lowest header
    logs = [v]
    for part in parts:
        v += gap + part
        logs.append(v)
    out = [max(MIN_PRESSURE_BARG, min(MAX_PRESSURE_BARG, round(math.exp(x), 1)))
           for x in logs]
    return out[::-1]


def _partition(rng: random.Random, n: int, max_depth: int, max_subs: int) -> list[int]:
    """Split ``n`` headers into sub-plants of 1..``max_depth`` headers, at most
    ``max_subs`` of them (fewer sub-plants need fewer essential items)."""
    lo = math.ceil(n / max_depth)
    hi = min(max_subs, n if n <= 4 else math.ceil(n / 2))
    k = rng.randint(lo, max(lo, hi))
    sizes = [1] * k
    for _ in range(n - k):
        room = [i for i, s in enumerate(sizes) if s < max_depth]
        sizes[rng.choice(room)] += 1
    return sizes


# ---------------------------------------------------------------------------- build
def random_model(seed: int, n_headers: int = 4, n_items: int | None = None, *,
                 n_cases: int | None = None, max_depth: int = 5,
                 deaerator: bool | None = None, slack: float | None = None,
                 vent_every_header: bool = False) -> dict:
    """A random, valid plant model as a TOML-ready dict.

    Parameters
    ----------
    seed : int
        Seed of the generator; the same arguments always give the same model.
    n_headers : int
        Number of headers, 1 to 100.
    n_items : int, optional
        Number of equipment items besides the headers (water supplies, boilers,
        transfers, turbines, let-downs, users, vents, deaerator); at least
        :func:`min_items`. Default: about eight per header.
    n_cases : int, optional
        Number of operating cases (default: 0 to 3, drawn from the seed).
    max_depth : int
        Most headers in one sub-plant (pressure levels below each other).
    deaerator : bool, optional
        Whether the model has a deaerator (default: drawn, most models have one).
    slack : float, optional
        Capacity margin: limits are drawn around ``slack`` times the estimated demand.
        Below about 1.2 many cases are infeasible; above 2 few are. Default: drawn
        from 0.8 to 3.
    vent_every_header : bool
        Give every header a vent without a capacity limit (counted in ``n_items``), so
        that no header can have steam in excess: large networks then balance more
        often, since one infeasible sub-plant makes the whole case infeasible.

    Raises
    ------
    ValueError
        Sizes out of range.
    """
    if not 1 <= n_headers <= 100:
        raise ValueError(f"n_headers must lie in 1..100, got {n_headers}")
    if not 1 <= max_depth <= 10:
        raise ValueError(f"max_depth must lie in 1..10, got {max_depth}")
    rng = random.Random(seed)
    if n_items is None:
        n_items = max(8 * n_headers, min_items(n_headers, max_depth))
    if n_items < min_items(n_headers, max_depth):
        raise ValueError(f"n_items={n_items} is below min_items({n_headers}, {max_depth})"
                         f" = {min_items(n_headers, max_depth)}")
    has_da = rng.random() < 0.85 if deaerator is None else deaerator
    sizes = _partition(rng, n_headers, max_depth,
                       max_subs=(n_items - n_headers - (1 if has_da else 0)) // 2)
    need = 2 * len(sizes) + n_headers + (1 if has_da else 0)
    if vent_every_header:
        need += n_headers
        if n_items < need:
            raise ValueError(f"n_items={n_items}: a vent on every header needs at least "
                             f"{need} items here")
    p_atm = rng.choice([1.01325, 1.01325, 1.01325, rng.uniform(0.8, 1.03)]) * _BAR
    b = _Builder(rng=rng, p_atm=p_atm,
                 slack=rng.uniform(0.8, 3.0) if slack is None else slack)
    b.has_da = has_da
    b.doc["format_version"] = 1
    b.doc["site"] = {"name": f"Synthetic plant {seed}",
                     "atmospheric_pressure": f"{p_atm / _BAR:.6g} bar(a)",
                     "currency": "EUR", "makeup_temperature": _degc(rng.uniform(2, 30))}
    b.doc["prices"] = {"fuel": f"{_g(rng.uniform(3, 15), 3)} EUR/GJ",
                       "electricity": f"{_g(rng.uniform(30, 150), 3)} EUR/MWh",
                       "makeup_water": f"{_g(rng.uniform(0.5, 3), 3)} EUR/t"}
    _headers(b, sizes)
    n_left = n_items - need
    counts = _draw_counts(b, n_left)
    _water_supplies(b, counts.pop("water_supply"))
    if has_da:
        _deaerator(b)
    for sub in b.subs:        # every sub-plant has a load: a plant of no users
        _user(b, sub)         # carries grams per second against its heat losses
    for _ in range(counts.pop("user")):
        _user(b)
    _size(b)
    _essentials(b)
    if vent_every_header:
        for h in b.by_name.values():
            vent = {"name": b.name("V"), "header": h.name}
            b.absorber_priority(h.name, vent)
            b.add("vent", vent)
    for kind, n in counts.items():
        for _ in range(n):
            _GENERATORS[kind](b)
    b.finish_shares()
    _pump_drive(b, random.Random(seed * 1_000_003 + 17))
    _drums(b, random.Random(seed * 1_000_003 + 29))
    _section_lines(b, random.Random(seed * 1_000_003 + 53))
    wet = random.Random(seed * 1_000_003 + 41)      # (a generator of its own again)
    for x in b.doc.get("extraction_turbine", []):
        if "condenser_pressure" in x and wet.random() < 0.3 \
                and "section_efficiencies" in x:
            x["moisture_correction"] = True             # Baumann rule on its sections
    _cases(b, rng.randint(0, 3) if n_cases is None else n_cases)
    return b.doc


def _section_lines(b: _Builder, rng: random.Random) -> None:
    """Now and then an extraction turbine's sections follow Willans lines instead of
    efficiencies: each line's slope 1 / (0.8 eta dh_is eta_mg), dh_is from the hottest
    steam of the plant at the section's inlet pressure (so that the line implies at
    most 0.8 eta, below 1, as validation asks), its no-load flow 1 to 4 % of the
    turbine's flow (from its own generator, like :func:`_pump_drive`)."""
    temps = [float(x["steam_temperature"].split()[0]) for x in b.doc.get("boiler", [])]
    temps += [float(x["steam_temperature"].split()[0])
              for x in b.doc.get("steam_transfer", []) if "steam_temperature" in x]
    for x in b.doc.get("extraction_turbine", []):
        if not temps or rng.random() >= 0.25:
            continue
        ps = [b.by_name[x["inlet"]].p_abs] + [b.by_name[e["header"]].p_abs
                                               for e in x["extractions"]]
        ps.append(float(x["condenser_pressure"].split()[0]) * _BAR
                  if "condenser_pressure" in x else b.by_name[x["exhaust"]].p_abs)
        etas = [float(e.split()[0]) / 100 for e in x["section_efficiencies"]]
        eta_mg = float(x["mechanical_efficiency"].split()[0]) / 100
        flow = _t_h(x.get("flow") or x.get("max_flow"), 20.0)
        m0s, ks = [], []
        for j, eta in enumerate(etas):
            t_in = max(max(temps) + _C0, props.t_sat(ps[j]) + 5)
            st = props.state_pt(ps[j], t_in)
            dh_is = st.h - props.state_ps(ps[j + 1], st.s).h
            ks.append(1.0 / (0.8 * eta * dh_is * eta_mg))
            m0s.append(flow * rng.uniform(0.01, 0.04))
        del x["section_efficiencies"]
        x.pop("moisture_correction", None)
        x["section_willans_no_load"] = [_th(m / 3.6) for m in m0s]
        x["section_willans_slope"] = [f"{_g(k * 3.6e6)} t/MWh" for k in ks]


def _drums(b: _Builder, rng: random.Random) -> None:
    """Now and then a boiler's drum pressure, some bar above its header (from its own
    generator, like :func:`_pump_drive`)."""
    for x in b.doc.get("boiler", []):
        if rng.random() < 0.3:
            p = b.by_name[x["header"]].p_barg
            x["drum_pressure"] = _barg(round(min(p + rng.uniform(0.5, 8), 200.0), 2))


def _pump_drive(b: _Builder, rng: random.Random) -> None:
    """Now and then a mechanical-drive turbine at fixed power drives the pump of a
    deaerator water supply instead (mode 'pump'). Drawn from its own generator, so the
    rest of the model is the one the seed gave before this existed."""
    if rng.random() < 0.5:
        return
    turbines = [t for t in b.doc.get("turbine", []) if t["drive"] == "mechanical"
                and t["mode"] == "fixed_power"]
    supplies = [w for w in b.doc.get("water_supply", []) if "pump_efficiency" in w]
    if not turbines or not supplies:
        return
    t, w = rng.choice(turbines), rng.choice(supplies)
    t["mode"] = "pump"
    for k in ("power", "max_flow", "min_flow"):
        t.pop(k, None)
    w["pump_turbine"] = t["name"]


def random_model_text(seed: int, n_headers: int = 4, n_items: int | None = None,
                      **kw) -> str:
    """:func:`random_model` as TOML text (a model file)."""
    head = (f"# Synthetic steamnet model: random_model({seed}, n_headers={n_headers}, "
            f"n_items={n_items}{''.join(f', {k}={v!r}' for k, v in kw.items())})\n"
            "# Generated test data (steamnet.testing.synth); no real plant.\n\n")
    return head + to_toml(random_model(seed, n_headers, n_items, **kw))


def _headers(b: _Builder, sizes: list[int]) -> None:
    for si, depth in enumerate(sizes):
        sub = _Sub(index=si, headers=[])
        for lvl, pg in enumerate(_pressures(b.rng, depth)):
            h = _Header(name=f"S{si + 1:02d}-{lvl + 1}", sub=si, level=lvl, p_barg=pg,
                        p_abs=pg * _BAR + b.p_atm, t_sat_c=b.t_sat_c(pg))
            h.t_est_c = h.t_sat_c + 20
            sub.headers.append(h)
            b.by_name[h.name] = h
            b.add("header", {"name": h.name, "pressure": _barg(pg)})
        top = sub.headers[0]
        sub.boiler_t_c = min(540.0, top.t_sat_c + b.rng.uniform(30, 220))
        top.t_est_c = sub.boiler_t_c
        b.subs.append(sub)


def _draw_counts(b: _Builder, n: int) -> dict[str, int]:
    deep = any(len(s.headers) > 1 for s in b.subs)
    kinds = [k for k in _WEIGHTS if deep or k not in ("letdown", "turbine",
                                                       "extraction_turbine")]
    counts = {k: 0 for k in _WEIGHTS}
    weights = [_WEIGHTS[k] for k in kinds]
    for k in b.rng.choices(kinds, weights, k=n):
        counts[k] += 1
    return counts


def _water_supplies(b: _Builder, n_extra: int) -> None:
    for sub in b.subs:
        top = sub.headers[0]
        p = round(top.p_barg + b.rng.uniform(6, 25), 1)
        sub.supply, sub.supply_p_barg = _supply(b, p, sub.index, from_da=b.has_da and (
            sub.index == 0 or b.rng.random() < 0.5))
    for _ in range(n_extra):   # extra spray supplies, at a pressure within a sub-plant
        sub = b.rng.choice(b.subs)
        h = b.rng.choice(sub.headers)
        _supply(b, round(h.p_barg + b.rng.uniform(4.5, 15), 1), sub.index,
                from_da=b.has_da and b.rng.random() < 0.6)


def _supply(b: _Builder, p_barg: float, sub: int, *, from_da: bool) -> tuple[str, float]:
    n = b.name("W")
    item = {"name": n, "source": "deaerator" if from_da else "external",
            "pressure": _barg(p_barg)}
    if from_da:
        if b.rng.random() < 0.6:
            item["pump_efficiency"] = _pct(b.rng.uniform(0.4, 0.85))
    else:
        t_max = min(150.0, b.t_sat_c(p_barg) - 10)
        item["temperature"] = _degc(b.rng.uniform(15, t_max))
    b.add("water_supply", item)
    b.supplies.append((n, p_barg, sub))
    return n, p_barg


def _deaerator(b: _Builder) -> None:
    h = b.subs[0].headers[-1]
    p = round(b.rng.uniform(0.1, min(2.5, 0.8 * h.p_barg)), 2)
    b.add("deaerator", {"name": "DA", "header": h.name, "pressure": _barg(p),
                        "vent_fraction": _pct(b.rng.uniform(0, 0.005))})


def _user(b: _Builder, essential: _Sub | None = None) -> None:
    sub = essential or b.rng.choice(b.subs)
    h = b.rng.choice(sub.headers)
    item = {"name": b.name("U"), "header": h.name}
    if b.rng.random() < 0.2:
        mw = b.rng.uniform(0.3, 15)
        item["duty"] = f"{_g(mw)} MW"
        flow = mw * 3.6 / 2.1          # t/h, a latent heat of about 2.1 MJ/kg
    else:
        flow = b.rng.uniform(1.0 if essential else 0.3, 40)
        item["demand"] = _th(flow)
    if b.has_da and b.rng.random() < 0.5:
        item["condensate_return"] = _pct(b.rng.uniform(0.2, 0.95))
        # returned condensate is liquid, below saturation at its header
        hi = min(115.0, b.t_sat_c(h.p_barg) - 1.0)
        item["condensate_temperature"] = _degc(b.rng.uniform(min(50.0, hi - 10.0), hi))
    if essential is None and b.rng.random() < 0.05:
        item["in_service"] = False
    else:
        sub.demand += flow
        h.demand += flow
    b.add("user", item)


def _size(b: _Builder) -> None:
    """Estimated steam each sub-plant raises: its users, plus the deaerator's heating
    steam (about 15 % of the feedwater it serves) in the first sub-plant; and header heat
    losses of up to 1.5 % of the energy of the steam a header carries (users on it and
    below it), as insulated mains lose."""
    if b.has_da:
        total = sum(s.demand for s in b.subs)
        b.subs[0].demand += 0.15 * total
        b.subs[0].headers[-1].demand += 0.15 * total
    for item in b.doc["header"]:
        if b.rng.random() < 0.5:
            item["heat_loss"] = _heat_loss(b, b.by_name[item["name"]])


def _heat_loss(b: _Builder, h: _Header) -> str:
    sub = b.subs[h.sub]
    carried = max(0.5, sum(x.demand for x in sub.headers[h.level:]))    # t/h
    return f"{_g(b.rng.uniform(0, 0.015) * carried / 3.6 * 2.8e3, 3)} kW"


def _essentials(b: _Builder) -> None:
    for sub in b.subs:
        d = b.sub_demand(sub.index)
        top = sub.headers[0]
        boiler = {"name": b.name("B"), "header": top.name, "kind": "fired",
                  "steam_temperature": _degc(sub.boiler_t_c), "feedwater": sub.supply,
                  "efficiency": _pct(b.rng.uniform(0.75, 0.93)), "mode": "swing",
                  "blowdown": _pct(b.rng.uniform(0, 0.05))}
        if b.rng.random() < 0.7:
            boiler["max_steam"] = _th(d * b.slack * b.rng.uniform(0.8, 1.6))
        if b.rng.random() < 0.3:
            boiler["min_steam"] = _th(d * b.rng.uniform(0.02, 0.2))
        b.swing_priority(top.name, boiler, join=0.0)
        b.add("boiler", boiler)
        b.essential.add(boiler["name"])
        for up, lo in zip(sub.headers, sub.headers[1:]):
            item = _letdown_item(b, up, lo, mode="auto")
            b.essential.add(item["name"])


def _letdown_item(b: _Builder, up: _Header, lo: _Header, *, mode: str) -> dict:
    d = b.sub_demand(lo.sub)
    item = {"name": b.name("L"), "inlet": up.name, "outlet": lo.name, "mode": mode}
    if mode == "fixed_flow":
        item["flow"] = _th(d * b.rng.uniform(0.01, 0.2))
    elif mode == "auto":
        b.swing_priority(lo.name, item)
        if b.rng.random() < 0.2:
            item["min_flow"] = _th(d * b.rng.uniform(0.0, 0.05))
    if mode != "fixed_flow" and b.rng.random() < 0.7:
        item["max_flow"] = _th(d * b.slack * b.rng.uniform(0.5, 1.5))
    supply = b.spray_supply(lo.p_barg)
    if supply is not None and b.rng.random() < 0.75:
        ds: dict[str, Any] = {"spray_supply": supply}
        if b.rng.random() < 0.6:
            ds["approach"] = f"{_g(b.rng.uniform(5, 40), 3)} K"
        else:
            ds["outlet_temperature"] = _degc(lo.t_sat_c + b.rng.uniform(5, 60))
        if b.rng.random() < 0.5:
            ds["max_spray"] = _th(d * b.rng.uniform(0.05, 0.5))
        item["desuperheater"] = ds
        lo.t_est_c = min(lo.t_est_c, lo.t_sat_c + 20)
    b.add("letdown", item)
    return item


def _any_pair(b: _Builder) -> tuple[_Header, _Header]:
    """A higher and a lower header: within a sub-plant, now and then across two."""
    deep = [s for s in b.subs if len(s.headers) > 1]
    if len(b.subs) > 1 and b.rng.random() < 0.15:
        a, c = b.rng.sample(b.subs, 2)
        up = b.rng.choice(a.headers)
        lows = [h for h in c.headers if h.p_barg <= up.p_barg / 1.25]
        if lows:
            return up, b.rng.choice(lows)
    return b.rng.choice(b.lower_pairs(b.rng.choice(deep)))


def _letdown(b: _Builder) -> None:
    up, lo = _any_pair(b)
    mode = b.rng.choices(["auto", "fixed_flow", "closed"], [75, 15, 10])[0]
    _letdown_item(b, up, lo, mode=mode)


def _dh_isentropic(b: _Builder, up: _Header, p_out_abs: float) -> float:
    """Isentropic enthalpy drop [J/kg] from the estimated state of ``up``."""
    t_in = max(up.t_est_c, up.t_sat_c + 5) + _C0
    st = props.state_pt(up.p_abs, t_in)
    return st.h - props.state_ps(p_out_abs, st.s).h


def _turbine(b: _Builder) -> None:
    up, lo = _any_pair(b)
    d = b.sub_demand(lo.sub)
    mode = b.rng.choices(["swing", "fixed_flow", "fixed_power", "tripped"],
                         [35, 30, 25, 10])[0]
    item: dict[str, Any] = {"name": b.name("T"), "inlet": up.name, "outlet": lo.name,
                            "drive": b.rng.choice(["generator", "mechanical"])}
    eta = b.rng.uniform(0.45, 0.85)
    eta_mg = b.rng.uniform(0.93, 0.99)
    dh = _dh_isentropic(b, up, lo.p_abs) * eta
    if b.rng.random() < 0.75:
        item["isentropic_efficiency"] = _pct(eta)
    else:
        # Willans line: steam = no-load steam + slope x output; the slope is the steam
        # rate of the part-load increment, above the ideal 1 / (eta dh)
        slope = 1.0 / (dh * eta_mg) * b.rng.uniform(1.0, 1.3)      # kg/J
        item["willans_no_load"] = _th(d * b.rng.uniform(0.005, 0.03))
        item["willans_slope"] = f"{_g(slope * 3.6e6)} t/MWh"     # kg/J -> t/MWh
    item["mechanical_efficiency"] = _pct(eta_mg)
    if item["drive"] == "generator":
        item["generator_efficiency"] = _pct(b.rng.uniform(0.94, 0.99))
    flow = d * b.rng.uniform(0.03, 0.4)
    item["mode"] = mode
    if mode == "fixed_flow":
        item["flow"] = _th(flow)
    elif mode == "fixed_power":
        item["power"] = f"{_g(flow / 3.6 * dh * eta_mg / 1e3)} kW"
    if mode == "swing":
        b.swing_priority(lo.name, item)
        if b.rng.random() < 0.3:
            item["min_flow"] = _th(flow * b.rng.uniform(0, 0.5))
    if b.rng.random() < 0.6:
        item["max_flow"] = _th(flow * b.rng.uniform(1.05, 3) * max(1.0, b.slack))
    b.add("turbine", item)


def _extraction_turbine(b: _Builder) -> None:
    deep = [s for s in b.subs if len(s.headers) > 1]
    sub = b.rng.choice(deep)
    i = b.rng.randrange(len(sub.headers) - 1)
    up = sub.headers[i]
    lower = sub.headers[i + 1:]
    condensing = b.rng.random() < 0.6
    exhaust = None if condensing else b.rng.choice(lower)
    between = [h for h in lower if exhaust is None or h.p_barg > exhaust.p_barg]
    ext_h = sorted(b.rng.sample(between, b.rng.randint(0, min(3, len(between)))),
                   key=lambda h: -h.p_barg)
    d = b.sub_demand(sub.index)
    flow = d * b.rng.uniform(0.05, 0.4)
    name = b.name("X")
    item: dict[str, Any] = {"name": name, "inlet": up.name}
    exts = []
    for h in ext_h:
        e: dict[str, Any] = {"header": h.name}
        if b.rng.random() < 0.75:
            e["mode"] = "swing"
            b.swing_priority(h.name, e)
            if b.rng.random() < 0.5:
                e["max_flow"] = _th(flow * b.rng.uniform(0.3, 1.0))
        else:
            e["mode"] = "fixed"
            e["flow"] = _th(flow * b.rng.uniform(0.05, 0.3))
        exts.append(e)
    item["extractions"] = exts
    if condensing:
        p_c = b.rng.uniform(0.05, 0.25)
        item["condenser_pressure"] = f"{_g(p_c, 3)} bar(a)"
        p_end = p_c * _BAR
        if not b.has_da:
            item["condensate_return"] = "0 %"      # the default returns it all
        elif b.rng.random() < 0.8:
            item["condensate_return"] = _pct(b.rng.uniform(0.5, 1.0))
            if b.rng.random() < 0.5:
                # below saturation at the condenser (subcooled by up to 15 K)
                t_sat = props.t_sat(p_end) - _C0
                item["condensate_temperature"] = _degc(b.rng.uniform(
                    max(20.0, t_sat - 15.0), t_sat - 0.5))
    else:
        item["exhaust"] = exhaust.name
        p_end = exhaust.p_abs
    etas = [b.rng.uniform(0.6, 0.85) for _ in range(len(exts) + 1)]
    item["section_efficiencies"] = [_pct(e) for e in etas]
    item["mode"] = b.rng.choices(["fixed_power", "fixed_flow", "tripped"], [55, 35, 10])[0]
    eta_mg = b.rng.uniform(0.93, 0.98)
    item["mechanical_efficiency"] = _pct(eta_mg)
    if item["mode"] == "fixed_flow":
        item["flow"] = _th(flow)
    elif item["mode"] == "fixed_power":
        dh = _dh_isentropic(b, up, p_end) * sum(etas) / len(etas)
        item["power"] = f"{_g(0.6 * flow / 3.6 * dh * eta_mg / 1e3)} kW"
    if b.rng.random() < 0.5:
        item["max_flow"] = _th(flow * b.rng.uniform(1.1, 3) * max(1.0, b.slack))
    if condensing and b.rng.random() < 0.5:
        item["min_exhaust_flow"] = _th(flow * b.rng.uniform(0.0, 0.1))
    b.add("extraction_turbine", item)


def _boiler(b: _Builder) -> None:
    sub = b.rng.choice(b.subs)
    h = sub.headers[0] if b.rng.random() < 0.7 else b.rng.choice(sub.headers)
    supplies = [(n, p) for n, p, _ in b.supplies if p > h.p_barg + 1]
    supply, _ = b.rng.choice(supplies)
    d = b.sub_demand(sub.index)
    kind = b.rng.choice(["fired", "fired", "waste_heat"])
    t = min(540.0, h.t_sat_c + b.rng.uniform(20, 220))
    item: dict[str, Any] = {"name": b.name("B"), "header": h.name, "kind": kind,
                            "steam_temperature": _degc(t), "feedwater": supply,
                            "blowdown": _pct(b.rng.uniform(0, 0.05))}
    if kind == "fired":
        item["efficiency"] = _pct(b.rng.uniform(0.7, 0.93))
    lows = [x for x in sub.headers if x.p_barg < h.p_barg]
    if lows and b.rng.random() < 0.3:
        item["blowdown_flash_header"] = b.rng.choice(lows).name
    mode = b.rng.choices(["swing", "fixed", "off"], [45, 45, 10])[0]
    item["mode"] = mode
    cap = d * b.rng.uniform(0.1, 0.8) * max(1.0, b.slack)
    if mode == "fixed":
        steam = d * b.rng.uniform(0.05, 0.35)
        item["steam"] = _th(steam)
        if b.rng.random() < 0.6:
            item["max_steam"] = _th(steam * b.rng.uniform(1.0, 2.0))
    else:
        if mode == "swing":
            b.swing_priority(h.name, item)
        item["max_steam"] = _th(cap)
        if b.rng.random() < 0.3:
            item["min_steam"] = _th(cap * b.rng.uniform(0.0, 0.3))
    b.add("boiler", item)


def _transfer(b: _Builder, direction: str) -> None:
    """A steam import (a swing one supplies its header) or export (a swing one takes
    excess steam, as an absorber)."""
    sub = b.rng.choice(b.subs)
    h = b.rng.choice(sub.headers)
    d = b.sub_demand(sub.index)
    item: dict[str, Any] = {"name": b.name(direction[0].upper()), "header": h.name,
                            "direction": direction}
    if direction == "import":
        item["steam_temperature"] = _degc(h.t_sat_c + b.rng.uniform(5, 150))
    item["price"] = f"{_g(b.rng.uniform(2, 40), 3)} EUR/t"
    mode = b.rng.choices(["swing", "fixed", "off"], [50, 40, 10])[0]
    item["mode"] = mode
    if mode == "fixed":
        item["flow"] = _th(d * b.rng.uniform(0.01, 0.2))
    elif mode == "swing":
        if direction == "import":
            b.swing_priority(h.name, item)
        else:
            b.absorber_priority(h.name, item)
        if b.rng.random() < 0.8:
            item["max_flow"] = _th(d * b.rng.uniform(0.05, 0.5))
    b.add("steam_transfer", item)


def _vent(b: _Builder) -> None:
    sub = b.rng.choice(b.subs)
    h = b.rng.choice(sub.headers)
    item: dict[str, Any] = {"name": b.name("V"), "header": h.name}
    b.absorber_priority(h.name, item)
    if b.rng.random() < 0.6:
        item["max_flow"] = _th(b.sub_demand(sub.index) * b.rng.uniform(0.05, 1.0))
    b.add("vent", item)


_GENERATORS = {
    "letdown": _letdown, "turbine": _turbine, "boiler": _boiler, "vent": _vent,
    "extraction_turbine": _extraction_turbine,
    "import": lambda b: _transfer(b, "import"), "export": lambda b: _transfer(b, "export"),
}


def _cases(b: _Builder, n: int) -> None:
    """Cases whose changes keep the model valid: demands, make-up temperature, heat
    losses, and non-essential equipment out of service."""
    rng = b.rng
    options = []
    for u in b.doc.get("user", []):
        key = "demand" if "demand" in u else "duty"
        options.append(("user", u["name"], key))
    for kind in ("turbine", "extraction_turbine"):
        for t in b.doc.get(kind, []):
            options.append((kind, t["name"], "mode"))
    for x in b.doc.get("boiler", []):
        if x["name"] not in b.essential:
            options.append(("boiler", x["name"], "mode"))
    for x in b.doc.get("letdown", []):
        if x["name"] not in b.essential:
            options.append(("letdown", x["name"], "mode"))
    for x in b.doc.get("vent", []):
        options.append(("vent", x["name"], "in_service"))
    for x in b.doc.get("header", []):
        options.append(("header", x["name"], "heat_loss"))
    options.append(("site", "", "makeup_temperature"))
    for i in range(n):
        changes: dict[str, Any] = {}
        for table, name, fld in rng.sample(options, min(len(options), rng.randint(1, 4))):
            if table == "site":
                changes["site.makeup_temperature"] = _degc(rng.uniform(2, 35))
                continue
            key = f"{table}.{name}.{fld}"
            if table == "user":
                changes[key] = (_th(rng.uniform(0.3, 45)) if fld == "demand"
                                else f"{_g(rng.uniform(0.2, 15))} MW")
            elif table in ("turbine", "extraction_turbine"):
                changes[key] = "tripped"
            elif table == "boiler":
                changes[key] = "off"
            elif table == "letdown":
                changes[key] = "closed"
            elif table == "vent":
                changes[key] = False
            else:
                changes[key] = _heat_loss(b, b.by_name[name])
        case: dict[str, Any] = {"name": f"case-{i + 1}",
                                "description": "random changes (synthetic)"}
        if i and rng.random() < 0.3:
            case["based_on"] = f"case-{rng.randint(1, i)}"
        case["changes"] = changes
        b.add("case", case)


# ----------------------------------------------------------------------- TOML text
_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(k: str) -> str:
    return k if _BARE_KEY.match(k) else json.dumps(k)


def _scalar(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return {math.inf: "inf", -math.inf: "-inf"}.get(v, "nan")
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)     # a JSON string is a valid TOML basic string
    if isinstance(v, list):
        return "[" + ", ".join(_scalar(x) for x in v) + "]"
    raise TypeError(f"cannot write {type(v).__name__} as a TOML value")


def _is_table_list(v: Any) -> bool:
    return isinstance(v, list) and bool(v) and all(isinstance(x, dict) for x in v)


def _table_body(path: str, d: dict, out: list[str]) -> None:
    subs = []
    for k, v in d.items():
        if isinstance(v, dict) or _is_table_list(v):
            subs.append((k, v))
        else:
            out.append(f"{_key(k)} = {_scalar(v)}")
    for k, v in subs:
        p = f"{path}.{_key(k)}" if path else _key(k)
        if isinstance(v, dict):
            out.append(f"\n[{p}]")
            _table_body(p, v, out)
        else:
            for row in v:
                out.append(f"\n[[{p}]]")
                _table_body(p, row, out)


def to_toml(doc: dict) -> str:
    """TOML text of a dict of plain values (str, int, float, bool, lists, dicts), as
    :func:`random_model` returns; ``tomllib.loads(to_toml(d)) == d``."""
    out: list[str] = []
    _table_body("", doc, out)
    return "\n".join(out).lstrip("\n") + "\n"
