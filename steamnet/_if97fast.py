"""Pure-Python IF97 basic equations for regions 1 and 2, only what steamnet needs.

The ``iapws`` package evaluates each basic equation with a dozen small numpy array
operations and returns every property, including the speed of sound and the expansion
coefficients; for one state at a time most of that cost is numpy's per-call overhead.
Here the dimensionless Gibbs free energy and its derivatives are summed term by term in
plain floats, and only h, s, v, cp and cv are formed.

Coefficients and exponents are transcribed from IAPWS R7-97(2012), Revised Release on
the IAPWS Industrial Formulation 1997 for the Thermodynamic Properties of Water and Steam:

* region 1: Eq. (7), Table 2; property relations Table 3;
* region 2: Eq. (15)-(17), ideal-gas part Table 10, residual part Table 11; property
  relations Table 12.

Units are SI throughout: T in K, p in Pa; h in J/kg, s, cp, cv in J/(kg K), v in m3/kg.
The results agree with iapws's ``_Region1`` and ``_Region2`` to rounding (tested to 1e-12
relative on thousands of random states in tests/test_if97fast.py).
"""

from __future__ import annotations

from math import log

#: Specific gas constant of water, IAPWS R7-97(2012) Eq. (1) [J/(kg K)]
R = 461.526

# IAPWS R7-97(2012), Table 2: (I_i, J_i, n_i) of Eq. (7), region 1
_TABLE_2 = (
    (0, -2, 0.14632971213167e0), (0, -1, -0.84548187169114e0),
    (0, 0, -0.37563603672040e1), (0, 1, 0.33855169168385e1),
    (0, 2, -0.95791963387872e0), (0, 3, 0.15772038513228e0),
    (0, 4, -0.16616417199501e-1), (0, 5, 0.81214629983568e-3),
    (1, -9, 0.28319080123804e-3), (1, -7, -0.60706301565874e-3),
    (1, -1, -0.18990068218419e-1), (1, 0, -0.32529748770505e-1),
    (1, 1, -0.21841717175414e-1), (1, 3, -0.52838357969930e-4),
    (2, -3, -0.47184321073267e-3), (2, 0, -0.30001780793026e-3),
    (2, 1, 0.47661393906987e-4), (2, 3, -0.44141845330846e-5),
    (2, 17, -0.72694996297594e-15), (3, -4, -0.31679644845054e-4),
    (3, 0, -0.28270797985312e-5), (3, 6, -0.85205128120103e-9),
    (4, -5, -0.22425281908000e-5), (4, -2, -0.65171222895601e-6),
    (4, 10, -0.14341729937924e-12), (5, -8, -0.40516996860117e-6),
    (8, -11, -0.12734301741641e-8), (8, -6, -0.17424871230634e-9),
    (21, -29, -0.68762131295531e-18), (23, -31, 0.14478307828521e-19),
    (29, -38, 0.26335781662795e-22), (30, -39, -0.11947622640071e-22),
    (31, -40, 0.18228094581404e-23), (32, -41, -0.93537087292458e-25),
)

# IAPWS R7-97(2012), Table 10: (J0_i, n0_i) of Eq. (16), region 2 ideal-gas part
_TABLE_10 = (
    (0, -0.96927686500217e1), (1, 0.10086655968018e2), (-5, -0.56087911283020e-2),
    (-4, 0.71452738081455e-1), (-3, -0.40710498223928e0), (-2, 0.14240819171444e1),
    (-1, -0.43839511319450e1), (2, -0.28408632460772e0), (3, 0.21268463753307e-1),
)

# IAPWS R7-97(2012), Table 11: (I_i, J_i, n_i) of Eq. (17), region 2 residual part
_TABLE_11 = (
    (1, 0, -0.17731742473213e-2), (1, 1, -0.17834862292358e-1),
    (1, 2, -0.45996013696365e-1), (1, 3, -0.57581259083432e-1),
    (1, 6, -0.50325278727930e-1), (2, 1, -0.33032641670203e-4),
    (2, 2, -0.18948987516315e-3), (2, 4, -0.39392777243355e-2),
    (2, 7, -0.43797295650573e-1), (2, 36, -0.26674547914087e-4),
    (3, 0, 0.20481737692309e-7), (3, 1, 0.43870667284435e-6),
    (3, 3, -0.32277677238570e-4), (3, 6, -0.15033924542148e-2),
    (3, 35, -0.40668253562649e-1), (4, 1, -0.78847309559367e-9),
    (4, 2, 0.12790717852285e-7), (4, 3, 0.48225372718507e-6),
    (5, 7, 0.22922076337661e-5), (6, 3, -0.16714766451061e-10),
    (6, 16, -0.21171472321355e-2), (6, 35, -0.23895741934104e2),
    (7, 0, -0.59059564324270e-17), (7, 11, -0.12621808899101e-5),
    (7, 25, -0.38946842435739e-1), (8, 8, 0.11256211360459e-10),
    (8, 36, -0.82311340897998e1), (9, 13, 0.19809712802088e-7),
    (10, 4, 0.10406965210174e-18), (10, 10, -0.10234747095929e-12),
    (10, 14, -0.10018179379511e-8), (16, 29, -0.80882908646985e-10),
    (16, 50, 0.10693031879409e0), (18, 57, -0.33662250574171e0),
    (20, 20, 0.89185845355421e-24), (20, 35, 0.30629316876232e-12),
    (20, 48, -0.42002467698208e-5), (21, 21, -0.59056029685639e-25),
    (22, 53, 0.37826947613457e-5), (23, 39, -0.12768608934681e-14),
    (24, 26, 0.73087610595061e-28), (24, 40, 0.55414715350778e-16),
    (24, 58, -0.94369707241210e-6),
)


def _compile(table, full: bool):
    """A function ``(a, b)`` of the sums over the terms n a^I b^J of ``table``.

    It returns (S, S_J, S_JJ) with the weights 1, J and J(J-1), and with ``full`` also
    (S_I, S_II, S_IJ) with the weights I, I(I-1) and I J: the Gibbs-energy derivatives
    before division by powers of a and b. The function is generated once, at import, as
    straight-line code from the table, which is several times faster in CPython than a
    loop over the terms; it adds the terms in table order, as such a loop would.
    """
    i_exps = sorted({row[0] for row in table})
    j_exps = sorted({row[1] for row in table})

    def name(letter, e):
        return f"{letter}{e}" if e >= 0 else f"{letter}m{-e}"

    def power(base, e):
        return "1.0" if e == 0 else base if e == 1 else f"{base} ** {e}"

    lines = ["def sums(a, b):"]
    lines += [f"    {name('a', i)} = {power('a', i)}" for i in i_exps]
    lines += [f"    {name('b', j)} = {power('b', j)}" for j in j_exps]
    lines += [f"    x{k} = {name('a', i)} * {name('b', j)}"
              for k, (i, j, _) in enumerate(table)]
    weights = [lambda i, j: 1, lambda i, j: j, lambda i, j: j * (j - 1)]
    if full:
        weights += [lambda i, j: i, lambda i, j: i * (i - 1), lambda i, j: i * j]
    out = []
    for w in weights:
        terms = [f"{n * w(i, j)!r} * x{k}" for k, (i, j, n) in enumerate(table) if w(i, j)]
        out.append(" + ".join(terms) or "0.0")
    lines.append("    return (" + ",\n            ".join(out) + ")")
    namespace: dict = {}
    exec(compile("\n".join(lines), f"<IF97 sums, {len(table)} terms>", "exec"), namespace)
    return namespace["sums"]


_SUMS1 = _compile(_TABLE_2, True)
_SUMS1_LIGHT = _compile(_TABLE_2, False)
_SUMS2 = _compile(_TABLE_11, True)
_SUMS2_LIGHT = _compile(_TABLE_11, False)
_SUMS2_IDEAL = _compile(tuple((0, j, n) for j, n in _TABLE_10), False)

# Reducing constants: region 1 p* = 16.53 MPa, T* = 1386 K (Eq. 7); region 2 p* = 1 MPa,
# T* = 540 K (Eq. 15).
_P1, _T1 = 16.53e6, 1386.0
_P2, _T2 = 1.0e6, 540.0


def _gibbs(sums_full, sums_light, a: float, b: float, full: bool) -> tuple:
    """g, its derivatives in b (g_tau, g_tautau) and, if ``full``, the I-weighted sums."""
    if full:
        g, gj, gjj, gi, gii, gij = sums_full(a, b)
    else:
        (g, gj, gjj), gi, gii, gij = sums_light(a, b), 0.0, 0.0, 0.0
    return g, gj / b, gjj / (b * b), gi, gii, gij


def region1(t: float, p: float, full: bool = True) -> tuple:
    """IF97 region 1 at (T, p): ``(h, s, v, cp, cv)``; with ``full=False`` only
    ``(h, s, cp)``, enough for Newton steps on h or s."""
    pi = p / _P1
    tau = _T1 / t
    a = 7.1 - pi
    b = tau - 1.222
    g, g_t, g_tt, gi, gii, gij = _gibbs(_SUMS1, _SUMS1_LIGHT, a, b, full)
    rt = R * t
    h = rt * tau * g_t
    s = R * (tau * g_t - g)
    cp = -R * tau * tau * g_tt
    if not full:
        return h, s, cp
    # d/dpi of (7.1 - pi)^I is -I (7.1 - pi)^(I-1)
    g_p = -gi / a
    g_pp = gii / (a * a)
    g_pt = -gij / (a * b)
    v = rt * pi * g_p / p
    cv = R * (-tau * tau * g_tt + (g_p - tau * g_pt) ** 2 / g_pp)
    return h, s, v, cp, cv


def region2(t: float, p: float, full: bool = True) -> tuple:
    """IF97 region 2 at (T, p): ``(h, s, v, cp, cv)``; with ``full=False`` only
    ``(h, s, cp)``."""
    pi = p / _P2
    tau = _T2 / t
    g0, g0_t, g0_tt = _SUMS2_IDEAL(1.0, tau)
    g0 += log(pi)
    g0_t /= tau
    g0_tt /= tau * tau
    b = tau - 0.5
    gr, gr_t, gr_tt, gi, gii, gij = _gibbs(_SUMS2, _SUMS2_LIGHT, pi, b, full)
    rt = R * t
    h = rt * tau * (g0_t + gr_t)
    s = R * (tau * (g0_t + gr_t) - (g0 + gr))
    cp = -R * tau * tau * (g0_tt + gr_tt)
    if not full:
        return h, s, cp
    gr_p = gi / pi
    gr_pp = gii / (pi * pi)
    gr_pt = gij / (pi * b)
    v = rt * (1.0 + pi * gr_p) / p           # pi * g0_p = 1
    cv = R * (-tau * tau * (g0_tt + gr_tt)
              - (1.0 + pi * gr_p - tau * pi * gr_pt) ** 2 / (1.0 - pi * pi * gr_pp))
    return h, s, v, cp, cv
