"""Benchmark (a): the demo plant over a year of hourly cases, with every station check.

Not a test (pytest collects test_*.py only). Run:

    .venv/bin/python benchmarks/bench_annual.py                 # workers 1 and 2
    .venv/bin/python benchmarks/bench_annual.py --reference     # and the reference path
    .venv/bin/python benchmarks/bench_annual.py --hours 720 --workers 1

The hours are the INVENTED DEMO profile of benchmarks/bench_common.py, based on the demo
model's "winter" case; the station checks (steamnet.stations.run.run_checks) run on the
whole study. Each configuration runs in a fresh process; see bench_common for what every
figure means. The machine is shared: compare ratios from one run.
"""

from __future__ import annotations

import bench_common as bc


def run_one(cfg: str, a) -> dict:
    import steamnet
    model = steamnet.load_model(bc.DEMO)
    specs = bc.hourly_specs(a.hours)
    res, _ = bc.sweep_config(cfg, a, f"(a) {len(specs)} hourly cases + station checks",
                             model, specs)
    return res


if __name__ == "__main__":
    bc.main(__doc__, run_one, extra_args=bc.hours_arg)
