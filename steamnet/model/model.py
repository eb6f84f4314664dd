"""The plant model as an immutable container, varied case by case.

A :class:`Model` (made by :func:`steamnet.model.load.load_model`) holds one validated item per row of each table (SI values), the raw
text of every item (for case changes and for the workbook's "inputs as read" sheet), the
operating cases and where it came from (file name, SHA-256). It is immutable: a case is
a new Model made by :meth:`Model.with_changes`; the solver never writes into it.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any

from ..errors import ModelError, ModelErrors
from .chain import CaseLoop, case_chain
from .fields import graph_free, set_path
from .parse import validate_item
from .schema import EQUIPMENT_TABLES, ITEM_LABELS, Case, Prices, Site, item_label
from .stations import station_data

__all__ = ["Model"]


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
        The ``[station_limits]`` table as written (parsed into :attr:`stations`).
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

    # ------------------------------------------------------------- derived data
    @cached_property
    def stations(self) -> dict:
        """The station data of every let-down (valve, desuperheater, pipe, limits: a
        :class:`~steamnet.model.stations.StationData` by name), parsed once per model on
        first use (:func:`~steamnet.model.stations.station_data`; the loader asks for it,
        so that bad limits are reported on load)."""
        return station_data(self)

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
        try:
            names = case_chain(name, lambda n: self.case(n).based_on)
        except CaseLoop as loop:
            raise ModelError("cases are based on each other in a loop",
                             file=self.source, item=item_label("case", loop.chain[-1]),
                             field="based_on") from None
        chain = [self.case(n) for n in names]
        m = self
        for c in reversed(chain):
            m = m.with_changes(c.changes, origin=item_label("case", c.name))
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
            if path == ["name"]:
                raise ModelError(f"change '{key}': a case cannot rename an item (the "
                                 "case changes and the results refer to items by "
                                 "name); add an item instead, and put the other out "
                                 "of service", file=self.source, item=origin,
                                 field=str(key))
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
            set_path(raw[table][item], path, value, key=str(key), file=self.source,
                      origin=origin)
        site, prices = self.site, self.prices
        if site_touched:
            site = validate_item(Site, site_raw, file=self.source, item=origin,
                                 context={}, prefix="site")
        ctx = {"p_atm": site.atmospheric_pressure, "currency": site.currency}
        if prices_touched:
            prices = validate_item(Prices, prices_raw, file=self.source, item=origin,
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
                items[table][item] = validate_item(
                    EQUIPMENT_TABLES[table], raw[table][item], file=self.source,
                    item=f"{origin}: {item_label(table, item)}", context=ctx)
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
        again, nor the station data (:attr:`stations`), which reads none of those fields
        either."""
        new = self.with_changes(changes, origin=origin)
        if new is not self and graph_free(changes):
            for slot in ("graph", "stations"):          # the cached_properties' slots
                if slot in self.__dict__:
                    new.__dict__[slot] = self.__dict__[slot]
        return new

    def with_item(self, table: str, data: dict, *, origin: str = "added item") -> "Model":
        """A copy with one more item (as written in a model file)."""
        if table not in EQUIPMENT_TABLES:
            raise ModelError(f"unknown table '{table}'", item=origin)
        name = data.get("name")
        if name in self.raw.get(table, {}):
            raise ModelError(f"a {ITEM_LABELS[table]} named '{name}' exists already",
                             item=origin, field="name")
        item = validate_item(EQUIPMENT_TABLES[table], data, file=self.source,
                             item=f"{origin}: {item_label(table, name)}",
                             context=self.context())
        raw = {t: dict(v) for t, v in self.raw.items()}
        raw.setdefault(table, {})[name] = copy.deepcopy(data)
        items = dict(self.items)
        items[table] = {**items.get(table, {}), name: item}   # this model's table stays
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
