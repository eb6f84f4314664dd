"""Linear and mixed-integer programmes, solved with HiGHS through its own Python
binding (the highspy package).

:func:`solve_lp` takes a programme in the form of ``scipy.optimize.linprog`` (cost,
inequality rows ``A_ub x <= b_ub``, equality rows ``A_eq x = b_eq``, column bounds) and
answers with the fields of its result that steamnet reads (``status``, ``x``, ``fun``,
``message``, the duals of the rows and of the bounds), with scipy's status numbers and
sign conventions. It passes the matrix to HiGHS as it is and reuses one HiGHS object
per thread: scipy's checking and conversion of the inputs cost about three times
HiGHS's own solve on the programmes of a steam balance (docs/performance.md).
"""

from __future__ import annotations

import math
import os
import sys
import threading
from dataclasses import dataclass

import numpy as np
from scipy import sparse

__all__ = ["LPResult", "Kept", "solve_lp", "solve_bounds", "OPTIMAL", "INFEASIBLE", "UNBOUNDED", "FAILED"]

#: Status numbers, as scipy.optimize.linprog gives them
OPTIMAL, FAILED, INFEASIBLE, UNBOUNDED = 0, 1, 2, 3

#: Programmes with fewer columns than this are solved without HiGHS's presolve: on the
#: programmes of a steam balance (tens of columns) presolve costs more than the solve it
#: shortens, 0.44 ms against 0.19 ms a programme on the demo's (docs/performance.md,
#: "Fourth round"). The bound itself is a round number of ours, far above those tens
#: of columns, not measured on larger programmes, which keep presolve as HiGHS
#: defaults to; so do mixed-integer programmes [-]
PRESOLVE_FROM = 1000

_local = threading.local()
_first = threading.Lock()
_made = False


def _highs():
    """This thread's HiGHS object, silent (its banner, which HiGHS prints on the first
    object a process makes, kept off the console)."""
    global _made
    h = getattr(_local, "highs", None)
    if h is None:
        import highspy
        with _first:
            if not _made:
                h = _quietly(highspy.Highs)
                _made = True
            else:
                h = highspy.Highs()
        h.setOptionValue("output_flag", False)
        _local.highs = h
    return h


def _quietly(make):
    """``make()`` with the process's standard output sent nowhere at the level of the
    file descriptor (HiGHS writes from C++)."""
    try:
        sys.stdout.flush()
        fd = sys.stdout.fileno()
    except (AttributeError, OSError, ValueError):
        return make()           # no real standard output (captured): nothing to hide
    saved = os.dup(fd)
    try:
        with open(os.devnull, "w") as null:
            os.dup2(null.fileno(), fd)
            try:
                return make()
            finally:
                os.dup2(saved, fd)
    finally:
        os.close(saved)


@dataclass
class Marginals:
    """Duals of one kind of constraint, named as scipy names them."""

    marginals: np.ndarray


@dataclass
class LPResult:
    """The answer of :func:`solve_lp` (the fields of scipy's ``OptimizeResult`` that
    steamnet reads).

    Attributes
    ----------
    status : int
        0 optimal, 2 infeasible, 3 unbounded, 1 any other outcome (as scipy, which
        counts "unbounded or infeasible" as neither).
    x : numpy.ndarray or None
        The columns' values (None unless optimal).
    fun : float
        The cost at ``x``.
    eqlin, ineqlin : Marginals
        Duals of the equality and the inequality rows: the change of the cost per unit
        added to the row's right-hand side.
    lower, upper : Marginals
        Duals of the columns' lower and upper bounds (zero where the column is not at
        that bound).
    mip_gap : float
        Relative gap of a mixed-integer programme (0 for a linear one).
    eq_up : numpy.ndarray or None
        With ``ranging``: per equality row, the right-hand side up to which the
        optimal basis holds, so the duals stay as they are (HiGHS's row bound ranging;
        infinite where no limit ends it).
    eq_up_leaving : list or None
        With ``ranging``: per equality row, what reaches its bound there: ``("col",
        j)`` a column, ``("ub", i)`` an inequality row, ``("eq", i)`` an equality
        row, None for none.
    eq_response : dict or None
        With ``respond``: equality row -> the change of every column per unit added
        to its right-hand side, at the optimal basis (zero for the columns outside
        the basis, which stay at their bounds).
    """

    status: int
    message: str
    x: np.ndarray | None = None
    fun: float = math.nan
    eqlin: Marginals | None = None
    ineqlin: Marginals | None = None
    lower: Marginals | None = None
    upper: Marginals | None = None
    mip_gap: float = 0.0
    eq_up: np.ndarray | None = None
    eq_up_leaving: list | None = None
    eq_response: dict | None = None
    kept: "Kept | None" = None


def _rows(a, n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(row starts, columns, values) of the non-zero entries of ``a`` (dense or
    sparse), row by row."""
    if a is None:
        return np.zeros(1, dtype=np.int32), np.zeros(0, dtype=np.int32), np.zeros(0)
    if sparse.issparse(a):
        a = a.tocsr()
        a.sum_duplicates()
        return a.indptr, a.indices, a.data
    a = np.asarray(a, dtype=float).reshape(-1, n)
    r, c = np.nonzero(a)
    starts = np.zeros(a.shape[0] + 1, dtype=np.int32)
    np.cumsum(np.bincount(r, minlength=a.shape[0]), out=starts[1:])
    return starts, c.astype(np.int32), a[r, c]


def _bounds(bounds, n: int) -> tuple[np.ndarray, np.ndarray]:
    if bounds is None:
        return np.zeros(n), np.full(n, np.inf)
    lo = np.array([-np.inf if b[0] is None else b[0] for b in bounds], dtype=float)
    hi = np.array([np.inf if b[1] is None else b[1] for b in bounds], dtype=float)
    return lo, hi


def _highs_bounds(lo, hi, inf: float) -> tuple[np.ndarray, np.ndarray]:
    """Column bounds as HiGHS takes them: no bound as its infinity ``inf``."""
    lo, hi = np.asarray(lo, dtype=float), np.asarray(hi, dtype=float)
    return np.where(np.isfinite(lo), lo, -inf), np.where(np.isfinite(hi), hi, inf)


@dataclass(eq=False)
class Kept:
    """A linear programme left in this thread's HiGHS object by :func:`solve_lp`
    (``keep=True``), to be solved again with other column bounds
    (:func:`solve_bounds`)."""

    n: int
    m_ub: int
    m: int
    beq: np.ndarray


def solve_lp(c, A_ub=None, b_ub=None, A_eq=None, b_eq=None, bounds=None, *,
             lo=None, hi=None, integrality=None, ranging: bool = False,
             respond=None, keep: bool = False) -> LPResult:
    """Minimise ``c @ x`` subject to ``A_ub @ x <= b_ub``, ``A_eq @ x == b_eq`` and the
    bounds (a list of ``(low, high)`` pairs, None for no bound, as for
    ``scipy.optimize.linprog``; or the arrays ``lo`` and ``hi``, infinite for none).
    ``integrality`` (1 for an integer column) makes it a mixed-integer programme;
    ``ranging`` asks a linear one how far each equality row's right-hand side may rise
    with the same basis (``eq_up``, ``eq_up_leaving``); ``respond`` (equality rows)
    how the columns answer a rise of each one's right-hand side (``eq_response``).
    With ``keep`` a linear programme stays in HiGHS: the answer's ``kept`` is for
    :func:`solve_bounds`."""
    import highspy
    _local.kept = None
    c = np.asarray(c, dtype=float)
    n = c.size
    if lo is None:
        lo, hi = _bounds(bounds, n)
    bub = np.asarray(b_ub if b_ub is not None else [], dtype=float)
    beq = np.asarray(b_eq if b_eq is not None else [], dtype=float)
    (s1, c1, v1), (s2, c2, v2) = _rows(A_ub, n), _rows(A_eq, n)
    m_ub = len(s1) - 1
    starts = np.concatenate([s1[:-1], s2 + s1[-1]])
    cols, vals = np.concatenate([c1, c2]), np.concatenate([v1, v2])
    inf = highspy.kHighsInf
    lp = highspy.HighsLp()
    lp.num_col_, lp.num_row_ = n, len(starts) - 1
    lp.col_cost_ = c
    lp.col_lower_, lp.col_upper_ = _highs_bounds(lo, hi, inf)
    lp.row_lower_ = np.concatenate([np.full(m_ub, -inf), beq])
    lp.row_upper_ = np.concatenate([np.where(np.isfinite(bub), bub, inf), beq])
    lp.a_matrix_.format_ = highspy.MatrixFormat.kRowwise
    lp.a_matrix_.start_ = starts
    lp.a_matrix_.index_ = cols
    lp.a_matrix_.value_ = vals
    mip = integrality is not None and np.any(integrality)
    if mip:
        lp.integrality_ = [highspy.HighsVarType.kInteger if v else
                           highspy.HighsVarType.kContinuous for v in integrality]
    h = _highs()
    h.clearModel()
    h.setOptionValue("presolve", "on" if mip or n >= PRESOLVE_FROM else "off")
    h.passModel(lp)
    h.run()
    kept = Kept(n, m_ub, len(starts) - 1, beq) if keep and not mip else None
    _local.kept = kept
    res = _answer(h, n, m_ub, len(starts) - 1, beq, mip, ranging, respond)
    res.kept = kept
    return res


def solve_bounds(kept: Kept, lo, hi) -> LPResult | None:
    """The programme ``kept`` (:func:`solve_lp` with ``keep``) solved again with the
    column bounds ``lo`` and ``hi`` (infinite for none), from the basis of its last
    solve (HiGHS's dual simplex: the basis stays dual feasible when only bounds
    change). None when this thread's HiGHS object holds another programme by now;
    the caller then solves it anew."""
    import highspy
    if kept is None or getattr(_local, "kept", None) is not kept:
        return None
    h = _highs()
    inf = highspy.kHighsInf
    h.changeColsBounds(kept.n, np.arange(kept.n, dtype=np.int32),
                       *_highs_bounds(lo, hi, inf))
    h.run()
    res = _answer(h, kept.n, kept.m_ub, kept.m, kept.beq, False, False, None)
    res.kept = kept
    return res


def _answer(h, n: int, m_ub: int, m: int, beq, mip: bool, ranging: bool,
            respond) -> LPResult:
    """The answer of the programme HiGHS ``h`` has just solved."""
    import highspy
    inf = highspy.kHighsInf
    st = h.getModelStatus()
    S = highspy.HighsModelStatus
    if st == S.kOptimal:
        status = OPTIMAL
    elif st in (S.kInfeasible, S.kModelError):    # an empty range is a model error
        status = INFEASIBLE
    elif st == S.kUnbounded:
        status = UNBOUNDED
    else:
        status = FAILED
    message = h.modelStatusToString(st)
    if status != OPTIMAL:
        return LPResult(status, message)
    sol, info = h.getSolution(), h.getInfo()
    x = np.array(sol.col_value)
    res = LPResult(status, message, x=x, fun=float(info.objective_function_value),
                   mip_gap=float(info.mip_gap) if mip else 0.0)
    if not mip:
        row = np.array(sol.row_dual)
        col = np.array(sol.col_dual)
        basis = h.getBasis().col_status
        B = highspy.HighsBasisStatus
        at_lo = np.array([s == B.kLower for s in basis], dtype=bool)
        at_hi = np.array([s == B.kUpper for s in basis], dtype=bool)
        res.ineqlin = Marginals(row[:m_ub])
        res.eqlin = Marginals(row[m_ub:])
        res.lower = Marginals(np.where(at_lo, col, 0.0))
        res.upper = Marginals(np.where(at_hi, col, 0.0))
        if ranging:
            _ranging(h, res, n, m_ub, beq, inf)
        if respond is not None:
            res.eq_response = _responses(h, n, m_ub, m, respond)
    return res


def _responses(h, n: int, m_ub: int, m: int, rows) -> dict:
    """Per equality row of ``rows``: the columns' change per unit rise of its
    right-hand side, B^-1 e_row at the optimal basis (HiGHS's basic variables: a
    column's index, or -1 - row for a row's own variable)."""
    _, basic = h.getBasicVariables()
    cols = np.asarray(basic) >= 0
    out = {}
    for i in rows:
        e = np.zeros(m)
        e[m_ub + i] = 1.0
        _, d = h.getBasisSolve(e)
        dx = np.zeros(n)
        dx[np.asarray(basic)[cols]] = np.asarray(d)[cols]
        out[i] = dx
    return out


def _ranging(h, res: LPResult, n: int, m_ub: int, beq: np.ndarray, inf: float) -> None:
    """HiGHS's ranging of the equality rows' right-hand sides upward, into ``res``.
    HiGHS numbers what leaves the basis: columns first, then the rows."""
    status, rng = h.getRanging()
    m_eq = beq.size
    if not getattr(rng, "valid", True) or str(status) != "HighsStatus.kOk":
        res.eq_up, res.eq_up_leaving = np.full(m_eq, np.nan), [None] * m_eq
        return
    up = np.array(rng.row_bound_up.value_, dtype=float)[m_ub:]
    res.eq_up = np.where(np.abs(up) >= inf, np.inf, up)
    out = []
    for k in list(rng.row_bound_up.ou_var_)[m_ub:]:
        if k < 0:
            out.append(None)
        elif k < n:
            out.append(("col", int(k)))
        elif k - n < m_ub:
            out.append(("ub", int(k - n)))
        else:
            out.append(("eq", int(k - n - m_ub)))
    res.eq_up_leaving = out
