"""The peer of bench_peer.py: the three-header plant of that benchmark balanced hour by
hour by a hand-written script, scipy.optimize.fsolve over the plant's equations with
iapws.IAPWS97 for every property, the way one would write it without steamnet.

Written for steamnet's benchmarks (not a test, not part of the package). Run:

    python benchmarks/peer_fsolve_iapws.py HOURS OUT.csv

The plant and its hours are the INVENTED benchmark data of bench_peer.py (imported from
there, so both sides solve the same hours). The script writes the boiler steam [t/h]
of every hour to OUT.csv, which bench_peer.py compares with steamnet's.

Unknowns (SI): boiler steam mb, turbine steam mt, HP-MP let-down steam m1, MP-LP
let-down steam m2, header enthalpies hHP, hMP, hLP. Equations: the mass balance and
the mixing enthalpy (with its heat loss) of each header, and the turbine's fixed
power. The desuperheater sprays the HP-MP let-down to its set temperature; the MP-LP
let-down throttles; the LP heater draws duty / (hLP - hf). Each hour starts from the
answer of the hour before, as a user of such a script would let it.
"""

from __future__ import annotations

import sys

import numpy as np
from iapws import IAPWS97
from scipy.optimize import fsolve

import bench_peer as plant


def _h_pt(p, t):
    return IAPWS97(P=p * 1e-6, T=t).h * 1e3


def solve_hours(n: int) -> list[float]:
    c = plant.CONSTANTS
    p_hp, p_mp, p_lp = c["p_hp"], c["p_mp"], c["p_lp"]
    h_boiler = _h_pt(p_hp, c["t_steam"])
    h_water = _h_pt(c["p_water"], c["t_water"])
    t_set = IAPWS97(P=p_mp * 1e-6, x=1.0).T + c["approach"]
    h_set = _h_pt(p_mp, t_set)
    hf_lp = IAPWS97(P=p_lp * 1e-6, x=0.0).h * 1e3
    eta, eta_mg, power = c["eta_turbine"], c["eta_mg"], c["power"]
    q_hp, q_mp, q_lp = c["loss_hp"], c["loss_mp"], c["loss_lp"]

    def residuals(z, hour):
        mb, mt, m1, m2, h_hp, h_mp, h_lp = z
        inlet = IAPWS97(P=p_hp * 1e-6, h=h_hp * 1e-3)
        h_is = IAPWS97(P=p_lp * 1e-6, s=inlet.s).h * 1e3
        dh = eta * (h_hp - h_is)
        r = (h_hp - h_set) / (h_set - h_water)      # spray per unit let-down steam
        m1_out = m1 * (1.0 + r)
        duty_flow = hour["lp_heater_duty"] / (h_lp - hf_lp)
        lp_in = mt + m2
        return [                            # kg/s, kJ/kg and MW, of like size
            mb - mt - m1,                                             # HP mass
            (h_hp - (h_boiler - q_hp / mb)) * 1e-3,                   # HP mixing
            (mt * eta_mg * dh - power) * 1e-6,                        # turbine power
            m1_out - hour["mp_demand"] - m2,                          # MP mass
            (h_mp - (h_set - q_mp / m1_out)) * 1e-3,                  # MP mixing
            lp_in - hour["lp_demand"] - duty_flow,                    # LP mass
            (h_lp - (mt * (h_hp - dh) + m2 * h_mp - q_lp) / lp_in) * 1e-3,  # LP mixing
        ]

    z = np.array([20.0, 5.0, 15.0, 5.0, h_boiler, h_set, h_set])
    out, calls = [], []
    for i in range(n):
        hour = plant.hour_values(i)
        z, info, ok, msg = fsolve(residuals, z, args=(hour,), full_output=True)
        calls.append(info["nfev"])
        if ok != 1:
            raise SystemExit(f"hour {i}: fsolve did not converge: {msg}")
        out.append(float(z[0]) * 3.6)
    solve_hours.calls = calls           # residual evaluations per hour, for a reader
    return out


def main() -> None:
    n, path = int(sys.argv[1]), sys.argv[2]
    steam = solve_hours(n)
    with open(path, "w") as f:
        f.write("hour,boiler_steam_t_h\n")
        for i, s in enumerate(steam):
            f.write(f"{i},{s!r}\n")


if __name__ == "__main__":
    main()
