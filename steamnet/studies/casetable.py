"""Case sets beyond the model file: case tables and hourly profiles.

A *case table* (CSV or .xlsx, first sheet) has one row per case::

    case,based_on,description,user.PM1 dryer section.demand [t/h],turbine.TG1.mode
    spring,,mild weather,30,
    spring-TG1-trip,spring,TG1 tripped,,tripped

* ``case`` names the case; ``based_on`` (optional) names the case it starts from: another
  row of the same table or a case of the model file (empty: the base, see below);
  ``description`` (optional) is free text.
* Every other column is a change ``table.item.field`` as in a model file's
  ``[case.changes]``, with the unit in square brackets in the heading when the field is a
  quantity (``site.makeup_temperature [degC]``, ``user.Mill water heater.duty [MW]``). A
  fraction may be written with ``[%]`` or without a unit (0..1); text and mode columns
  (``turbine.TG1.mode``, ``boiler.B3-HRSG.in_service``) have no unit.
* An empty cell leaves that field as the case it is based on has it.

An *hourly profile* has a ``timestamp`` column instead of ``case`` (8,760 rows for a
year); each row is a case named by its timestamp (``2025-01-01 00:00``), derived from the
base case.

The *base* of a set is a case of the model file named by the caller (``--base`` on the
command line), or the model without case changes when none is named.

Each column's unit is parsed once (:func:`steamnet.units.unit_factor`) and the column is
converted as a whole; the values reach the model as :class:`~steamnet.model.schema.SI`.
Every problem is a :class:`~steamnet.errors.ModelError` naming the table file, the row
(counted as a spreadsheet shows it: the heading is row 1) and the column.
"""

from __future__ import annotations

import math
import re
import types
import typing
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Callable, Iterable, Literal, Union

import numpy as np
import pandas as pd
from pydantic import BaseModel

from ..errors import ModelError, ModelErrors
from ..io.readfile import check_input
from ..io.textsafe import control_error, has_controls
from ..model.model import ITEM_LABELS, Model
from ..model.schema import EQUIPMENT_TABLES, SI, Prices, Site
from ..model.validate import validate_model, validate_value_changes
from ..units import Kind, parse_quantity, unit_factor

__all__ = ["CaseSpec", "CaseSet", "read_case_table", "model_case_set", "BASE"]

#: Name of the model without case changes.
BASE = "base"

_SPECIAL = ("case", "based_on", "description", "timestamp")
_HEADING_RE = re.compile(r"^\s*(?P<key>[^\[\]]+?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
_MAX_ERRORS = 50
_TRUE = {"true", "yes", "1", "on"}
_FALSE = {"false", "no", "0", "off"}


# ------------------------------------------------------------------ case specs
@dataclass(frozen=True)
class CaseSpec:
    """One case of a set: where it starts from and what it changes.

    Attributes
    ----------
    name : str
        Case name (a timestamp for an hourly profile).
    based_on : str or None
        Case it starts from (a row of the same table or a model-file case); None: the
        base of the set.
    description : str
        Free text.
    changes : dict
        ``'table.item.field'`` -> value (quantities as :class:`SI`).
    row : int or None
        Row in the table file (heading = row 1); None for a case of the model file.
    """

    name: str
    based_on: str | None = None
    description: str = ""
    changes: dict = field(default_factory=dict)
    row: int | None = None


class CaseSet:
    """An ordered set of cases on one model: model-file cases, table rows, or both.

    Use :meth:`build` to get the validated :class:`~steamnet.model.Model` of a case;
    models that other cases derive from are cached, so an hourly profile costs one
    ``for_case`` of its base.
    """

    def __init__(self, model: Model, specs: Iterable[CaseSpec], *, source: str | None = None,
                 base: str | None = None, headings: dict[str, str] | None = None,
                 order: Iterable[str] | None = None, kind: str = "model"):
        self.model = model
        self.specs: dict[str, CaseSpec] = {s.name: s for s in specs}
        self.order: list[str] = list(order) if order is not None else list(self.specs)
        self.source = source
        self.base = base
        self.kind = kind                  # "model", "table" or "profile"
        self._headings = headings or {}   # change key -> column heading
        self._parents = {s.based_on or base for s in self.specs.values()} - {None}
        self._cache: dict[str, Model] = {}
        self._valid: dict[int, tuple[Model, bool]] = {}   # id -> (model, passed)

    # ---------------------------------------------------------------- access
    @property
    def names(self) -> list[str]:
        return list(self.order)

    def __len__(self) -> int:
        return len(self.order)

    def __iter__(self):
        return iter(self.order)

    def select(self, names: Iterable[str] | None) -> "CaseSet":
        """The same set restricted to ``names`` (all when None or empty); derivations
        from cases left out still work."""
        names = list(names or [])
        if not names:
            return self
        for n in names:
            if n not in self.specs:
                where = self.source or self.model.source
                raise ModelError(f"no case named '{n}' (cases: "
                                 f"{_list(self.order)})", file=where, item="option --case")
        cs = CaseSet(self.model, self.specs.values(), source=self.source, base=self.base,
                     headings=self._headings, order=names, kind=self.kind)
        return cs

    def description(self, name: str) -> str:
        s = self.specs[name]
        if s.row is None and s.name != BASE:
            return self.model.case(s.name).description
        return s.description

    # ---------------------------------------------------------------- building
    def build(self, name: str) -> Model:
        """The validated model of case ``name`` (``case_name`` set).

        Raises
        ------
        ModelErrors
            A change is not valid for its field, or the case model fails validation;
            errors name the table file, the row and the column.
        """
        if name in self._cache:
            return self._cache[name]
        m = self._build(name, set())
        if name in self._parents:
            self._cache[name] = m
        return m

    def _build(self, name: str, seen: set) -> Model:
        if name in self._cache:
            return self._cache[name]
        spec = self.specs.get(name)
        if spec is None or spec.row is None:
            return self._model_case(name)
        if name in seen:   # guarded at read time; kept for API-built sets
            raise ModelError("cases are based on each other in a loop", file=self.source,
                             item=_row_label(spec), field="based_on")
        parent_name = spec.based_on or self.base
        if parent_name is None:
            parent = self.model
        elif parent_name in self.specs and self.specs[parent_name].row is not None:
            parent = self._build(parent_name, seen | {name})
            if parent_name in self._parents:
                self._cache[parent_name] = parent
        else:
            parent = self._model_case(parent_name)
        try:
            m = parent.with_values(spec.changes, origin=_row_label(spec))
        except ModelError as exc:
            raise self._wrap(spec, exc) from None
        m = replace(m, case_name=spec.name)
        try:
            # a row that changes only values validation never reads (demands, duties,
            # heat losses, prices), on a valid parent, is checked for what they touch
            if not (self._passes(parent) and validate_value_changes(m, spec.changes)):
                validate_model(m)
        except ModelError as exc:
            raise self._wrap(spec, exc, validation=True) from None
        return m

    def _passes(self, m: Model) -> bool:
        """Whether ``m`` (a parent of rows) passes validation; asked once per model."""
        got = self._valid.get(id(m))
        if got is None:
            try:
                validate_model(m)
                ok = True
            except ModelError:
                ok = False
            got = self._valid[id(m)] = (m, ok)     # the model kept: its id stays its own
        return got[1]

    def _model_case(self, name: str) -> Model:
        if name in self._cache:
            return self._cache[name]
        if name == BASE and not any(c.name == BASE for c in self.model.cases):
            m = self.model
        else:
            m = self.model.for_case(name)
            validate_model(m)
            self._valid[id(m)] = (m, True)
        if name in self._parents:
            self._cache[name] = m
        return m

    def check(self, progress: Callable[[int, int, str], None] | None = None) -> None:
        """Build and validate every case; raise one :class:`ModelErrors` listing the
        problems of every row (up to 50)."""
        errors: dict[str, ModelError] = {}   # by text: a bad parent shows once
        n = len(self.order)
        for i, name in enumerate(self.order):
            try:
                self.build(name)
            except ModelError as exc:
                for e in getattr(exc, "errors", [exc]):
                    errors.setdefault(str(e), e)
            if len(errors) >= _MAX_ERRORS:
                break
            if progress:
                progress(i + 1, n, name)
        if errors:
            raise ModelErrors(list(errors.values()))

    def _wrap(self, spec: CaseSpec, exc: ModelError, validation: bool = False) -> ModelErrors:
        out = []
        for e in getattr(exc, "errors", [exc]):
            heading = self._heading_for(spec, e)
            what = e.item or ""
            # drop the origin prefix added by with_changes ("row 3 (case 'x'): ")
            prefix = _row_label(spec) + ": "
            what = what[len(prefix):] if what.startswith(prefix) else what
            if what == _row_label(spec):
                what = ""
            case_prefix = f"case '{spec.name}': "
            what = what[len(case_prefix):] if what.startswith(case_prefix) else what
            msg = e.message
            if what and heading is None:
                msg = f"{what}: {msg}" + (f" (field '{e.field}')" if e.field else "")
            elif what:
                msg = f"{what}: {msg}"
            out.append(ModelError(msg, file=self.source, item=_row_label(spec),
                                  field=heading))
        return ModelErrors(out)

    def _heading_for(self, spec: CaseSpec, e: ModelError) -> str | None:
        """The column a model error comes from: the change key itself, or the column
        changing the field of the item the error names."""
        if e.field in self._headings and e.field in spec.changes:
            return self._headings[e.field]
        keys = [k for k in spec.changes if k in self._headings]
        item = e.item or ""
        cands = []
        for k in keys:
            parts = k.split(".")
            if parts[0] in ("site", "prices"):
                if e.field and (e.field == k or e.field.startswith(parts[0])):
                    cands.append(k)
                continue
            label = f"{ITEM_LABELS[parts[0]]} '{parts[1]}'"
            if item.endswith(label):
                cands.append(k)
        if not cands:
            return None
        exact = [k for k in cands if e.field and _field_of(k) == e.field]
        pick = exact or cands
        return ", ".join(self._headings[k] for k in pick)


def _field_of(key: str) -> str:
    parts = key.split(".")
    return ".".join(parts[1:]) if parts[0] in ("site", "prices") else ".".join(parts[2:])


def _row_label(spec: CaseSpec) -> str:
    return f"row {spec.row} (case '{spec.name}')" if spec.row is not None \
        else f"case '{spec.name}'"


def _list(names: Iterable[str], most: int = 12) -> str:
    names = list(names)
    text = ", ".join(names[:most])
    return text + (f", ... ({len(names)} in all)" if len(names) > most else "") or "none"


def model_case_set(model: Model, names: Iterable[str] | None = None) -> CaseSet:
    """The cases of the model file (all, or ``names``), or the base model alone when
    the file has no cases."""
    specs = [CaseSpec(c.name, c.based_on, c.description) for c in model.cases]
    if not specs:
        specs = [CaseSpec(BASE, None, "the model without case changes")]
    cs = CaseSet(model, specs, kind="model")
    names = list(names or [])
    if names:
        for n in names:
            model.case(n)  # raises naming the known cases
        cs = cs.select(names)
    return cs


# ------------------------------------------------------------ field resolution
@dataclass(frozen=True)
class _Field:
    kind: Kind | None = None               # quantity measured, or None
    py: type | None = None                  # bool, int, str for other fields
    choices: tuple[str, ...] | None = None  # allowed text (modes)


def _unwrap(ann):
    meta = []
    while True:
        origin = typing.get_origin(ann)
        if origin is typing.Annotated:
            args = typing.get_args(ann)
            ann, meta = args[0], meta + list(args[1:])
            continue
        if origin in (Union, types.UnionType):
            args = [a for a in typing.get_args(ann) if a is not type(None)]
            if len(args) == 1:
                ann = args[0]
                continue
        return ann, meta


def _quantity_kind(meta) -> Kind | None:
    for m in meta:
        k = getattr(getattr(m, "func", None), "kind", None)
        if k is not None:
            return k
    return None


def _resolve(cls: type[BaseModel], path: list[str], raw_item: dict | None) -> _Field | str:
    """The field at ``path`` in ``cls``, or a message saying why it does not exist."""
    name = path[0]
    if name not in cls.model_fields:
        known = ", ".join(f for f in cls.model_fields if f != "name")
        return f"no field '{name}' (fields: {known})"
    fi = cls.model_fields[name]
    ann, meta = _unwrap(fi.annotation)
    meta = list(fi.metadata) + meta
    rest = path[1:]
    if isinstance(ann, type) and issubclass(ann, BaseModel):
        if not rest:
            return f"'{name}' is a table; name one of its fields, e.g. '{name}.<field>'"
        sub = raw_item.get(name) if isinstance(raw_item, dict) else None
        return _resolve(ann, rest, sub if isinstance(sub, dict) else None)
    if typing.get_origin(ann) is list:
        (elem,) = typing.get_args(ann) or (None,)
        elem, _ = _unwrap(elem)
        if isinstance(elem, type) and issubclass(elem, BaseModel) and name == "extractions":
            if len(rest) < 2:
                return "write 'extractions.<header>.<field>'"
            exts = (raw_item or {}).get("extractions", [])
            if not any(isinstance(x, dict) and x.get("header") == rest[0] for x in exts):
                return f"no extraction to header '{rest[0]}'"
            return _resolve(elem, rest[1:], None)
        return f"'{name}' is a list and cannot be changed from a table column"
    if rest:
        return f"'{name}' has no parts ('{'.'.join(rest)}')"
    kind = _quantity_kind(meta)
    if kind is not None:
        return _Field(kind=kind)
    if typing.get_origin(ann) is Literal:
        return _Field(py=str, choices=tuple(str(a) for a in typing.get_args(ann)))
    if ann in (bool, int, str, float):
        return _Field(py=ann)
    return f"'{name}' cannot be changed from a table column"


def _resolve_key(model: Model, key: str) -> _Field | str:
    parts = key.split(".")
    if parts[0] in ("site", "prices"):
        if len(parts) != 2:
            return f"write '{parts[0]}.<field>'"
        cls = Site if parts[0] == "site" else Prices
        return _resolve(cls, parts[1:], None)
    if parts[0] not in EQUIPMENT_TABLES:
        return (f"'{parts[0]}' is not a table (tables: {', '.join(EQUIPMENT_TABLES)}, "
                "site, prices)")
    if len(parts) < 3:
        return "a change column is written 'table.item.field [unit]'"
    table, item = parts[0], parts[1]
    raw = model.raw.get(table, {})
    if item not in raw:
        return f"no {ITEM_LABELS[table]} named '{item}' (known: {_list(raw)})"
    return _resolve(EQUIPMENT_TABLES[table], parts[2:], raw[item])


# ----------------------------------------------------------------- converting
class _CellError(Exception):
    def __init__(self, index: int, message: str):
        super().__init__(message)
        self.index, self.message = index, message


def _is_empty(v) -> bool:
    if v is None:
        return True
    if isinstance(v, float) and math.isnan(v):
        return True
    return isinstance(v, str) and not v.strip()


def _column_converter(model: Model, f: _Field, unit: str | None):
    """A function series -> list of values (None where the cell is empty); raises
    ModelError for a unit that does not fit, _CellError for a bad cell."""
    if f.kind is None:
        if unit:
            raise ModelError(f"this field takes no unit; remove '[{unit}]' from the heading")
        return lambda s: _convert_plain(s, f)
    kind = Kind(f.kind)
    u = (unit or "").strip()
    if kind in (Kind.PRICE_ENERGY, Kind.PRICE_MASS):
        if not u:
            raise ModelError(f"a price needs its unit in the heading, e.g. "
                             f"'[{model.site.currency}/GJ]'")
        scale = parse_quantity(f"1 {u}", kind, currency=model.site.currency)
        offset, gauge = 0.0, False
    elif kind is Kind.RATIO and u not in ("", "-"):
        raise ModelError("a ratio column takes no unit; write the ratio as a number "
                         "(10 for '10:1')")
    else:
        if not u and kind not in (Kind.FRACTION, Kind.NUMBER, Kind.RATIO):
            raise ModelError(f"the heading needs the unit in brackets, e.g. "
                             f"'... [{_example_unit(kind)}]'")
        scale, offset, gauge = unit_factor(u, kind)   # once per column
    if gauge:
        offset += model.site.atmospheric_pressure
    return lambda s: _convert_numbers(s, scale, offset)


def _example_unit(kind: Kind) -> str:
    return {Kind.PRESSURE: "bar(g)", Kind.TEMPERATURE: "degC", Kind.MASS_FLOW: "t/h",
            Kind.POWER: "MW", Kind.TEMPERATURE_DIFFERENCE: "K", Kind.LENGTH: "mm",
            Kind.TIME: "s", Kind.STEAM_RATE: "t/MWh",
            Kind.FLOW_COEFFICIENT: "Kv"}.get(kind, "unit")


def _convert_numbers(series: pd.Series, scale: float, offset: float) -> list:
    empty = series.map(_is_empty).to_numpy(bool)
    bools = series.map(lambda v: isinstance(v, (bool, np.bool_))).to_numpy(bool)
    num = pd.to_numeric(series.where(~empty), errors="coerce").to_numpy(float)
    bad = (~empty & ~np.isfinite(num)) | bools
    if bad.any():
        i = int(np.argmax(bad))
        raise _CellError(i, f"{series.iloc[i]!r} is not a number (the unit is in the "
                            "heading; write the number only)")
    si = num * scale + offset
    return [None if e else SI(v) for e, v in zip(empty, si)]


def _convert_plain(series: pd.Series, f: _Field) -> list:
    out = []
    for i, v in enumerate(series):
        if _is_empty(v):
            out.append(None)
            continue
        if f.py is bool:
            if isinstance(v, (bool, np.bool_)):
                out.append(bool(v))
                continue
            t = str(v).strip().lower()
            if t in _TRUE or t in _FALSE:
                out.append(t in _TRUE)
                continue
            raise _CellError(i, f"{v!r} is not true or false")
        if f.py is int:
            try:
                x = float(v)
                if x != int(x):
                    raise ValueError
                out.append(int(x))
                continue
            except (TypeError, ValueError):
                raise _CellError(i, f"{v!r} is not a whole number") from None
        if isinstance(v, float) and v == int(v):
            v = int(v)           # a spreadsheet's 3.0 in a text column
        text = str(v).strip()
        if f.choices is not None and text not in f.choices:
            raise _CellError(i, f"{text!r} is not allowed (allowed: "
                                f"{', '.join(f.choices)})")
        out.append(text)
    return out


# ------------------------------------------------------------------- reading
def _read_frame(path: Path) -> pd.DataFrame:
    suffix = path.suffix.lower()
    if not path.exists():
        raise ModelError("file not found", file=str(path))
    if path.is_dir():
        raise ModelError("is a folder, not a case table", file=str(path))
    check_input(path, "case table")
    try:
        if suffix == ".csv":
            return pd.read_csv(path, header=None, dtype=str, keep_default_na=False,
                               skip_blank_lines=False, encoding="utf-8-sig")
        if suffix in (".xlsx", ".xlsm"):
            return pd.read_excel(path, sheet_name=0, header=None, dtype=object,
                                 engine="openpyxl")
    except pd.errors.EmptyDataError:
        raise ModelError("the table is empty", file=str(path)) from None
    except pd.errors.ParserError as exc:
        raise ModelError(f"not a readable CSV table: {exc}", file=str(path)) from None
    except UnicodeDecodeError as exc:
        raise ModelError(f"not UTF-8 text (byte {exc.start})", file=str(path)) from None
    except (ValueError, OSError, KeyError) as exc:
        raise ModelError(f"cannot read the workbook: {exc}", file=str(path)) from None
    except Exception as exc:  # openpyxl raises its own errors on a damaged file
        raise ModelError(f"cannot read the table: {type(exc).__name__}: {exc}",
                         file=str(path)) from None
    raise ModelError("a case table is a .csv or .xlsx file", file=str(path))


def read_case_table(path: str | Path, model: Model, *, base: str | None = None,
                    check: bool = True,
                    progress: Callable[[int, int, str], None] | None = None) -> CaseSet:
    """Read a case table or an hourly profile (see the module docstring).

    Parameters
    ----------
    path : str or Path
        A .csv (UTF-8) or .xlsx file (first sheet).
    model : Model
        The model the changes apply to.
    base : str, optional
        Model-file case that rows without ``based_on`` (and every row of an hourly
        profile) start from; default the model without case changes.
    check : bool
        Build and validate every case now, so that a bad value is reported before
        anything is solved (about 1 ms a row).
    progress : callable, optional
        ``progress(done, total, name)`` while checking.

    Returns
    -------
    CaseSet
        The table's cases in row order.

    Raises
    ------
    ModelErrors
        Every problem found, each naming the file, the row and the column.
    """
    path = Path(path)
    src = str(path)
    if base is not None:
        if not any(c.name == base for c in model.cases):
            raise ModelError(f"no case named '{base}' in the model file (cases: "
                             f"{_list(c.name for c in model.cases)})", file=model.source,
                             item="option --base")
    frame = _read_frame(path)
    if frame.shape[0] < 1:
        raise ModelError("the table is empty", file=src)
    headings = ["" if _is_empty(h) else str(h).strip() for h in frame.iloc[0]]
    body = frame.iloc[1:].reset_index(drop=True)
    # drop wholly empty columns (trailing separators, spreadsheet leftovers)
    keep = [j for j, h in enumerate(headings)
            if h or not body.iloc[:, j].map(_is_empty).all()]
    errors: list[ModelError] = []
    cols: dict[str, int] = {}
    for j in keep:
        h = headings[j]
        if not h:
            errors.append(ModelError(f"column {j + 1} has values but no heading",
                                     file=src, item="row 1"))
            continue
        if h in cols:
            errors.append(ModelError("the same heading appears twice", file=src,
                                     item="row 1", field=h))
            continue
        cols[h] = j
    profile = "timestamp" in cols
    if profile and "case" in cols:
        errors.append(ModelError("give either a 'case' column (a case table) or a "
                                 "'timestamp' column (an hourly profile), not both",
                                 file=src, item="row 1"))
    if not profile and "case" not in cols:
        hint = ""
        if len(cols) == 1 and ";" in next(iter(cols)):
            hint = " (the file seems to use ';' between columns: save it comma-separated)"
        errors.append(ModelError("no 'case' column (or 'timestamp' for an hourly "
                                 f"profile) in the heading row{hint}", file=src,
                                 item="row 1"))
    if profile and "based_on" in cols:
        errors.append(ModelError("an hourly profile derives every row from the base "
                                 "case (option --base); remove the 'based_on' column",
                                 file=src, item="row 1", field="based_on"))
    # change columns: key, field, unit -> converter (unit parsed once per column)
    converters: dict[str, tuple[str, Callable]] = {}
    key_of: dict[str, str] = {}
    for h in cols:
        if h in _SPECIAL:
            continue
        m = _HEADING_RE.match(h)
        if not m:
            errors.append(ModelError("a change column is written 'table.item.field "
                                     "[unit]'", file=src, item="row 1", field=h))
            continue
        key, unit = m.group("key").strip(), m.group("unit")
        f = _resolve_key(model, key)
        if isinstance(f, str):
            errors.append(ModelError(f, file=src, item="row 1", field=h))
            continue
        if key in key_of:
            errors.append(ModelError(f"changes the same field as column "
                                     f"'{key_of[key]}'", file=src, item="row 1", field=h))
            continue
        try:
            conv = _column_converter(model, f, unit)
        except ModelError as exc:
            errors.append(ModelError(exc.message, file=src, item="row 1", field=h))
            continue
        key_of[key] = h
        converters[h] = (key, conv)
    if errors:
        raise ModelErrors(errors)
    # rows that are wholly empty are skipped (they keep the row numbering)
    used = [cols[h] for h in cols]
    nonempty = ~body.iloc[:, used].map(_is_empty).all(axis=1).to_numpy(bool)
    idx = np.flatnonzero(nonempty)
    if not len(idx):
        raise ModelError("the table has a heading row but no cases", file=src)
    rows = body.iloc[idx].reset_index(drop=True)
    rownum = [int(i) + 2 for i in idx]            # spreadsheet row numbers
    values: dict[str, list] = {}
    cell_errors: list[tuple[int, ModelError]] = []
    for h, (key, conv) in converters.items():
        try:
            values[h] = conv(rows.iloc[:, cols[h]])
        except _CellError as exc:
            cell_errors.append((exc.index, ModelError(
                exc.message, file=src, item=f"row {rownum[exc.index]}", field=h)))
    errors.extend(e for _, e in sorted(cell_errors, key=lambda p: p[0]))
    names = _case_names(rows, cols, rownum, profile, src, errors)
    if errors:
        raise ModelErrors(errors[:_MAX_ERRORS])
    model_cases = {c.name: None for c in model.cases}    # in file order, for messages
    seen: dict[str, int] = {}
    for i, n in enumerate(names):
        if n in seen:
            errors.append(ModelError(f"case '{n}' is also the name of row {seen[n]}",
                                     file=src, item=f"row {rownum[i]}",
                                     field="timestamp" if profile else "case"))
        elif n in model_cases or n == BASE:
            errors.append(ModelError(f"'{n}' is already a case of the model file; give "
                                     "the row a name of its own", file=src,
                                     item=f"row {rownum[i]}", field="case"))
        seen.setdefault(n, rownum[i])
    based = [None] * len(names)
    if "based_on" in cols:
        for i, v in enumerate(rows.iloc[:, cols["based_on"]]):
            if _is_empty(v):
                continue
            b = str(v).strip()
            if b not in seen and b not in model_cases:
                errors.append(ModelError(
                    f"based_on '{b}': no such case in this table or the model file "
                    f"(model cases: {_list(model_cases)})", file=src,
                    item=f"row {rownum[i]} (case '{names[i]}')", field="based_on"))
            based[i] = b
    desc = [""] * len(names)
    if "description" in cols:
        desc = ["" if _is_empty(v) else str(v).strip()
                for v in rows.iloc[:, cols["description"]]]
    errors.extend(_loops(names, based, rownum, src))
    if errors:
        raise ModelErrors(errors[:_MAX_ERRORS])
    specs = []
    for i, n in enumerate(names):
        changes = {key: values[h][i] for h, (key, _) in converters.items()
                   if values[h][i] is not None}
        specs.append(CaseSpec(n, based[i], desc[i], changes, rownum[i]))
    cs = CaseSet(model, specs, source=src, base=base,
                 headings={key: h for h, (key, _) in converters.items()},
                 kind="profile" if profile else "table")
    if check:
        cs.check(progress)
    return cs


def _case_names(rows, cols, rownum, profile, src, errors) -> list[str]:
    if not profile:
        out = []
        for i, v in enumerate(rows.iloc[:, cols["case"]]):
            if _is_empty(v):
                errors.append(ModelError("the case has no name", file=src,
                                         item=f"row {rownum[i]}", field="case"))
                out.append("")
            elif has_controls(str(v).strip()):
                errors.append(control_error(str(v).strip(), file=src,
                                            item=f"row {rownum[i]}", field="case"))
                out.append("")
            else:
                out.append(str(v).strip())
        return out
    col = rows.iloc[:, cols["timestamp"]]
    ts = pd.to_datetime(col.where(~col.map(_is_empty)), errors="coerce", format="mixed")
    bad = ts.isna().to_numpy(bool)
    if bad.any():
        i = int(np.argmax(bad))
        errors.append(ModelError(f"{col.iloc[i]!r} is not a date and time (write e.g. "
                                 "'2025-01-31 14:00')", file=src, item=f"row {rownum[i]}",
                                 field="timestamp"))
        return []
    return [t.strftime("%Y-%m-%d %H:%M") for t in ts]


def _loops(names, based, rownum, src) -> list[ModelError]:
    parent = {n: b for n, b in zip(names, based)}
    row = dict(zip(names, rownum))
    out = []
    for n in names:
        seen = [n]
        b = parent.get(n)
        while b is not None and b in parent:
            if b in seen:
                chain = " -> ".join(seen + [b])
                out.append(ModelError(f"cases are based on each other in a loop "
                                      f"({chain})", file=src,
                                      item=f"row {row[n]} (case '{n}')", field="based_on"))
                break
            seen.append(b)
            b = parent[b]
    return out
