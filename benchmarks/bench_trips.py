"""Benchmark (b): trip screening, every running turbine tripped in every hour of a year.

Not a test (pytest collects test_*.py only). Run:

    .venv/bin/python benchmarks/bench_trips.py                  # workers 1 and 2
    .venv/bin/python benchmarks/bench_trips.py --hours 720 --reference

For each turbine and extraction turbine that runs in the demo model's "winter" case, and
each hour of the INVENTED DEMO profile of benchmarks/bench_common.py, the hour is solved with
``<table>.<name>.mode = tripped``; the station checks then run on every trip case. The
untripped hours themselves are benchmark (a). See bench_common for what every figure
means. The machine is shared: compare ratios from one run.
"""

from __future__ import annotations

import bench_common as bc


def run_one(cfg: str, a) -> dict:
    import steamnet
    model = steamnet.load_model(bc.DEMO)
    winter = model.for_case("winter")
    turbines = bc.running_turbines(winter)
    specs = bc.trip_specs(winter, bc.hourly_specs(a.hours))
    res, _ = bc.sweep_config(cfg, a, f"(b) {a.hours} hours x {len(turbines)} turbine "
                             f"trips ({', '.join(n for _, n in turbines)}) = "
                             f"{len(specs)} cases + station checks", model, specs)
    return res


if __name__ == "__main__":
    bc.main(__doc__, run_one, extra_args=bc.hours_arg)
