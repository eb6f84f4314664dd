"""Cost per call of steamnet's property functions, uncached, against iapws.IAPWS97.

Not a test (pytest collects test_*.py only). Run:  python benchmarks/bench_properties.py

Every call of state_pt, state_ph and state_ps is preceded by clear_cache(), so each one
pays for its saturation and region look-ups in full; the time of clear_cache() alone is
measured and subtracted. The reference is a full iapws.IAPWS97 object built from the same
inputs, which is what a caller would use without steamnet's wrapper. All figures come from
one run on one machine, and only their ratios mean much.
"""

from __future__ import annotations

import argparse
import random
import time

from iapws import IAPWS97

from steamnet import properties as prop


def plant_states(n: int, seed: int = 7) -> list:
    """``n`` states over 1-120 bar(a): a third each liquid, superheated and wet."""
    rng = random.Random(seed)
    states = []
    while len(states) < n:
        p = rng.uniform(1e5, 120e5)
        ts = prop.t_sat(p)
        kind = len(states) % 3
        if kind == 0:
            st = prop.state_pt(p, rng.uniform(293.15, ts - 1.0))
        elif kind == 1:
            st = prop.state_pt(p, rng.uniform(ts + 1.0, 833.15))
        else:
            sat = prop.saturation(p)
            st = prop.state_ph(p, sat.hf + rng.uniform(0.05, 0.95) * sat.hfg)
        states.append(st)
    return states


def per_call(func, args_list, repeat: int) -> float:
    """Best of ``repeat`` runs of the mean time per call [s]."""
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        for args in args_list:
            func(*args)
        best = min(best, (time.perf_counter() - t0) / len(args_list))
    return best


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("-n", type=int, default=300, help="states per input pair")
    ap.add_argument("--repeat", type=int, default=3)
    a = ap.parse_args(argv)

    states = plant_states(a.n)
    single = [s for s in states if not s.is_wet]       # (P,T) does not fix a wet state
    clear = per_call(lambda: prop.clear_cache(), [()] * len(states), a.repeat)

    def uncached(f):
        def call(x, y):
            prop.clear_cache()
            f(x, y)
        return call

    rows = [
        ("state_pt", uncached(prop.state_pt), [(s.p, s.t) for s in single],
         lambda p, t: IAPWS97(P=p * 1e-6, T=t), len(single)),
        ("state_ph", uncached(prop.state_ph), [(s.p, s.h) for s in states],
         lambda p, h: IAPWS97(P=p * 1e-6, h=h * 1e-3), len(states)),
        ("state_ps", uncached(prop.state_ps), [(s.p, s.s) for s in states],
         lambda p, s: IAPWS97(P=p * 1e-6, s=s * 1e-3), len(states)),
    ]
    print(f"{'call':10s} {'states':>6s} {'steamnet us':>12s} {'IAPWS97 us':>11s} "
          f"{'IAPWS97/steamnet':>17s}")
    for name, ours, args, ref, n in rows:
        t_ours = per_call(ours, args, a.repeat) - clear
        t_ref = per_call(ref, args, a.repeat)
        print(f"{name:10s} {n:6d} {t_ours * 1e6:12.1f} {t_ref * 1e6:11.1f} "
              f"{t_ref / t_ours:17.1f}")
    print(f"(clear_cache() itself, subtracted above: {clear * 1e6:.2f} us)")


if __name__ == "__main__":
    main()
