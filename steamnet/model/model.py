"""The plant model: read from a TOML file, validated, and varied case by case.

A :class:`Model` holds one validated item per row of each table (SI values), the raw
text of every item (for case changes and for the workbook's "inputs as read" sheet), the
operating cases and where it came from (file name, SHA-256). It is immutable: a case is
a new Model made by :meth:`Model.with_changes`; the solver never writes into it.
"""

from __future__ import annotations

import copy
import hashlib
import tomllib
from dataclasses import dataclass, field, replace
from functools import cached_property
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from .._version import FORMAT_VERSION
from ..errors import ModelError, ModelErrors
from ..io.readfile import check_model_size, read_input
from .schema import EQUIPMENT_TABLES, NAME_RE, SI, Case, Prices, Site

__all__ = ["Model", "load_model", "loads_model", "ITEM_LABELS"]

#: How an item is named in messages: table -> label.
ITEM_LABELS = {
    "header": "header", "water_supply": "water supply", "boiler": "boiler",
    "steam_transfer": "steam transfer", "turbine": "turbine",
    "extraction_turbine": "extraction turbine", "letdown": "letdown", "user": "user",
    "vent": "vent", "deaerator": "deaerator", "case": "case", "site": "site",
    "prices": "prices",
}

_TOP_KEYS = {"format_version", "site", "prices", "station_limits", "case",
             *EQUIPMENT_TABLES}


def _label(table: str, name: Any) -> str:
    return f"{ITEM_LABELS.get(table, table)} '{name}'"


def _pydantic_errors(exc: ValidationError, *, file: str | None, item: str,
                     prefix: str = "") -> list[ModelError]:
    out = []
    for err in exc.errors():
        loc = [str(p) for p in err.get("loc", ())]
        fld = ".".join(loc) if loc else None
        if prefix:
            fld = f"{prefix}.{fld}" if fld else prefix
        msg = err.get("msg", "invalid value")
        typ = err.get("type", "")
        if msg.startswith("Value error, "):
            msg = msg[len("Value error, "):]
        cause = (err.get("ctx") or {}).get("error")
        if getattr(cause, "field", None):
            fld = ".".join([*loc, cause.field]) if loc else cause.field
            if prefix:
                fld = f"{prefix}.{fld}"
            written = (err.get("input") or {}).get(cause.field) \
                if isinstance(err.get("input"), dict) else None
            # as the user wrote it; a value a case table converted to SI from the unit
            # of its column heading is not what the user wrote (the heading is named)
            if isinstance(written, (str, int, float)) and \
                    not isinstance(written, (bool, SI)):
                msg = f"{msg} (written {written!r})"
        if typ == "extra_forbidden":
            msg = "unknown key (check the spelling; see docs/model-file.md)"
        elif typ == "missing":
            msg = "required field is missing"
        elif typ == "literal_error":
            msg = f"{msg}, got {err.get('input')!r}"
        out.append(ModelError(msg, file=file, item=item, field=fld))
    return out


@dataclass(frozen=True)
class Model:
    """A validated plant model (one operating point: the base, or one case).

    Attributes
    ----------
    site, prices
        Site data and prices (SI).
    items : dict[str, dict[str, object]]
        table -> item name -> validated item (see :mod:`steamnet.model.schema`).
    raw : dict[str, dict[str, dict]]
        The same items as written in the file (text with units).
    station_limits : dict
        The ``[station_limits]`` table as written (parsed by the station checks).
    cases : tuple[Case, ...]
        Operating cases of the file.
    source, sha256 : str
        Model file name and the SHA-256 of its bytes.
    case_name : str or None
        The case this model represents (None for the base).
    """

    site: Site
    prices: Prices
    items: dict[str, dict[str, Any]]
    raw: dict[str, dict[str, dict]]
    station_limits: dict = field(default_factory=dict)
    cases: tuple[Case, ...] = ()
    source: str = "<model>"
    sha256: str = ""
    case_name: str | None = None

    # ------------------------------------------------------------------ graph
    @cached_property
    def graph(self):
        """The network as a networkx graph of headers and in-service equipment
        (:func:`steamnet.graph.build_graph`), built once per model on first use."""
        from ..graph import build_graph
        return build_graph(self)

    # --------------------------------------------------------------- item access
    def table(self, name: str) -> dict[str, Any]:
        """Items of one table by name (empty dict when the table is absent)."""
        return self.items.get(name, {})

    @property
    def headers(self) -> dict[str, Any]:
        return self.table("header")

    def context(self) -> dict:
        """Validation context: atmospheric pressure and currency of the site."""
        return {"p_atm": self.site.atmospheric_pressure, "currency": self.site.currency}

    def case(self, name: str) -> Case:
        for c in self.cases:
            if c.name == name:
                return c
        raise ModelError(f"no case named '{name}' (cases: "
                         f"{', '.join(c.name for c in self.cases) or 'none'})",
                         file=self.source)

    # ------------------------------------------------------------ case changes
    def for_case(self, name: str) -> "Model":
        """This model with the changes of case ``name`` (and the cases it is based on)."""
        chain: list[Case] = []
        seen = set()
        c = self.case(name)
        while c is not None:
            if c.name in seen:
                raise ModelError("cases are based on each other in a loop",
                                 file=self.source, item=_label("case", c.name),
                                 field="based_on")
            seen.add(c.name)
            chain.append(c)
            c = self.case(c.based_on) if c.based_on else None
        m = self
        for c in reversed(chain):
            m = m.with_changes(c.changes, origin=_label("case", c.name))
        return replace(m, case_name=name)

    def with_changes(self, changes: dict[str, Any], *, origin: str = "changes") -> "Model":
        """A copy with ``'table.item.field' = value`` changes applied and re-validated.

        Only the changed items are validated again. Errors name ``origin`` (the case or
        the table row) and the change key.
        """
        if not changes:
            return self
        # tables are copied when first changed; the others are shared with this model
        # (models are never modified, so the case and its base can hold the same ones)
        raw = dict(self.raw)
        copied: set[str] = set()
        site_raw = dict(self.raw.get("_site", {}).get("site", {}))
        prices_raw = dict(self.raw.get("_prices", {}).get("prices", {}))
        touched: set[tuple[str, str]] = set()
        site_touched = prices_touched = False
        for key, value in changes.items():
            parts = str(key).split(".")
            if parts[0] == "site" and len(parts) == 2:
                site_raw[parts[1]] = value
                site_touched = True
                continue
            if parts[0] == "prices" and len(parts) == 2:
                prices_raw[parts[1]] = value
                prices_touched = True
                continue
            if len(parts) < 3 or parts[0] not in EQUIPMENT_TABLES:
                raise ModelError(f"change '{key}' is not of the form 'table.item.field' "
                                 f"(tables: {', '.join(EQUIPMENT_TABLES)}, site, prices)",
                                 file=self.source, item=origin, field=str(key))
            table, item, path = parts[0], parts[1], parts[2:]
            if item not in raw.get(table, {}):
                known = ", ".join(raw.get(table, {})) or "none"
                raise ModelError(f"change '{key}': no {ITEM_LABELS[table]} named '{item}' "
                                 f"(known: {known})", file=self.source, item=origin,
                                 field=str(key))
            if (table, item) not in touched:
                if table not in copied:
                    raw[table] = dict(raw[table])
                    copied.add(table)
                raw[table][item] = _copy_raw(raw[table][item])
                touched.add((table, item))
            _set_path(raw[table][item], path, value, key=str(key), file=self.source,
                      origin=origin)
        site, prices = self.site, self.prices
        if site_touched:
            site = _validate_one(Site, site_raw, file=self.source, item=origin,
                                 context={}, prefix="site")
        ctx = {"p_atm": site.atmospheric_pressure, "currency": site.currency}
        if prices_touched:
            prices = _validate_one(Prices, prices_raw, file=self.source, item=origin,
                                   context=ctx, prefix="prices")
        items = dict(self.items)
        if site_touched and (site.atmospheric_pressure != self.site.atmospheric_pressure
                             or site.currency != self.site.currency):
            # gauge pressures and prices depend on the site: validate everything again
            touched = {(t, n) for t, rows in raw.items() if t in EQUIPMENT_TABLES
                       for n in rows}
        errors: list[ModelError] = []
        for table in {t for t, _ in touched}:
            items[table] = dict(items.get(table, {}))
        for table, item in sorted(touched):
            try:
                items[table][item] = _validate_one(
                    EQUIPMENT_TABLES[table], raw[table][item], file=self.source,
                    item=f"{origin}: {_label(table, item)}", context=ctx)
            except ModelErrors as exc:
                errors.extend(exc.errors)
        if errors:
            raise ModelErrors(errors)
        if site_touched or "_site" not in raw:
            raw["_site"] = {"site": site_raw}
        if prices_touched or "_prices" not in raw:
            raw["_prices"] = {"prices": prices_raw}
        return replace(self, site=site, prices=prices, items=items, raw=raw)

    def with_values(self, changes: dict[str, Any], *,
                    origin: str = "changes") -> "Model":
        """:meth:`with_changes`, sharing this model's network graph when every change is
        to a field the graph does not depend on (``steamnet.graph.GRAPH_FREE_FIELDS``:
        demands, duties, make-up temperature, heat losses, prices ...), as in the cases
        of an hourly profile. The result is the same model; only the graph is not built
        again."""
        new = self.with_changes(changes, origin=origin)
        if new is not self and "graph" in self.__dict__ and graph_free(changes):
            new.__dict__["graph"] = self.__dict__["graph"]   # the cached_property's slot
        return new

    def with_item(self, table: str, data: dict, *, origin: str = "added item") -> "Model":
        """A copy with one more item (as written in a model file)."""
        if table not in EQUIPMENT_TABLES:
            raise ModelError(f"unknown table '{table}'", item=origin)
        name = data.get("name")
        if name in self.raw.get(table, {}):
            raise ModelError(f"a {ITEM_LABELS[table]} named '{name}' exists already",
                             item=origin, field="name")
        item = _validate_one(EQUIPMENT_TABLES[table], data, file=self.source,
                             item=f"{origin}: {_label(table, name)}",
                             context=self.context())
        raw = {t: dict(v) for t, v in self.raw.items()}
        raw.setdefault(table, {})[name] = copy.deepcopy(data)
        items = dict(self.items)
        items.setdefault(table, {})[name] = item
        return replace(self, items=items, raw=raw)


_ATOMS = (str, int, float, bool, type(None))


def _copy_raw(node: Any) -> Any:
    """A deep copy of an item as read from TOML (tables, arrays and scalars, which are
    immutable and kept), as copy.deepcopy makes, without its bookkeeping; anything else
    goes to deepcopy."""
    if isinstance(node, dict):
        return {k: v if isinstance(v, _ATOMS) else _copy_raw(v) for k, v in node.items()}
    if isinstance(node, list):
        return [v if isinstance(v, _ATOMS) else _copy_raw(v) for v in node]
    return copy.deepcopy(node)


def graph_free(changes: dict[str, Any]) -> bool:
    """Whether no change of ``changes`` (``'table.item.field'`` or ``'site.field'``
    keys) touches a field the network graph depends on."""
    from ..graph import GRAPH_FREE_FIELDS
    for key in changes:
        parts = str(key).split(".")
        table, fld = parts[0], parts[-1]
        if len(parts) != (2 if table in ("site", "prices") else 3) \
                or fld not in GRAPH_FREE_FIELDS.get(table, ()):
            return False
    return True


def _set_path(target: dict, path: list[str], value: Any, *, key: str, file: str,
              origin: str) -> None:
    node: Any = target
    for i, part in enumerate(path[:-1]):
        if isinstance(node, dict) and part == "extractions" and i + 1 < len(path):
            lst = node.get("extractions", [])
            hdr = path[i + 1]
            for ext in lst:
                if isinstance(ext, dict) and ext.get("header") == hdr:
                    node = {"__ext__": ext}
                    break
            else:
                raise ModelError(f"change '{key}': no extraction to header '{hdr}'",
                                 file=file, item=origin, field=key)
            continue
        if isinstance(node, dict) and "__ext__" in node:
            node = node["__ext__"]
            continue
        if not isinstance(node, dict):
            raise ModelError(f"change '{key}': '{part}' is not a table", file=file,
                             item=origin, field=key)
        node = node.setdefault(part, {})
    if isinstance(node, dict) and "__ext__" in node:
        node = node["__ext__"]
    if not isinstance(node, dict):
        raise ModelError(f"change '{key}' does not lead to a field", file=file,
                         item=origin, field=key)
    node[path[-1]] = value


def _validate_one(cls, data: Any, *, file: str | None, item: str, context: dict,
                  prefix: str = ""):
    if not isinstance(data, dict):
        raise ModelErrors([ModelError(f"expected a table of fields, got "
                                      f"{type(data).__name__}", file=file, item=item,
                                      field=prefix or None)])
    try:
        return cls.model_validate(data, context=context)
    except ValidationError as exc:
        raise ModelErrors(_pydantic_errors(exc, file=file, item=item, prefix=prefix)) \
            from None


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
            site = _validate_one(Site, site_raw, file=source, item="site", context={})
        except ModelErrors as exc:
            errors.extend(exc.errors)
    if site is None:
        raise ModelErrors(errors)
    ctx = {"p_atm": site.atmospheric_pressure, "currency": site.currency}
    prices_raw = doc.get("prices", {})
    prices = Prices()
    try:
        prices = _validate_one(Prices, prices_raw, file=source, item="prices", context=ctx)
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
            label = _label(table, name) if isinstance(name, str) else f"{table} #{i + 1}"
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
                obj = _validate_one(cls, row, file=source, item=label, context=ctx)
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
        label = _label("case", name) if isinstance(name, str) else f"case #{i + 1}"
        try:
            c = _validate_one(Case, row, file=source, item=label, context=ctx)
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
    from .validate import validate_model  # late import: validate uses Model
    validate_model(model)
    from ..stations.run import station_data
    station_data(model)          # station limits and valve data are checked on load
    for c in cases:
        if c.based_on is not None and not any(o.name == c.based_on for o in cases):
            errors.append(ModelError(f"based_on '{c.based_on}': no such case",
                                     file=source, item=_label("case", c.name),
                                     field="based_on"))
    if errors:
        raise ModelErrors(errors)
    for c in cases:
        try:
            validate_model(model.for_case(c.name))
        except ModelErrors as exc:
            errors.extend(e if e.item and "case" in e.item else
                          e.with_context(item=_label("case", c.name))
                          for e in exc.errors)
        except ModelError as exc:
            errors.append(exc)
    if errors:
        raise ModelErrors(errors)
    return model
