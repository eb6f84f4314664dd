"""Generate the field tables of docs/model-file.md from the schema classes.

``python -m steamnet.model.docgen`` rewrites the part of docs/model-file.md between the
markers ``<!-- fields:begin -->`` and ``<!-- fields:end -->``; tests/test_docs.py fails
when the file is out of date, so the reference is never a second copy of the schema.
"""

from __future__ import annotations

import re
import sys
import types
import typing
from pathlib import Path

from pydantic.fields import FieldInfo

from ..units import Kind
from . import schema as S

BEGIN, END = "<!-- fields:begin -->", "<!-- fields:end -->"

_KIND_UNITS = {
    Kind.PRESSURE: "pressure, gauge or absolute explicit: `45 bar(g)`, `650 psig`, `1.2 bar(a)`",
    Kind.PRESSURE_DIFFERENCE: "pressure difference: `3.5 bar`, `50 psi`",
    Kind.TEMPERATURE: "temperature: `430 degC`, `800 degF`, `700 K`",
    Kind.TEMPERATURE_DIFFERENCE: "temperature difference: `15 K`, `27 degF`",
    Kind.MASS_FLOW: "mass flow: `120 t/h`, `15 kg/s`, `80 klb/h`",
    Kind.POWER: "power: `9 MW`, `420 kW`, `1200 hp`",
    Kind.STEAM_RATE: "steam per energy: `4.2 t/MWh`, `9 lb/kWh`",
    Kind.LENGTH: "length: `250 mm`, `10 in`, `9 m`",
    Kind.TIME: "time: `0.2 s`",
    Kind.FRACTION: "fraction: `88 %` or `0.88`",
    Kind.RATIO: "ratio: `50:1` or `50`",
    Kind.FLOW_COEFFICIENT: "flow coefficient: `55 Kv` or `64 Cv`",
    Kind.PRICE_ENERGY: "price per energy: `9 EUR/GJ`, `95 EUR/MWh` (site currency)",
    Kind.PRICE_MASS: "price per mass: `1.6 EUR/t` (site currency)",
    Kind.NUMBER: "pure number: `0.85`",
    Kind.AREA: "area: `1840 mm^2`, `2.853 in^2`",
    Kind.DENSITY: "density: `7800 kg/m^3`",
    Kind.VELOCITY: "velocity: `5000 m/s`",
}

_TABLES = [
    ("[site]", S.Site), ("[prices]", S.Prices), ("[[header]]", S.Header),
    ("[[water_supply]]", S.WaterSupply), ("[[boiler]]", S.Boiler),
    ("[[steam_transfer]]", S.SteamTransfer), ("[[turbine]]", S.Turbine),
    ("[[extraction_turbine]]", S.ExtractionTurbine),
    ("[[extraction_turbine.extractions]]", S.Extraction), ("[[letdown]]", S.Letdown),
    ("[letdown.desuperheater]", S.Desuperheater),
    ("[[letdown.relief_credit]]", S.ReliefCredit),
    ("[letdown.valve] and [letdown.spray_valve]", S.Valve), ("[[user]]", S.User),
    ("[[vent]]", S.Vent), ("[[deaerator]]", S.Deaerator), ("[[case]]", S.Case),
]


def _kind_of(info: FieldInfo) -> Kind | None:
    for meta in info.metadata:
        func = getattr(meta, "func", None)
        if func is not None and func.__closure__:
            for cell in func.__closure__:
                if isinstance(cell.cell_contents, Kind):
                    return cell.cell_contents
    ann = info.annotation
    for arg in typing.get_args(ann):
        for meta in getattr(arg, "__metadata__", ()):
            func = getattr(meta, "func", None)
            if func is not None and func.__closure__:
                for cell in func.__closure__:
                    if isinstance(cell.cell_contents, Kind):
                        return cell.cell_contents
    return None


def _list_item_kind(ann) -> Kind | None:
    """The quantity kind of the items of a list annotation (``list[Flow] | None``)."""
    for arg in (ann, *typing.get_args(ann)):
        if typing.get_origin(arg) is list:
            for meta in getattr(typing.get_args(arg)[0], "__metadata__", ()):
                func = getattr(meta, "func", None)
                for cell in (func.__closure__ or ()) if func is not None else ():
                    if isinstance(cell.cell_contents, Kind):
                        return cell.cell_contents
    return None


#: Tables written inside an item, by the schema class of the field.
_SUBTABLES = {"Valve": "a table: [letdown.valve] or [letdown.spray_valve] (see below)",
              "Desuperheater": "a table: [letdown.desuperheater] (see below)"}


def _plain(ann) -> object:
    """The annotation without ``None`` (an optional field) and without metadata."""
    args = [a for a in typing.get_args(ann) if a is not type(None)]
    if typing.get_origin(ann) in (typing.Union, types.UnionType) and len(args) == 1:
        ann = args[0]
    while typing.get_origin(ann) is typing.Annotated:
        ann = typing.get_args(ann)[0]
    return ann


def _type_text(info: FieldInfo) -> str:
    """The value a field takes, in plain words (never a Python type)."""
    kind = _kind_of(info)
    if kind is not None:
        return _KIND_UNITS[kind]
    ann = _plain(info.annotation)
    name = getattr(ann, "__name__", "")
    if name in _SUBTABLES:
        return _SUBTABLES[name]
    origin = typing.get_origin(ann)
    if origin is dict or ann is dict:
        return "a table of names and values"
    if origin is list or ann is list:
        inner = typing.get_args(ann)
        inner_name = getattr(_plain(inner[0]), "__name__", "") if inner else ""
        if inner_name in ("Extraction", "ReliefValve", "ReliefCredit"):
            return "tables (see below)"
        item = _list_item_kind(ann)
        if item is None or item is Kind.FRACTION:
            return "a list of fractions"
        return "a list, each a " + _KIND_UNITS[item]
    args = typing.get_args(ann)
    if origin is typing.Literal:
        return "one of " + ", ".join(f"`{a}`" for a in args)
    for a in args:
        if typing.get_origin(a) is typing.Literal:
            return "one of " + ", ".join(f"`{x}`" for x in typing.get_args(a))
    if ann is bool:
        return "`true` or `false`"
    if ann is int:
        return "whole number"
    if ann is float:
        return "number"
    if ann is str:
        return "text"
    raise ValueError(f"no plain words for the type of a field: {info.annotation!r}")


def _default_text(name: str, info: FieldInfo) -> str:
    """The default in plain words, in the units a file writes (never SI)."""
    if info.is_required():
        return "required"
    if info.default_factory is not None:
        return "none"
    d = info.default
    if d is None:
        return "none"
    if isinstance(d, bool):
        return str(d).lower()
    if name == "atmospheric_pressure":
        return "1.01325 bar(a)"
    if isinstance(d, float):
        kind = _kind_of(info)
        if kind is Kind.FRACTION:
            return f"{d * 100:g} %"
        if d == 0:
            return "0"
        shown = _IN_FILE_UNITS.get(kind)
        if shown is None:
            raise ValueError(f"no unit to show the default of '{name}' in")
        unit, scale = shown
        return f"{d * scale:g} {unit}"
    return f"`{d}`"


#: How a default in SI is shown, per kind: (unit, factor from SI).
_IN_FILE_UNITS = {Kind.MASS_FLOW: ("t/h", 3.6), Kind.POWER: ("kW", 1e-3),
                  Kind.LENGTH: ("mm", 1e3), Kind.TIME: ("s", 1.0),
                  Kind.TEMPERATURE_DIFFERENCE: ("K", 1.0),
                  Kind.PRESSURE_DIFFERENCE: ("bar", 1e-5), Kind.VELOCITY: ("m/s", 1.0),
                  Kind.DENSITY: ("kg/m^3", 1.0), Kind.RATIO: (":1", 1.0),
                  Kind.NUMBER: ("", 1.0)}

#: A unit in brackets at the end of a part of a description: the unit the program holds
#: the value in (SI), not one a file writes.
_SI_UNIT = re.compile(r"\s*\[(?:Pa|K|kg/s|W|J/kg|J|kg|m|s|m/s|-|currency/J|currency/kg|"
                      r"m2|m\^2|mm2|kg/m3|kg/m\^3|Kv, m3/h|m3/h|1/s|kg/J)\]")


#: Meanings of the fields the schema leaves without a description: (table, field) or
#: the field alone.
_MEANINGS = {
    "inlet": "header the steam comes from",
    "outlet": "header the steam goes to",
    "min_flow": "least steam flow it may pass",
    "max_flow": "most steam flow it may pass; none: no limit",
    "mechanical_efficiency": "share of the steam's work that reaches the shaft",
    "generator_efficiency": "share of the shaft power the generator turns into "
                            "electricity",
    "drive": "what the shaft drives: a generator (electric power) or a machine "
             "(mechanical power)",
    "power": "output in fixed_power mode: electric for a generator, shaft power for a "
             "mechanical drive",
    ("[[steam_transfer]]", "header"): "header the steam is imported into or exported "
                                      "from",
    ("[[steam_transfer]]", "direction"): "'import': steam bought into the plant; "
                                         "'export': steam sold out of it",
    ("[[steam_transfer]]", "mode"): "'fixed': the flow given; 'swing': closes its "
                                    "header's balance; 'off': no flow",
    ("[[extraction_turbine]]", "mode"): "'fixed_power': the power given; 'fixed_flow': "
                                        "the inlet flow given; 'tripped': no flow",
    ("[[extraction_turbine.extractions]]", "header"): "header the extraction feeds",
    ("[[extraction_turbine.extractions]]", "flow"): "extraction flow; none: whatever "
                                                    "the header needs",
    ("[[extraction_turbine.extractions]]", "min_flow"): "least extraction flow",
    ("[[extraction_turbine.extractions]]", "max_flow"): "most extraction flow; none: no "
                                                        "limit",
    ("[[letdown]]", "desuperheater"): "the desuperheater that sprays water into the "
                                      "outlet steam; none: a plain let-down",
    ("[[letdown]]", "valve"): "the let-down valve's data, for the valve travel and "
                              "noise checks",
    ("[[letdown]]", "spray_valve"): "the spray water valve's data, for its travel, noise "
                                    "and cavitation checks",
    ("[letdown.desuperheater]", "atomisation"): "how the spray is atomised: by the "
                                                "nozzle (mechanical), by steam, or other",
    ("[letdown.valve] and [letdown.spray_valve]", "characteristic"): "the valve's "
        "inherent characteristic, needed for the travel check (without it the check is "
        "not assessed)",
    ("[[extraction_turbine]]", "max_exhaust_flow"): "most flow to the exhaust or the "
                                                    "condenser; none: no limit",
    ("[[user]]", "header"): "header the user draws its steam from",
    ("[[vent]]", "header"): "header the vent blows steam off from",
}


def field_tables() -> str:
    """Markdown tables of every model-file table and field."""
    out = []
    for title, cls in _TABLES:
        doc = " ".join((cls.__doc__ or "").strip().split("\n\n")[0].split())
        out.append(f"### {title}\n\n{doc}\n")
        out.append("| field | value | default | meaning |")
        out.append("|---|---|---|---|")
        for name, info in cls.model_fields.items():
            desc = (info.description or "").replace("|", "/")
            if not desc:
                desc = {"name": "unique name: letters, digits, space and - _ / + ( ) # &; "
                                "no dots",
                        "description": "free text shown in reports",
                        "in_service": "false takes the item out of the balance",
                        "priority": "sequence among the swing elements of its header: 1 "
                                    "moves first",
                        "share": "load share among swing elements of equal priority",
                        "kind": "kind of boiler"}.get(name, "")
            if not desc:
                desc = _MEANINGS.get((title, name)) or _MEANINGS.get(name, "")
            desc = _SI_UNIT.sub("", desc).strip()
            if not desc:
                raise ValueError(f"{title} field '{name}' has no meaning")
            out.append(f"| `{name}` | {_type_text(info)} | {_default_text(name, info)} | "
                       f"{desc} |")
        out.append("")
    return "\n".join(out)


def station_limit_table() -> str:
    """Markdown table of the station check limits: name, default, source."""
    from .stations import StationLimits
    lim = StationLimits()
    units = {"fraction": ("%", 100.0), "temperature_difference": ("K", 1.0),
             "pressure_difference": ("bar", 1e-5), "velocity": ("m/s", 1.0),
             "time": ("s", 1.0), "ratio": (":1", 1.0),
             "sound_level": ("dB(A)", 1.0)}
    out = ["### [station_limits] and a let-down's `limits`", "",
           "Limits of the station checks (docs/checks/). `[station_limits]` sets them "
           "for the site; a let-down's `limits = { ... }` table overrides them for that "
           "station. Write each with its unit, e.g. `spray_capacity_warn = \"80 %\"`, "
           "`approach_fail = \"6 K\"`, `spray_pressure_margin_fail = \"5 bar\"`.", "",
           "| limit | default | source of the default |", "|---|---|---|"]
    for name in StationLimits.names():
        kind = StationLimits.LIMIT_KINDS[name]
        unit, scale = units[kind]
        val = getattr(lim, name) * scale
        shown = f"{val:g}:1" if unit == ":1" else f"{val:g} {unit}"
        out.append(f"| `{name}` | {shown} | {StationLimits.LIMIT_SOURCES[name]} |")
    return "\n".join(out) + "\n"


def render(text: str) -> str:
    """``text`` with the generated part replaced."""
    if BEGIN not in text or END not in text:
        raise ValueError("markers not found")
    head, rest = text.split(BEGIN, 1)
    _, tail = rest.split(END, 1)
    return f"{head}{BEGIN}\n{field_tables()}\n{station_limit_table()}\n{END}{tail}"


def main(path: str = "docs/model-file.md") -> int:
    p = Path(path)
    p.write_text(render(p.read_text(encoding="utf-8")), encoding="utf-8")
    print(f"updated {p}")
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main(*sys.argv[1:]))
