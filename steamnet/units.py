"""Quantities with units, as written in model files, read into SI.

Every quantity in a model file is a string with its unit: ``"42 bar(g)"``, ``"400 degC"``,
``"120 t/h"``, ``"3.5 MW"``. A bare number is an error, except for pure numbers (a
fraction such as an efficiency, written ``"88 %"`` or ``0.88``; a coefficient such as
FL). Unit conversion is done by pint; the trade's gauge/absolute pressure suffixes,
flow-coefficient pseudo-units and prices are handled here. Internally everything is SI:
Pa (absolute), K, kg/s, W, J/kg, m, s.

Conversions are cached per unit string, so a table of 8,760 hourly values with the unit in
its heading costs one pint parse.
"""

from __future__ import annotations

import math
import re
from enum import Enum
from functools import lru_cache

from .errors import ModelError

__all__ = ["Kind", "parse_quantity", "parse_number_with_unit", "unit_factor", "UREG",
           "STANDARD_ATMOSPHERE", "T_H", "KJ", "C0"]

#: Standard atmosphere [Pa] (ISO 2533; the conventional 1.01325 bar).
STANDARD_ATMOSPHERE = 101325.0
#: t/h per kg/s (1 t = 1000 kg, 1 h = 3600 s): a flow in kg/s times T_H is in t/h.
T_H = 3.6
#: kJ/kg per J/kg.
KJ = 1e-3
#: 0 degC in kelvin (the definition of the Celsius scale).
C0 = 273.15


@lru_cache(maxsize=1)
def _registry():
    """pint's unit registry with the trade's units, built on first use (importing pint
    and building it is most of a short run's start-up otherwise)."""
    import pint
    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    ureg.define("tph = tonne / hour")
    # The Btu of steam tables and of the trade is the International Table Btu,
    # 1055.05585262 J (so 1 Btu/lb = 2.326 kJ/kg exactly; NIST SP 811 (2008), B.8);
    # pint's plain 'Btu' is the ISO 31-4 rounding 1055.056 J.
    ureg.define("Btu = Btu_it")
    ureg.define("BTU = Btu_it")
    ureg.define("MMBtu = 1e6 * Btu_it")
    return ureg


#: What pint gives for the units most model files are written in, (unit, SI unit) ->
#: (scale, offset), so that reading such a file needs neither pint nor its registry;
#: every entry equals pint's conversion bit for bit (tests/test_units.py).
_KNOWN = {
    ("bar", "Pa"): (100000.0, 0.0), ("kPa", "Pa"): (1000.0, 0.0),
    ("MPa", "Pa"): (1000000.0, 0.0), ("MW", "W"): (1000000.0, 0.0),
    ("kW", "W"): (1000.0, 0.0), ("W", "W"): (1.0, 0.0), ("m", "m"): (1.0, 0.0),
    ("mm", "m"): (0.001, 0.0), ("t/h", "kg/s"): (0.2777777777777778, 0.0),
    ("kg/s", "kg/s"): (1.0, 0.0), ("kg/h", "kg/s"): (0.0002777777777777778, 0.0),
    ("kJ/kg", "J/kg"): (1000.0, 0.0), ("K", "K"): (1.0, 0.0), ("s", "s"): (1.0, 0.0),
    ("m/s", "m/s"): (1.0, 0.0), ("t/MWh", "kg/J"): (2.7777777777777776e-07, 0.0),
    ("degC", "K"): (1.0, 273.15),
}
#: The same for the units prices are given per: unit -> factor to 1/J or 1/kg.
_KNOWN_PER = {
    ("GJ", "1/J"): 1e-09, ("MWh", "1/J"): 2.7777777777777777e-10,
    ("kWh", "1/J"): 2.7777777777777776e-07, ("t", "1/kg"): 0.001, ("kg", "1/kg"): 1.0,
}


def __getattr__(name: str):
    if name == "UREG":                  # the registry, built when first asked for
        return _registry()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

# 'MBtu' is a thousand Btu in US practice but a mega-Btu to an SI prefix: refused.
_AMBIGUOUS = re.compile(r"(?<![A-Za-z])MBtu", re.IGNORECASE)


class Kind(str, Enum):
    """What a field measures; decides the accepted units and the SI unit."""

    PRESSURE = "pressure"                     # absolute Pa; gauge/absolute explicit
    PRESSURE_DIFFERENCE = "pressure_difference"  # Pa
    TEMPERATURE = "temperature"               # K
    TEMPERATURE_DIFFERENCE = "temperature_difference"  # K
    MASS_FLOW = "mass_flow"                   # kg/s
    POWER = "power"                           # W
    SPECIFIC_ENTHALPY = "specific_enthalpy"   # J/kg
    STEAM_RATE = "steam_rate"                 # kg/J (Willans slope, e.g. t/MWh)
    LENGTH = "length"                         # m
    TIME = "time"                             # s
    VELOCITY = "velocity"                     # m/s
    FRACTION = "fraction"                     # -
    RATIO = "ratio"                           # - ("10:1" or a number)
    FLOW_COEFFICIENT = "flow_coefficient"     # Kv in m3/h ("120 Kv" or "140 Cv")
    PRICE_ENERGY = "price_energy"             # currency per J
    PRICE_MASS = "price_mass"                 # currency per kg
    NUMBER = "number"                         # a pure number (FL, xT, Fd)
    AREA = "area"                             # m2 (relief valve orifice)
    DENSITY = "density"                       # kg/m3 (pipe wall material)
    SOUND_LEVEL = "sound_level"               # dB(A), written "85 dB(A)"


_SI = {
    Kind.PRESSURE: "Pa", Kind.PRESSURE_DIFFERENCE: "Pa", Kind.TEMPERATURE: "K",
    Kind.TEMPERATURE_DIFFERENCE: "K", Kind.MASS_FLOW: "kg/s", Kind.POWER: "W",
    Kind.SPECIFIC_ENTHALPY: "J/kg", Kind.STEAM_RATE: "kg/J", Kind.LENGTH: "m",
    Kind.TIME: "s", Kind.VELOCITY: "m/s", Kind.AREA: "m**2", Kind.DENSITY: "kg/m**3",
}

_EXAMPLES = {
    Kind.PRESSURE: "'42 bar(g)', '600 psig', '1.2 bar(a)'",
    Kind.PRESSURE_DIFFERENCE: "'3.5 bar', '50 psi'",
    Kind.TEMPERATURE: "'400 degC', '750 degF', '673 K'",
    Kind.TEMPERATURE_DIFFERENCE: "'10 K', '18 degF'",
    Kind.MASS_FLOW: "'120 t/h', '15 kg/s', '80 klb/h'",
    Kind.POWER: "'3.5 MW', '800 kW', '1200 hp'",
    Kind.SPECIFIC_ENTHALPY: "'2800 kJ/kg', '1200 Btu/lb'",
    Kind.STEAM_RATE: "'4.2 t/MWh', '9 lb/kWh'",
    Kind.LENGTH: "'300 mm', '12 in', '8 m'",
    Kind.TIME: "'0.2 s'",
    Kind.VELOCITY: "'40 m/s', '120 ft/s'",
    Kind.FRACTION: "'88 %' or 0.88",
    Kind.RATIO: "'10:1' or 10",
    Kind.FLOW_COEFFICIENT: "'120 Kv' (m3/h) or '140 Cv' (US gal/min)",
    Kind.PRICE_ENERGY: "'9.5 EUR/GJ', '32 EUR/MWh'",
    Kind.PRICE_MASS: "'1.8 EUR/t'",
    Kind.NUMBER: "0.9",
    Kind.AREA: "'1840 mm^2', '2.853 in^2'",
    Kind.DENSITY: "'7800 kg/m^3'",
    Kind.SOUND_LEVEL: "'85 dB(A)'",
}

# Pressure units the gauge/absolute suffix may follow (pint names on the right).
_PRESSURE_UNITS = {
    "pa": "Pa", "kpa": "kPa", "mpa": "MPa", "bar": "bar", "mbar": "mbar", "psi": "psi",
    "kgf/cm2": "kgf/cm**2", "kg/cm2": "kgf/cm**2", "inhg": "inHg",
}
_GAUGE_RE = re.compile(r"^(?P<base>.+?)\s*(?:\((?P<p>[gaGA])\)|(?P<s>[ga]))$")
_NUM_RE = re.compile(r"^\s*(?P<num>[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?P<unit>.*?)\s*$")
_RATIO_RE = re.compile(r"^\s*(?P<a>\d+\.?\d*)\s*:\s*(?P<b>\d+\.?\d*)\s*$")


def _err(msg: str) -> ModelError:
    return ModelError(msg)


def _refuse_ambiguous(unit: str) -> None:
    if _AMBIGUOUS.search(unit):
        raise _err(f"'{unit.strip()}' is ambiguous (MBtu is a thousand Btu in US practice, "
                   "a million to SI prefixes): write 'kBtu' or 'MMBtu'")


def _split_pressure_unit(unit: str) -> tuple[str, bool]:
    """Pint unit and gauge flag of a pressure unit such as 'bar(g)', 'psia', 'kPa(a)'."""
    u = unit.strip()
    low = u.lower().replace(" ", "")
    if low in ("barg", "psig", "kpag", "mpag"):
        return _PRESSURE_UNITS[low[:-1]], True
    if low in ("bara", "psia", "kpaa", "mpaa"):
        return _PRESSURE_UNITS[low[:-1]], False
    m = _GAUGE_RE.match(low)
    if m and m.group("p"):
        base = m.group("base")
        if base in _PRESSURE_UNITS:
            return _PRESSURE_UNITS[base], m.group("p").lower() == "g"
    if low in _PRESSURE_UNITS:
        raise _err(f"pressure unit '{unit}' does not say gauge or absolute: write "
                   f"'{unit}(g)' or '{unit}(a)'")
    raise _err(f"'{unit}' is not a pressure unit; write for example "
               f"{_EXAMPLES[Kind.PRESSURE]}")


@lru_cache(maxsize=4096)
def unit_factor(unit: str, kind: Kind) -> tuple[float, float, bool]:
    """(scale, offset, gauge) such that SI = scale * value + offset (+ p_atm if gauge).

    Raises
    ------
    ModelError
        The unit is unknown or of the wrong dimension for ``kind``.
    """
    kind = Kind(kind)
    gauge = False
    u = unit.strip()
    if kind in (Kind.FRACTION, Kind.NUMBER, Kind.RATIO):
        if u in ("", "-"):
            return 1.0, 0.0, False
        if kind is Kind.FRACTION and u in ("%", "percent"):
            return 0.01, 0.0, False
        raise _err(f"'{unit}' is not a unit for a {kind.value}; write {_EXAMPLES[kind]}")
    if kind is Kind.SOUND_LEVEL:
        if u.lower().replace(" ", "") in ("db(a)", "dba"):
            return 1.0, 0.0, False
        raise _err(f"'{unit}' is not a unit of A-weighted sound level; write "
                   f"{_EXAMPLES[kind]}")
    if kind is Kind.FLOW_COEFFICIENT:
        low = u.lower()
        if low == "kv":
            return 1.0, 0.0, False
        if low == "cv":
            # Kv = Cv / 1.156 (IEC 60534-1 / ISA-75.01.01 definitions; via fluids)
            from fluids.control_valve import Cv_to_Kv
            return float(Cv_to_Kv(1.0)), 0.0, False
        raise _err(f"'{unit}' is not a flow-coefficient unit; write {_EXAMPLES[kind]}")
    if not u:
        raise _err(f"a {kind.value.replace('_', ' ')} needs a unit, e.g. {_EXAMPLES[kind]}")
    _refuse_ambiguous(u)
    if kind is Kind.PRESSURE:
        u, gauge = _split_pressure_unit(u)
    if kind is Kind.TEMPERATURE_DIFFERENCE:
        low = u.lower()
        if low in ("degc", "°c", "celsius", "degree_celsius", "c"):
            # '160 degC' is a temperature on the Celsius scale; as a difference it is
            # ambiguous (docs/model-file.md): refuse it rather than read it as 160 K
            raise _err(f"'{unit}' is a temperature, not a temperature difference: write "
                       "K or delta_degC (e.g. '15 K')")
        u = {"k": "K", "delta_degc": "delta_degC", "degf": "delta_degF",
             "°f": "delta_degF", "r": "degR", "degr": "degR"}.get(low, u)
    if kind is Kind.TEMPERATURE and u.upper() in ("C", "F"):
        raise _err(f"write 'degC' or 'degF', not '{unit}'")
    known = _KNOWN.get((u, _SI.get(kind)))
    if known is not None:
        return known[0], known[1], gauge
    _reject_prefixed_time(unit, u)
    import pint
    ureg = _registry()
    try:
        q = ureg.Quantity(1.0, u)
        target = _SI[kind]
        if kind is Kind.TEMPERATURE:
            a = ureg.Quantity(0.0, u).to(target).magnitude
            b = ureg.Quantity(1.0, u).to(target).magnitude
            return float(b - a), float(a), False
        return float(q.to(target).magnitude), 0.0, gauge
    except (pint.errors.UndefinedUnitError, pint.errors.DimensionalityError,
            pint.errors.OffsetUnitCalculusError, AttributeError, TypeError, ValueError,
            AssertionError, KeyError) as exc:
        if isinstance(exc, pint.errors.DimensionalityError):
            raise _err(f"'{unit}' is not a unit of {kind.value.replace('_', ' ')}; write "
                       f"for example {_EXAMPLES[kind]}") from None
        raise _err(f"unknown unit '{unit}'; write for example {_EXAMPLES[kind]}") from None
    except Exception:  # pint raises a variety of parse errors on odd text
        raise _err(f"unknown unit '{unit}'; write for example {_EXAMPLES[kind]}") from None


#: Time units that never take an SI prefix in the trade ('t/hh' is a typo, not
#: tonnes per hectohour).
_NO_PREFIX = {"hour", "minute", "day", "week", "year"}
_TOKEN_RE = re.compile(r"[A-Za-z_]+")


def _reject_prefixed_time(unit: str, u: str) -> None:
    for tok in _TOKEN_RE.findall(u):
        try:
            parses = _registry().parse_unit_name(tok)
        except Exception:
            continue
        if parses and all(unit_name in _NO_PREFIX and prefix for prefix, unit_name, _
                          in parses):
            raise _err(f"'{unit}': '{tok}' reads as a prefixed {parses[0][1]}; write "
                       "h, min or d without a prefix")


def parse_number_with_unit(value: float, unit: str, kind: Kind, *,
                           p_atm: float = STANDARD_ATMOSPHERE) -> float:
    """Convert ``value`` in ``unit`` to SI (for tables with the unit in the heading)."""
    scale, offset, gauge = unit_factor(unit, Kind(kind))
    si = value * scale + offset
    if gauge:
        si += p_atm
    return si


def _price_factor(unit: str, kind: Kind, currency: str) -> float:
    u = unit.strip()
    if "/" not in u:
        raise _err(f"a price is written as currency per unit, e.g. {_EXAMPLES[kind]}")
    cur, per = u.split("/", 1)
    _refuse_ambiguous(per)
    if cur.strip() != currency:
        raise _err(f"price in '{cur.strip()}' but the site currency is '{currency}'")
    target = "1/J" if kind is Kind.PRICE_ENERGY else "1/kg"
    known = _KNOWN_PER.get((per.strip(), target))
    if known is not None:
        return known
    try:
        return float(_registry().Quantity(1.0, "1/(" + per.strip() + ")").to(target)
                     .magnitude)
    except Exception:
        raise _err(f"'{per.strip()}' is not a unit of "
                   f"{'energy' if kind is Kind.PRICE_ENERGY else 'mass'}; write for "
                   f"example {_EXAMPLES[kind]}") from None


def parse_quantity(value, kind: Kind | str, *, p_atm: float = STANDARD_ATMOSPHERE,
                   currency: str = "EUR") -> float:
    """Read one quantity as written in a model file and return it in SI.

    Parameters
    ----------
    value : str or float
        ``"42 bar(g)"``; a bare number only for fractions, ratios and pure numbers.
    kind : Kind
        What the field measures.
    p_atm : float
        Local atmospheric pressure for gauge pressures [Pa]
    currency : str
        The site's currency code, for prices.

    Returns
    -------
    float
        The value in SI (absolute Pa, K, kg/s, W, J/kg, m, s; prices per J or per kg).

    Raises
    ------
    ModelError
        Missing or wrong unit, or text that is not a number.

    Examples
    --------
    >>> parse_quantity("42 bar(g)", Kind.PRESSURE)
    4301325.0
    >>> round(parse_quantity("120 t/h", Kind.MASS_FLOW), 4)
    33.3333
    """
    kind = Kind(kind)
    if isinstance(value, bool):
        raise _err(f"expected a {kind.value.replace('_', ' ')}, got {value!r}")
    if isinstance(value, (int, float)):
        if not math.isfinite(value):
            raise _err(f"{value!r} is not a finite number")
        if kind in (Kind.FRACTION, Kind.RATIO, Kind.NUMBER):
            return float(value)
        raise _err(f"bare number {value!r}: a {kind.value.replace('_', ' ')} needs its "
                   f"unit, e.g. {_EXAMPLES[kind]}")
    if not isinstance(value, str):
        raise _err(f"expected a quantity such as {_EXAMPLES[kind]}, got {type(value).__name__}")
    if kind is Kind.RATIO:
        m = _RATIO_RE.match(value)
        if m:
            a, b = float(m.group("a")), float(m.group("b"))
            if b == 0:
                raise _err(f"ratio '{value}' divides by zero")
            return a / b
    m = _NUM_RE.match(value)
    if not m:
        raise _err(f"'{value}' is not a number with a unit; write for example "
                   f"{_EXAMPLES[kind]}")
    num = float(m.group("num"))
    if not math.isfinite(num):
        raise _err(f"'{value}' is not a finite number")
    unit = m.group("unit")
    if kind in (Kind.PRICE_ENERGY, Kind.PRICE_MASS):
        return num * _price_factor(unit, kind, currency)
    si = parse_number_with_unit(num, unit, kind, p_atm=p_atm)
    if not math.isfinite(si):
        raise _err(f"'{value}' is too large")
    return si
