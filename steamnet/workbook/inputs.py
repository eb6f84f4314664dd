"""The inputs as read: every item of the model file with its fields and the text as
written (units included), so that a run can be traced to its file."""

from __future__ import annotations

import datetime as _dt
from typing import Iterator

from .columns import Column
from .run import Run
from .sheet import Table

__all__ = ["inputs_table", "flatten", "as_written"]

_LABELS = {"_site": "site", "_prices": "prices"}


def as_written(v) -> object:
    """A value as the model file wrote it: text and numbers as they are, booleans and
    lists in TOML spelling."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (int, float, str)):
        return v
    if isinstance(v, (_dt.date, _dt.time)):
        return v.isoformat()
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_scalar(x) for x in v) + "]"
    return str(v)


def _toml_scalar(v) -> str:
    if isinstance(v, str):
        return '"' + v.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{k} = {_toml_scalar(x)}" for k, x in v.items()) + "}"
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(_toml_scalar(x) for x in v) + "]"
    return str(v)


def flatten(data: dict, prefix: str = "") -> Iterator[tuple[str, object]]:
    """(dotted field, value as written) for every leaf of an item's table; a list of
    tables (e.g. a turbine's extractions) is numbered from 1."""
    for k, v in data.items():
        key = f"{prefix}{k}"
        if isinstance(v, dict):
            yield from flatten(v, key + ".")
        elif isinstance(v, (list, tuple)) and v and all(isinstance(x, dict) for x in v):
            for i, x in enumerate(v, 1):
                yield from flatten(x, f"{key}[{i}].")
        else:
            yield key, as_written(v)


def _rows(run: Run):
    m = run.model
    for table, items in m.raw.items():
        label = _LABELS.get(table, table)
        for name, data in items.items():
            item = "" if table.startswith("_") else name
            for fld, val in flatten(data or {}):
                yield [label, item, fld, val]
    for fld, val in flatten(m.station_limits or {}):
        yield ["station_limits", "", fld, val]
    for c in m.cases:
        yield ["case", c.name, "description", c.description]
        if c.based_on:
            yield ["case", c.name, "based_on", c.based_on]
        for k, v in (c.changes or {}).items():
            yield ["case", c.name, f"changes.{k}", as_written(v)]


def inputs_table(run: Run) -> Table:
    m = run.model
    cols = [Column("table", "Table", "text"), Column("item", "Item", "text"),
            Column("field", "Field", "text"), Column("value", "Value as written", "text")]
    note = (f"Model file {m.source}, SHA-256 {m.sha256}. Every item with its fields as "
            "the file wrote them (units included); a case lists its changes to the base.")
    return Table("Inputs", "inputs", "Inputs as read", note, cols, lambda: _rows(run),
                 freeze_cols=2)
