"""Benchmark of the workbook writer (not a test): time and peak memory for N synthetic
copies of the demo's case results, with a station-checks table of the same shape.

    .venv/bin/python benchmarks/bench_workbook.py              # N = 100, 1000, 8760
    .venv/bin/python benchmarks/bench_workbook.py 8760 --no-checks --csv

Each N runs in a fresh process so that the peaks do not mix. Printed per N: the time to
write (wall clock, and the process's CPU time, which a busy machine disturbs less), the
resident memory before writing (the study and checks), the peak resident
memory while writing above that, the workbook's size, and the rows of its long tables.
"""

from __future__ import annotations

import argparse
import os
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))      # wb_helpers, the demo study of the tests


def _rss_mb() -> float:
    with open("/proc/self/statm") as fh:
        pages = int(fh.read().split()[1])
    return pages * os.sysconf("SC_PAGE_SIZE") / 2**20


def _peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024   # KiB on Linux


def one(n: int, checks: bool, csv: bool) -> None:
    from steamnet.workbook import write_csv_folder, write_workbook
    from wb_helpers import copies, demo_study, stand_in_checks
    study = copies(demo_study(), n)
    table = stand_in_checks(study) if checks else None
    base = _rss_mb()
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "bench.xlsx"
        t0, c0 = time.perf_counter(), time.process_time()
        write_workbook(out, study, checks=table)
        dt, cpu = time.perf_counter() - t0, time.process_time() - c0
        peak = _peak_mb()
        size = out.stat().st_size / 2**20
        line = (f"N={n:>5}  checks={'yes' if checks else 'no ':3}  write {dt:6.1f} s "
                f"(cpu {cpu:6.1f} s)  "
                f"memory before {base:6.0f} MB  peak while writing +{peak - base:5.0f} MB  "
                f"file {size:5.1f} MB  equipment rows "
                f"{sum(len(c.equipment) for c in study.cases)}  check rows "
                f"{0 if table is None else len(table)}")
        if csv:
            t0 = time.perf_counter()
            write_csv_folder(Path(tmp) / "csv", study, checks=table)
            line += f"  csv {time.perf_counter() - t0:5.1f} s"
    print(line, flush=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("n", nargs="*", type=int, default=[100, 1000, 8760])
    ap.add_argument("--no-checks", action="store_true", help="without a checks table")
    ap.add_argument("--csv", action="store_true", help="also time the CSV export")
    ap.add_argument("--one", action="store_true", help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.one:
        one(a.n[0], not a.no_checks, a.csv)
        return
    for n in a.n:
        cmd = [sys.executable, __file__, str(n), "--one"]
        cmd += ["--no-checks"] if a.no_checks else []
        cmd += ["--csv"] if a.csv else []
        subprocess.run(cmd, check=True)


if __name__ == "__main__":
    main()
