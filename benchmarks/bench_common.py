"""Shared parts of the sweep benchmarks (bench_annual.py, bench_trips.py, bench_large.py).

Not a test (pytest collects test_*.py only). The hourly profile below is INVENTED DEMO
DATA for the Orlewick Board Mill demo model: a smooth seasonal and daily shape of the
heating and tracing demand, the mill water heater duty, the PM1 dryer steam and the
make-up water temperature, chosen only to exercise the solver with a year of plausible,
varying cases. It describes no real plant and no measured year.

Figures printed by the benchmarks
---------------------------------
wall
    Elapsed time of the sweep (and of the station checks where run) [s].
property evaluations
    Uncached IAPWS-IF97 evaluations (``steamnet.properties.stats()``), summed over every
    process of the run, per case [-].
floor
    The time those evaluations alone took (``stats()["seconds"]``), summed over every
    process: the cost of the steam properties with nothing else around them [s].
total / floor
    Time spent per second of property evaluation: wall x processes / floor. 1 would
    mean the program did nothing but evaluate properties. Both are wall-clock times, so
    the ratio holds up when other work slows the whole run down [-].
CPU time, CPU share
    User + system time of this process and its workers, and its share of wall x
    processes: well below 100 % means the run waited for the CPU (other work on the
    machine) or for its workers to start [s], [%].
peak memory
    Largest resident set of this process and of any worker it waited for
    (``resource.getrusage``, max RSS); with ``--tracemalloc`` also the peak of Python
    allocations in this process (tracemalloc slows the run, so its times are not
    comparable) [MB].

The machine is shared with other processes: compare ratios measured in one run, not
figures from different runs.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import platform
import resource
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "cases" / "orlewick.toml"

HOURS_PER_YEAR = 8760


# --------------------------------------------------------------- invented demo data
def hourly_changes(hour: int) -> dict:
    """Changes of one hour of the invented demo year (SI values, see the module doc).

    ``season`` is 1 in the coldest week (about 20 January) and 0 in the warmest;
    ``night`` is 1 at 05:00 and 0 at 17:00.
    """
    from steamnet.model.schema import SI
    day, hod = divmod(hour, 24)
    season = 0.5 * (1.0 + math.cos(2.0 * math.pi * (day - 20) / 365.0))
    night = 0.5 * (1.0 + math.cos(2.0 * math.pi * (hod - 5) / 24.0))
    heating_t_h = 0.5 + 8.5 * season * (0.85 + 0.3 * night)
    tracing_t_h = 4.0 * min(1.0, max(0.0, (season - 0.3) / 0.5))
    water_heater_w = (3.5e6 + 4.5e6 * season) * (1.0 + 0.06 * math.sin(
        2.0 * math.pi * (hod - 8) / 24.0))
    dryer_t_h = (32.0 + 1.5 * math.sin(2.0 * math.pi * hod / 24.0)
                 - 1.0 * math.cos(2.0 * math.pi * day / 7.0))
    makeup_c = 4.0 + 18.0 * (1.0 - season) + 1.5 * math.sin(2.0 * math.pi * (hod - 9) / 24.0)
    return {
        "user.Building heating.demand": SI(heating_t_h / 3.6),
        "user.LP tracing.demand": SI(tracing_t_h / 3.6),
        "user.Mill water heater.duty": SI(water_heater_w),
        "user.PM1 dryer section.demand": SI(dryer_t_h / 3.6),
        "site.makeup_temperature": SI(273.15 + makeup_c),
    }


def hourly_specs(n: int = HOURS_PER_YEAR, based_on: str = "winter") -> list:
    """``n`` consecutive hours of the invented demo year as sweep specs."""
    return [(f"h{i:04d}", hourly_changes(i), based_on) for i in range(n)]


def running_turbines(model) -> list[tuple[str, str]]:
    """(table, name) of every turbine and extraction turbine in service and not tripped
    in ``model``."""
    out = []
    for table in ("turbine", "extraction_turbine"):
        for name, t in model.table(table).items():
            if getattr(t, "in_service", True) and t.mode != "tripped":
                out.append((table, name))
    return out


def trip_specs(model, hours: list) -> list:
    """Every hour with each running turbine tripped in turn, turbine by turbine (so the
    24 hours of a chunk share the trip and warm-start from each other)."""
    out = []
    for table, name in running_turbines(model):
        for hname, changes, based_on in hours:
            ch = dict(changes)
            ch[f"{table}.{name}.mode"] = "tripped"
            out.append((f"{hname} {name} trip", ch, based_on))
    return out


# ---------------------------------------------------------------------- measuring
def parser(doc: str) -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(description=doc.splitlines()[0])
    ap.add_argument("--one", default=None, help=argparse.SUPPRESS)
    ap.add_argument("--workers", type=int, nargs="+", default=[1, 2],
                    help="worker counts to run, in order (default: 1 2)")
    ap.add_argument("--reference", action="store_true",
                    help="also run the reference solver path (the code path before the "
                         "speed work) with one worker, for a before/after ratio from the "
                         "same run")
    ap.add_argument("--before", metavar="DIR", default=None,
                    help="also run with the steamnet package found in DIR (a copy of an "
                         "earlier commit, e.g. git archive be085aa | tar -x -C DIR), one "
                         "worker, for a before/after ratio from the same run")
    ap.add_argument("--dask", type=int, default=0, metavar="N",
                    help="also run on a local dask.distributed cluster of N processes")
    ap.add_argument("--tracemalloc", action="store_true",
                    help="measure the peak of Python allocations (slows the run)")
    return ap


def machine() -> str:
    return (f"python {platform.python_version()} on {platform.machine()}, "
            f"{os.cpu_count()} CPUs, pid {os.getpid()}")


def cpu_seconds() -> float:
    """User + system CPU time of this process and of its waited-for children [s]."""
    me = resource.getrusage(resource.RUSAGE_SELF)
    kids = resource.getrusage(resource.RUSAGE_CHILDREN)
    return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime


def max_rss_mb() -> tuple[float, float]:
    """Peak resident set of this process and of its waited-for children [MB]."""
    me = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024.0
    return me, kids


class Run:
    """One timed run: wall time and the property statistics of every process."""

    def __init__(self, label: str, n_cases: int, processes: int, use_tracemalloc: bool):
        self.label, self.n, self.processes = label, n_cases, processes
        self.trace = use_tracemalloc
        self.parts: list[tuple[str, float]] = []

    def __enter__(self):
        from steamnet import properties as props
        props.clear_cache()
        props.reset_stats()
        if self.trace:
            tracemalloc.start()
        self.cpu0 = cpu_seconds()
        self.t0 = time.perf_counter()
        self.last = self.t0
        return self

    def mark(self, name: str) -> None:
        now = time.perf_counter()
        self.parts.append((name, now - self.last))
        self.last = now

    def __exit__(self, *exc):
        from steamnet import properties as props
        self.wall = time.perf_counter() - self.t0
        self.cpu = cpu_seconds() - self.cpu0
        self.stats = props.stats()
        self.peak_py = None
        if self.trace:
            self.peak_py = tracemalloc.get_traced_memory()[1] / 2**20
            tracemalloc.stop()
        return False

    def report(self) -> dict:
        ev, fl = self.stats["evaluations"], self.stats["seconds"]
        me, kids = max_rss_mb()
        ratio = (self.wall * self.processes / fl) if fl > 0 else math.nan
        share = 100.0 * self.cpu / (self.wall * self.processes)
        parts = ", ".join(f"{k} {v:.2f} s" for k, v in self.parts)
        print(f"--- {self.label}")
        print(f"  wall                 {self.wall:9.2f} s   ({parts})")
        print(f"  cases                {self.n:9d}     {self.n / self.wall:9.0f} cases/s"
              f"   {self.wall / self.n * 1e3:.2f} ms/case")
        print(f"  property evaluations {ev / self.n:9.1f} per case")
        print(f"  property floor       {fl:9.2f} s   ({fl / self.n * 1e3:.3f} ms/case, "
              f"all processes)")
        print(f"  total / floor        {ratio:9.2f}     (wall x {self.processes} "
              f"process{'es' if self.processes > 1 else ''} / floor)")
        print(f"  CPU time             {self.cpu:9.2f} s   (this process and its workers;"
              f" CPU share {share:.0f} %)")
        print(f"  peak RSS             {me:9.0f} MB this process, {kids:.0f} MB largest "
              "worker")
        import steamnet
        print(f"  steamnet package     {Path(steamnet.__file__).parent}")
        if self.peak_py is not None:
            print(f"  peak Python heap     {self.peak_py:9.0f} MB (tracemalloc)")
        sys.stdout.flush()
        return {"wall": self.wall, "floor": fl, "ratio": ratio, "cpu": self.cpu,
                "cpu_share": share, "rss_mb": max(me, kids)}


def configs(a) -> list[str]:
    """The runs asked for: ``fast:N`` per worker count, ``reference:1``, ``before:1``,
    ``dask:N``."""
    out = [f"fast:{w}" for w in a.workers]
    if a.reference:
        out.append("reference:1")
    if a.before:
        out.append("before:1")
    if a.dask:
        out.append(f"dask:{a.dask}")
    return out


def main(doc: str, run_one, argv=None, extra_args=None) -> None:
    """Run every configuration in a fresh process (so that the peak memory of each is
    its own and no property cache carries over), then print the ratios between them.
    ``run_one(config, args)`` runs one configuration and returns ``Run.report()``."""
    ap = parser(doc)
    if extra_args:
        extra_args(ap)
    a = ap.parse_args(argv)
    if a.one:
        res = run_one(a.one, a)
        print("RESULT " + json.dumps({"config": a.one, **res}))
        return
    print(doc.splitlines()[0])
    print(machine())
    results = {}
    argv = list(sys.argv[1:] if argv is None else argv)
    for cfg in configs(a):
        env = dict(os.environ)
        if cfg.startswith("before"):       # the earlier package first on the path
            env["PYTHONPATH"] = os.pathsep.join(
                [str(Path(a.before).resolve()), str(Path(__file__).resolve().parent)])
        proc = subprocess.run([sys.executable, sys.argv[0], *argv, "--one", cfg],
                              capture_output=True, text=True, env=env)
        for line in proc.stdout.splitlines():
            if line.startswith("RESULT "):
                results[cfg] = json.loads(line[7:])
            else:
                print(line)
        if proc.returncode:
            print(proc.stderr)
            raise SystemExit(f"run {cfg} failed")
    print("--- ratios (same run)")
    base = results.get("fast:1")
    for cfg, r in results.items():
        if base and cfg != "fast:1":
            print(f"  wall {cfg} / wall fast:1   {r['wall'] / base['wall']:6.2f}")


def sweep_config(cfg: str, a, title: str, model, specs: list) -> tuple[dict, object]:
    """Solve ``specs`` and run the station checks on them in configuration ``cfg``
    (``fast:N``, ``reference:1``, ``before:1`` or ``dask:N``); print the figures;
    return the report dict and the study. The single-point station checks are made
    while solving (``station_checks=True``: in the workers when there are workers),
    except by a package older than that option, which runs them all afterwards."""
    import steamnet
    from steamnet.stations.run import run_checks
    kind, n = cfg.split(":")
    n = int(n)
    import inspect
    kw: dict = {"tables": False}
    if "station_checks" in inspect.signature(steamnet.solve_cases).parameters:
        kw["station_checks"] = True      # point checks where each chunk is solved
    cluster = None
    if kind == "reference":
        kw["reference"] = True
    elif kind == "dask":
        from distributed import LocalCluster
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                               host="127.0.0.1", dashboard_address=None)
        kw["scheduler"] = cluster.scheduler_address
        steamnet.solve_cases(model, specs[:48], **kw)    # workers import steamnet
    else:
        kw["workers"] = n
    label = {"fast": f"{n} worker{'s' if n > 1 else ''}",
             "before": f"steamnet from {a.before} (before), 1 worker",
             "reference": "reference path, 1 worker",
             "dask": f"local dask cluster of {n} processes (start-up and a warm-up sweep "
                     "of 48 cases not timed)"}[kind]
    try:
        with Run(f"{title}, {label}", len(specs), n, a.tracemalloc) as r:
            study = steamnet.solve_cases(model, specs, **kw)
            r.mark("solve" + (" and point checks" if "station_checks" in kw else ""))
            report = run_checks(study)
            r.mark("station checks" if "station_checks" not in kw else
                   "joining them, checks across cases")
    finally:
        if cluster is not None:
            cluster.close()
    res = r.report()
    st = study.summary["status"].value_counts().to_dict()
    print(f"  statuses             {st}")
    print(f"  mean iterations      {study.summary['iterations'].mean():.2f}")
    print(f"  station check rows   {len(report.checks)} "
          f"({int((report.checks['status'] == 'fail').sum())} fail)")
    return res, study


def hours_arg(ap) -> None:
    ap.add_argument("--hours", type=int, default=HOURS_PER_YEAR,
                    help="hours of the demo year to run (default 8760)")
