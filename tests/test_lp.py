"""The linear programmes (steamnet.solver.lp) against scipy.optimize.linprog, an
independent route to an optimum (its own input handling and result conventions), and
the duals against finite differences of the optimal cost."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from scipy.optimize import linprog

from steamnet.solver.lp import INFEASIBLE, OPTIMAL, UNBOUNDED, solve_lp


def _random_lp(seed: int):
    """A feasible, bounded programme: x0 is inside every row and bound."""
    rng = np.random.default_rng(seed)
    n, m_ub, m_eq = rng.integers(3, 9), rng.integers(1, 5), rng.integers(1, 3)
    x0 = rng.uniform(1, 5, n)
    a_ub = rng.normal(size=(m_ub, n))
    b_ub = a_ub @ x0 + rng.uniform(0.1, 2, m_ub)
    a_eq = rng.normal(size=(m_eq, n))
    b_eq = a_eq @ x0
    bounds = [(0.0, 10.0)] * n
    c = rng.normal(size=n)
    return c, a_ub, b_ub, a_eq, b_eq, bounds


@pytest.mark.parametrize("seed", range(25))
def test_optimum_and_duals_as_scipy_linprog(seed):
    c, a_ub, b_ub, a_eq, b_eq, bounds = _random_lp(seed)
    ref = linprog(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq, bounds=bounds,
                  method="highs")
    got = solve_lp(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq, bounds=bounds)
    assert ref.status == 0 and got.status == OPTIMAL
    assert got.fun == pytest.approx(ref.fun, rel=1e-9, abs=1e-9)
    # rows, bounds and the cost hold at the answer
    assert (a_ub @ got.x <= b_ub + 1e-7).all()
    assert np.allclose(a_eq @ got.x, b_eq, atol=1e-7)
    assert (got.x >= -1e-9).all() and (got.x <= 10 + 1e-9).all()
    # duals: the same as scipy's, and each the slope of the optimal cost in its row's
    # right-hand side (a finite difference; the basis holds for a small step)
    assert np.allclose(got.eqlin.marginals, ref.eqlin.marginals, atol=1e-7)
    assert np.allclose(got.ineqlin.marginals, ref.ineqlin.marginals, atol=1e-7)
    assert np.allclose(got.upper.marginals, ref.upper.marginals, atol=1e-7)
    assert np.allclose(got.lower.marginals, ref.lower.marginals, atol=1e-7)
    step = 1e-6
    for i in range(len(b_eq)):
        b2 = b_eq.copy()
        b2[i] += step
        moved = linprog(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b2, bounds=bounds,
                        method="highs")
        if moved.status == 0:
            assert (moved.fun - ref.fun) / step == pytest.approx(
                got.eqlin.marginals[i], abs=1e-4)


def test_infeasible_and_unbounded():
    # x0 + x1 = 1 and x0 + x1 >= 2
    got = solve_lp([1, 1], A_ub=[[-1, -1]], b_ub=[-2], A_eq=[[1, 1]], b_eq=[1])
    assert got.status == INFEASIBLE and got.x is None
    # minimise -x0 with x0 unbounded above
    got = solve_lp([-1.0, 0.0], A_eq=[[0, 1]], b_eq=[1], bounds=[(0, None), (0, None)])
    assert got.status == UNBOUNDED
    # an empty range
    got = solve_lp([1.0], bounds=[(2.0, 1.0)])
    assert got.status == INFEASIBLE


def test_integer_columns():
    """A knapsack of three items small enough to enumerate (the independent answer)."""
    value, weight, cap = np.array([6.0, 5.0, 4.0]), np.array([5.0, 4.0, 3.0]), 7.0
    got = solve_lp(-value, A_ub=[weight], b_ub=[cap], bounds=[(0, 1)] * 3,
                   integrality=[1, 1, 1])
    best = max((value @ np.array(s), s) for s in np.ndindex(2, 2, 2)
               if weight @ np.array(s) <= cap)
    assert got.status == OPTIMAL
    assert -got.fun == pytest.approx(best[0])
    assert tuple(np.round(got.x).astype(int)) == best[1]


def test_no_banner_on_standard_output():
    """HiGHS prints a banner when a process makes its first solver object; the console
    of a steamnet command shows none."""
    code = ("from steamnet.solver.lp import solve_lp\n"
            "r = solve_lp([1.0], bounds=[(1.0, 2.0)])\n"
            "print('x', r.x[0])\n")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.strip() == "x 1.0"


@pytest.mark.parametrize("seed", range(10))
def test_solve_bounds_as_a_new_linprog(seed):
    """A programme kept in HiGHS and solved again with tighter bounds (from its last
    basis) gives what scipy.optimize.linprog gives for those bounds, solved anew."""
    from steamnet.solver.lp import solve_bounds
    c, a_ub, b_ub, a_eq, b_eq, bounds = _random_lp(seed)
    first = solve_lp(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq, bounds=bounds,
                     keep=True)
    assert first.status == OPTIMAL and first.kept is not None
    # a box around the middle of the optimum and the programme's inner point x0 holds
    # a feasible point (the middle itself), and the optimum moves inside it
    rng = np.random.default_rng(seed)
    n = rng.integers(3, 9)
    rng.integers(1, 5), rng.integers(1, 3)
    x0 = rng.uniform(1, 5, n)                    # as _random_lp draws it
    mid = (first.x + x0) / 2
    lo, hi = np.clip(mid - 0.3, 0.0, 10.0), np.clip(mid + 0.3, 0.0, 10.0)
    again = solve_bounds(first.kept, lo, hi)
    ref = linprog(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq,
                  bounds=list(zip(lo, hi)), method="highs")
    assert again is not None
    assert ref.status == 0 and again.status == OPTIMAL
    assert again.fun > first.fun + 1e-6              # the bounds moved the optimum
    assert again.fun == pytest.approx(ref.fun, rel=1e-9, abs=1e-9)
    assert np.allclose(again.eqlin.marginals, ref.eqlin.marginals, atol=1e-7)
    assert (again.x >= lo - 1e-9).all() and (again.x <= hi + 1e-9).all()


def test_solve_bounds_after_another_programme_asks_for_a_new_solve():
    from steamnet.solver.lp import solve_bounds
    c, a_ub, b_ub, a_eq, b_eq, bounds = _random_lp(3)
    first = solve_lp(c, A_ub=a_ub, b_ub=b_ub, A_eq=a_eq, b_eq=b_eq, bounds=bounds,
                     keep=True)
    solve_lp([1.0], bounds=[(1.0, 2.0)])          # HiGHS now holds another programme
    assert solve_bounds(first.kept, np.zeros(c.size), np.full(c.size, 10.0)) is None
