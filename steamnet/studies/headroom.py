"""Headroom: how much more steam each header can take while the case stays sound.

Method (docs/howto-headroom.md)
-------------------------------
For one header of one case, a steam user is added on that header (condensate return as
stated, default 0 %) and its demand ``d`` is raised from zero on a grid of the accuracy
(default 0.1 t/h), each trial a full balance warm-started from the case. Three searches
share the balances they make:

1. **First limit** (context): the largest ``d`` before a limit that had margin in the
   case has none left (:mod:`steamnet.solver.limits`): a swing element at its limit
   (even when the next of its sequence takes over), a let-down at ``max_flow``, a
   desuperheater needing more than ``max_spray`` or passing more than
   ``rated_max_steam``, a turbine or extraction range, a vent closing or full, an
   inlet too cold for the setpoint, a header reaching saturation, the balance failing.
   The margins are close to linear in ``d`` while the operating mode holds, so each
   step extrapolates (or, with a bracket, interpolates) them to zero and tries the grid
   points on either side of the crossing, halving when that stalls.
2. **Balance headroom**: the largest ``d`` at which the case still balances at all, from
   the first limit to the cap; a balance short of steam by s at ``b`` balances, to first
   order, at ``b - s`` (or where the secant of the last two shortfalls reaches zero),
   then bisection.
3. **Headline**: the largest ``d`` at which the case balances and no check fails that
   passed at zero addition (:func:`steamnet.evaluate.new_fails` on the one evaluation
   of every balance). The balances of the first two searches in the bracket are judged
   first, lowest first, then bisection; so a check that fails over a middle range of
   ``d`` only (a let-down opening from closed below its turndown) ends the headline at
   the start of the range wherever one of the balances falls in it.

The reported headline keeps every check as it was at zero, and one accuracy step more
makes the named check fail or the balance fail. The search is capped (default
200 t/h); a header that takes the cap soundly is reported as ``capped``.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from ..errors import ModelError
from ..evaluate import evaluate_one, new_fails
from ..model.model import Model
from ..units import Kind
from ..model.cases import CaseSet
from .common import (Progress, condensate, free_name, header_list, quantity, resolve_cases,
                     solve, solved_cases, tick, warm, with_user)
from ..solver.limits import TH, Check, limit_checks, newly_binding
from ..status import CaseStatus

__all__ = ["header_headroom", "HEADROOM_COLUMNS", "DEFAULT_MAX_ADDED", "DEFAULT_ACCURACY"]

#: Largest added demand searched [kg/s] (200 t/h).
DEFAULT_MAX_ADDED = 200 / TH
#: Accuracy of the headroom [kg/s] (0.1 t/h).
DEFAULT_ACCURACY = 0.1 / TH
#: First step of the search [kg/s] (1 t/h).
_FIRST_STEP = 1 / TH
_MAX_SOLVES = 60

#: Columns of the headroom table, in order (docs/studies.md).
HEADROOM_COLUMNS = [
    "case", "header", "p_barg", "status", "condensate_return_percent", "headroom_t_h",
    "ends_with", "ends_item", "ends_message", "balance_headroom_t_h",
    "balance_limit_message", "first_limit_t_h", "binding_table", "binding_item",
    "binding_kind", "binding_limit_t_h", "binding_message", "capped",
    "exceeded_in_case", "max_added_t_h", "accuracy_t_h", "solves",
]


class _Point:
    """One balance of the search: added demand, status, checks, newly binding, and
    (asked for lazily) the checks that fail where they passed at zero addition."""

    def __init__(self, d: float, result, base: dict, data: dict | None = None,
                 base_findings: pd.DataFrame | None = None):
        self.d, self.result = d, result
        self.checks = {c.key: c for c in limit_checks(result)}
        self.binding: list[Check] = []
        if result.status in (CaseStatus.SOLVED, CaseStatus.INFEASIBLE):
            self.binding = newly_binding(base, list(self.checks.values()))
        self.ok = result.status == CaseStatus.SOLVED and not self.binding
        self._data, self._base_findings = data, base_findings
        self._fails: pd.DataFrame | None = None

    @property
    def new_fails(self) -> pd.DataFrame:
        """Checks of this balance that fail and did not at zero addition."""
        if self._fails is None:
            self._fails = new_fails(self._base_findings,
                                    evaluate_one(self.result, self._data))
        return self._fails

    @property
    def sound(self) -> bool:
        """The balance closes and no check fails that passed at zero addition."""
        return self.result.status == CaseStatus.SOLVED and not len(self.new_fails)


def _crossing(a: _Point, b: _Point, keys=None) -> tuple[float, Check | None]:
    """Smallest d beyond a where a margin, linear between a and b, reaches zero."""
    best, which = math.inf, None
    for k, ca in a.checks.items():
        if keys is not None and k not in keys:
            continue
        cb = b.checks.get(k)
        if cb is None or ca.binds:
            continue
        ma, mb = ca.margin, cb.margin
        if mb >= ma:
            continue
        d = a.d + (b.d - a.d) * ma / (ma - mb)
        if d < best:
            best, which = d, cb
    return best, which


def _search(evaluate, cap: float, acc: float):
    """(lo, hi, solves): lo ok and hi binding, one accuracy step apart on the grid
    ``k * acc``; hi None when nothing binds up to the cap.

    The margins of the limits are close to linear in the added demand, so each step
    extrapolates (or, with a bracket, interpolates) them to zero and tries the grid
    points on either side of the crossing; when that stalls it halves the bracket.
    """
    k_cap = max(1, math.floor(cap / acc + 1e-9))
    pts = {0: evaluate(0.0)}

    def at(k):
        if k not in pts:
            pts[k] = evaluate(k * acc)
        return pts[k]

    lo, hi = 0, None
    k1 = min(k_cap, max(1, round(_FIRST_STEP / acc)))
    if at(k1).ok:
        lo = k1
    else:
        hi = k1
    width, stall = math.inf, 0
    while len(pts) < _MAX_SOLVES:
        if hi is not None and hi - lo <= 1:
            break
        oks = sorted(k for k, p in pts.items() if p.ok)
        if hi is None:
            if lo >= k_cap:
                break
            pred = _crossing(pts[oks[-2]], pts[oks[-1]])[0] if len(oks) >= 2 else math.inf
            if math.isfinite(pred):
                k = math.floor(pred / acc + 1e-9) + 1     # just beyond the crossing
            else:
                k = max(2 * lo, lo + round(10 * _FIRST_STEP / acc))
            k = min(k_cap, max(k, lo + 1))
        else:
            stall = stall + 1 if hi - lo > 0.6 * width else 0
            width = hi - lo
            keys = {c.key for c in pts[hi].binding} or None
            # extrapolate from below (an enforced limit sits exactly at zero margin
            # above the crossing, so interpolating to it says little), else interpolate
            pred = _crossing(pts[oks[-2]], pts[oks[-1]], keys)[0] if len(oks) >= 2 \
                else math.inf
            if not (lo * acc < pred <= hi * acc):
                pred = _crossing(pts[lo], pts[hi], keys)[0]
            if math.isfinite(pred) and stall < 2:   # the grid point below the crossing
                k = min(max(math.floor(pred / acc + 1e-9), lo + 1), hi - 1)
            else:
                k, stall = (lo + hi) // 2, 0
        if at(k).ok:
            lo = k
        else:
            hi = k
    return pts[lo], (pts[hi] if hi is not None else None), len(pts)


def _limit_of(lo: _Point, hi: _Point) -> tuple[str, str, str, float, str]:
    """(table, item, kind, limit t/h, message) of what binds at ``hi``."""
    if hi.binding:
        keys = {c.key for c in hi.binding}
        _, first = _crossing(lo, hi, keys)
        c = first or hi.binding[0]
        msg = c.describe()
        if hi.result.status == CaseStatus.INFEASIBLE:
            msg += f"; beyond it: {hi.result.message}"
        return c.table, c.item, c.kind, c.limit_t_h, msg
    r = hi.result
    if r.status == CaseStatus.INFEASIBLE:
        f = r.findings[0] if r.findings else {}
        return ("header", f.get("header", ""), "infeasible", math.nan, r.message)
    return ("", "", r.status, math.nan, r.message)


def _shortfall(result) -> float:
    """Total steam a balance that does not close is short of on its headers [kg/s]."""
    return sum(f.get("amount_kg_s") or 0.0 for f in result.findings or ()
               if f.get("side") == "short")


def _balance_limit(evaluate, lo: float, hi, cap: float, acc: float):
    """Largest added demand at which the case still balances (the next element of a
    sequence taking over when one reaches its limit), on the grid ``k * acc`` from the
    first binding limit ``lo`` up to the cap; returns (demand [kg/s], message of the
    balance that fails just above it, solves).

    A balance that fails short of steam by s at an added demand b balances, to first
    order, at b - s (or where the secant through the last two shortfalls reaches zero):
    that grid point is tried first, then the one above it; the bracket then closes by
    bisection. Every probe narrows the same bracket, so the
    answer is the bisection's, in fewer balances."""
    n = 0
    a = lo
    top = evaluate(cap)
    n += 1
    if top.result.status == CaseStatus.SOLVED:
        return cap, f"balances up to the cap {cap * TH:.1f} t/h", n
    b, b_res = cap, top.result
    short = [(b, _shortfall(b_res))]     # (added demand, shortfall) of failed balances
    guesses, step_up = 4, False
    while b - a > acc:
        mid = None
        if step_up:
            mid, step_up = a + acc, False
        elif guesses > 0 and short[-1][1] > 0:
            guesses -= 1
            (d1, s1), (d2, s2) = short[-2:] if len(short) > 1 else ((None, None),
                                                                    short[-1])
            # the secant through the last two shortfalls where there are two (the
            # shortfall may fall on another header, at another rate), else slope 1
            root = d2 - s2 * (d2 - d1) / (s2 - s1) if d1 is not None and s2 != s1 \
                else d2 - s2
            if math.isfinite(root):
                mid = math.floor(root / acc + 1e-9) * acc
        if mid is None or not (a < mid < b):
            mid = math.floor((a + b) / 2 / acc) * acc
            if mid <= a:
                mid = a + acc
            if mid >= b:
                break
            guessed = False
        else:
            guessed = True
        p = evaluate(mid)
        n += 1
        if p.result.status == CaseStatus.SOLVED:
            a = mid
            step_up = guessed
        else:
            b, b_res = mid, p.result
            short.append((b, _shortfall(b_res)))
    return a, f"with {b * TH:.1f} t/h added: {b_res.message}", n


def _sound_limit(point, lo: float, hi: float, acc: float, known=()):
    """Largest added demand on the grid ``k * acc`` between ``lo`` (sound) and ``hi``
    (not sound) at which the balance closes and no check fails that passed at zero
    addition; returns (sound point, first unsound point, solves).

    The balances of the other searches that lie between the two (``known``) are judged
    first, lowest first, without a new balance: the first that is not sound closes the
    bracket from above and the last sound one below it opens it. Bisection closes the
    rest. Where a check fails only over a middle range of added demands, the answer
    is the first such range's lower end among those balances."""
    a, b = point(lo), point(hi)
    for p in sorted((p for p in known if a.d < p.d < b.d), key=lambda p: p.d):
        if p.sound:
            a = p
        else:
            b = p
            break
    n = 0
    while b.d - a.d > acc * (1 + 1e-9):
        mid = math.floor((a.d + b.d) / 2 / acc + 1e-9) * acc
        if mid <= a.d + 1e-12:
            mid = a.d + acc
        if mid >= b.d - 1e-12:
            break
        p = point(mid)
        n += 1
        if p.sound:
            a = p
        else:
            b = p
    return a, b, n


def _ends(b) -> tuple[str, str, str]:
    """(check id, item, message) of what ends the headroom at point ``b``."""
    r = b.result
    if r.status != CaseStatus.SOLVED:
        f = r.findings[0] if r.findings else {}
        return "balance", f.get("header", ""), f"with {b.d * TH:.1f} t/h added: " \
            f"{r.message}"
    f = b.new_fails.iloc[0]
    more = len(b.new_fails) - 1
    return (f["check"], f["item"], f"with {b.d * TH:.1f} t/h added: {f['check']} of "
            f"{f['item']} fails ({f['basis']})" + (f"; {more} more check(s) fail"
                                                    if more else ""))


def header_headroom(model: Model, cases: CaseSet | list[str] | str | None = None, *,
                    headers: list[str] | None = None, condensate_return=0.0,
                    condensate_temperature=None, max_added=DEFAULT_MAX_ADDED,
                    accuracy=DEFAULT_ACCURACY,
                    progress: Progress | None = None,
                    solved: dict | None = None) -> pd.DataFrame:
    """The largest added demand on each header of each case before a limit binds, and
    which limit it is (method in the module docstring and docs/howto-headroom.md).

    Parameters
    ----------
    model : Model
        The plant.
    cases : CaseSet, list of str, str or None
        Cases: None for every case of the model file (or the base model), names of
        model-file cases, or a case set from a case table.
    headers : list of str, optional
        Headers to search (default all).
    condensate_return : float or str
        Condensate returned by the added demand: a fraction [-] or text ``"60 %"``.
    condensate_temperature : float or str, optional
        Temperature of that condensate [K] or text ``"90 degC"``; needed when the
        return is above zero.
    max_added : float or str
        Cap of the search [kg/s] or text ``"200 t/h"``.
    accuracy : float or str
        Width of the final bracket [kg/s] or text ``"0.1 t/h"``.
    progress : callable, optional
        ``progress(done, total, label)`` after each header.
    solved : dict, optional
        Balances of the cases already solved (name -> CaseResult), not solved again.

    Returns
    -------
    pandas.DataFrame
        Columns :data:`HEADROOM_COLUMNS` (docs/studies.md), smallest headroom first.
    """
    ret, t_ret = condensate(model, condensate_return, condensate_temperature)
    cap = quantity(max_added, Kind.MASS_FLOW, model, "option --max-added")
    acc = quantity(accuracy, Kind.MASS_FLOW, model, "option --accuracy")
    if not cap > 0 or not acc > 0:
        raise ModelError("the cap and the accuracy must be above zero",
                         item="option --max-added" if not cap > 0 else "option --accuracy")
    hdrs = header_list(model, headers)
    cs = resolve_cases(model, cases)
    total = len(cs) * len(hdrs)
    done = 0
    rows = []
    data = model.stations
    for name, m, base in solved_cases(cs, solved):
        start = warm(base)
        base_checks = {c.key: c for c in limit_checks(base)}
        base_findings = evaluate_one(base, data)
        exceeded = "; ".join(c.describe() for c in base_checks.values()
                             if not c.enforced and c.margin < 0 and c.unit == "kg/s")
        probe = free_name(m, "headroom probe")
        for h in hdrs:
            row = {"case": name, "header": h,
                   "p_barg": (m.headers[h].pressure - m.site.atmospheric_pressure) / 1e5,
                   "status": base.status, "condensate_return_percent": 100 * ret,
                   "max_added_t_h": cap * TH, "accuracy_t_h": acc * TH,
                   "exceeded_in_case": exceeded, "capped": False}
            if not base.ok:
                row.update(headroom_t_h=math.nan, binding_kind="case does not balance",
                           binding_message=base.message, solves=1)
                rows.append(row)
                done += 1
                tick(progress, done, total, f"{name}: {h}")
                continue

            seen: dict[float, _Point] = {}

            def evaluate(d, _h=h, _m=m):
                key = round(d / acc)
                if key in seen:
                    return seen[key]
                if d <= 0:
                    p = _Point(0.0, base, base_checks, data, base_findings)
                else:
                    mp = with_user(_m, _h, demand=d, condensate_return=ret,
                                   condensate_temperature=t_ret, name=probe,
                                   origin="added demand")
                    p = _Point(d, solve(mp, start=start, probe=True), base_checks, data,
                               base_findings)
                seen[key] = p
                return p

            lo, hi, n = _search(evaluate, cap, acc)
            row["first_limit_t_h"] = round(lo.d * TH, 9)
            bal, bal_msg, n2 = _balance_limit(evaluate, lo.d, hi, cap, acc)
            row["balance_headroom_t_h"] = round(bal * TH, 9)
            row["balance_limit_message"] = bal_msg
            if hi is None:
                row.update(binding_kind="none below the cap",
                           binding_message=f"no limit binds up to {cap * TH:.1f} t/h added")
            else:
                t, i, k, lim, msg = _limit_of(lo, hi)
                row.update(binding_table=t, binding_item=i, binding_kind=k,
                           binding_limit_t_h=lim, binding_message=msg)
            # the headline: the case balances and no check fails that passed at zero
            top = evaluate(bal)
            if bal >= cap - 1e-12 and top.sound:
                good, n3 = top, 0
                row.update(capped=True, ends_with="none below the cap",
                           ends_message=f"balances with every check as sound up to the "
                           f"cap {cap * TH:.1f} t/h")
            else:
                start_ok = lo if lo.sound else evaluate(0.0)
                upper = evaluate(bal + acc) if top.sound else top
                good, bad, n3 = _sound_limit(evaluate, start_ok.d, upper.d, acc,
                                             list(seen.values()))
                w, item, msg = _ends(bad)
                row.update(ends_with=w, ends_item=item, ends_message=msg)
            row["headroom_t_h"] = round(good.d * TH, 9)
            row["solves"] = len(seen)
            rows.append(row)
            done += 1
            tick(progress, done, total, f"{name}: {h}")
    df = pd.DataFrame(rows, columns=HEADROOM_COLUMNS)
    if len(df):
        key = df["headroom_t_h"].fillna(-1.0).to_numpy(float)
        df = df.iloc[np.argsort(key, kind="stable")].reset_index(drop=True)
    return df
