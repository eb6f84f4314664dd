"""Fields named by ``table.item.field`` keys: the changes of a case and the columns of a
case table.

:func:`set_path` writes one change into an item as written (text with units);
:func:`graph_free` says whether a set of changes leaves the network graph as it is;
:func:`resolve_key` finds the schema field a key names (its quantity kind, or its
allowed values), so that a case table column can be converted as a whole.
"""

from __future__ import annotations

from typing import Any

import types
import typing
from dataclasses import dataclass
from typing import Iterable, Literal, Union

from pydantic import BaseModel

from ..errors import ModelError
from ..graph import GRAPH_FREE_FIELDS
from ..units import Kind
from .schema import EQUIPMENT_TABLES, ITEM_LABELS, Prices, Site

__all__ = ["set_path", "graph_free", "resolve_key", "FieldKind", "name_list"]


def graph_free(changes: dict[str, Any]) -> bool:
    """Whether no change of ``changes`` (``'table.item.field'`` or ``'site.field'``
    keys) touches a field the network graph depends on."""
    for key in changes:
        parts = str(key).split(".")
        table, fld = parts[0], parts[-1]
        if len(parts) != (2 if table in ("site", "prices") else 3) \
                or fld not in GRAPH_FREE_FIELDS.get(table, ()):
            return False
    return True


def set_path(target: dict, path: list[str], value: Any, *, key: str, file: str,
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


def name_list(names: Iterable[str], most: int = 12) -> str:
    """Names for a message: the first ``most`` of them, and how many in all."""
    names = list(names)
    text = ", ".join(names[:most])
    return text + (f", ... ({len(names)} in all)" if len(names) > most else "") or "none"


# ------------------------------------------------------------ field resolution
@dataclass(frozen=True)
class FieldKind:
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


def _resolve(cls: type[BaseModel], path: list[str], raw_item: dict | None) -> FieldKind | str:
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
        return FieldKind(kind=kind)
    if typing.get_origin(ann) is Literal:
        return FieldKind(py=str, choices=tuple(str(a) for a in typing.get_args(ann)))
    if ann in (bool, int, str, float):
        return FieldKind(py=ann)
    return f"'{name}' cannot be changed from a table column"


def resolve_key(model: Model, key: str) -> FieldKind | str:
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
        return f"no {ITEM_LABELS[table]} named '{item}' (known: {name_list(raw)})"
    return _resolve(EQUIPMENT_TABLES[table], parts[2:], raw[item])
