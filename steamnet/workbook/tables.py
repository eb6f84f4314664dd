"""The tables of each case's balance: case overview, headers, equipment, streams, and
any other unit-suffixed DataFrame (the studies)."""

from __future__ import annotations

import re
from typing import Callable, Iterable

import numpy as np
import pandas as pd

from . import style
from .columns import Column, col, format_for_unit
from .run import Run
from .sheet import Table

__all__ = ["overview_table", "case_frame_table", "frame_table", "HEADER_KEYS",
           "EQUIPMENT_KEYS", "STREAM_KEYS", "Quantity", "overview_quantities",
           "COST_NOTE", "average_cost_per_t"]

#: Column order of the headers sheet (solver columns, steamnet/solver/results.py).
HEADER_KEYS = ["header", "p_barg", "p_bara", "t_degc", "t_sat_degc", "superheat_k",
               "state", "h_kj_kg", "quality", "wet", "inflow_t_h", "outflow_t_h", "heat_loss_kw",
               "mass_residual_t_h", "energy_residual_kw"]

#: Column order of the equipment sheet: identity, the main quantities, then details.
EQUIPMENT_KEYS = ["item", "type", "from", "to", "mode", "service", "flow_t_h", "power_kw",
                  "duty_mw", "fuel_mw", "spray_t_h", "min_t_h", "max_t_h", "load_percent",
                  "limit", "t_out_degc", "t_set_degc", "setpoint_reachable",
                  "exhaust_quality", "quality_below_limit", "steam_out_t_h",
                  "shaft_power_kw", "internal_power_kw", "isentropic_efficiency",
                  "section_efficiencies_used",
                  "exhaust_t_h", "condenser_duty_mw", "h_out_kj_kg", "feedwater_t_h",
                  "blowdown_t_h", "drum_p_barg", "drum_pressure_from", "makeup_t_h", "vent_t_h", "condensate_return_t_h",
                  "drive", "group"]

STREAM_KEYS = ["stream", "from", "to", "medium", "flow_t_h", "p_bara", "t_degc",
               "h_kj_kg", "quality", "service"]


def _present(frames: Iterable[pd.DataFrame], keys: list[str]) -> list[str]:
    """``keys`` that some frame has, in ``keys`` order, then any others the frames have."""
    have: dict[str, None] = {}
    for f in frames:
        for k in f.columns:
            have.setdefault(str(k), None)
    known = [k for k in keys if k in have]
    extra = [k for k in have if k not in keys and k != "case"]
    return known + extra


def case_frame_table(run: Run, attr: str, keys: list[str], *, name: str, slug: str,
                     title: str, note: str, freeze_cols: int = 3) -> Table:
    """A long table of one result table of every case (headers, equipment, streams),
    with the case and its status in front. Rows stream case by case."""
    present = _present((getattr(c, attr) for c in run.cases), keys)
    cols = [col("case"), col("case_status")] + [col(k, currency=run.currency)
                                               for k in present]

    def rows():
        for c in run.cases:
            df = getattr(c, attr)
            if not len(df):
                continue
            head = [c.case, c.status]
            for values in df.reindex(columns=present).to_numpy(dtype=object).tolist():
                yield head + values
    bad = [c.case for c in run.cases if style.is_bad_status(c.status)]
    if bad:
        note += (f" Marked red: {len(bad)} case(s) that did not balance; their numbers "
                 "show where they stand, not a valid operating point.")
    return Table(name, slug, title, note, cols, rows, freeze_cols=freeze_cols)


# ------------------------------------------------------------------ overview
class Quantity:
    """One line of the case overview: a label with its unit and how to get the value."""

    def __init__(self, key: str, label: str, unit: str,
                 get: Callable[[object], object], kind: str = "num"):
        self.key, self.label, self.unit, self.get, self.kind = key, label, unit, get, kind

    @property
    def heading(self) -> str:
        return f"{self.label} [{self.unit}]" if self.unit else self.label


class _Boilers:
    """Each case's boiler rows (steam, fuel) by name, looked up once per case."""

    def __init__(self):
        self._case, self._rows = None, {}

    def get(self, c, name: str, key: str):
        if c is not self._case:
            eq = c.equipment
            rows = {}
            if len(eq):
                sel = eq[eq["type"] == "boiler"]
                for r in sel.reindex(columns=["item", "flow_t_h", "fuel_mw"]).to_dict(
                        "records"):
                    rows[r["item"]] = r
            self._case, self._rows = c, rows
        return self._rows.get(name, {}).get(key)


# Lines of the case overview taken from the case summary (steamnet.solve._summary).
_TOTALS = [
    ("power_generated_mw", "Power generated", "MW"),
    ("mechanical_power_mw", "Mechanical drive power", "MW"),
    ("import_t_h", "Steam imported", "t/h"), ("export_t_h", "Steam exported", "t/h"),
    ("spray_t_h", "Spray water", "t/h"), ("da_steam_t_h", "Deaerator steam", "t/h"),
    ("makeup_t_h", "Make-up water", "t/h"), ("vented_t_h", "Vented steam", "t/h"),
    ("condensate_returned_t_h", "Condensate returned", "t/h"),
    ("cost_per_h", "Operating cost, net of the power credit", "{cur}/h"),
    ("fuel_cost_per_h", "Cost part: fuel", "{cur}/h"),
    ("carbon_cost_per_h", "Cost part: CO2 of the fuel", "{cur}/h"),
    ("water_cost_per_h", "Cost part: make-up water", "{cur}/h"),
    ("import_cost_per_h", "Cost part: steam imported", "{cur}/h"),
    ("power_bought_per_h", "Cost part: power bought (pumps)", "{cur}/h"),
    ("export_credit_per_h", "Cost part: steam exported (credit, subtracted)", "{cur}/h"),
    ("power_credit_per_h", "Cost part: power generated (credit, subtracted)", "{cur}/h"),
]

#: The note that goes with every operating cost the workbook shows.
COST_NOTE = ("Operating cost is net of the power credit: fuel (and its CO2 at the carbon "
             "price, when the model gives one) + make-up water + steam imported + power "
             "bought for motor-driven pumps, less the steam exported and less the "
             "electric power generated, valued at the electricity price (above the site's "
             "power demand, when given, at the export price). The average cost of steam "
             "is that net cost divided by the steam raised.")


def average_cost_per_t(summary: dict, *, credit: bool = True) -> float | None:
    """The case's operating cost per tonne of steam raised (net of the power credit, or
    before it with ``credit=False``); None when no steam is raised."""
    raised = summary.get("steam_raised_t_h")
    cost = summary.get("cost_per_h")
    if not raised or cost is None or raised <= 0:
        return None
    if not credit:
        cost = cost + (summary.get("power_credit_per_h") or 0.0)
    return cost / raised
_COUNTS = [("failures", "Failures", "fail"), ("warnings", "Warnings", "warn"),
           ("not_assessed", "Not assessed", "not_assessed")]
_SOLVE = [
    ("iterations", "Iterations", "count"),
    ("mass_residual_rel", "Mass balance residual", "relative"),
    ("energy_residual_rel", "Energy balance residual", "relative"),
    ("water_residual_rel", "Water balance residual", "relative"),
]


def overview_quantities(run: Run) -> list[Quantity]:
    cur = run.currency
    counts = run.finding_counts

    def s(key):
        return lambda c: c.summary.get(key)

    def n(sev):
        return lambda c: counts.get(c.case, {}).get(sev, 0)

    boilers = _Boilers()

    def boiler(name, key):
        return lambda c: boilers.get(c, name, key)
    q = [Quantity("status", "Solve status", "", lambda c: c.status, "status"),
         Quantity("message", "Message", "",
                  lambda c: "" if c.message == "solved" else c.message, "text")]
    q += [Quantity(f"steam_{b}", f"Steam raised, {b}", "t/h", boiler(b, "flow_t_h"))
          for b in run.boilers]
    q.append(Quantity("steam_raised_t_h", "Steam raised, total", "t/h",
                      s("steam_raised_t_h")))
    q += [Quantity(f"fuel_{b}", f"Fuel duty, {b}", "MW", boiler(b, "fuel_mw"))
          for b in run.boilers]
    q.append(Quantity("fuel_mw", "Fuel duty, total", "MW", s("fuel_mw")))
    q += [Quantity(k, label, unit.replace("{cur}", cur), s(k)) for k, label, unit in _TOTALS]
    q += [Quantity("average_cost_per_t", "Average cost of steam, net of the power credit",
                   f"{cur}/t", lambda c: average_cost_per_t(c.summary)),
          Quantity("average_cost_gross_per_t", "Average cost of steam, before the power "
                   "credit", f"{cur}/t", lambda c: average_cost_per_t(c.summary,
                                                                    credit=False))]
    q += [Quantity(k, label, "count", n(sev)) for k, label, sev in _COUNTS]
    q += [Quantity(k, label, unit, s(k)) for k, label, unit in _SOLVE]
    return q


def overview_table(run: Run, *, side_by_side: bool | None = None) -> Table:
    """The case overview: cases side by side (one column each) for a few cases, one row
    per case for a long run (and for the CSV export)."""
    qs = overview_quantities(run)
    if side_by_side is None:
        side_by_side = not run.large
    note = ("Power generated is the generators' electric output; electricity bought or "
            "sold needs the site's electric demand, which the model does not hold. "
            + COST_NOTE + " "
            "Failures, warnings and not assessed count the rows of the Findings sheet.")
    if side_by_side:
        cols = [Column("quantity", "Quantity", "text"), Column("unit", "Unit", "text")]
        cols += [Column(c.case, c.case, "verdict", None, "unit") for c in run.cases]

        def rows():
            for q in qs:
                yield [q.heading, q.unit, *(q.get(c) for c in run.cases)]
        t = Table("Cases", "cases", "Case overview", note + " Cases side by side; a case "
                  "that did not balance is marked red in its heading and status.", cols,
                  rows, freeze_cols=2)
        t.extra["case_columns"] = True
        return t
    cols = [col("case")]
    for q in qs:
        kind = {"status": "status", "text": "text"}.get(q.kind, "int" if q.unit ==
                                                         "count" else "num")
        cols.append(Column(q.key, q.heading, kind, format_for_unit(q.unit)))

    def rows_long():
        for c in run.cases:
            yield [c.case, *(q.get(c) for q in qs)]
    return Table("Cases", "cases", "Case overview", note + " One row per case.", cols,
                 rows_long, freeze_cols=1)


# ------------------------------------------------------------------ any frame
_STATUS_NAME = re.compile(r"(^|_)(status|verdict)$")


def frame_columns(df: pd.DataFrame, currency: str) -> list[Column]:
    """Columns of a unit-suffixed DataFrame: headings and kinds from names and dtypes."""
    cols = []
    for k in df.columns:
        key = str(k)
        s = df[k]
        if key == "case":
            cols.append(col("case"))
        elif _STATUS_NAME.search(key):
            cols.append(col(key, "verdict", currency=currency))
        elif pd.api.types.is_bool_dtype(s):
            cols.append(col(key, "bool", currency=currency))
        elif pd.api.types.is_integer_dtype(s):
            cols.append(col(key, "int", currency=currency))
        elif pd.api.types.is_numeric_dtype(s):
            cols.append(col(key, "num", currency=currency))
        else:
            cols.append(col(key, "text", currency=currency))
    return cols


def frame_table(df: pd.DataFrame, *, name: str, slug: str, title: str, note: str,
                currency: str, freeze_cols: int = 1) -> Table:
    """Any DataFrame with unit-suffixed columns (a study, the envelope table)."""
    cols = frame_columns(df, currency)

    def rows():
        for values in df.itertuples(index=False, name=None):
            yield [v.item() if isinstance(v, np.generic) else v for v in values]
    return Table(name, slug, title, note, cols, rows, freeze_cols=freeze_cols)
