"""Column vocabulary of the workbook: headings with units, number formats, cell kinds.

Every result column of the solver carries its unit in its name (``flow_t_h``,
``t_sat_degc``, ``power_kw``; see steamnet/solver/results.py). Here each known column
gets a heading for readers ("Flow [t/h]") and a number format; any other column (the
tables of the station checks and the studies) gets a heading made from its name and unit
suffix, so new columns need no change here.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

__all__ = ["Column", "col", "heading_for", "unit_of", "format_for_unit", "label_of",
           "KNOWN"]

#: Cell kinds: how the sheet writer shows a value.
#: num (number, formatted by unit), text, bool, int, verdict (filled by severity),
#: status (a case status, filled), case (a case name, filled when the case is not solved).
KINDS = ("num", "text", "bool", "int", "verdict", "status", "case")


@dataclass(frozen=True)
class Column:
    """One column of a table.

    key : the source column (solver or input table), also the CSV-independent name
    heading : what the reader sees, unit in brackets
    kind : one of :data:`KINDS`
    fmt : Excel number format for numbers (None: General)
    unit_from : for numbers whose unit varies per row, the key of the column that holds
        the unit (the format follows that unit)
    """

    key: str
    heading: str
    kind: str = "num"
    fmt: str | None = None
    unit_from: str | None = None

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"unknown column kind {self.kind!r}")


# Unit suffixes of column names, longest first so '_kj_kg' wins over '_kg'.
_SUFFIXES: list[tuple[str, str]] = sorted([
    ("_t_h", "t/h"), ("_kg_s", "kg/s"), ("_bara", "bar(a)"), ("_barg", "bar(g)"),
    ("_bar", "bar"), ("_degc", "degC"), ("_kj_kg", "kJ/kg"), ("_kw", "kW"), ("_mw", "MW"),
    ("_gj", "GJ"), ("_percent", "%"), ("_pct", "%"), ("_k", "K"), ("_m_s", "m/s"),
    ("_mm", "mm"), ("_m", "m"), ("_s", "s"), ("_m3_h", "m3/h"), ("_kv", "Kv"),
    ("_k_per_t_h", "K/(t/h)"), ("_rel", "relative"), ("_ratio", "-"), ("_count", "count"),
    ("_per_h", "{cur}/h"), ("_per_t", "{cur}/t"), ("_per_mwh", "{cur}/MWh"),
    ("_db", "dB(A)"), ("_hours", "h"),
], key=lambda p: -len(p[0]))

# Decimals by unit: enough to read a plant balance, not the solver's last digit.
_FORMATS = {
    "t/h": "0.00", "kg/s": "0.000", "bar(a)": "0.00", "bar(g)": "0.00", "bar": "0.00",
    "degC": "0.0", "K": "0.0", "kJ/kg": "0.0", "kW": "#,##0", "MW": "0.00", "GJ": "0.0",
    "%": "0.0", "m/s": "0.0", "mm": "0", "m": "0.00", "s": "0.00", "m3/h": "0.00",
    "Kv": "0.00", "K/(t/h)": "0.000", "relative": "0.0E+00", "-": "0.000", "count": "0",
    "dB(A)": "0.0", "h": "0", "{cur}/h": "#,##0", "{cur}/t": "0.00", "{cur}/MWh": "0.00",
    "K/(kg/s)": "0.000",
}


def format_for_unit(unit: str | None) -> str | None:
    """Excel number format for a unit (None for General)."""
    if not unit:
        return None
    u = str(unit).strip()
    if u in _FORMATS:
        return _FORMATS[u]
    if u.endswith("/h") and u[:-2].isalpha():          # a currency per hour
        return _FORMATS["{cur}/h"]
    if u.endswith("/t") and u[:-2].isalpha():
        return _FORMATS["{cur}/t"]
    return None


def unit_of(key: str, currency: str = "EUR") -> tuple[str, str | None]:
    """Split a column name into (label, unit): ``'spray_t_h' -> ('spray', 't/h')``."""
    for suf, unit in _SUFFIXES:
        if key.endswith(suf) and len(key) > len(suf):
            return key[: -len(suf)], unit.replace("{cur}", currency)
    return key, None


def label_of(name: str) -> str:
    """'spray_capacity' -> 'Spray capacity' (text kept as it is otherwise)."""
    text = re.sub(r"_+", " ", str(name)).strip()
    return text[:1].upper() + text[1:] if text else text


def heading_for(key: str, currency: str = "EUR") -> str:
    """Reader's heading of a column name, unit in brackets when the name carries one."""
    if key in KNOWN:
        return KNOWN[key].heading.replace("{cur}", currency)
    base, unit = unit_of(key, currency)
    return f"{label_of(base)} [{unit}]" if unit else label_of(base)


def col(key: str, kind: str | None = None, *, heading: str | None = None,
        currency: str = "EUR", unit_from: str | None = None) -> Column:
    """The column for ``key``: from the known vocabulary, or made from its name."""
    if key in KNOWN and heading is None and kind is None:
        k = KNOWN[key]
        return Column(k.key, k.heading.replace("{cur}", currency), k.kind,
                      k.fmt, k.unit_from)
    base, unit = unit_of(key, currency)
    if key in KNOWN:
        known = KNOWN[key]
        kind = kind or known.kind
        fmt = known.fmt
        heading = heading or known.heading.replace("{cur}", currency)
    else:
        fmt = format_for_unit(unit)
        heading = heading or heading_for(key, currency)
    return Column(key, heading, kind or "num", fmt, unit_from)


def _k(key: str, heading: str, kind: str = "num", fmt: str | None = None) -> Column:
    if fmt is None and kind == "num":
        fmt = format_for_unit(unit_of(key)[1])
    return Column(key, heading, kind, fmt)


#: Headings of the solver's result columns and of the workbook's own columns.
KNOWN: dict[str, Column] = {c.key: c for c in [
    _k("case", "Case", "case"),
    _k("case_status", "Case status", "status"),
    _k("header", "Header", "text"),
    _k("item", "Item", "text"),
    _k("type", "Type", "text"),
    _k("from", "From", "text"),
    _k("to", "To", "text"),
    _k("mode", "Mode", "text"),
    _k("service", "Service", "text"),
    _k("drive", "Drive", "text"),
    _k("group", "Group", "text"),
    _k("limit", "At limit", "text"),
    _k("station", "Station", "text"),
    _k("check", "Check", "text"),
    _k("unit", "Unit", "text"),
    _k("status", "Status", "verdict"),
    _k("basis", "Basis", "text"),
    _k("source", "Source", "text"),
    _k("advice", "Advice", "text"),
    # headers
    _k("p_bara", "Pressure [bar(a)]"),
    _k("p_barg", "Pressure [bar(g)]"),
    _k("t_degc", "Temperature [degC]"),
    _k("t_sat_degc", "Saturation temperature [degC]"),
    _k("superheat_k", "Superheat [K]"),
    _k("state", "Steam state", "text"),
    _k("h_kj_kg", "Enthalpy [kJ/kg]"),
    _k("quality", "Steam quality [-]", fmt="0.000"),
    _k("wet", "Wet", "bool"),
    _k("inflow_t_h", "Inflow [t/h]"),
    _k("outflow_t_h", "Outflow [t/h]"),
    _k("heat_loss_kw", "Heat loss [kW]"),
    _k("mass_residual_t_h", "Mass balance residual [t/h]", fmt="0.0E+00"),
    _k("energy_residual_kw", "Energy balance residual [kW]", fmt="0.0E+00"),
    # equipment
    _k("flow_t_h", "Flow [t/h]"),
    _k("power_kw", "Power [kW]"),
    _k("shaft_power_kw", "Shaft power [kW]"),
    _k("internal_power_kw", "Internal power [kW]"),
    _k("section_efficiencies_used", "Section efficiencies used", "text"),
    _k("duty_mw", "Heat duty [MW]"),
    _k("fuel_mw", "Fuel duty [MW]"),
    _k("min_t_h", "Minimum flow [t/h]"),
    _k("max_t_h", "Maximum flow [t/h]"),
    _k("load_percent", "Load [% of maximum]"),
    _k("t_out_degc", "Outlet temperature [degC]"),
    _k("h_out_kj_kg", "Outlet enthalpy [kJ/kg]"),
    _k("feedwater_t_h", "Feedwater [t/h]"),
    _k("blowdown_t_h", "Blowdown [t/h]"),
    _k("drum_p_barg", "Drum pressure [bar(g)]"),
    _k("drum_pressure_from", "Drum pressure from", "text"),
    _k("exhaust_quality", "Exhaust quality [-]", fmt="0.000"),
    _k("isentropic_efficiency", "Isentropic efficiency [-]", fmt="0.000"),
    _k("exhaust_t_h", "Exhaust flow [t/h]"),
    _k("condenser_duty_mw", "Condenser duty [MW]"),
    _k("quality_below_limit", "Exhaust wetter than limit", "bool"),
    _k("spray_t_h", "Spray water [t/h]"),
    _k("steam_out_t_h", "Steam out [t/h]"),
    _k("t_set_degc", "Outlet setpoint [degC]"),
    _k("setpoint_reachable", "Setpoint reachable", "bool"),
    _k("condensate_return_t_h", "Condensate returned [t/h]"),
    _k("makeup_t_h", "Make-up water [t/h]"),
    _k("vent_t_h", "Deaerator vent [t/h]"),
    # streams
    _k("stream", "Stream", "text"),
    _k("medium", "Medium", "text"),
]}


def clean_number(v) -> float | None:
    """A finite float, or None for missing, NaN and infinite values."""
    if v is None or isinstance(v, bool):
        return None
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None
