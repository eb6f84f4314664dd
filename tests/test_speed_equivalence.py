"""The fast sweep path gives the answers of the reference path (issue 7, point 2).

Cases that change only values share the network graph of the model they are based on
(``Model.with_values``): the graph shared must be the graph built from the case.
"""

from __future__ import annotations

import pytest

import steamnet
from steamnet.graph import GRAPH_FREE_FIELDS, build_graph
from steamnet.model.schema import SI
from steamnet.model.validate import validate_model
from conftest import DEMO


@pytest.fixture(scope="module")
def demo():
    return steamnet.load_model(DEMO)


def _graph_data(g):
    return (sorted(g.nodes(data=True), key=repr),
            sorted(g.edges(keys=True, data=True), key=repr))


def _changed_value(value):
    if isinstance(value, str):
        return value + " (changed)"
    return SI(value * 1.05)


def test_graph_free_fields_keep_the_graph(demo):
    """Every field listed as not read by build_graph, changed where the demo model has
    it: the graph that with_values shares is the graph built from the changed model."""
    base = demo.for_case("winter")
    base.graph
    tried = 0
    for table, fields in GRAPH_FREE_FIELDS.items():
        for field in sorted(fields):
            if table in ("site", "prices"):
                obj = getattr(base, table)
                key = f"{table}.{field}"
            else:
                items = [(n, it) for n, it in base.table(table).items()
                         if getattr(it, field, None) is not None]
                if not items:
                    continue
                name, obj = items[0]
                key = f"{table}.{name}.{field}"
            value = getattr(obj, field)
            if value is None or isinstance(value, bool):
                continue
            m = base.with_values({key: _changed_value(value)}, origin=key)
            validate_model(m)
            assert m.graph is base.graph, key
            assert _graph_data(build_graph(m)) == _graph_data(base.graph), key
            tried += 1
    assert tried >= 15


def test_other_changes_build_their_own_graph(demo):
    base = demo.for_case("winter")
    base.graph
    m = base.with_values({"turbine.TG1.mode": "tripped",
                          "user.LP tracing.demand": SI(0.5)})
    assert m.graph is not base.graph
    assert ("turbine", "TG1") in base.graph and ("turbine", "TG1") not in m.graph
