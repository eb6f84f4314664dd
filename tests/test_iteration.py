"""The accelerated enthalpy iteration (docs/method.md, iteration) lands on the fixed
point of the plain one, within the solver's tolerances, in fewer steps.

The plain fixed-point iteration (``accelerate=False``, the method before) is the
comparison; both are checked against the closed-form closure of their balance by the
other tests (tests/test_conservation.py, tests/test_equipment_balances.py)."""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

import steamnet
from steamnet.solver.balance import solve_net
from steamnet.solver.network import build
from steamnet.sweep import warm_start_from

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "benchmarks"))
import bench_common as bc  # noqa: E402  (the invented demo hours)


def _hours(n: int):
    m = steamnet.load_model(bc.DEMO)
    return [m.for_case("winter").with_changes(ch, origin=name)
            for name, ch, _ in bc.hourly_specs(n)]


def _sweep(models, accelerate: bool):
    out, before, start = [], None, None
    for m in models:
        sol = solve_net(build(m), start=start, accelerate=accelerate)
        assert sol.status == "solved", sol.message
        start = warm_start_from(sol, before) if accelerate else \
            {"h": sol.h, "modes": sol.modes}
        before = sol
        out.append(sol)
    return out


def test_accelerated_iteration_lands_on_the_plain_fixed_point_in_fewer_steps():
    models = _hours(24)
    fast, plain = _sweep(models, True), _sweep(models, False)
    for a, b in zip(fast, plain):
        # the enthalpies stop within 1e-10 relative of their fixed point (TOL_H_REL),
        # the flows within 1e-9 kg/s: so two methods agree to about twice that
        np.testing.assert_allclose(a.h, b.h, rtol=3e-10, atol=0)
        np.testing.assert_allclose(a.x, b.x, rtol=0, atol=3e-9)
        assert a.modes == b.modes
    n_fast = sum(s.iterations for s in fast)
    n_plain = sum(s.iterations for s in plain)
    assert n_fast <= 0.75 * n_plain, (n_fast, n_plain)


def test_warm_start_extrapolates_only_within_the_same_modes():
    models = _hours(3)
    s0, s1 = _sweep(models[:2], True)
    start = warm_start_from(s1, s0)
    assert start["h"] == [2.0 * a - b for a, b in zip(s1.h, s0.h)]
    assert start["modes"] == s1.modes and start["accel"] == s1.accel
    s0.modes = [("absorb", 0)] * len(s0.modes)          # another mode: no line
    assert warm_start_from(s1, s0)["h"] == list(s1.h)
    assert warm_start_from(s1)["h"] == list(s1.h)
