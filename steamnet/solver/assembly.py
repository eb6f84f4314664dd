"""Compiled assembly of the balance system: the fast path of ``reference.assemble``.

Which flow appears in which equation of the square system of one iteration (see
:mod:`steamnet.solver.balance`) does not change from one iteration to the next, and in
a sweep hardly from one case to the next. Only a few coefficients move (let-down outlet
flow ``1 + r``, spray water drawn from the deaerator, the enthalpy of the deaerator's
heating steam and of the make-up water, the section enthalpy drops of a fixed-power
extraction turbine) and a few right-hand sides (user flows and the condensate they
return, the levels of swing groups held at a limit, the flows of fixed-power turbines).

:class:`Plan` works the structure out once per Net (Nets made with
:func:`steamnet.solver.network.rebuild` share it) and once per operating mode of the
headers; each iteration only fills in the moving values with numpy. It gives exactly
the triplets and right-hand side of the reference assembly: entry for entry, in the same
order and from the same floating-point operations, so the two systems are bit-identical
(tests/test_speed_equivalence.py compares them on the demo and random networks).
"""

from __future__ import annotations

import copy

import numpy as np

from .network import group_bounds, power_row

__all__ = ["Plan", "header_entries", "da_entries"]

#: Operating modes whose rows a plan keeps; a sweep sees a handful, a large network
#: that moves header by header more (the cache is emptied when it is full).
_MODE_CACHE = 256


def header_entries(net):
    """(header, flow variable, coefficient) of every term of the header mass balances,
    in the order of the equations' terms; the coefficient ``("out", j)`` stands for the
    outlet flow per unit steam of let-down ``j``, 1 + r, which moves with the enthalpies.
    The users are the right-hand side."""
    for b in net.boilers:
        yield b["header"], b["var"], 1.0
        if b["flash"] is not None:
            bd = b["bd"] / (1.0 - b["bd"])
            yield b["flash"]["header"], b["var"], bd * b["flash"]["fraction"]
    for t in net.transfers:
        yield t["header"], t["var"], 1.0 if t["dir"] == "import" else -1.0
    for t in net.turbines:
        yield t["inlet"], t["var"], -1.0
        yield t["outlet"], t["var"], 1.0
    for t in net.xturbines:
        yield t["inlet"], t["in_var"], -1.0
        for e in t["exts"]:
            yield e["header"], e["var"], 1.0
        if t["exhaust"] is not None:
            yield t["exhaust"], t["in_var"], 1.0
            for e in t["exts"]:
                yield t["exhaust"], e["var"], -1.0
    for j, s in enumerate(net.letdowns):
        yield s["inlet"], s["var"], -1.0
        yield s["outlet"], s["var"], ("out", j)
    for v in net.vents:
        yield v["header"], v["var"], -1.0
    if net.deaerator is not None:
        yield net.deaerator["header"], net.deaerator["steam_var"], -1.0


def da_entries(net):
    """(0 for the mass row or 1 for the energy row, flow variable, coefficient) of the
    deaerator's balances, in the order of the equations' terms. Coefficients that move:
    ``("h_da",)`` the enthalpy of its heating-steam header, ``("h_mk",)`` that of the
    make-up water, ``("fw_mass", j)`` and ``("fw_energy", j)`` the feedwater drawn as
    spray by let-down ``j`` (a term only while it sprays, r > 0)."""
    da = net.deaerator
    vf = da["vent_fraction"]
    h_fw, h_vent = da["sat"].hf, da["sat"].hg
    yield 0, da["steam_var"], 1.0
    yield 0, da["makeup_var"], 1.0
    yield 1, da["steam_var"], ("h_da",)
    yield 1, da["makeup_var"], ("h_mk",)
    for b in net.boilers:                  # feedwater drawn by the boilers, then sprays
        if b["supply"]["from_da"]:
            c = 1.0 / (1.0 - b["bd"])
            yield 0, b["var"], -(1.0 + vf) * c
            yield 1, b["var"], -(h_fw + vf * h_vent) * c
    for j, s in enumerate(net.letdowns):
        if s["ds"] is not None and s["ds"]["supply"]["from_da"]:
            yield 0, s["var"], ("fw_mass", j)
            yield 1, s["var"], ("fw_energy", j)
    for t in net.xturbines:
        if t["ret"] > 0:
            yield 0, t["in_var"], t["ret"]
            yield 1, t["in_var"], t["ret"] * t["cond_h"]
            for e in t["exts"]:
                yield 0, e["var"], -t["ret"]
                yield 1, e["var"], -t["ret"] * t["cond_h"]


def _flat(rows: list[list], row0: int):
    """Triplets of a list of rows of (column, value) entries, numbered from ``row0``;
    a tuple in place of a value marks a slot filled at each assembly. Returns
    (rows, cols, values with slots as 0.0, {marker: [positions]})."""
    r, c, v, slots = [], [], [], {}
    for i, terms in enumerate(rows):
        for col, val in terms:
            if isinstance(val, tuple):
                slots.setdefault(val, []).append(len(v))
                v.append(0.0)
            else:
                v.append(val)
            r.append(row0 + i)
            c.append(col)
    return r, c, v, slots


def _arrays(r, c, v):
    return np.array(r, dtype=int), np.array(c, dtype=int), np.array(v, dtype=float)


class Plan:
    """The structure of a Net's balance system, and :meth:`assemble` to fill it.

    Rows, in the order of the reference assembly: one mass balance per header; the
    deaerator's mass and energy balances; the defining equation of every flow that is
    not the moving one of its header, first those that depend on the operating mode
    (swing groups and absorbers, header by header) and then the others (turbines,
    extraction turbines, fixed boilers, transfers and let-downs).
    """

    def __init__(self, net):
        self.n = len(net.vars)
        self.nh = nh = len(net.headers)
        self._static(net)
        self.row_mode = nh + (2 if net.deaerator is not None else 0)
        self.grouped = set()
        self.n_mode_rows = 0
        for hs in net.swing:
            members = [vi for g in hs.groups for vi in g.members]
            self.grouped.update(members)
            self.grouped.update(hs.absorbers)
            self.n_mode_rows += len(members) + len(hs.absorbers) - 1
        self._tail(net)
        self.modes: dict = {}
        # swing groups whose range depends on the extraction limits of the iteration
        # (balance._extraction_bounds gives ranges for swing extraction flows only)
        ext = {e["var"] for t in net.xturbines for e in t["exts"] if e["mode"] == "swing"}
        self.moving_groups = {id(g) for hs in net.swing for g in hs.groups
                              if ext.intersection(g.members)}
        # entries whose value moves, and their places in the dense matrix
        s_dyn = [*self.out_pos, *self.fwm_pos, *self.fwe_pos]
        if self.h_da_pos is not None:
            s_dyn += [self.h_da_pos, self.h_mk_pos]
        self.s_dyn = np.array(s_dyn, dtype=int)
        self.t_dyn = np.array([pos for pos, _, _ in self.t_dh], dtype=int)
        self.dyn_cells = np.concatenate([self.s_r[self.s_dyn] * self.n
                                         + self.s_c[self.s_dyn],
                                         self.t_r[self.t_dyn] * self.n
                                         + self.t_c[self.t_dyn]])

    # ------------------------------------------------------- header and deaerator rows
    def _static(self, net) -> None:
        """Header mass balances and deaerator rows (reference._header_terms, _da_rows)."""
        rows: list[list] = [[] for _ in range(self.nh)]
        for hi, vi, coef in header_entries(net):
            rows[hi].append((vi, coef))
        da = net.deaerator
        self.da_header = None
        if da is not None:
            self.da_header = da["header"]
            vf = da["vent_fraction"]
            h_fw, h_vent = da["sat"].hf, da["sat"].hg
            self.k_fw_mass, self.k_fw_energy = -(1.0 + vf), -(h_fw + vf * h_vent)
            mass, energy = [], []
            for row, vi, coef in da_entries(net):
                (mass if row == 0 else energy).append((vi, coef))
            rows += [mass, energy]
        r, c, v, slots = _flat(rows, 0)
        self.s_r, self.s_c, self.s_v = _arrays(r, c, v)
        out = [(pos, key[1]) for key, ps in slots.items() if key[0] == "out" for pos in ps]
        self.out_pos = np.array([p for p, _ in out], dtype=int)
        self.out_ld = np.array([j for _, j in out], dtype=int)
        fw = [(key[0], pos, key[1]) for key, ps in slots.items()
              if key[0] in ("fw_mass", "fw_energy") for pos in ps]
        self.fwm_pos = np.array([p for k, p, _ in fw if k == "fw_mass"], dtype=int)
        self.fwm_ld = np.array([j for k, _, j in fw if k == "fw_mass"], dtype=int)
        self.fwe_pos = np.array([p for k, p, _ in fw if k == "fw_energy"], dtype=int)
        # (the energy row draws the same let-downs' spray, in the same order)
        self.out_ld_l, self.fw_ld_l = self.out_ld.tolist(), self.fwm_ld.tolist()
        self.h_da_pos = slots.get(("h_da",), [None])[0]
        self.h_mk_pos = slots.get(("h_mk",), [None])[0]

    def refreshed(self, net) -> "Plan":
        """This plan for ``net``, a Net of the same structure whose fixed flows may
        differ (:func:`steamnet.solver.network.rebuild_flows`): the rows that hold
        them made again, the rest shared."""
        out = copy.copy(self)
        out._tail(net)
        return out

    # ------------------------------------------------------------ rows of every mode
    def _tail(self, net) -> None:
        """Defining equations that do not depend on the modes (the end of
        reference._status_rows): turbines, extraction turbines, other fixed flows."""
        rows, rhs = [], []
        self.t_flow = []               # (row, turbine index): rhs is its fixed-power flow
        for k, t in enumerate(net.turbines):
            if t["var"] in self.grouped:
                continue
            if t["mode"] in ("fixed_power", "pump"):     # rhs: the flow its power needs
                self.t_flow.append((len(rows), k))
                rows.append([(t["var"], 1.0)])
                rhs.append(0.0)
            else:
                rows.append([(t["var"], 1.0)])
                rhs.append(net.vars[t["var"]].fixed)
        for k, t in enumerate(net.xturbines):
            it = t["item"]
            if t["mode"] == "fixed_flow":
                rows.append([(t["in_var"], 1.0)])
                rhs.append(it.flow)
            elif t["willans"] is not None:     # constant coefficients (power_row)
                coef, row_rhs = power_row(t, None)
                terms = [(t["in_var"], sum(coef))]
                for i, e in enumerate(t["exts"]):
                    terms.append((e["var"], -sum(coef[i + 1:])))
                rows.append(terms)
                rhs.append(row_rhs)
            else:
                terms = [(t["in_var"], ("dh", k, 0))]
                for i, e in enumerate(t["exts"]):
                    terms.append((e["var"], ("dh", k, i + 1)))
                rows.append(terms)
                rhs.append(it.power / t["eta_mg"])
            for e in t["exts"]:
                if e["mode"] == "fixed":
                    rows.append([(e["var"], 1.0)])
                    rhs.append(net.vars[e["var"]].fixed)
        free = set()
        if net.deaerator is not None:
            free = {net.deaerator["steam_var"], net.deaerator["makeup_var"]}
        for v in net.vars:
            if v.index in free or v.index in self.grouped:
                continue
            if v.kind in ("boiler", "transfer", "letdown"):
                rows.append([(v.index, 1.0)])
                rhs.append(v.fixed if v.fixed is not None else 0.0)
        self.row_tail = self.row_mode + self.n_mode_rows
        #: turbine index -> row of the system whose right-hand side is its flow
        self.flow_row = {k: self.row_tail + row for row, k in self.t_flow}
        r, c, v, slots = _flat(rows, self.row_tail)
        self.t_r, self.t_c, self.t_v = _arrays(r, c, v)
        self.t_rhs = rhs
        self.n_tail = len(rows)
        # extraction turbine at fixed power: sum_k sigma_k dh_k = shaft power; the
        # coefficient of the throttle flow is sum(dh), of extraction i -sum(dh[i+1:])
        self.t_dh = [(ps[0], key[1], key[2]) for key, ps in slots.items()]

    def _mode_rows(self, net, modes):
        """Rows of the swing groups and absorbers for ``modes`` (the start of
        reference._status_rows): constant triplets, and right-hand sides that are either
        constant or a group's level (its minimum or maximum, times the share)."""
        key = tuple(modes)
        got = self.modes.get(key)
        if got is not None:
            return got
        rows, rhs, levels = [], [], []
        for hs, (kind, k) in zip(net.swing, modes):
            for gi, g in enumerate(hs.groups):
                if kind == "supply" and gi == k:
                    first = g.members[0]
                    for vi, w in zip(g.members[1:], g.weights[1:]):
                        rows.append([(vi, 1.0), (first, -w / g.weights[0])])
                        rhs.append(0.0)
                    continue
                upper = kind == "supply" and gi < k
                glo, ghi = group_bounds(net, g, {})
                for vi, w in zip(g.members, g.weights):
                    if id(g) in self.moving_groups:
                        levels.append((len(rhs), g, w, upper))
                    rows.append([(vi, 1.0)])
                    rhs.append(w * (ghi if upper else glo))
            for ai, vi in enumerate(hs.absorbers):
                if kind == "absorb" and ai == k:
                    continue
                rows.append([(vi, 1.0)])
                rhs.append(net.vars[vi].hi if kind == "absorb" and ai < k else 0.0)
        r, c, v, _ = _flat(rows, self.row_mode)
        m_r, m_c, m_v = _arrays(r, c, v)
        got = (m_r, m_c, m_v, rhs, levels, len(rows), self._template(m_r, m_c, m_v))
        if len(self.modes) >= _MODE_CACHE:
            self.modes.clear()
        self.modes[key] = got
        return got

    # ---------------------------------------------------------------------- assembly
    def _mode(self, net, modes):
        mode = self._mode_rows(net, modes)
        n_eq = self.row_mode + mode[5] + self.n_tail
        if n_eq != self.n:
            raise RuntimeError(f"balance system is not square: {n_eq} equations for "
                               f"{self.n} flows (model validation should have caught "
                               "this)")
        return mode

    def _moving(self, net, co, h):
        """Values of the moving entries, in the order of ``s_dyn`` then ``t_dyn`` (spray
        drawn from the deaerator while not spraying as 0.0), and whether each let-down
        supplied by the deaerator sprays. Plain floats: the same operations as the
        reference assembly."""
        r = [c["r"] for c in co.ld]
        vals = [1.0 + r[j] for j in self.out_ld_l]
        spray = [r[j] > 0 for j in self.fw_ld_l]          # drawn only while spraying
        vals += [self.k_fw_mass * r[j] if on else 0.0 for j, on in zip(self.fw_ld_l, spray)]
        vals += [self.k_fw_energy * r[j] if on else 0.0
                 for j, on in zip(self.fw_ld_l, spray)]
        if self.h_da_pos is not None:
            vals += [h[self.da_header], net.makeup_h]
        for _, k, i in self.t_dh:
            dh = co.xturb[k]["dh"]
            vals.append(sum(dh) if i == 0 else -sum(dh[i:]))
        return vals, spray

    def _rhs(self, net, co, eff, mode) -> np.ndarray:
        """Right-hand side: user flows per header, the deaerator's returns, the mode
        rows (group levels at this iteration's limits) and the tail."""
        b = [0.0] * self.nh
        for u, m in zip(net.users, co.user_flow):
            b[u["header"]] += m
        if self.h_da_pos is not None:
            r_mass = r_energy = 0.0
            for u, m in zip(net.users, co.user_flow):
                if u["ret"] > 0:
                    r_mass -= u["ret"] * m
                    r_energy -= u["ret"] * m * u["h_ret"]
            b += [r_mass, r_energy]
        m_rhs = mode[3]
        if mode[4]:
            m_rhs = list(m_rhs)
            for pos, g, w, upper in mode[4]:
                glo, ghi = group_bounds(net, g, eff)
                m_rhs[pos] = w * (ghi if upper else glo)
        t_rhs = self.t_rhs
        if self.t_flow:
            t_rhs = list(t_rhs)
            for row, k in self.t_flow:
                t_rhs[row] = co.turb[k]["flow"]
        return np.array(b + m_rhs + t_rhs, dtype=float)

    def assemble(self, net, co, h, modes, eff):
        """Triplets (rows, cols, values) and right-hand side of one iteration: the
        same arrays as ``reference.assemble(net, co, h, modes, eff)``."""
        mode = self._mode(net, modes)
        vals, spray = self._moving(net, co, h)
        s_v, t_v = self.s_v.copy(), self.t_v.copy()
        s_v[self.s_dyn] = vals[:len(self.s_dyn)]
        t_v[self.t_dyn] = vals[len(self.s_dyn):]
        s_r, s_c = self.s_r, self.s_c
        if not all(spray):
            keep = np.ones(len(s_v), dtype=bool)
            off = ~np.array(spray, dtype=bool)
            keep[self.fwm_pos[off]] = False
            keep[self.fwe_pos[off]] = False
            s_r, s_c, s_v = s_r[keep], s_c[keep], s_v[keep]
        return (np.concatenate([s_r, mode[0], self.t_r]),
                np.concatenate([s_c, mode[1], self.t_c]),
                np.concatenate([s_v, mode[2], t_v])), self._rhs(net, co, eff, mode)

    def dense(self, net, co, h, modes, eff):
        """Dense matrix and right-hand side of one iteration, equal to the matrix that
        ``balance._linear_solve`` makes from the triplets of :meth:`assemble`; None when
        an entry that moves shares its place with another (the triplets are then summed
        the reference way)."""
        mode = self._mode(net, modes)
        a0 = mode[6]
        if a0 is None:
            return None
        vals, _ = self._moving(net, co, h)
        a = a0.copy()
        # each moving entry is alone in its place: 0.0 + value, as np.add.at into zeros
        a.flat[self.dyn_cells] = [0.0 + v for v in vals]
        return a, self._rhs(net, co, eff, mode)

    def _template(self, m_r, m_c, m_v):
        """Dense matrix of the constant entries of one mode (moving ones left 0.0), or
        None when a moving entry shares its place."""
        n = self.n
        cells = np.concatenate([self.s_r * n + self.s_c, m_r * n + m_c,
                                self.t_r * n + self.t_c])
        if (len(np.unique(self.dyn_cells)) != len(self.dyn_cells)
                or np.count_nonzero(np.isin(cells, self.dyn_cells)) != len(self.dyn_cells)):
            return None
        v = np.concatenate([self.s_v, m_v, self.t_v])      # moving entries are 0.0
        a = np.zeros((n, n))
        np.add.at(a, (cells // n, cells % n), v)
        return a
