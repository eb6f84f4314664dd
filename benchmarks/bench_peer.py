"""Peer benchmark: a sweep of hourly cases of a three-header plant as a whole process,
steamnet against a hand-written scipy fsolve + iapws script (peer_fsolve_iapws.py).

Not a test (pytest collects test_*.py only). Run from the repository root:

    .venv/bin/python benchmarks/bench_peer.py                 # 500 hours, 3 rounds
    .venv/bin/python benchmarks/bench_peer.py --hours 200 --before /tmp/before

Each side runs as a fresh ``python`` process from start to end (interpreter start-up,
imports, reading the plant, every hour, writing one CSV row per hour), the sides taking
turns round by round so that they meet the same load; the best and the median wall
times and their ratio are printed, and the boiler steam of every hour is compared
between the sides (both are IAPWS-IF97, so they agree to the solvers' tolerances).

The plant and its hours are INVENTED BENCHMARK DATA (the "Fenwick Row works", a
boiler, a back-pressure turbine set and two let-down stations between three headers):
a smooth daily and weekly shape of the MP process steam, the LP steam and an LP
heater's duty, chosen only to give the solvers varying hours. They describe no real
plant. The machine is shared: compare ratios from one run.
"""

from __future__ import annotations

import argparse
import math
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
C0 = 273.15

#: The plant in SI (invented benchmark data, see the module docstring).
CONSTANTS = {
    "p_hp": 41e5, "p_mp": 13e5, "p_lp": 4.5e5,               # header pressures [Pa]
    "loss_hp": 150e3, "loss_mp": 80e3, "loss_lp": 60e3,       # header heat losses [W]
    "t_steam": C0 + 420.0,                                    # boiler outlet [K]
    "p_water": 51e5, "t_water": C0 + 105.0,                   # feed and spray water
    "approach": 15.0,                                         # HP-MP desuperheater [K]
    "eta_turbine": 0.70, "eta_mg": 0.98 * 0.96, "power": 0.8e6,   # turbine set
}

MODEL_TEXT = """\
# Fenwick Row works: INVENTED benchmark plant (benchmarks/bench_peer.py), not a real one.
format_version = 1

[site]
name = "Fenwick Row works (invented)"
makeup_temperature = "15 degC"

[[header]]
name = "HP"
pressure = "41 bar(a)"
heat_loss = "150 kW"

[[header]]
name = "MP"
pressure = "13 bar(a)"
heat_loss = "80 kW"

[[header]]
name = "LP"
pressure = "4.5 bar(a)"
heat_loss = "60 kW"

[[water_supply]]
name = "Feed"
source = "external"
pressure = "51 bar(a)"
temperature = "105 degC"

[[boiler]]
name = "B1"
header = "HP"
steam_temperature = "420 degC"
feedwater = "Feed"
efficiency = "88 %"
max_steam = "90 t/h"

[[turbine]]
name = "TG1"
inlet = "HP"
outlet = "LP"
drive = "generator"
isentropic_efficiency = "70 %"
mechanical_efficiency = "98 %"
generator_efficiency = "96 %"
mode = "fixed_power"
power = "800 kW"

[[letdown]]
name = "HP-MP"
inlet = "HP"
outlet = "MP"
[letdown.desuperheater]
spray_supply = "Feed"
approach = "15 K"

[[letdown]]
name = "MP-LP"
inlet = "MP"
outlet = "LP"

[[user]]
name = "MP process"
header = "MP"
demand = "16 t/h"

[[user]]
name = "LP steam"
header = "LP"
demand = "8 t/h"

[[user]]
name = "LP heater"
header = "LP"
duty = "4 MW"

[[vent]]
name = "LP vent"
header = "LP"
"""


def hour_values(i: int) -> dict:
    """The invented demands of hour ``i`` in SI: MP steam and LP steam [kg/s], LP
    heater duty [W]."""
    day = 2.0 * math.pi * (i % 24) / 24.0
    week = 2.0 * math.pi * (i % 168) / 168.0
    return {"mp_demand": (16.0 + 2.0 * math.sin(day) + 0.8 * math.cos(week)) / 3.6,
            "lp_demand": (8.0 + 1.5 * math.cos(day)) / 3.6,
            "lp_heater_duty": 4.0e6 + 1.2e6 * math.sin(day - 1.0)}


def steamnet_side(n: int, path: str) -> None:
    """What a steamnet user's script does: read the plant, solve the hours, write the
    boiler steam of each."""
    import steamnet
    from steamnet.model.schema import SI
    model = steamnet.loads_model(MODEL_TEXT, source="fenwick.toml")
    specs = []
    for i in range(n):
        v = hour_values(i)
        specs.append((f"h{i}", {"user.MP process.demand": SI(v["mp_demand"]),
                                "user.LP steam.demand": SI(v["lp_demand"]),
                                "user.LP heater.duty": SI(v["lp_heater_duty"])}))
    study = steamnet.solve_cases(model, specs, tables=False)
    bad = [c.case for c in study.cases if not c.ok]
    if bad:
        raise SystemExit(f"steamnet: {len(bad)} hours do not balance, e.g. {bad[0]}")
    with open(path, "w") as f:
        f.write("hour,boiler_steam_t_h\n")
        for i, s in enumerate(study.summary["steam_raised_t_h"]):
            f.write(f"{i},{s!r}\n")


def _read(path: Path) -> list[float]:
    return [float(line.split(",")[1]) for line in path.read_text().splitlines()[1:]]


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--hours", type=int, default=500)
    ap.add_argument("--rounds", type=int, default=3)
    ap.add_argument("--before", metavar="DIR", default=None,
                    help="also run the steamnet side with the package found in DIR (a "
                         "copy of an earlier commit), in the same rounds")
    ap.add_argument("--side", default=None, help=argparse.SUPPRESS)
    ap.add_argument("--out", default=None, help=argparse.SUPPRESS)
    a = ap.parse_args(argv)
    if a.side == "steamnet":
        steamnet_side(a.hours, a.out)
        return
    sides = {"steamnet": (None, [str(HERE / "bench_peer.py"), "--side", "steamnet"]),
             "fsolve + iapws": (None, [str(HERE / "peer_fsolve_iapws.py")])}
    if a.before:
        sides["steamnet before"] = (a.before, sides["steamnet"][1])
    print(__doc__.splitlines()[0])
    print(f"{a.hours} hours, {a.rounds} rounds, python {sys.version.split()[0]}, "
          f"{os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f}")
    times: dict[str, list[float]] = {k: [] for k in sides}
    with tempfile.TemporaryDirectory() as tmp:
        for _ in range(a.rounds):
            for name, (pkg, script) in sides.items():
                out = Path(tmp) / f"{name.replace(' ', '_')}.csv"
                env = dict(os.environ)
                env["PYTHONPATH"] = os.pathsep.join([str(Path(pkg or ROOT).resolve()),
                                                     str(HERE)])
                args = script + (["--hours", str(a.hours), "--out", str(out)]
                                 if "--side" in script else [str(a.hours), str(out)])
                t0 = time.perf_counter()
                subprocess.run([sys.executable, *args], env=env, check=True,
                               cwd=Path(pkg).resolve() if pkg else ROOT)
                times[name].append(time.perf_counter() - t0)
        ours = _read(Path(tmp) / "steamnet.csv")
        peer = _read(Path(tmp) / "fsolve_+_iapws.csv")
    print(f"{'side':<18}{'best [s]':>10}{'median [s]':>12}{'ms/hour':>10}")
    for name, t in times.items():
        print(f"{name:<18}{min(t):10.2f}{statistics.median(t):12.2f}"
              f"{statistics.median(t) / a.hours * 1e3:10.2f}")
    ratio = statistics.median(times["fsolve + iapws"]) / statistics.median(times["steamnet"])
    print(f"peer / steamnet (medians)   {ratio:6.1f}")
    if a.before:
        print(f"before / now (medians)      "
              f"{statistics.median(times['steamnet before']) / statistics.median(times['steamnet']):6.2f}")
    dev = max(abs(x - y) / y for x, y in zip(ours, peer))
    print(f"boiler steam, largest relative difference between the sides: {dev:.1e} "
          f"over {len(ours)} hours")


if __name__ == "__main__":
    main()
