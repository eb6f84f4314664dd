"""Property test: random valid networks either balance, checked independently, or are
reported infeasible with the header (and the limits) that fail.

Networks come from :mod:`steamnet.testing.synth` (seed and sizes drawn by hypothesis, up to 10
headers and 60 items of every equipment type). For the base model and every case:

* status 'solved': every header's mass and energy balance, the deaerator's and the
  plant water balance recomputed from the result tables and CoolProp's IF97 forward
  equations (tests/independent_balance.py) close to 1e-6 relative; no negative flow;
  every flow within its item's limits (boiler, turbine, extraction, let-down, transfer
  and vent minimum/maximum);
* status 'infeasible': every finding names a header of the model, and a header short
  or long of steam lists the binding limits;
* any other status ('not_converged', 'error') or an exception fails the test.

The examples are derandomised (the same on every run and in CI). tests/run_long_fuzz.py
runs the same check on tens of thousands of networks.
"""

from __future__ import annotations

import copy

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from independent_balance import check_case, check_solved
from steamnet import loads_model, solve_case, solve_cases
from steamnet.testing.synth import min_items, random_model, random_model_text, to_toml

SETTINGS = dict(deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow])


def solve_all(model):
    """The base model and every case of it."""
    out = [solve_case(model)]
    if model.cases:
        out += solve_cases(model).cases
    return out


def check_network(seed: int, n_headers: int, n_items: int, known: list | None = None,
                  statuses: list | None = None, **kw) -> list[str]:
    """Every problem of every case of one generated network (empty: all good). Cases
    that hit an open, reported solver limitation are appended to ``known`` and the
    status of every case to ``statuses``."""
    model = loads_model(random_model_text(seed, n_headers, n_items, **kw),
                        source=f"random_model({seed}, {n_headers}, {n_items})")
    known = [] if known is None else known
    problems = []
    for r in solve_all(model):
        if statuses is not None:
            statuses.append(r.status)
        problems += [f"case '{r.case}': {p}" for p in check_case(model, r, known)]
    return problems


@st.composite
def network_sizes(draw, lo: int, hi: int):
    n_headers = draw(st.integers(lo, hi))
    n_items = draw(st.integers(min_items(n_headers), 60))
    return draw(st.integers(0, 2**32 - 1)), n_headers, n_items


@settings(max_examples=150, **SETTINGS)
@given(network_sizes(1, 4))
def test_small_networks_balance_or_name_the_header(sizes):
    assert check_network(*sizes) == []


@settings(max_examples=100, **SETTINGS)
@given(network_sizes(5, 10))
def test_larger_networks_balance_or_name_the_header(sizes):
    assert check_network(*sizes) == []


@settings(max_examples=40, **SETTINGS)
@given(network_sizes(2, 8), st.sampled_from([0.6, 0.9]))
def test_tight_networks_balance_or_name_the_header(sizes, slack):
    # little capacity margin: most cases are infeasible, some just balance at a limit
    assert check_network(*sizes, slack=slack) == []


# --------------------------------------------------------------- the generator itself
@settings(max_examples=60, **SETTINGS)
@given(network_sizes(1, 10))
def test_generator_is_valid_deterministic_and_writes_toml_it_reads(sizes):
    import tomllib
    seed, nh, ni = sizes
    doc = random_model(seed, nh, ni)
    assert random_model(seed, nh, ni) == doc            # same seed, same model
    assert tomllib.loads(to_toml(doc)) == doc
    m = loads_model(to_toml(doc))                       # valid: raises otherwise
    assert len(m.headers) == nh
    assert sum(len(t) for t in m.items.values()) - nh == ni
    p_barg = [(h.pressure - m.site.atmospheric_pressure) / 1e5 for h in m.headers.values()]
    assert all(1.0 - 1e-9 <= p <= 100.0 + 1e-9 for p in p_barg)


def test_generator_rejects_sizes_out_of_range():
    with pytest.raises(ValueError):
        random_model(1, n_headers=0)
    with pytest.raises(ValueError):
        random_model(1, n_headers=101)
    with pytest.raises(ValueError):
        random_model(1, n_headers=10, n_items=min_items(10) - 1)


# ------------------------------------------------- the independent check can fail
def _a_solved_case():
    for seed in range(100):
        m = loads_model(random_model_text(seed, 4, 30, n_cases=0))
        r = solve_case(m)
        if r.status == "solved" and (r.equipment["type"] == "letdown").any():
            return m, r
    raise AssertionError("no solved network with a let-down in 100 seeds")


@pytest.mark.parametrize("column,factor", [("flow_t_h", 1 + 1e-5), ("spray_t_h", 1.01),
                                           ("steam_out_t_h", 1 + 1e-5)])
def test_independent_check_catches_a_broken_letdown(column, factor):
    m, r = _a_solved_case()
    assert check_solved(m, r) == []
    eq = r.equipment.copy()
    i = eq.index[(eq["type"] == "letdown") & (eq["flow_t_h"] > 0.1)]
    if not len(i):
        pytest.skip("no let-down carries steam in this network")
    spray_before = eq.loc[i[0], "spray_t_h"]
    eq.loc[i[0], column] = eq.loc[i[0], column] * factor + (1e-3 if column == "spray_t_h"
                                                            and spray_before == 0 else 0)
    broken = copy.copy(r)
    object.__setattr__(broken, "equipment", eq)
    assert check_solved(m, broken) != []


def test_independent_check_catches_a_wrong_header_enthalpy():
    m, r = _a_solved_case()
    hd = r.headers.copy()
    hd.loc[hd.index[0], "h_kj_kg"] += 0.01           # 10 J/kg
    broken = copy.copy(r)
    object.__setattr__(broken, "headers", hd)
    assert check_solved(m, broken) != []
