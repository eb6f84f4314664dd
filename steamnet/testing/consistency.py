"""Check a solved case yourself: every balance recomputed from the result tables.

:func:`check_case` takes a model and one :class:`~steamnet.solve.CaseResult` and
recomputes, from the result tables only (``equipment``, ``headers``, ``streams``) and the
model as written, with :mod:`steamnet.properties` for the states the tables do not carry
(imported steam, blowdown flash, make-up, condensate returns, the deaerator's saturated
outlets, spray water without a stream row):

* every header's mass and energy balance, and the inflow and outflow the headers table
  reports for it;
* each let-down station's mass and energy balance (steam + spray = outlet);
* each boiler's feedwater (steam + blowdown, blowdown its fraction of the feedwater) and
  each duty-based user's flow (duty / (h_header - h_f));
* the deaerator's mass and energy balance, its feedwater (what the boilers and sprays it
  supplies draw) and its vent;
* the plant water balance (make-up, external water and imports in; vents, exports, lost
  condensate, blowdown not flashed and the deaerator vent out);
* each turbine driving a pump: its power is the pump's (v dP / eta times the water the
  supply delivers);
* no negative flow, and every flow within the limits of its item (its minimum when it
  swings, its maximum, its fixed value); an item that does not run (its row's
  ``service``) carries no flow.

The equations are those of docs/method.md ("Equipment equations", "The balance"),
written out again here; nothing of the solver (:mod:`steamnet.solver`) is used, so a
result table edited by hand, or damaged on its way, is caught. It returns a list of
problems, each naming the header or the item, so every problem of a case is reported at
once; an empty list means all is well.

>>> import steamnet
>>> from steamnet.testing import check_study
>>> study = steamnet.solve_cases(steamnet.load_model("cases/orlewick.toml"))
>>> check_study(study)
[]
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from .. import properties as props

TH = 3.6                  # kg/s -> t/h
#: Flows may sit this far below zero [kg/s]: the solver stops when no flow moves by more
#: than 1e-10 kg/s (docs/method.md, "The balance"), so a derived flow can end within
#: rounding of zero on the wrong side.
NEGATIVE_FLOW = 1e-9
#: A flow is within its limit when it is within this of it, relative to the larger of
#: 1 kg/s and the limit [-] (the solver's convergence, as above, with a margin).
LIMIT_TOL = 1e-7
#: The ``service`` of the equipment rows of running items (docs/results.md).
_RUNS = "in service"
#: The flow columns of the equipment table, none of which may be negative.
_FLOW_COLUMNS = ("flow_t_h", "spray_t_h", "steam_out_t_h", "exhaust_t_h", "makeup_t_h",
                 "feedwater_t_h", "vent_t_h", "blowdown_t_h", "condensate_return_t_h")
#: The power and duty columns, zero for an item that does not run.
_POWER_COLUMNS = ("power_kw", "internal_power_kw", "shaft_power_kw", "duty_mw", "fuel_mw",
                  "condenser_duty_mw")


def check_study(study, *, rel: float = 1e-6) -> list[str]:
    """Problems found in every solved case of ``study`` (a
    :class:`~steamnet.solve.StudyResult`), each prefixed with its case; an empty list
    when all is well. Cases that did not solve are reported by their status already and
    have no balance to check; they are passed over."""
    out: list[str] = []
    for r in study.cases:
        if _status(r) != "solved":
            continue
        out.extend(f"case '{r.case}': {p}" for p in check_case(study.model, r, rel=rel))
    return out


def check_case(model, case_result, *, rel: float = 1e-6) -> list[str]:
    """Problems found in the solved case ``case_result`` of ``model`` (the model the case
    came from, or that case's own model); an empty list when every check passes.

    Balances must close to ``rel`` of their throughput (1e-6 relative: the closure every
    solved case meets, docs/method.md, "The balance"). A case that is not solved, or was
    solved without its tables (``tables=False``), gives one problem saying so.
    """
    r = case_result
    if _status(r) != "solved":
        return [f"status {_status(r)}: no balance to check ({r.message})"]
    if r.equipment is None or not len(r.equipment) or r.headers is None \
            or not len(r.headers):
        return ["no result tables to check (solved with tables=False?)"]
    return _Check(_case_model(model, r.case), r, rel).run()


def _status(r) -> str:
    return str(getattr(r.status, "value", r.status))


def _case_model(model, case: str):
    if model.case_name == case or case not in {c.name for c in model.cases}:
        return model
    return model.for_case(case)


# ------------------------------------------------------------------ properties
def _liquid_h(t: float, p_min: float) -> float:
    """Liquid water at ``t`` [K], at ``p_min`` or just above its saturation pressure
    (0.1 % plus 100 Pa) if hotter than saturation there: how the model states a returned
    condensate [J/kg]."""
    p = p_min
    if t < props.T_CRIT - 1:
        p = max(p_min, props.p_sat(t) * 1.001 + 100.0)
    return props.state_pt(p, t).h


def _flash_fraction(p_drum: float, p_low: float) -> float:
    """Share of a blowdown (saturated liquid at ``p_drum``) that flashes at ``p_low``."""
    hi, lo = props.saturation(p_drum), props.saturation(p_low)
    return max(0.0, (hi.hf - lo.hf) / lo.hfg)


@dataclass
class _Header:
    m_in: float = 0.0
    m_out: float = 0.0
    e_in: float = 0.0
    e_abs: float = 0.0          # sum of |m h| of the inflows: the energy scale
    ins: list = field(default_factory=list)


class _Check:
    """One case: the tables read once into rows, then each balance in turn."""

    def __init__(self, model, r, rel: float):
        self.m, self.rel, self.probs = model, rel, []
        rows = r.equipment.to_dict(orient="records")
        # an item that does not run in the case keeps its row, at zero flow
        # (docs/results.md); the balances are those of the running items
        self.idle = [row for row in rows if row.get("service", _RUNS) != _RUNS]
        self.rows = [row for row in rows if row.get("service", _RUNS) == _RUNS]
        self.hdr = {h["header"]: h for h in r.headers.to_dict(orient="records")}
        self.H = {n: h["h_kj_kg"] * 1e3 for n, h in self.hdr.items()}
        self.P = {n: h.pressure for n, h in model.headers.items()}
        streams = r.streams if r.streams is not None else ()
        self.spray_h = ({s["to"]: s["h_kj_kg"] * 1e3
                         for s in streams.to_dict(orient="records")
                         if s["stream"].endswith(" spray")} if len(streams) else {})
        das = list(model.table("deaerator").values())
        self.da = das[0] if das else None

    # ---------------------------------------------------------------- helpers
    def close(self, a: float, b: float, scale: float, what: str,
              unit: str = "kg/s") -> None:
        """Report ``what`` unless ``a`` and ``b`` agree to ``rel`` of ``scale``."""
        if not abs(a - b) <= self.rel * max(abs(scale), 1e-9):
            self.probs.append(f"{what}: {a:.9g} {unit} against {b:.9g} {unit} (difference "
                              f"{a - b:.3g} {unit}; {self.rel:g} of {abs(scale):.4g} "
                              "allowed)")

    def of(self, *types):
        return [row for row in self.rows if row["type"] in types]

    def item(self, row):
        table = {"import": "steam_transfer", "export": "steam_transfer"}.get(row["type"],
                                                                            row["type"])
        return self.m.table(table).get(row["item"])

    def supply(self, name: str):
        return self.m.table("water_supply")[name]

    def supply_h(self, name: str) -> float:
        """Enthalpy of a water supply (docs/method.md, "water supply") [J/kg]."""
        ws = self.supply(name)
        if ws.source == "external":
            return props.h_pt(ws.pressure, ws.temperature)
        sd = props.saturation(self.da.pressure)
        pump = 0.0
        if ws.pump_efficiency is not None:
            pump = sd.vf * (ws.pressure - self.da.pressure) / ws.pump_efficiency
        return sd.hf + pump

    # ---------------------------------------------------------------- checks
    def run(self) -> list[str]:
        self.idle_items()
        self.flows_not_negative()
        self.limits()
        self.headers()
        self.letdowns()
        self.boilers_and_users()
        self.deaerator_and_water()
        self.pump_drives()
        return self.probs

    def pump_drives(self) -> None:
        """A turbine driving a supply's pump delivers that pump's power: v dP / eta
        times the feedwater and spray the supply delivers."""
        turbines = {row["item"]: row for row in self.of("turbine")}
        for n, ws in self.m.table("water_supply").items():
            row = turbines.get(ws.pump_turbine)
            if row is None:
                continue
            sd = props.saturation(self.da.pressure)
            w = sd.vf * (ws.pressure - self.da.pressure) / ws.pump_efficiency
            m = sum(r["feedwater_t_h"] for r in self.of("boiler")
                    if self.item(r).feedwater == n) / TH
            for r in self.of("letdown"):
                d = self.item(r).desuperheater
                if d is not None and d.spray_supply == n:
                    m += r["spray_t_h"] / TH
            self.close(row["power_kw"] * 1e3, w * m, w * m,
                       f"turbine '{row['item']}' power against the pump it drives", "W")

    def idle_items(self) -> None:
        """An item that does not run carries no flow, and is idle in the model."""
        for row in self.idle:
            what = f"{row['type']} '{row['item']}'"
            for col in ("flow_t_h",) + _FLOW_COLUMNS + _POWER_COLUMNS:
                v = row.get(col)
                if v is not None and not math.isnan(v) and v != 0:
                    self.probs.append(f"{what} is {row['service']} but carries "
                                      f"{col} {v:.9g}")
            it = self.item(row) if row["type"] != "extraction" else \
                self.m.table("extraction_turbine").get(row["from"])
            idle = it is not None and (not getattr(it, "in_service", True) or getattr(
                it, "mode", None) in ("off", "tripped", "closed"))
            if not idle:
                self.probs.append(f"{what} is {row['service']} in the table but runs "
                                  "in the model")

    def flows_not_negative(self) -> None:
        for row in self.rows:
            for col in _FLOW_COLUMNS:
                v = row.get(col)
                if v is not None and not math.isnan(v) and v / TH < -NEGATIVE_FLOW:
                    self.probs.append(f"{row['type']} '{row['item']}': negative {col} "
                                      f"{v:.9g}")

    def limits(self) -> None:
        for row in self.rows:
            it = self.item(row) if row["type"] != "extraction" else None
            m = row["flow_t_h"] / TH
            what = f"{row['type']} '{row['item']}'"
            typ = row["type"]
            if typ == "boiler":
                self.limit(what, m, it.min_steam if it.mode == "swing" else 0.0,
                           it.max_steam, it.steam if it.mode == "fixed" else None)
            elif typ in ("import", "export"):
                self.limit(what, m, it.min_flow if it.mode == "swing" else 0.0,
                           it.max_flow, it.flow if it.mode == "fixed" else None)
            elif typ == "turbine":
                self.limit(what, m, it.min_flow if it.mode in ("swing", "fixed_power", "pump")
                           else 0.0, it.max_flow,
                           it.flow if it.mode == "fixed_flow" else None)
            elif typ == "extraction_turbine":
                self.limit(what, m, it.min_flow, it.max_flow,
                           it.flow if it.mode == "fixed_flow" else None)
                self.limit(what + " exhaust", row["exhaust_t_h"] / TH, it.min_exhaust_flow,
                           it.max_exhaust_flow)
            elif typ == "extraction":
                turbine, header = row["item"].split("/", 1)
                e = next(x for x in self.m.table("extraction_turbine")[turbine].extractions
                         if x.header == header)
                self.limit(what, m, e.min_flow if e.mode == "swing" else 0.0, e.max_flow,
                           e.flow if e.mode == "fixed" else None)
            elif typ == "letdown":
                self.limit(what, m, it.min_flow if it.mode == "auto" else 0.0, it.max_flow,
                           it.flow if it.mode == "fixed_flow" else None)
            elif typ == "vent":
                self.limit(what, m, 0.0, it.max_flow)
            elif typ == "user" and it.duty is None:
                if not abs(m - it.demand) <= 1e-12 * max(1.0, it.demand):
                    self.probs.append(f"{what}: flow {m:.9g} kg/s is not its demand "
                                      f"{it.demand:.9g} kg/s")

    def limit(self, what, m, lo, hi, fixed=None) -> None:
        def off(limit):
            return LIMIT_TOL * max(1.0, abs(limit))
        if fixed is not None and not abs(m - fixed) <= off(fixed):
            self.probs.append(f"{what}: flow {m:.9g} kg/s is not its fixed "
                              f"{fixed:.9g} kg/s")
        if lo and m < lo - off(lo):
            self.probs.append(f"{what}: flow {m:.9g} kg/s below its minimum {lo:.9g} kg/s")
        if hi is not None and m > hi + off(hi):
            self.probs.append(f"{what}: flow {m:.9g} kg/s above its maximum {hi:.9g} kg/s")

    def header_flows(self) -> dict[str, _Header]:
        """Every header's inflows (flow, enthalpy) and outflows, from the tables."""
        bal = {n: _Header() for n in self.m.headers}

        def into(h, m, hh):
            b = bal[h]
            b.m_in += m
            b.e_in += m * hh
            b.e_abs += abs(m * hh)

        for row in self.rows:
            typ, frm, to = row["type"], row["from"], row["to"]
            if to in bal:
                if typ in ("boiler", "turbine", "extraction"):
                    into(to, row["flow_t_h"] / TH, row["h_out_kj_kg"] * 1e3)
                elif typ == "extraction_turbine":
                    into(to, row["exhaust_t_h"] / TH, row["h_out_kj_kg"] * 1e3)
                elif typ == "letdown":
                    into(to, row["steam_out_t_h"] / TH, row["h_out_kj_kg"] * 1e3)
                elif typ == "import":
                    t = self.item(row).steam_temperature
                    into(to, row["flow_t_h"] / TH, props.h_pt(self.P[to], t))
            if frm in bal and typ in ("turbine", "extraction_turbine", "letdown", "vent",
                                      "user", "deaerator", "export"):
                bal[frm].m_out += row["flow_t_h"] / TH
        for row, flash_to in self.flashes():
            into(flash_to, row["blowdown_t_h"] / TH * self.flash(row),
                 props.saturation(self.P[flash_to]).hg)
        return bal

    def flashes(self):
        """(boiler row, flash header) of every boiler whose blowdown flashes."""
        for row in self.of("boiler"):
            to = self.item(row).blowdown_flash_header
            if to is not None:
                yield row, to

    def flash(self, row) -> float:
        b = self.item(row)
        drum = b.drum_pressure if b.drum_pressure is not None else self.P[b.header]
        return _flash_fraction(drum, self.P[b.blowdown_flash_header])

    def headers(self) -> None:
        bal = self.header_flows()
        # a header carrying (next to) nothing closes to `rel` of a billionth of the
        # plant's throughput, not of its own rounding noise
        m_floor = 1e-9 * sum(b.m_in for b in bal.values())
        e_floor = 1e-9 * sum(b.e_abs for b in bal.values())
        for name, b in bal.items():
            row = self.hdr[name]
            what = f"header '{name}'"
            self.close(b.m_in, b.m_out, max(b.m_in, b.m_out, m_floor),
                       f"{what} mass balance")
            loss = row["heat_loss_kw"] * 1e3 if b.m_in > NEGATIVE_FLOW else 0.0
            self.close(b.e_in - loss, b.m_out * self.H[name], max(b.e_abs, e_floor),
                       f"{what} energy balance", "W")
            self.close(row["inflow_t_h"] / TH, b.m_in, max(b.m_in, m_floor),
                       f"{what} inflow of the headers table")
            self.close(row["outflow_t_h"] / TH, b.m_out, max(b.m_out, m_floor),
                       f"{what} outflow of the headers table")

    def letdowns(self) -> None:
        for row in self.of("letdown"):
            s = self.item(row)
            m, out = row["flow_t_h"] / TH, row["steam_out_t_h"] / TH
            spray = row["spray_t_h"] / TH if s.desuperheater is not None else 0.0
            what = f"letdown '{row['item']}'"
            self.close(m + spray, out, out, f"{what} mass balance")
            if s.desuperheater is None:
                h_w = 0.0
            elif row["item"] in self.spray_h:
                h_w = self.spray_h[row["item"]]
            else:
                h_w = self.supply_h(s.desuperheater.spray_supply)
            e_in = m * self.H[s.inlet] + spray * h_w
            self.close(e_in, out * row["h_out_kj_kg"] * 1e3, e_in,
                       f"{what} energy balance", "W")

    def boilers_and_users(self) -> None:
        for row in self.of("boiler"):
            b = self.item(row)
            fw, bd = row["feedwater_t_h"] / TH, row["blowdown_t_h"] / TH
            what = f"boiler '{row['item']}'"
            self.close(fw, row["flow_t_h"] / TH + bd, fw, f"{what} feedwater")
            self.close(bd, b.blowdown * fw, fw, f"{what} blowdown")
        for row in self.of("user"):
            u = self.item(row)
            if u.duty is not None:
                h = self.H[u.header] - props.saturation(self.P[u.header]).hf
                self.close(row["flow_t_h"] / TH * h, u.duty, u.duty,
                           f"user '{row['item']}' duty", "W")

    def returns(self):
        """(flow [kg/s], temperature [K] or None, condenser pressure) of every condensate
        returned to the deaerator, and the condensate lost [kg/s]."""
        back, lost = [], 0.0
        for row in self.of("user"):
            u = self.item(row)
            ret = row["condensate_return_t_h"] / TH
            lost += row["flow_t_h"] / TH - ret
            if ret > 0:
                back.append((ret, u.condensate_temperature, None))
        for row in self.of("extraction_turbine"):
            if row["to"] != "condenser":
                continue
            t = self.item(row)
            ex = row["exhaust_t_h"] / TH
            lost += ex * (1 - t.condensate_return)
            if t.condensate_return > 0:
                back.append((ex * t.condensate_return, t.condensate_temperature,
                             t.condenser_pressure))
        return back, lost

    def deaerator_and_water(self) -> None:
        back, lost = self.returns()
        external = 0.0          # water from outside the plant into boilers and sprays
        drawn = 0.0             # feedwater drawn from the deaerator
        for row in self.of("boiler"):
            fw = row["feedwater_t_h"] / TH
            if self.supply(self.item(row).feedwater).source == "external":
                external += fw
            else:
                drawn += fw
        for row in self.of("letdown"):
            d = self.item(row).desuperheater
            if d is None:
                continue
            if self.supply(d.spray_supply).source == "external":
                external += row["spray_t_h"] / TH
            else:
                drawn += row["spray_t_h"] / TH
        das = self.of("deaerator")
        makeup = da_vent = 0.0
        if self.da is not None and das:
            makeup, da_vent = self.deaerator(das[0], back, drawn)
        imports = sum(r["flow_t_h"] for r in self.of("import")) / TH
        out = sum(r["flow_t_h"] for r in self.of("vent", "export")) / TH
        blowdown = sum(r["blowdown_t_h"] for r in self.of("boiler")) / TH
        flash = sum(r["blowdown_t_h"] / TH * self.flash(r) for r, _ in self.flashes())
        w_in = makeup + external + imports
        w_out = out + lost + blowdown - flash + da_vent
        self.close(w_in, w_out, max(w_in, w_out), "plant water balance")

    def deaerator(self, row, back, drawn) -> tuple[float, float]:
        da, p = self.da, self.da.pressure
        what = f"deaerator '{row['item']}'"
        steam, makeup = row["flow_t_h"] / TH, row["makeup_t_h"] / TH
        fw, vent = row["feedwater_t_h"] / TH, row["vent_t_h"] / TH
        self.close(fw, drawn, fw, f"{what} feedwater (what the boilers and sprays draw)")
        self.close(vent, da.vent_fraction * fw, fw, f"{what} vent")
        h_mk = props.state_pt(max(p, 2 * props.P_MIN), self.m.site.makeup_temperature).h
        m_in = steam + makeup + sum(m for m, _, _ in back)
        e_in = steam * self.H[da.header] + makeup * h_mk
        for m, t, p_cond in back:
            e_in += m * (_liquid_h(t, p) if t is not None else props.saturation(p_cond).hf)
        sd = props.saturation(p)
        self.close(m_in, fw + vent, m_in, f"{what} mass balance")
        self.close(e_in, fw * sd.hf + vent * sd.hg, e_in, f"{what} energy balance", "W")
        return makeup, vent
