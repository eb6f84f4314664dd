"""Run times and memory of the studies on the demo plant; prints figures, asserts nothing.

Usage::

    python benchmarks/bench_studies.py            # every study, a year of hours
    python benchmarks/bench_studies.py --hours 744 --skip-json

Figures: wall time of each study on cases/orlewick.toml (three cases), the number of
balances it needed, and for the hourly profile (cases/orlewick_hourly.csv, base case
'winter') the time to read and check the table, the time per hour to solve it (in one process
and in ``--workers``), the trip screening of its first ``--trip-hours`` hours (in one
process and in ``--workers``), the growth of the peak resident memory while solving,
and the time and memory of the JSON export. Peak memory is the process's maximum resident set size (getrusage), so each
figure is the growth over everything measured before it.
"""

from __future__ import annotations

import argparse
import resource
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from steamnet import properties as props  # noqa: E402
from steamnet.io.jsonout import write_json  # noqa: E402
from steamnet.model.load import load_model  # noqa: E402
from steamnet.studies import (case_results, header_headroom, marginal_steam_cost,  # noqa: E402
                              new_consumer_impact, read_case_table, solve_case_set,
                              trip_screening)

DEMO = ROOT / "cases" / "orlewick.toml"
HOURLY = ROOT / "cases" / "orlewick_hourly.csv"


def peak_mb() -> float:
    kb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss       # KiB on Linux
    return kb / 1024 if sys.platform != "darwin" else kb / 2**20


class Balances:
    """Counts the balances a study runs (wraps steamnet.studies.common.solve)."""

    def __init__(self):
        from steamnet.studies import common
        self.common, self.real, self.n = common, common.solve, 0

    def __enter__(self):
        def counting(*a, **k):
            self.n += 1
            return self.real(*a, **k)
        for mod in ("common", "trips", "headroom", "consumer", "marginal", "runcases"):
            m = sys.modules[f"steamnet.studies.{mod}"]
            if hasattr(m, "solve"):
                setattr(m, "solve", counting)
        return self

    def __exit__(self, *exc):
        for mod in ("common", "trips", "headroom", "consumer", "marginal", "runcases"):
            m = sys.modules[f"steamnet.studies.{mod}"]
            if hasattr(m, "solve"):
                setattr(m, "solve", self.real)


def timed(label: str, func, balances=None):
    """Run ``func`` and print its time and balances: counted, or ``balances`` (a number,
    or a function giving it afterwards) for the studies that run as sweeps, without
    steamnet.studies.common.solve (case sets, trip screening)."""
    props.clear_cache()      # each study from cold property caches (forked workers
    with Balances() as b:    # would otherwise inherit what the one before cached)
        t = time.perf_counter()
        out = func()
        dt = time.perf_counter() - t
    n = b.n if balances is None else balances() if callable(balances) else balances
    print(f"{label:<44} {dt:8.2f} s  {n:6d} balances  {1e3 * dt / max(1, n):6.1f} "
          "ms/balance")
    return out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--hours", type=int, default=8760, help="hours of the profile")
    ap.add_argument("--skip-json", action="store_true", help="skip the JSON export")
    ap.add_argument("--workers", type=int, default=2, help="worker processes for the "
                    "second solve of the profile and the trips (default 2)")
    ap.add_argument("--trip-hours", type=int, default=720, help="hours of the profile "
                    "to screen for trips, in one process and in --workers (default "
                    "720; 0 skips)")
    args = ap.parse_args()
    print(f"python {sys.version.split()[0]}, demo {DEMO.name}")
    model = load_model(DEMO)
    seen = {}
    timed("trip screening (turbines and boilers)",
          lambda: trip_screening(model, boilers=True,
                                 progress=lambda d, n, _: seen.update(n=n)),
          balances=lambda: seen["n"])
    timed("headroom, 4 headers x 3 cases", lambda: header_headroom(model))
    timed("marginal cost, 4 headers x 3 cases", lambda: marginal_steam_cost(model))
    timed("new consumer 12 t/h on LP, 3 cases",
          lambda: new_consumer_impact(model, "LP", demand="12 t/h"))

    lines = HOURLY.read_text().splitlines()[: args.hours + 1]
    with tempfile.TemporaryDirectory() as tmp:
        prof = Path(tmp) / "profile.csv"
        prof.write_text("\n".join(lines) + "\n")
        m0 = peak_mb()
        t = time.perf_counter()
        cs = read_case_table(prof, model, base="winter")
        dt = time.perf_counter() - t
        print(f"read and check {len(cs)} hours{'':<22} {dt:8.2f} s  "
              f"{1e3 * dt / len(cs):.2f} ms/hour")
        m1 = peak_mb()
        study = timed(f"solve {len(cs)} hours (lean, warm starts)",
                      lambda: solve_case_set(cs), balances=len(cs))
        df = case_results(study)
        m2 = peak_mb()
        timed(f"the same in {args.workers} worker processes",
              lambda: solve_case_set(cs, workers=args.workers), balances=len(cs))
        if args.trip_hours:
            sub = cs.select(cs.names[:args.trip_hours])
            for w in (1, args.workers):
                seen = {}
                props.clear_cache()
                t = time.perf_counter()
                tr = trip_screening(model, sub, workers=w,
                                    progress=lambda d, n, _: seen.update(n=n))
                dt = time.perf_counter() - t
                label = f"trips of {len(sub)} hours, {w} process{'es' if w > 1 else ''}"
                print(f"{label:<44} {dt:8.2f} s  {seen['n']:6d} balances  "
                      f"{1e3 * dt / seen['n']:6.1f} ms/balance  ({len(tr)} rows)")
        print(f"peak memory: {m0:.0f} MB before reading, +{m1 - m0:.0f} MB reading, "
              f"+{m2 - m1:.0f} MB solving and tabulating ({len(df)} rows x "
              f"{df.shape[1]} columns)")
        if not args.skip_json:
            out = Path(tmp) / "year.json"
            t = time.perf_counter()
            write_json(study, out, extra={"studies": {"case_table": {"rows": df}}})
            dt = time.perf_counter() - t
            print(f"JSON export{'':<33} {dt:8.2f} s  {out.stat().st_size / 1e6:.1f} MB "
                  f"file, peak memory +{peak_mb() - m2:.0f} MB")


if __name__ == "__main__":
    main()
