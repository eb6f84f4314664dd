"""Benchmark: the cheapest dispatch over the demo's hourly profile against `steamnet cases`
on the same hours (docs/performance.md, "Cheapest dispatch").

Not a test (pytest collects test_*.py only). Run from the repository root:

    .venv/bin/python benchmarks/bench_optimise.py                  # a year, 1 worker
    .venv/bin/python benchmarks/bench_optimise.py --hours 720 --workers 1 2

Each configuration runs in a fresh process: the case table cases/orlewick_hourly.csv
(INVENTED DEMO DATA, like the demo model) on the model's "winter" case, solved as
`steamnet cases` does (steamnet.studies.solve_case_set: the balances, every station
check, the findings) and optimised as `steamnet optimise` does (steamnet.optimise:
the balances, the dispatch of every hour, the re-solved optima and their findings).

Figures: wall time of each [s], CPU time of the process and its workers [s], the ratio
optimise / cases of the wall times measured in the same run, the programmes and
balances per hour (trial balances counted), and the year's saving [EUR]. The machine is
shared: compare the ratios of one run, not figures from different runs.

With ``--commands N`` it times instead the two commands as a user types them, each a
whole process (start-up, reading the model and the profile, the evaluation and the
printed answer included), N times each, alternating:

    steamnet cases cases/orlewick.toml cases/orlewick_hourly.csv --base winter
    steamnet optimise cases/orlewick.toml --table cases/orlewick_hourly.csv --base winter

(with ``--workers W``, the progress bar and the printed answer as a user sees them, the
output captured), and prints the best and the median of each and the ratio of the
medians.
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "orlewick.toml"
PROFILE = ROOT / "cases" / "orlewick_hourly.csv"


def _cpu() -> float:
    me = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime


def run_one(what: str, hours: int, workers: int) -> dict:
    import steamnet
    from steamnet.studies import read_case_table, solve_case_set
    from steamnet.evaluate import evaluate
    from steamnet import properties as props
    model = steamnet.load_model(DEMO)
    cs = read_case_table(PROFILE, model, base="winter")
    cs = cs.select(list(cs)[:hours])
    props.clear_cache()
    c0, t0 = _cpu(), time.perf_counter()
    out: dict = {"what": what, "hours": len(cs), "workers": workers}
    if what == "cases":
        study = solve_case_set(cs, workers=workers)
        ev = evaluate(study)
        out["findings"] = len(ev.findings)
    else:
        from steamnet.studies import optimise as opt
        counts = {"lp": 0, "balance": 0}
        if workers == 1:                     # counted in this process only
            # programmes solved, and fixed-dispatch balances (trial ones too)
            lp, rs = opt.solve_prepared, opt.solve_model

            def count_lp(*a, **k):
                counts["lp"] += 1
                return lp(*a, **k)

            def count_rs(*a, **k):
                counts["balance"] += 1
                return rs(*a, **k)
            opt.solve_prepared, opt.solve_model = count_lp, count_rs
        res = steamnet.optimise(model, cs, workers=workers)
        y = res.year
        out.update({"optimal_hours": y["optimal_hours"], "saving": y["saving"],
                    "lp_per_hour": counts["lp"] / max(1, len(cs)) if workers == 1
                    else None,
                    "balances_per_hour": counts["balance"] / max(1, len(cs))
                    if workers == 1 else None})
    out["wall_s"] = time.perf_counter() - t0
    out["cpu_s"] = _cpu() - c0
    return out


def time_commands(runs: int, workers: int) -> None:
    """The two commands on the whole demo year as whole processes, alternating."""
    import statistics
    exe = Path(sys.executable).with_name("steamnet")
    common = ["--base", "winter", "--workers", str(workers)]
    cmds = {"cases": [str(exe), "cases", str(DEMO), str(PROFILE)] + common,
            "optimise": [str(exe), "optimise", str(DEMO), "--table", str(PROFILE)]
            + common}
    times: dict = {k: [] for k in cmds}
    for _ in range(runs):
        for what, cmd in cmds.items():
            t0 = time.perf_counter()
            subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True)
            times[what].append(time.perf_counter() - t0)
    med = {k: statistics.median(v) for k, v in times.items()}
    print(f"commands on the demo year, workers {workers}, {runs} runs each: "
          + "; ".join(f"{k} best {min(v):.1f} s, median {med[k]:.1f} s"
                      for k, v in times.items())
          + f"; optimise / cases {med['optimise'] / med['cases']:.2f} (medians)")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--hours", type=int, default=8760)
    ap.add_argument("--workers", type=int, nargs="+", default=[1])
    ap.add_argument("--commands", type=int, metavar="N",
                    help="time the two commands on the year, N runs each")
    ap.add_argument("--one", choices=["cases", "optimise"], help=argparse.SUPPRESS)
    a = ap.parse_args()
    if a.one:
        print(json.dumps(run_one(a.one, a.hours, a.workers[0])))
        return
    if a.commands:
        for w in a.workers:
            time_commands(a.commands, w)
        return
    print(f"demo profile, {a.hours} hours on case 'winter'; each figure from a fresh "
          "process")
    for w in a.workers:
        got = {}
        for what in ("cases", "optimise"):
            p = subprocess.run([sys.executable, __file__, "--one", what, "--hours",
                                str(a.hours), "--workers", str(w)], cwd=ROOT,
                               capture_output=True, text=True, check=True)
            got[what] = json.loads(p.stdout.strip().splitlines()[-1])
        c, o = got["cases"], got["optimise"]
        print(f"workers {w}: cases {c['wall_s']:.1f} s wall ({c['cpu_s']:.1f} s CPU); "
              f"optimise {o['wall_s']:.1f} s wall ({o['cpu_s']:.1f} s CPU); "
              f"optimise / cases {o['wall_s'] / c['wall_s']:.2f}")
        extra = ""
        if o["lp_per_hour"] is not None:
            extra = (f"; {o['lp_per_hour']:.2f} programmes and "
                     f"{o['balances_per_hour']:.2f} re-solved balances per hour")
        print(f"  {o['optimal_hours']} of {o['hours']} hours optimal, saving "
              f"{o['saving']:,.0f} EUR{extra}")


if __name__ == "__main__":
    main()
