"""A model file read into a validated :class:`~steamnet.model.model.Model`.

:func:`load_model` reads the file, :func:`loads_model` the TOML text: structure, units
and references of every item, then the checks across items
(:func:`steamnet.model.validate.validate_model`) on the base and on every case, and the
station data (parsed once and kept on the model). Every problem found is raised together
in one :class:`~steamnet.errors.ModelErrors`, each naming the file, the item and the
field.
"""

from __future__ import annotations

import copy
import difflib
import hashlib
import tomllib
from pathlib import Path
from typing import Any

from .._version import FORMAT_VERSION
from ..errors import ModelError, ModelErrors
from ..io.readfile import check_model_size, read_input
from .lines import unknown_tables
from .model import Model
from .parse import validate_item
from .schema import EQUIPMENT_TABLES, ITEM_LABELS, NAME_RE, Case, Prices, Site, item_label
from .validate import validate_model

__all__ = ["load_model", "loads_model"]

_TOP_KEYS = {"format_version", "site", "prices", "station_limits", "case",
             *EQUIPMENT_TABLES}


def loads_model(text: str | bytes, *, source: str = "<model>") -> Model:
    """Read a model from TOML text (see docs/model-file.md); validates structure, units
    and references, and raises :class:`ModelErrors` listing every problem found."""
    data = text if isinstance(text, bytes) else text.encode("utf-8")
    sha = hashlib.sha256(data).hexdigest()
    try:
        doc = tomllib.loads(data.decode("utf-8"))
    except UnicodeDecodeError as exc:
        raise ModelErrors([ModelError(f"not UTF-8 text (byte {exc.start})", file=source)]) \
            from None
    except tomllib.TOMLDecodeError as exc:
        stray = _unknown_tables(data.decode("utf-8"), source)
        if stray:      # a misspelt table name is what the reader stumbled on
            raise ModelErrors(stray) from None
        raise ModelErrors([ModelError(f"not valid TOML: {exc}", file=source)]) from None
    except ValueError as exc:   # e.g. an integer of more than 4300 digits
        raise ModelErrors([ModelError(f"not valid TOML: {exc}", file=source)]) from None
    except RecursionError:
        raise ModelErrors([ModelError("not valid TOML: arrays or tables nested too "
                                      "deeply", file=source)]) from None
    try:
        return _build(doc, source=source, sha256=sha)
    except RecursionError:
        raise ModelErrors([ModelError("values nested too deeply to be a model",
                                      file=source)]) from None


def load_model(path: str | Path) -> Model:
    """Read and validate a model file.

    Raises
    ------
    ModelErrors
        Every problem found, each naming the file, the item and the field.
    """
    p = Path(path)
    try:
        data = read_input(p, "model file")
    except FileNotFoundError:
        raise ModelErrors([ModelError("file not found", file=str(p))]) from None
    except IsADirectoryError:
        raise ModelErrors([ModelError("is a folder, not a model file", file=str(p))]) \
            from None
    except OSError as exc:
        raise ModelErrors([ModelError(f"cannot read: {exc.strerror}", file=str(p))]) \
            from None
    return loads_model(data, source=str(p))


def _unknown_tables(text: str, source: str) -> list[ModelError]:
    """A message for each table header the format does not have, with its line and the
    nearest table name."""
    out = []
    for line, written, key in unknown_tables(text, _TOP_KEYS):
        near = difflib.get_close_matches(key, sorted(_TOP_KEYS), n=1, cutoff=0.6)
        hint = f"; did you mean '{near[0]}'?" if near else ""
        out.append(ModelError(f"unknown table on line {line} (tables: "
                              f"{', '.join(sorted(_TOP_KEYS))}){hint}", file=source,
                              item=written))
    return out


def _build(doc: dict, *, source: str, sha256: str) -> Model:
    check_model_size(doc, source)
    errors: list[ModelError] = []
    for key in doc:
        if key not in _TOP_KEYS:
            errors.append(ModelError(f"unknown table or key '{key}' (allowed: "
                                     f"{', '.join(sorted(_TOP_KEYS))})", file=source,
                                     item=key))
    fv = doc.get("format_version")
    if fv is None:
        errors.append(ModelError(f"missing format_version (this program reads "
                                 f"format_version = {FORMAT_VERSION})", file=source,
                                 item="format_version"))
    elif fv != FORMAT_VERSION or isinstance(fv, bool):
        errors.append(ModelError(f"format_version {fv!r} is not supported (this program "
                                 f"reads {FORMAT_VERSION})", file=source,
                                 item="format_version"))
    site_raw = doc.get("site")
    site = None
    if site_raw is None:
        errors.append(ModelError("missing [site] table", file=source, item="site"))
    else:
        try:
            site = validate_item(Site, site_raw, file=source, item="site", context={})
        except ModelErrors as exc:
            errors.extend(exc.errors)
    if site is None:
        raise ModelErrors(errors)
    ctx = {"p_atm": site.atmospheric_pressure, "currency": site.currency}
    prices_raw = doc.get("prices", {})
    prices = Prices()
    try:
        prices = validate_item(Prices, prices_raw, file=source, item="prices", context=ctx)
    except ModelErrors as exc:
        errors.extend(exc.errors)
    items: dict[str, dict[str, Any]] = {}
    raw: dict[str, dict[str, dict]] = {"_site": {"site": site_raw},
                                       "_prices": {"prices": prices_raw}}
    equipment_names: dict[str, str] = {}
    for table, cls in EQUIPMENT_TABLES.items():
        rows = doc.get(table, [])
        if isinstance(rows, dict):
            rows = [rows] if table == "deaerator" else rows
        if not isinstance(rows, list):
            errors.append(ModelError(f"'{table}' must be written as [[{table}]] tables",
                                     file=source, item=table))
            continue
        items[table], raw[table] = {}, {}
        for i, row in enumerate(rows):
            name = row.get("name") if isinstance(row, dict) else None
            label = item_label(table, name) if isinstance(name, str) else f"{table} #{i + 1}"
            if isinstance(name, str) and NAME_RE.match(name):
                if name in items[table]:
                    errors.append(ModelError(f"duplicate name: another "
                                             f"{ITEM_LABELS[table]} is called '{name}'",
                                             file=source, item=label, field="name"))
                    continue
                if table != "header":
                    if name in equipment_names:
                        errors.append(ModelError(
                            f"name '{name}' is used by {equipment_names[name]} too; "
                            "equipment names must be unique", file=source, item=label,
                            field="name"))
                        continue
                    equipment_names[name] = label
            try:
                obj = validate_item(cls, row, file=source, item=label, context=ctx)
            except ModelErrors as exc:
                errors.extend(exc.errors)
                continue
            items[table][obj.name] = obj
            raw[table][obj.name] = copy.deepcopy(row)
    cases: list[Case] = []
    case_rows = doc.get("case", [])
    if not isinstance(case_rows, list):
        errors.append(ModelError("'case' must be written as [[case]] tables", file=source,
                                 item="case"))
        case_rows = []
    for i, row in enumerate(case_rows):
        name = row.get("name") if isinstance(row, dict) else None
        label = item_label("case", name) if isinstance(name, str) else f"case #{i + 1}"
        try:
            c = validate_item(Case, row, file=source, item=label, context=ctx)
        except ModelErrors as exc:
            errors.extend(exc.errors)
            continue
        if any(o.name == c.name for o in cases):
            errors.append(ModelError(f"duplicate case name '{c.name}'", file=source,
                                     item=label, field="name"))
            continue
        cases.append(c)
    sl = doc.get("station_limits", {})
    if not isinstance(sl, dict):
        errors.append(ModelError("'station_limits' must be a table", file=source,
                                 item="station_limits"))
        sl = {}
    if errors:
        raise ModelErrors(errors)
    model = Model(site=site, prices=prices, items=items, raw=raw, station_limits=sl,
                  cases=tuple(cases), source=source, sha256=sha256)
    validate_model(model)
    model.stations               # station limits and valve data are checked on load
    for c in cases:
        if c.based_on is not None and not any(o.name == c.based_on for o in cases):
            errors.append(ModelError(f"based_on '{c.based_on}': no such case (cases: "
                                     f"{', '.join(o.name for o in cases)})",
                                     file=source, item=item_label("case", c.name),
                                     field="based_on"))
    if errors:
        raise ModelErrors(errors)
    for c in cases:
        try:
            validate_model(model.for_case(c.name))
        except ModelErrors as exc:
            errors.extend(e if e.item and "case" in e.item else
                          e.with_context(item=item_label("case", c.name))
                          for e in exc.errors)
        except ModelError as exc:
            errors.append(exc)
    if errors:
        raise ModelErrors(errors)
    return model
