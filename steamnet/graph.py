"""The network as a graph: headers and equipment as nodes, steam and water as edges.

The model's tables are the storage; this graph is built from them on demand (networkx
``MultiDiGraph``) for validation (is every user reachable from a steam source?), for the
order in which the solver ranks headers, and for the network drawing of the workbook.

Node keys are ``(kind, name)`` tuples: ``("header", "HP")``, ``("boiler", "B1")``,
``("water_supply", "BFW")``, ``("deaerator", "DA")`` and the two sinks
``("outside", "atmosphere")`` and ``("outside", "condenser")``. Edge attribute
``medium`` is ``"steam"`` or ``"water"``.
"""

from __future__ import annotations

from weakref import WeakKeyDictionary

import networkx as nx

__all__ = ["build_graph", "header_order", "steam_sources", "steam_reach",
           "GRAPH_FREE_FIELDS"]

_SOURCE_KINDS = ("boiler", "steam_transfer")

#: Fields that :func:`build_graph` does not read, by table (``site`` and ``prices`` for
#: their tables): a case that changes only these has the graph of the model it is based
#: on, and :meth:`steamnet.model.Model.with_values` shares it instead of building it
#: again, and the station data (:func:`steamnet.model.stations.station_data`, which
#: reads none of them either). Keep in step with both: a field either starts to read
#: must leave this list (tests/test_speed_equivalence.py changes each of them and
#: compares the graphs and the station data).
GRAPH_FREE_FIELDS = {
    "site": frozenset({"name", "makeup_temperature"}),
    "prices": frozenset({"fuel", "electricity", "makeup_water"}),
    "header": frozenset({"heat_loss", "description"}),
    "user": frozenset({"demand", "duty", "condensate_temperature", "group"}),
    "boiler": frozenset({"steam", "efficiency", "fuel_price", "steam_temperature"}),
    "steam_transfer": frozenset({"flow", "price", "steam_temperature"}),
    "turbine": frozenset({"flow", "power", "isentropic_efficiency"}),
    "extraction_turbine": frozenset({"flow", "power"}),
    "letdown": frozenset({"flow"}),
    "vent": frozenset({"max_flow"}),
}


def build_graph(model) -> nx.MultiDiGraph:
    """Graph of the in-service items of ``model`` (a :class:`steamnet.model.Model`)."""
    g = nx.MultiDiGraph()
    for name, h in model.headers.items():
        g.add_node(("header", name), kind="header", pressure=h.pressure)

    def on(item) -> bool:
        return getattr(item, "in_service", True)

    def eq(kind, name, **attrs):
        g.add_node((kind, name), kind=kind, **attrs)
        return (kind, name)

    for name, ws in model.table("water_supply").items():
        eq("water_supply", name, source=ws.source)
    for name, da in model.table("deaerator").items():
        n = eq("deaerator", name)
        g.add_edge(("header", da.header), n, medium="steam")
        for wname, ws in model.table("water_supply").items():
            if ws.source == "deaerator":
                g.add_edge(n, ("water_supply", wname), medium="water")
    for name, b in model.table("boiler").items():
        if not on(b) or b.mode == "off":
            continue
        n = eq("boiler", name, mode=b.mode)
        g.add_edge(("water_supply", b.feedwater), n, medium="water")
        g.add_edge(n, ("header", b.header), medium="steam")
        if b.blowdown_flash_header:
            g.add_edge(n, ("header", b.blowdown_flash_header), medium="steam")
    for name, t in model.table("steam_transfer").items():
        if not on(t) or t.mode == "off":
            continue
        n = eq("steam_transfer", name, direction=t.direction)
        if t.direction == "import":
            g.add_edge(n, ("header", t.header), medium="steam")
        else:
            g.add_edge(("header", t.header), n, medium="steam")
    for name, t in model.table("turbine").items():
        if not on(t) or t.mode == "tripped":
            continue
        n = eq("turbine", name, mode=t.mode)
        g.add_edge(("header", t.inlet), n, medium="steam")
        g.add_edge(n, ("header", t.outlet), medium="steam")
    for name, t in model.table("extraction_turbine").items():
        if not on(t) or t.mode == "tripped":
            continue
        n = eq("extraction_turbine", name, mode=t.mode)
        g.add_edge(("header", t.inlet), n, medium="steam")
        for e in t.extractions:
            g.add_edge(n, ("header", e.header), medium="steam")
        if t.exhaust:
            g.add_edge(n, ("header", t.exhaust), medium="steam")
        else:
            g.add_edge(n, ("outside", "condenser"), medium="steam")
    for name, s in model.table("letdown").items():
        if not on(s) or s.mode == "closed":
            continue
        n = eq("letdown", name, mode=s.mode)
        g.add_edge(("header", s.inlet), n, medium="steam")
        g.add_edge(n, ("header", s.outlet), medium="steam")
        if s.desuperheater is not None:
            g.add_edge(("water_supply", s.desuperheater.spray_supply), n, medium="water")
    for name, u in model.table("user").items():
        if not on(u):
            continue
        n = eq("user", name)
        g.add_edge(("header", u.header), n, medium="steam")
        if u.condensate_return > 0:
            for da in model.table("deaerator"):
                g.add_edge(n, ("deaerator", da), medium="water")
    for name, v in model.table("vent").items():
        if not on(v):
            continue
        n = eq("vent", name)
        g.add_edge(("header", v.header), n, medium="steam")
        g.add_edge(n, ("outside", "atmosphere"), medium="steam")
    return g


def steam_sources(g: nx.MultiDiGraph) -> list:
    """Nodes that put steam into the network (boilers and imports)."""
    return [n for n, d in g.nodes(data=True)
            if d.get("kind") == "boiler"
            or (d.get("kind") == "steam_transfer" and d.get("direction") == "import")]


_REACH: WeakKeyDictionary = WeakKeyDictionary()


def steam_reach(g: nx.MultiDiGraph) -> frozenset:
    """Every node that steam from a boiler or an import can reach, the sources included.
    Computed once per graph (cases that share a graph share it); treat ``g`` as
    read-only once asked."""
    reach = _REACH.get(g)
    if reach is None:
        found: set = set()
        for s in steam_sources(g):
            found |= nx.descendants(g, s) | {s}
        reach = _REACH[g] = frozenset(found)
    return reach


def header_order(model) -> list[str]:
    """Header names from the highest pressure down (ties by name, for a stable order)."""
    return sorted(model.headers, key=lambda n: (-model.headers[n].pressure, n))
