"""Generate the field tables of docs/model-file.md from the schema classes.

``python -m steamnet.model.docgen`` rewrites the part of docs/model-file.md between the
markers ``<!-- fields:begin -->`` and ``<!-- fields:end -->``; tests/test_docs.py fails
when the file is out of date, so the reference is never a second copy of the schema.
"""

from __future__ import annotations

import sys
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


def _type_text(info: FieldInfo) -> str:
    kind = _kind_of(info)
    if kind is not None:
        return _KIND_UNITS[kind]
    ann = info.annotation
    args = typing.get_args(ann)
    origin = typing.get_origin(ann)
    if origin is typing.Literal:
        return "one of " + ", ".join(f"`{a}`" for a in args)
    for a in args:
        if typing.get_origin(a) is typing.Literal:
            return "one of " + ", ".join(f"`{x}`" for x in typing.get_args(a))
    if ann is bool:
        return "`true` or `false`"
    if ann is int:
        return "whole number"
    if ann is str or str in args:
        return "text"
    name = getattr(ann, "__name__", str(ann))
    if "list" in str(ann):
        see_below = any(k in str(ann) for k in ("Extraction", "Relief"))
        item = _list_item_kind(ann)
        if see_below:
            return "list (see below)"
        if item is None or item is Kind.FRACTION:
            return "list of fractions"
        return "list, each a " + _KIND_UNITS[item]
    if "dict" in str(ann):
        return "table"
    return name.replace("NoneType", "").strip("| ")


def _default_text(name: str, info: FieldInfo) -> str:
    if info.is_required():
        return "required"
    d = info.default
    if d is None:
        if info.default_factory is not None:
            return "empty"
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
        return f"{d:g} (SI)"
    return f"`{d}`"


def field_tables() -> str:
    """Markdown tables of every model-file table and field."""
    out = []
    for title, cls in _TABLES:
        doc = (cls.__doc__ or "").strip().splitlines()[0]
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
            if desc.endswith("]") and "[" in desc:
                desc = desc[: desc.rfind("[")].rstrip()
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
