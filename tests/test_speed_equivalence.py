"""The fast sweep path gives the answers of the reference path (docs/performance.md).

Two live code paths are compared, never stored numbers: ``reference=True`` makes every
case model from scratch (``Model.with_changes``), builds its Net from scratch and
assembles each iteration's linear system with the original list-based code
(``reference.assemble``); the default path shares the network graph of cases that
change only values (``Model.with_values``), rebuilds the Net from the previous case's
(``network.rebuild``) and fills a compiled :class:`~steamnet.solver.assembly.Plan`
(dense matrix template or triplets). Every summary value, header enthalpy, flow and
station operating point must agree within 1e-9 relative; in fact the systems are
bit-identical, which the assembly tests check directly.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import steamnet
from steamnet import properties as props
from steamnet.graph import GRAPH_FREE_FIELDS, build_graph
from steamnet.model.schema import SI
from steamnet.model.stations import station_data
from steamnet.model.validate import validate_model
from steamnet.solver import balance
from steamnet.solver import reference as ref_module
from steamnet.solver.assembly import Plan
from steamnet.solver.network import build
from steamnet.testing.synth import random_model_text
from conftest import DEMO

#: Agreement required between the two paths [-] (1e-9 relative, docs/performance.md).
RTOL = 1e-9


@pytest.fixture(scope="module")
def demo():
    return steamnet.load_model(DEMO)


def _hours(n, based_on="winter"):
    """``n`` invented test hours: demands, a duty and the make-up temperature vary."""
    return [(f"h{i:03d}", {
        "user.Building heating.demand": SI((4 + 3 * math.cos(i / 4)) / 3.6),
        "user.Mill water heater.duty": SI(5.5e6 + 1.5e6 * math.sin(i / 7)),
        "user.PM1 dryer section.demand": SI((31 + 2 * math.sin(i / 3)) / 3.6),
        "site.makeup_temperature": SI(278.15 + 8 * (1 + math.sin(i / 11)))}, based_on)
        for i in range(n)]


def _trips(hours):
    out = []
    for key in ("turbine.TG1.mode", "turbine.TP1-feedpump.mode",
                "extraction_turbine.TG2.mode"):
        out += [(f"{n} {key}", {**ch, key: "tripped"}, b) for n, ch, b in hours]
    return out


def _close(a, b, what):
    if isinstance(a, (int, float, np.floating)) and not isinstance(a, bool):
        assert math.isclose(a, b, rel_tol=RTOL, abs_tol=0.0) or (
            math.isnan(a) and math.isnan(b)), f"{what}: {a!r} != {b!r}"
    else:
        assert a == b, f"{what}: {a!r} != {b!r}"


def _compare(ref, fast):
    """Every summary value, header enthalpy, flow, mode and station point."""
    assert [c.case for c in ref.cases] == [c.case for c in fast.cases]
    for r, f in zip(ref.cases, fast.cases):
        assert (r.status, r.message, r.iterations) == (f.status, f.message, f.iterations)
        assert r.summary.keys() == f.summary.keys()
        for k in r.summary:
            if k != "solve_ms":
                _close(r.summary[k], f.summary[k], f"{r.case} {k}")
        for k in r.water:
            _close(r.water[k], f.water[k], f"{r.case} water {k}")
        if r.solution is not None and r.status != "error":
            np.testing.assert_allclose(f.solution.h, r.solution.h, rtol=RTOL, atol=0,
                                       err_msg=f"{r.case} header enthalpies")
            np.testing.assert_allclose(f.solution.x, r.solution.x, rtol=RTOL, atol=0,
                                       err_msg=f"{r.case} flows")
            assert f.solution.modes == r.solution.modes
        assert len(r.points) == len(f.points)
        for pr, pf in zip(r.points, f.points):
            for k in ("p_in", "h_in", "p_out", "m_steam", "m_spray", "h_out"):
                _close(getattr(pr, k), getattr(pf, k), f"{r.case} {pr.station} {k}")


def _both(model, specs=None, **kw):
    ref = steamnet.solve_cases(model, specs, reference=True, **kw)
    fast = steamnet.solve_cases(model, specs, **kw)
    _compare(ref, fast)
    return ref, fast


# ----------------------------------------------------------------- end to end
def test_demo_cases_same_answers(demo):
    ref, _ = _both(demo, tables=False)
    assert [c.status for c in ref.cases] == ["solved"] * 3


def test_hourly_sweep_same_answers(demo):
    ref, _ = _both(demo, _hours(60), tables=False)        # three chunks of 24
    assert ref.all_solved


def test_trip_sweep_same_answers(demo):
    ref, fast = _both(demo, _trips(_hours(30)), tables=False)
    assert len(ref.cases) == 90


def test_tables_same_answers(demo):
    """With tables the paths give the same frames too."""
    ref, fast = _both(demo, _hours(5), tables=True)
    for attr in ("headers", "equipment", "streams"):
        a, b = getattr(ref, attr), getattr(fast, attr)
        assert list(a.columns) == list(b.columns) and a.shape == b.shape
        num = a.select_dtypes("number").columns
        np.testing.assert_allclose(b[num].to_numpy(float), a[num].to_numpy(float),
                                   rtol=RTOL, atol=0, equal_nan=True)


@pytest.mark.parametrize("seed, n_headers, n_items", [(3, 5, 40), (8, 9, 80),
                                                      (11, 12, 120), (21, 25, 250)])
def test_random_networks_same_answers(seed, n_headers, n_items):
    model = steamnet.loads_model(random_model_text(seed, n_headers, n_items))
    _both(model, None, tables=False)           # its cases, or the base model


def test_bad_cases_read_the_same(demo):
    specs = _hours(3)
    specs.insert(1, ("no such user", {"user.No such user.demand": "1 t/h"}, "winter"))
    specs.insert(2, ("negative", {"user.LP tracing.demand": SI(-1.0)}, "winter"))
    specs.insert(3, ("bad mode", {"turbine.TG1.mode": "sideways"}, "winter"))
    ref, fast = _both(demo, specs, tables=False)
    assert [c.status for c in fast.cases] == ["solved", "error", "error", "error",
                                              "solved", "solved"]


# ------------------------------------------------------------------- assembly
@pytest.fixture()
def compared(monkeypatch):
    """Run the reference solver while checking, at every assembly, that the plan gives
    the same triplets, right-hand side and dense matrix (to the sign of zeros)."""
    counts = {"assemblies": 0, "dense": 0}
    reference = ref_module.assemble

    def checked(net, co, h, modes, eff):
        trip, b = reference(net, co, h, modes, eff)
        plan = Plan(net)
        trip2, b2 = plan.assemble(net, co, h, modes, eff)
        for x, y in zip(trip, trip2):
            assert x.dtype == y.dtype and np.array_equal(x, y)
        assert np.array_equal(b, b2)
        n = len(net.vars)
        dense = plan.dense(net, co, h, modes, eff)
        if dense is not None:
            a = np.zeros((n, n))
            np.add.at(a, (trip[0], trip[1]), trip[2])
            assert np.array_equal(a, dense[0]) and np.array_equal(np.signbit(a),
                                                                   np.signbit(dense[0]))
            assert np.array_equal(b, dense[1])
            counts["dense"] += 1
        counts["assemblies"] += 1
        return trip, b

    monkeypatch.setattr(ref_module, "assemble", checked)
    return counts


def test_plan_assembles_the_reference_system(demo, compared):
    steamnet.solve_cases(demo, _trips(_hours(4)) + _hours(4), reference=True,
                         tables=False)
    for seed in (2, 5, 13):
        model = steamnet.loads_model(random_model_text(seed, 6 + seed, 60 + 10 * seed))
        steamnet.solve_cases(model, reference=True, tables=False)
    assert compared["assemblies"] > 100 and compared["dense"] == compared["assemblies"]


def test_plan_assembles_a_large_sparse_system(compared):
    """100 headers and 1,000 items: above balance._SPARSE_ABOVE flows."""
    model = steamnet.loads_model(random_model_text(1, 100, 1000))
    r = steamnet.solve_case(model, tables=False, reference=True)
    assert len(r.solution.net.vars) > balance._SPARSE_ABOVE
    # every iteration assembles at least once (a turbine driving a pump re-solves
    # within its iteration until its flow matches the pumped water), and each
    # assembly was compared with the reference
    assert compared["assemblies"] >= r.iterations
    fast = steamnet.solve_case(model, tables=False)
    np.testing.assert_allclose(fast.solution.x, r.solution.x, rtol=RTOL, atol=0)
    np.testing.assert_allclose(fast.solution.h, r.solution.h, rtol=RTOL, atol=0)


# --------------------------------------------------------- Net rebuilt, graph shared
def test_rebuilt_net_equals_a_fresh_build(demo):
    winter = demo.for_case("winter")
    winter.graph
    prev = build(winter)
    for name, changes, _ in _hours(5):
        m = winter.with_values(changes, origin=name)
        net = build(m, like=prev)
        assert net.vars is prev.vars              # the structure is shared...
        assert net == build(m)                    # ...and the Net is the same
        prev = net
    tripped = winter.with_changes({"turbine.TG1.mode": "tripped"})
    assert build(tripped, like=prev).vars is not prev.vars
    assert build(tripped, like=prev) == build(tripped)


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
    base.graph, base.stations
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
            assert m.stations is base.stations, key
            assert station_data(m) == base.stations, key
            tried += 1
    assert tried >= 15


def test_other_changes_build_their_own_graph(demo):
    base = demo.for_case("winter")
    base.graph
    m = base.with_values({"turbine.TG1.mode": "tripped",
                          "user.LP tracing.demand": SI(0.5)})
    assert m.graph is not base.graph
    assert ("turbine", "TG1") in base.graph and ("turbine", "TG1") not in m.graph


# ---------------------------------------------------------------- worker counts
def test_worker_property_counts_reach_the_caller(demo):
    props.clear_cache()             # forked workers would inherit what is cached here
    props.reset_stats()
    steamnet.solve_cases(demo, _hours(48), tables=False, workers=2)
    assert props.stats()["evaluations"] > 0      # this process evaluated nothing itself


# ------------------------------------------------------------- tables and parsing
def _records_table(study, data):
    """The checks table made the plain way: one record per row of the public check
    functions, every case's single-point rows and then each station's rows across
    cases."""
    import pandas as pd
    from steamnet.stations import run
    from steamnet.stations.checks import check_across_cases, check_point
    rows, per_station = [], {}
    for c in study.cases:
        for p in run.station_points(c):
            rows.extend(check_point(data[p.station], p))
            per_station.setdefault(p.station, []).append(p)
    for name, pts in per_station.items():
        rows.extend(check_across_cases(data[name], pts)[0])
    return pd.DataFrame([{**{k: getattr(r, k) for k in run.CHECK_COLUMNS},
                          "status": run.Status(r.status).value} for r in rows],
                        columns=run.CHECK_COLUMNS)


def test_check_table_built_by_columns_equals_the_records(demo):
    """run_checks builds its table column by column (idle stations' rows copied); the
    frame is the one pandas makes from one record per row."""
    import pandas as pd
    from steamnet.stations import run
    specs = _hours(30) + [(f"h{i:04d} TG1 trip", {**ch, "turbine.TG1.mode": "tripped"},
                           base) for i, (_, ch, base) in enumerate(_hours(30))]
    study = steamnet.solve_cases(demo, specs, tables=False)
    data = demo.stations
    records = _records_table(study, data)
    assert records["advice"].str.contains("no steam passes").any()     # idle rows
    pd.testing.assert_frame_equal(run.run_checks(study).checks, records)


@pytest.mark.parametrize("workers", [1, 2])
def test_station_checks_made_while_solving_give_the_same_report(demo, workers):
    """solve_cases(station_checks=True) makes the single-point rows where each chunk
    is solved (in the workers with workers=2); the report equals that of run_checks
    on a study solved without them, table for table."""
    import pandas as pd
    from steamnet.stations import run
    specs = _hours(60)
    plain = run.run_checks(steamnet.solve_cases(demo, specs, tables=False))
    study = steamnet.solve_cases(demo, specs, tables=False, workers=workers,
                                 station_checks=True)
    assert study.point_checks and len(study.point_checks) == 3     # chunks of 24
    joined = run.run_checks(study)
    for attr in ("checks", "envelopes", "gains"):
        pd.testing.assert_frame_equal(getattr(joined, attr), getattr(plain, attr))
    # other station data than the rows were made with: checked again, not reused
    other = {k: dataclasses.replace(v, sensor_distance=None)
             for k, v in demo.stations.items()}
    again = run.run_checks(study, data=other)
    pd.testing.assert_frame_equal(again.checks,
                                  run.run_checks(steamnet.solve_cases(
                                      demo, specs, tables=False), data=other).checks)
    assert not again.checks.equals(joined.checks)


def test_remembered_quantity_texts_still_fail_each_time(demo):
    from steamnet.errors import ModelErrors
    winter = demo.for_case("winter")
    for _ in range(2):
        with pytest.raises(ModelErrors, match="unit"):
            winter.with_changes({"user.LP tracing.demand": "3 bananas"})
    a = winter.with_changes({"user.LP tracing.demand": "3 t/h"})
    b = winter.with_changes({"user.LP tracing.demand": "3 t/h"})
    assert a.table("user")["LP tracing"].demand == b.table("user")["LP tracing"].demand \
        == pytest.approx(3 / 3.6, rel=1e-15)


def test_full_collections_paused_only_inside_the_scope():
    import gc
    from steamnet._gc import young_collections_only
    before = gc.get_threshold()
    with pytest.raises(KeyError):
        with young_collections_only():
            assert gc.get_threshold()[:2] == before[:2]
            assert gc.get_threshold()[2] > 10**8
            raise KeyError("inside")
    assert gc.get_threshold() == before


def test_raw_copy_is_a_deep_copy(demo):
    """with_changes copies changed items with model._copy_raw: equal to copy.deepcopy
    for TOML data, and sharing no table or array with the original."""
    import copy
    from steamnet.model.model import _copy_raw
    for table in ("extraction_turbine", "letdown", "user"):
        for raw in demo.raw[table].values():
            dup = _copy_raw(raw)
            assert dup == copy.deepcopy(raw)
            stack = [(raw, dup)]
            while stack:
                a, b = stack.pop()
                if isinstance(a, (dict, list)):
                    assert a is not b
                    pairs = zip(a.values(), b.values()) if isinstance(a, dict) else zip(a, b)
                    stack.extend(pairs)


def test_case_models_leave_their_base_as_it_was(demo):
    """Case models share the tables they do not change with their base; changing a
    case (and a case of that case) never reaches back."""
    import copy
    winter = demo.for_case("winter")
    raw, items = copy.deepcopy(winter.raw), {t: dict(v) for t, v in winter.items.items()}
    a = winter.with_changes({"user.LP tracing.demand": "2 t/h", "site.makeup_temperature":
                             "9 degC", "turbine.TG1.mode": "tripped"})
    b = a.with_changes({"user.LP tracing.demand": "1 t/h", "header.LP.heat_loss": "1 MW"})
    assert winter.raw == raw
    assert all(winter.items[t][n] is it for t, v in items.items() for n, it in v.items())
    assert winter.table("user")["LP tracing"].demand == pytest.approx(4 / 3.6, rel=1e-12)
    assert a.table("user")["LP tracing"].demand == pytest.approx(2 / 3.6, rel=1e-12)
    assert b.table("user")["LP tracing"].demand == pytest.approx(1 / 3.6, rel=1e-12)
    assert a.table("header")["LP"].heat_loss == winter.table("header")["LP"].heat_loss
    assert a.table("boiler") is winter.table("boiler")       # unchanged tables shared


def test_viscosity_asked_once_per_state():
    """Viscosity is cached and counted like the other property evaluations; the value
    is iapws's IAPWS R12-08 function at the state's density and temperature."""
    from iapws.iapws97 import _Viscosity
    props.clear_cache()
    props.reset_stats()
    st = props.state_pt(20e5, 573.15)
    n = props.stats()["evaluations"]
    mu = props.viscosity(st)
    assert props.stats()["evaluations"] == n + 1
    assert props.viscosity(st) == mu == _Viscosity(st.rho, st.t)
    assert props.stats()["evaluations"] == n + 1


# ------------------------------------------------------------ the dense linear solve
def test_dense_solve_matches_numpy_linalg_and_rejects_singular_systems():
    """The iterations solve their dense systems with LAPACK dgesv directly; the
    reference is numpy.linalg.solve (the same LU with partial pivoting behind numpy's
    wrapper), on random systems the size of plant balances, and a singular matrix
    (exactly, and to the last bit) must give None, as numpy raises LinAlgError."""
    rng = np.random.default_rng(7)
    for n in (2, 5, 15, 40, 120):
        a = rng.normal(size=(n, n)) + n * np.eye(n)
        b = rng.normal(size=n)
        x = balance._dense_solve(a, b)
        ref = np.linalg.solve(a, b)
        assert np.allclose(x, ref, rtol=1e-12, atol=0.0)
        assert np.allclose(a @ x, b, rtol=0.0, atol=1e-12 * np.abs(b).max())
    singular = np.array([[1.0, 2.0, 0.0], [2.0, 4.0, 0.0], [0.0, 0.0, 1.0]])
    with pytest.raises(np.linalg.LinAlgError):
        np.linalg.solve(singular, np.ones(3))
    assert balance._dense_solve(singular, np.ones(3)) is None
    assert balance._dense_solve(np.zeros((4, 4)), np.ones(4)) is None


def test_net_of_other_fixed_flows_equals_a_fresh_build(demo):
    """Models that differ only in fixed flows (the fixed dispatches of the cheapest
    dispatch's rounds): the Net made from the last one (network.rebuild_flows) is the
    Net built anew, and its compiled plan solves to the same balance, exactly."""
    from steamnet.solver.network import same_structure
    winter = demo.for_case("winter")
    r = steamnet.solve_case(demo, "winter", tables=False)
    flow = {(v.kind, v.item): float(r.solution.x[v.index]) for v in r.solution.net.vars}

    def fixed(f):
        return winter.with_changes({
            "boiler.B1-bark.mode": "fixed",
            "boiler.B1-bark.steam": SI(flow[("boiler", "B1-bark")] * f),
            "letdown.PRV-ML.mode": "fixed_flow",
            "letdown.PRV-ML.flow": SI(flow[("letdown", "PRV-ML")] * f + 0.1),
            "turbine.TG1.mode": "fixed_flow",
            "turbine.TG1.flow": SI(flow[("turbine", "TG1")] * f),
            "extraction_turbine.TG2.mode": "fixed_flow",
            "extraction_turbine.TG2.flow": SI(flow[("xt_in", "TG2")] * f)})
    a, b = fixed(1.0), fixed(0.97)
    assert not same_structure(a, b) and same_structure(a, b, flows=True)
    first = balance.solve_net(build(a))
    assert first.status == "solved" and first.net.plan is not None
    made = build(b, like=first.net)
    fresh = build(b)
    assert made == fresh and made.vars is not first.net.vars
    assert made.plan is not first.net.plan
    got, want = balance.solve_net(made), balance.solve_net(fresh)
    assert got.status == want.status == "solved"
    assert np.array_equal(got.x, want.x) and list(got.h) == list(want.h)
    # a change other than a flow builds anew
    other = b.with_changes({"letdown.PRV-ML.min_flow": SI(0.01)})
    assert not same_structure(b, other, flows=True)
