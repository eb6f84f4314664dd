"""Benchmark (c): one case of a generated network of 100 headers and 1,000 items.

Not a test (pytest collects test_*.py only). Run:

    .venv/bin/python benchmarks/bench_large.py                  # the fast path
    .venv/bin/python benchmarks/bench_large.py --reference      # and the reference path

The network is steamnet.testing.synth.random_model(seed, 100, 1000): synthetic test data, not a
plant (with ``--before``, the earlier package solves the network this checkout
generates). Generating and loading it are timed apart from the solve; the figures are those
of solving its base case with tables off and running the station checks on it. (At this
size some sub-plant of a random network is nearly always short or long of steam, so the
case ends infeasible after its modes are exhausted: the whole solve all the same.) See
bench_common for what every figure means. The machine is shared: compare ratios from
one run.
"""

from __future__ import annotations

import os
import subprocess
import sys
import time

import bench_common as bc


def run_one(cfg: str, a) -> dict:
    import steamnet
    from steamnet.stations.run import run_checks
    from steamnet.testing.synth import random_model_text
    kind, _ = cfg.split(":")
    t0 = time.perf_counter()
    if kind == "before":
        text = _text_from_this_checkout(a)
    else:
        text = random_model_text(a.seed, n_headers=a.headers, n_items=a.items)
    t1 = time.perf_counter()
    model = steamnet.loads_model(text, source=f"synth seed {a.seed}")
    t2 = time.perf_counter()
    steamnet.solve_case, steamnet.StudyResult     # imported on first use: not timed
    n_items = sum(len(t) for t in model.items.values()) - len(model.headers)
    kw = {"tables": False}
    if kind == "reference":
        kw["reference"] = True
    title = (f"(c) one case of a generated network, {len(model.headers)} headers and "
             f"{n_items} items (seed {a.seed}), "
             + {"reference": "reference path", "before": f"steamnet from {a.before}"}.get(
                 kind, "fast path"))
    with bc.Run(title, 1, 1, a.tracemalloc) as r:
        study = steamnet.StudyResult(model, [steamnet.solve_case(model, **kw)])
        r.mark("solve")
        report = run_checks(study)
        r.mark("station checks")
    res = r.report()
    c = study.cases[0]
    print(f"  generate, load       {t1 - t0:9.2f} s, {t2 - t1:.2f} s (not in the wall time)")
    print(f"  status               {c.status} after {c.iterations} iterations")
    print(f"  station check rows   {len(report.checks)}")
    return res


def _text_from_this_checkout(a) -> str:
    """The network text from this checkout's generator, so that an earlier package
    (``--before``, whose own generator may differ) solves the same network."""
    code = ("import sys; from steamnet.testing.synth import random_model_text; "
            f"sys.stdout.write(random_model_text({a.seed}, n_headers={a.headers}, "
            f"n_items={a.items}))")
    env = {**os.environ, "PYTHONPATH": str(bc.ROOT)}
    return subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          env=env, check=True).stdout


def extra(ap) -> None:
    ap.set_defaults(workers=[1])          # one case: nothing to share among workers
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--headers", type=int, default=100)
    ap.add_argument("--items", type=int, default=1000)


if __name__ == "__main__":
    bc.main(__doc__, run_one, extra_args=extra)
