"""Scale benchmark (a script, not a test): a generated network of 100 headers and 1,000
items is loaded and solved; prints wall times, iterations, unknowns and peak memory.

    python benchmarks/bench_scale.py                    # seeds 1-3, 100 headers, 1000 items
    python benchmarks/bench_scale.py --seeds 7 --profile
    python benchmarks/bench_scale.py --headers 50 --items 400 --slack 3

Peak memory is reported two ways: the peak of Python allocations during load and solve
(tracemalloc, which slows the run, so the times come from a separate run without it),
and the process's maximum resident set size (resource.getrusage). Property evaluations
are counted from an empty cache. With --profile, the solve runs under cProfile and the
functions with the most cumulative and own time are printed.
"""

from __future__ import annotations

import argparse
import cProfile
import gc
import io
import pstats
import resource
import sys
import time
import tracemalloc
import warnings
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from steamnet import loads_model, properties, solve_case  # noqa: E402
from steamnet.testing.synth import random_model_text  # noqa: E402


def run_once(text: str, *, trace: bool = False) -> dict:
    properties.clear_cache()
    properties.reset_stats()
    gc.collect()
    if trace:
        tracemalloc.start()
    t0 = time.perf_counter()
    model = loads_model(text, source="bench.toml")
    t1 = time.perf_counter()
    r = solve_case(model)
    t2 = time.perf_counter()
    out = {"load_s": t1 - t0, "solve_s": t2 - t1, "status": r.status,
           "iterations": r.iterations,
           "unknowns": len(r.solution.net.vars) if r.solution is not None else 0,
           "headers": len(model.headers),
           "items": sum(len(t) for t in model.items.values()) - len(model.headers),
           "message": r.message, "props": properties.stats(),
           "solver_s": r.solution.seconds if r.solution is not None else float("nan")}
    if trace:
        out["peak_mib"] = tracemalloc.get_traced_memory()[1] / 2**20
        tracemalloc.stop()
    return out


def profile(text: str, top: int) -> str:
    model = loads_model(text, source="bench.toml")
    properties.clear_cache()
    pr = cProfile.Profile()
    pr.enable()
    solve_case(model)
    pr.disable()
    buf = io.StringIO()
    st = pstats.Stats(pr, stream=buf)
    st.sort_stats("cumulative").print_stats(top)
    st.sort_stats("tottime").print_stats(top)
    return buf.getvalue()


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--headers", type=int, default=100)
    ap.add_argument("--items", type=int, default=1000)
    ap.add_argument("--seeds", type=int, nargs="*", default=[1, 2, 3])
    ap.add_argument("--slack", type=float, default=None,
                    help="capacity margin of the generator (default: drawn)")
    ap.add_argument("--vents", action="store_true",
                    help="an unlimited vent on every header (more networks balance)")
    ap.add_argument("--repeat", type=int, default=3, help="timed runs per seed (best)")
    ap.add_argument("--profile", action="store_true")
    ap.add_argument("--top", type=int, default=20)
    args = ap.parse_args(argv)
    warnings.simplefilter("ignore", RuntimeWarning)
    print(f"steamnet scale benchmark: {args.headers} headers, {args.items} items, "
          f"seeds {args.seeds}, best of {args.repeat}")
    print(f"{'seed':>5} {'status':<13} {'it':>4} {'unknowns':>8} {'load s':>7} "
          f"{'solve s':>8} {'solver s':>8} {'prop evals':>10} {'prop s':>7} "
          f"{'peak MiB':>9}")
    for seed in args.seeds:
        kw = {"n_cases": 0}
        if args.slack is not None:
            kw["slack"] = args.slack
        if args.vents:
            kw["vent_every_header"] = True
        text = random_model_text(seed, args.headers, args.items, **kw)
        runs = [run_once(text) for _ in range(args.repeat)]
        best = min(runs, key=lambda r: r["load_s"] + r["solve_s"])
        traced = run_once(text, trace=True)
        print(f"{seed:>5} {best['status']:<13} {best['iterations']:>4} "
              f"{best['unknowns']:>8} {best['load_s']:>7.3f} {best['solve_s']:>8.3f} "
              f"{best['solver_s']:>8.3f} {best['props']['evaluations']:>10} "
              f"{best['props']['seconds']:>7.3f} {traced['peak_mib']:>9.1f}")
        if best["status"] != "solved":
            print(f"      {best['message'][:160]}{'...' if len(best['message']) > 160 else ''}")
        if args.profile:
            print(profile(text, args.top))
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss     # KiB on Linux
    print(f"max resident set size of this process: {rss / 1024:.1f} MiB")
    return 0


if __name__ == "__main__":
    sys.exit(main())
