"""Benchmark of `steamnet report` on the demo as a whole process (not a test).

    .venv/bin/python benchmarks/bench_report.py                       # this checkout
    .venv/bin/python benchmarks/bench_report.py --tree /tmp/old --runs 5

Each run is a fresh `python -m steamnet.cli report cases/orlewick.toml --out ...
--new-user "LP=12 t/h"` (the README's demo command) with the package and the demo model of each `--tree` (a checkout of another
commit, `git worktree add /tmp/old COMMIT`; its own model file, since the file's fields
follow the package),
the trees taking turns run by run so that a busy machine disturbs them alike. Printed:
per tree the median and the fastest wall time and CPU time (user + system of the
child), and each tree's median against the first's. The machine is shared: compare the
ratios of one run.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _once(tree: Path, out: Path) -> tuple[float, float, int]:
    env = {**os.environ, "PYTHONPATH": str(tree)}
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    r = subprocess.run([sys.executable, "-m", "steamnet.cli", "report",
                        str(tree / "cases" / "orlewick.toml"), "--out", str(out),
                        "--new-user", "LP=12 t/h"], env=env, cwd=tree,
                       capture_output=True, text=True)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu, r.returncode


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--tree", action="append", type=Path,
                    help="a checkout whose steamnet to run (repeatable; default this one)")
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    trees = args.tree or [ROOT]
    times: dict[Path, list[tuple[float, float]]] = {t: [] for t in trees}
    with tempfile.TemporaryDirectory() as tmp:
        for i in range(args.runs):
            for t in trees:
                wall, cpu, code = _once(t, Path(tmp) / f"r{i}.xlsx")
                times[t].append((wall, cpu))
                if code not in (0, 1):
                    sys.exit(f"{t}: steamnet report exited {code}")
    first = statistics.median(w for w, _ in times[trees[0]])
    print(f"steamnet report on the demo, {args.runs} runs per tree, trees taking turns")
    print(f"{'tree':<28} {'median s':>9} {'fastest s':>10} {'cpu med s':>10} "
          f"{'vs first':>9}")
    for t in trees:
        walls = [w for w, _ in times[t]]
        cpus = [c for _, c in times[t]]
        med = statistics.median(walls)
        print(f"{str(t)[-28:]:<28} {med:9.2f} {min(walls):10.2f} "
              f"{statistics.median(cpus):10.2f} {med / first:9.2f}")


if __name__ == "__main__":
    main()
