"""The reference assembly of the balance system: plain, readable code that builds the
linear system of one iteration term by term.

The solver's fast path (:class:`steamnet.solver.assembly.Plan`) compiles the same system
once per Net and operating mode; tests/test_speed_equivalence.py checks that the two give
the same triplets and right-hand sides, bit for bit. ``solve_net(..., reference=True)``
solves with this one.
"""

from __future__ import annotations

import numpy as np

from .assembly import da_entries, header_entries
from .network import Coeffs, Net, group_bounds as _group_bounds, power_row

__all__ = ["assemble"]


def _header_terms(net: Net, co: Coeffs):
    """Mass-balance terms: rows[h] = list of (var, coefficient); const[h] = fixed net
    outflow (users)."""
    nh = len(net.headers)
    rows: list[list[tuple[int, float]]] = [[] for _ in range(nh)]
    const = [0.0] * nh
    for hi, vi, coef in header_entries(net):
        if isinstance(coef, tuple):              # ("out", j): let-down outlet, 1 + r
            coef = 1.0 + co.ld[coef[1]]["r"]
        rows[hi].append((vi, coef))
    for u, m in zip(net.users, co.user_flow):
        const[u["header"]] += m
    return rows, const


def _da_rows(net: Net, co: Coeffs, h: list[float]):
    """Deaerator mass and energy rows: (terms, rhs) twice."""
    da = net.deaerator
    vf = da["vent_fraction"]
    h_fw, h_vent = da["sat"].hf, da["sat"].hg
    mass: list[tuple[int, float]] = []
    energy: list[tuple[int, float]] = []
    for row, vi, coef in da_entries(net):
        if isinstance(coef, tuple):
            key = coef[0]
            if key == "h_da":
                coef = h[da["header"]]
            elif key == "h_mk":
                coef = net.makeup_h
            else:                                   # spray drawn from the deaerator
                r = co.ld[coef[1]]["r"]
                if not r > 0:
                    continue
                coef = (-(1.0 + vf) if key == "fw_mass" else -(h_fw + vf * h_vent)) * r
        (mass if row == 0 else energy).append((vi, coef))
    r_mass = r_energy = 0.0
    for u, m in zip(net.users, co.user_flow):
        if u["ret"] > 0:
            r_mass -= u["ret"] * m
            r_energy -= u["ret"] * m * u["h_ret"]
    return (mass, r_mass), (energy, r_energy)


def _status_rows(net: Net, co: Coeffs, modes, eff):
    """Defining equation of every flow that is not the moving one of its header."""
    rows: list[tuple[list[tuple[int, float]], float]] = []
    free: set[int] = set()
    if net.deaerator is not None:
        free |= {net.deaerator["steam_var"], net.deaerator["makeup_var"]}
    grouped: set[int] = set()
    for hs, mode in zip(net.swing, modes):
        kind, k = mode
        for gi, g in enumerate(hs.groups):
            grouped.update(g.members)
            glo, ghi = _group_bounds(net, g, eff)
            if kind == "supply" and gi == k:
                first = g.members[0]
                free.add(first)
                for vi, w in zip(g.members[1:], g.weights[1:]):
                    rows.append(([(vi, 1.0), (first, -w / g.weights[0])], 0.0))
                continue
            level = ghi if (kind == "supply" and gi < k) else glo
            for vi, w in zip(g.members, g.weights):
                rows.append(([(vi, 1.0)], w * level))
        for ai, vi in enumerate(hs.absorbers):
            grouped.add(vi)
            if kind == "absorb" and ai == k:
                free.add(vi)
            elif kind == "absorb" and ai < k:
                rows.append(([(vi, 1.0)], net.vars[vi].hi))
            else:
                rows.append(([(vi, 1.0)], 0.0))
    for t, c in zip(net.turbines, co.turb):
        if t["var"] in grouped:
            continue
        if t["mode"] in ("fixed_power", "pump"):
            rows.append(([(t["var"], 1.0)], c["flow"]))
        else:
            rows.append(([(t["var"], 1.0)], net.vars[t["var"]].fixed))
    for t, c in zip(net.xturbines, co.xturb):
        it = t["item"]
        if t["mode"] == "fixed_flow":
            rows.append(([(t["in_var"], 1.0)], it.flow))
        else:  # fixed power: sum_k sigma_k dh_k = internal power (power_row)
            dh, rhs = power_row(t, c)
            terms = [(t["in_var"], sum(dh))]
            for i, e in enumerate(t["exts"]):
                terms.append((e["var"], -sum(dh[i + 1:])))
            rows.append((terms, rhs))
        for e in t["exts"]:
            if e["mode"] == "fixed":
                rows.append(([(e["var"], 1.0)], net.vars[e["var"]].fixed))
    for v in net.vars:
        if v.index in free or v.index in grouped:
            continue
        if v.kind in ("boiler", "transfer", "letdown"):
            rows.append(([(v.index, 1.0)], v.fixed if v.fixed is not None else 0.0))
    return rows


def assemble(net: Net, co: Coeffs, h, modes, eff):
    n = len(net.vars)
    hrows, hconst = _header_terms(net, co)
    eqs: list[tuple[list[tuple[int, float]], float]] = []
    for terms, c in zip(hrows, hconst):
        eqs.append((terms, c))
    if net.deaerator is not None:
        eqs.extend(_da_rows(net, co, h))
    eqs.extend(_status_rows(net, co, modes, eff))
    if len(eqs) != n:
        raise RuntimeError(f"balance system is not square: {len(eqs)} equations for "
                           f"{n} flows (model validation should have caught this)")
    r, c, v = [], [], []
    b = np.empty(n)
    for i, (terms, rhs) in enumerate(eqs):
        for vi, coef in terms:
            r.append(i)
            c.append(vi)
            v.append(coef)
        b[i] = rhs
    return (np.array(r, dtype=int), np.array(c, dtype=int), np.array(v)), b
