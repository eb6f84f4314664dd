"""Scaling benchmark: time per case and iterations against the size of a generated
network, from 10 to 1,000 items.

Not a test (pytest collects test_*.py only). Run from the repository root:

    .venv/bin/python benchmarks/bench_scaling.py
    .venv/bin/python benchmarks/bench_scaling.py --before /tmp/before    # same run

The networks are steamnet.testing.synth.random_model_text(seed, headers, items) of this
checkout (synthetic test data, not plants), with an unlimited vent on every header
(``vent_every_header``) so that most of them balance; each size runs seeds 1-3. Every
(package, size) runs in a fresh process: the base case is loaded once and solved
``--repeat`` times with tables off from empty property caches (after one untimed
solve, which pays for the imports made on first use), and the best time is kept. The machine is shared: compare ratios from one run.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
SIZES = [(2, 10), (5, 30), (10, 100), (30, 300), (100, 1000)]


def one(seed: int, headers: int, items: int, repeat: int, text: str) -> dict:
    import time
    import warnings
    warnings.simplefilter("ignore", RuntimeWarning)
    import steamnet
    from steamnet import properties
    model = steamnet.loads_model(text, source=f"synth {seed}")
    steamnet.solve_case(model, tables=False)     # warm-up: imports made on first use
    best, r = float("inf"), None
    for _ in range(repeat):
        properties.clear_cache()
        t0 = time.perf_counter()
        r = steamnet.solve_case(model, tables=False)
        best = min(best, time.perf_counter() - t0)
    n_items = sum(len(t) for t in model.items.values()) - len(model.headers)
    return {"seconds": best, "iterations": r.iterations, "status": str(r.status),
            "items": n_items}


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", metavar="DIR", default=None)
    ap.add_argument("--seeds", type=int, nargs="*", default=[1, 2, 3])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--one", default=None, help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.one:
        seed, headers, items = map(int, a.one.split(","))
        text = sys.stdin.read()
        print("RESULT " + json.dumps(one(seed, headers, items, a.repeat, text)))
        return
    sys.path.insert(0, str(ROOT))
    from steamnet.testing.synth import random_model_text
    packages = [("now", ROOT)] + ([("before", Path(a.before).resolve())] if a.before else [])
    print(__doc__.splitlines()[0])
    print(f"seeds {a.seeds}, best of {a.repeat}, load average {os.getloadavg()[0]:.1f}")
    head = f"{'headers':>7} {'items':>6} {'seed':>4}"
    for label, _ in packages:
        head += f" | {label + ' ms':>10} {'it':>4} {'status':<12}"
    print(head)
    totals: dict = {}
    for headers, items in SIZES:
        for seed in a.seeds:
            text = random_model_text(seed, n_headers=headers, n_items=items,
                                     vent_every_header=True)
            row = f"{headers:>7} {items:>6} {seed:>4}"
            for label, pkg in packages:
                env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(pkg), str(HERE)]))
                p = subprocess.run([sys.executable, str(HERE / "bench_scaling.py"),
                                    "--one", f"{seed},{headers},{items}",
                                    "--repeat", str(a.repeat)], input=text, env=env,
                                   cwd=pkg, capture_output=True, text=True, check=True)
                res = json.loads(p.stdout.split("RESULT ", 1)[1])
                totals.setdefault((label, items), []).append(res)
                row += (f" | {res['seconds'] * 1e3:10.1f} {res['iterations']:>4} "
                        f"{res['status'].split('.')[-1].lower():<12}")
            print(row)
            sys.stdout.flush()
    print("--- mean per size")
    for headers, items in SIZES:
        row = f"{headers:>7} {items:>6}     "
        for label, _ in packages:
            rs = totals[label, items]
            row += (f" | {sum(r['seconds'] for r in rs) / len(rs) * 1e3:10.1f} "
                    f"{sum(r['iterations'] for r in rs) / len(rs):4.1f} {'':<12}")
        print(row)


if __name__ == "__main__":
    main()
