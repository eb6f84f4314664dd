"""The long fuzz runs (a script, not collected by pytest): the checks of
test_property_networks.py and test_fuzz_loader.py on many more inputs, in parallel.

    python tests/run_long_fuzz.py networks --examples 20000
    python tests/run_long_fuzz.py loader --examples 20000
    python tests/run_long_fuzz.py both --examples 10000 --workers 2 --start 0

Inputs are numbered; input i of a run uses seed ``start + i`` (networks: sizes drawn
from the seed, then ``steamnet.testing.synth.random_model_text(seed, ...)``; loader: the
mutations of tests/toml_mutations.py on one of the base files, valid mutants are
solved too). A failure prints its seed, so ``--start SEED --examples 1`` repeats it.
Prints the number of inputs, the outcomes and every failure; exit code 1 if any input
failed.
"""

from __future__ import annotations

import argparse
import collections
import multiprocessing as mp
import random
import sys
import time
import traceback
import warnings
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parent))


def network_sizes(seed: int) -> tuple[int, int]:
    from steamnet.testing.synth import min_items
    rng = random.Random(seed ^ 0x5EED)
    n_headers = rng.randint(1, 10)
    return n_headers, rng.randint(min_items(n_headers), 60)


def one_network(seed: int) -> tuple[collections.Counter, list[str]]:
    from test_property_networks import check_network
    nh, ni = network_sizes(seed)
    statuses, known = [], []
    try:
        problems = check_network(seed, nh, ni, known=known, statuses=statuses)
    except Exception as exc:  # noqa: BLE001 - every exception is a finding here
        problems = [f"exception {type(exc).__name__}: {exc}\n{traceback.format_exc()}"]
    c = collections.Counter(statuses)
    c.update(f"known: {k}" for k in known)
    return c, [f"network seed {seed} ({nh} headers, {ni} items): {p}" for p in problems]


def one_mutant(seed: int) -> tuple[collections.Counter, list[str]]:
    from test_fuzz_loader import BASES, load_outcome
    from toml_mutations import mutate
    from steamnet import loads_model, solve_cases
    from steamnet.errors import ModelError
    rng = random.Random(seed)
    base = rng.choice(sorted(BASES))
    text = mutate(BASES[base], rng)
    c = collections.Counter()
    try:
        problems = load_outcome(text)
    except Exception as exc:  # noqa: BLE001
        problems = [f"exception {type(exc).__name__}: {exc}"]
    if problems:
        return c, [f"mutant seed {seed} of {base}: {p}" for p in problems]
    try:
        model = loads_model(text, source="fuzzed.toml")
    except ModelError:
        c["model error"] += 1
        return c, []
    c["valid"] += 1
    try:                                    # a valid mutant must solve without raising
        for r in solve_cases(model).cases:
            c[f"valid, case {r.status}"] += 1
    except Exception as exc:  # noqa: BLE001
        problems.append(f"solving raised {type(exc).__name__}: {exc}")
    return c, [f"mutant seed {seed} of {base}: {p}" for p in problems]


def _work(args):
    kind, seed = args
    warnings.simplefilter("ignore", RuntimeWarning)
    return (one_network if kind == "networks" else one_mutant)(seed)


def run(kind: str, n: int, start: int, workers: int) -> int:
    t0 = time.perf_counter()
    counts: collections.Counter = collections.Counter()
    failures: list[str] = []
    jobs = [(kind, start + i) for i in range(n)]
    with mp.Pool(workers) as pool:
        for i, (c, probs) in enumerate(pool.imap_unordered(_work, jobs, chunksize=8), 1):
            counts.update(c)
            for p in probs:
                failures.append(p)
                print("FAIL", p, flush=True)
            if i % max(1, n // 10) == 0:
                print(f"  {kind}: {i}/{n} inputs, {len(failures)} failures, "
                      f"{time.perf_counter() - t0:.0f} s", flush=True)
    dt = time.perf_counter() - t0
    what = "networks generated" if kind == "networks" else "model files fuzzed"
    print(f"{kind}: {n} {what} (seeds {start}..{start + n - 1}) in {dt:.0f} s "
          f"on {workers} workers; {len(failures)} failures")
    for k, v in sorted(counts.items()):
        print(f"  {k}: {v}")
    return len(failures)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description="long runs of the random-network fuzz")
    ap.add_argument("kind", choices=["networks", "loader", "both"])
    ap.add_argument("--examples", type=int, default=10000)
    ap.add_argument("--start", type=int, default=0)
    ap.add_argument("--workers", type=int, default=max(1, min(2, mp.cpu_count())))
    args = ap.parse_args(argv)
    kinds = ["networks", "loader"] if args.kind == "both" else [args.kind]
    failed = sum(run(k, args.examples, args.start, args.workers) for k in kinds)
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
