"""Reading case tables and hourly profiles into a :class:`~steamnet.model.cases.CaseSet`.

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
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import ModelError, ModelErrors
from ..model.cases import BASE, MAX_ERRORS, CaseSet, CaseSpec
from ..model.chain import CaseLoop, case_chain
from ..model.fields import FieldKind, name_list, resolve_key
from ..model.model import Model
from ..model.schema import SI
from .readfile import check_input
from .textsafe import control_error, has_controls
from ..units import Kind, parse_quantity, unit_factor

__all__ = ["read_case_table"]

_SPECIAL = ("case", "based_on", "description", "timestamp")
_HEADING_RE = re.compile(r"^\s*(?P<key>[^\[\]]+?)\s*(?:\[(?P<unit>[^\[\]]*)\])?\s*$")
_TRUE = {"true", "yes", "1", "on"}
_FALSE = {"false", "no", "0", "off"}


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


def _column_converter(model: Model, f: FieldKind, unit: str | None):
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


def _convert_plain(series: pd.Series, f: FieldKind) -> list:
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
                             f"{name_list(c.name for c in model.cases)})", file=model.source,
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
        f = resolve_key(model, key)
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
        raise ModelErrors(errors[:MAX_ERRORS])
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
                    f"(model cases: {name_list(model_cases)})", file=src,
                    item=f"row {rownum[i]} (case '{names[i]}')", field="based_on"))
            based[i] = b
    desc = [""] * len(names)
    if "description" in cols:
        desc = ["" if _is_empty(v) else str(v).strip()
                for v in rows.iloc[:, cols["description"]]]
    errors.extend(_loops(names, based, rownum, src))
    if errors:
        raise ModelErrors(errors[:MAX_ERRORS])
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
        try:
            case_chain(n, lambda x: parent[x] if parent.get(x) in parent else None)
        except CaseLoop as loop:
            out.append(ModelError(f"cases are based on each other in a loop "
                                  f"({' -> '.join(loop.chain)})", file=src,
                                  item=f"row {row[n]} (case '{n}')", field="based_on"))
    return out
