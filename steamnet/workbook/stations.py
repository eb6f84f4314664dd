"""The let-down station tables: every station in every case (with each check's value,
limit and verdict when the checks ran), the long table of checks, and a summary per
station across all cases (operating range, limits, cases in each verdict, worst case)."""

from __future__ import annotations

from ..units import T_H as _TH
from . import style
from .columns import Column, clean_number, col, format_for_unit, label_of
from .run import POINT_KEYS, Run
from .sheet import Table

__all__ = ["stations_table", "checks_table", "station_summary_table", "station_limits",
           "STATION_KEYS"]


#: Balance columns of the stations sheet (from the equipment table's let-down rows).
STATION_KEYS = POINT_KEYS[1:]

_HEADINGS = {"flow_t_h": "Steam in [t/h]", "steam_out_t_h": "Steam out [t/h]"}


def station_limits(run: Run, station: str) -> dict[str, float | None]:
    """The station's limits from the model file, in t/h (None where not given)."""
    it = run.model.table("letdown").get(station)
    out = {"max_flow": None, "max_spray": None, "min_spray": None,
           "rated_min_steam": None, "rated_max_steam": None}
    if it is None:
        return out
    if it.max_flow is not None:
        out["max_flow"] = it.max_flow * _TH
    ds = it.desuperheater
    if ds is not None:
        for k in ("max_spray", "min_spray", "rated_min_steam", "rated_max_steam"):
            v = getattr(ds, k, None)
            out[k] = v * _TH if v is not None else None
        if out["rated_min_steam"] is None and ds.turndown and out["rated_max_steam"]:
            out["rated_min_steam"] = out["rated_max_steam"] / ds.turndown
    return out


#: The case name of the checks made across a station's cases (steamnet.stations).
ACROSS = "all cases"


def across_checks(run: Run) -> list[str]:
    """The checks made across a station's cases (one row per station, not per case)."""
    df = run.checks
    if df is None:
        return []
    sel = df[df["case"].astype(str) == ACROSS]
    return [str(c) for c in dict.fromkeys(sel["check"].astype(str))]


def point_check_names(run: Run) -> list[str]:
    """The checks made at each case's operating point."""
    across = set(across_checks(run))
    return [c for c in run.check_names if c not in across]


def _check_columns(run: Run) -> list[Column]:
    cols = []
    for chk in point_check_names(run):
        unit = run.check_units.get(chk, "")
        u = f" [{unit}]" if unit else ""
        fmt = format_for_unit(unit)
        lab = label_of(chk)
        cols += [Column(f"{chk}:value", f"{lab}: value{u}", "num", fmt or "0.00"),
                 Column(f"{chk}:limit", f"{lab}: limit{u}", "num", fmt or "0.00"),
                 Column(f"{chk}:status", f"{lab}: verdict", "verdict")]
    return cols


def stations_table(run: Run) -> Table:
    cur = run.currency
    has_checks = run.checks is not None
    base = [col("station"), col("case"), col("case_status")]
    if has_checks:
        base.append(Column("worst", "Worst verdict", "verdict"))
    base += [col(k, heading=_HEADINGS.get(k), currency=cur) for k in STATION_KEYS]
    checks = _check_columns(run) if has_checks else [Column("checks", "Checks", "verdict")]
    names = point_check_names(run)

    def rows():
        for st in run.stations:
            seen = {ACROSS}
            for case, r in run.letdown_points.get(st, []):
                seen.add(case)
                yield _station_row(run, st, case, r, names, has_checks)
            if has_checks:
                for (case, s2) in run.checks_by_point:
                    if s2 == st and case not in seen:
                        yield _station_row(run, st, case, {}, names, True)
    groups = []
    if has_checks:
        groups.append((1, len(base) - 1, "Case and balance"))
        for i, chk in enumerate(names):
            groups.append((len(base) + 3 * i, 3, label_of(chk)))
        note = ("Each let-down station in each case: the balance (steam, spray, outlet) "
                "and every check's value, limit and verdict, grouped under the check's "
                "name (the checks are explained in docs/checks). Worst verdict is the "
                "most severe of the row's checks; the checks across cases are on the "
                "Station summary sheet.")
    else:
        note = ("Station checks were not run for this workbook: no verdicts are given. "
                "Each let-down station in each case with its flows and outlet state from "
                "the balance.")
    return Table("Stations", "stations", "Let-down stations, case by case", note,
                 base + checks, rows, freeze_cols=2, groups=groups)


def _station_row(run, st, case, r, names, has_checks) -> list:
    row = [st, case, run.status_of.get(case, "")]
    if has_checks:
        pts = run.checks_by_point.get((case, st), {})
        row.append(style.worst(pts[c][2] for c in names if c in pts))
    row += [r.get(k) for k in STATION_KEYS]
    if not has_checks:
        return row + ["not run"]
    pts = run.checks_by_point.get((case, st), {})
    for chk in names:
        v, li, status = pts.get(chk, (None, None, None))
        row += [v, li, status]
    return row


def checks_table(run: Run) -> Table | None:
    """The station checks as given (one row per check), station by station."""
    df = run.checks
    if df is None:
        return None
    order = {s: i for i, s in enumerate(run.stations)}
    corder = run.case_order
    key_cols = ["station", "case", "case_status", "check", "value", "limit", "unit",
                "status", "basis", "source", "advice"]
    extra = [str(c) for c in df.columns if str(c) not in key_cols]
    df = df.assign(_s=df["station"].astype(str).map(order),
                   _c=df["case"].astype(str).map(lambda c: corder.get(c, len(corder))))
    df = df.sort_values(["_s", "_c"], kind="stable")
    df = df.assign(case_status=df["case"].astype(str).map(run.status_of).fillna(""))
    present = [k for k in key_cols if k in df.columns] + extra
    cols = []
    for k in present:
        if k in ("value", "limit"):
            cols.append(Column(k, label_of(k), "num", None, "unit"))
        elif k == "status":
            cols.append(Column(k, "Verdict", "verdict"))
        else:
            cols.append(col(k, currency=run.currency))
    sub = df[present]
    return Table("Station checks", "station_checks", "Station checks",
                 "Every check of every station in every case, as the checks made it; "
                 "value and limit are in the row's unit.", cols,
                 lambda: sub.itertuples(index=False, name=None), freeze_cols=2)


def station_summary_table(run: Run) -> Table:
    """One row per station across all cases (for an hourly run: hours in each verdict)."""
    has_checks = run.checks is not None
    cols = [col("station"), col("from"), col("to"),
            Column("cases", "Cases [count]", "int"),
            Column("flowing", "Cases passing steam [count]", "int")]
    for k, h in [("steam_min", "Steam in, least"), ("steam_max", "Steam in, most"),
                 ("spray_min", "Spray, least"), ("spray_max", "Spray, most")]:
        cols.append(Column(k, f"{h} [t/h]", "num", "0.00"))
    cols += [Column("t_out_min", "Outlet temperature, lowest [degC]", "num", "0.0"),
             Column("t_out_max", "Outlet temperature, highest [degC]", "num", "0.0")]
    for k, h in [("max_flow", "Station maximum flow"), ("rated_min_steam",
                 "Rated minimum steam"), ("rated_max_steam", "Rated maximum steam"),
                 ("min_spray", "Minimum controllable spray"), ("max_spray",
                 "Maximum spray")]:
        cols.append(Column(k, f"{h} [t/h]", "num", "0.00"))
    cols += [Column("spray_use", "Spray use, highest [% of maximum]", "num", "0.0"),
             Column("spray_case", "Case of highest spray", "case"),
             Column("turndown_used", "Turndown used, most over least steam [-]", "num",
                    "0.00"),
             Column("turndown_rated", "Turndown rated, rated maximum over minimum [-]",
                    "num", "0.00"),
             Column("turndown_share", "Turndown used [% of rated]", "num", "0.0")]
    groups = [(1, 4, "Station"), (5, 6, "Operating range across the cases"),
              (11, 5, "Limits from the model file"), (16, 5, "Spray and turndown used")]
    across = across_checks(run) if has_checks else []
    if has_checks:
        groups.append((len(cols), len(style.VERDICTS) + 4, "Verdicts across the cases"))
        for v in style.VERDICTS:
            cols.append(Column(f"n_{v}", f"Cases {style.display(v)} [count]", "int"))
        cols += [Column("worst", "Worst verdict", "verdict"),
                 Column("worst_case", "Worst case", "case"),
                 Column("at_fail", "Checks that fail", "text"),
                 Column("at_warn", "Checks that warn", "text")]
        for chk in across:
            unit = run.check_units.get(chk, "")
            u = f" [{unit}]" if unit else ""
            fmt = format_for_unit(unit) or "0.00"
            groups.append((len(cols), 3, label_of(chk)))
            cols += [Column(f"{chk}:value", f"{label_of(chk)}: value{u}", "num", fmt),
                     Column(f"{chk}:limit", f"{label_of(chk)}: limit{u}", "num", fmt),
                     Column(f"{chk}:status", f"{label_of(chk)}: verdict", "verdict")]
    cols.append(Column("note", "What it means", "text"))

    def rows():
        for st in run.stations:
            yield _summary_row(run, st, has_checks, across)
    note = ("Each let-down station across all cases: its operating range, its limits "
            "from the model file, ")
    note += ("and how many cases fall in each verdict (a case counts once, at its worst "
             "check; for an hourly run a case is an hour). Worst case: the most severe "
             "verdict, then the most checks at it, then the most spray."
             if has_checks else "and the case of highest spray. Station checks were not "
             "run: no verdicts are given.")
    note += (" Turndown used is the most over the least steam of the cases that pass "
             "steam, against the rated turndown of the desuperheater. The checks across "
             "cases (the spread of the control gain, relief cover at rated flow) are at "
             "the right.")
    return Table("Station summary", "station_summary", "Stations across the cases", note,
                 cols, rows, freeze_cols=1, groups=groups)


def _summary_row(run: Run, st: str, has_checks: bool, across: list[str] = ()) -> list:
    pts = run.letdown_points.get(st, [])
    lim = station_limits(run, st)
    it = run.model.table("letdown").get(st)
    flowing = [(c, r) for c, r in pts if (clean_number(r.get("flow_t_h")) or 0) > 1e-9]

    def rng(key):
        vals = [clean_number(r.get(key)) for _, r in flowing]
        vals = [v for v in vals if v is not None]
        return (min(vals), max(vals)) if vals else (None, None)
    s_lo, s_hi = rng("flow_t_h")
    w_lo, w_hi = rng("spray_t_h")
    t_lo, t_hi = rng("t_out_degc")
    spray_case, spray_use = None, None
    if flowing:
        spray_case, r = max(flowing, key=lambda p: clean_number(p[1].get("spray_t_h")) or 0)
        if lim["max_spray"]:
            spray_use = 100 * (clean_number(r.get("spray_t_h")) or 0) / lim["max_spray"]
    used = s_hi / s_lo if s_lo and s_hi and s_lo > 1e-9 and len(flowing) > 1 else None
    rated = (lim["rated_max_steam"] / lim["rated_min_steam"]
             if lim["rated_max_steam"] and lim["rated_min_steam"] else None)
    share = 100 * used / rated if used and rated else None
    row = [st, getattr(it, "inlet", None), getattr(it, "outlet", None), len(pts),
           len(flowing), s_lo, s_hi, w_lo, w_hi, t_lo, t_hi, lim["max_flow"],
           lim["rated_min_steam"], lim["rated_max_steam"], lim["min_spray"],
           lim["max_spray"], spray_use, spray_case, used, rated, share]
    note = ("carries no steam in the studied cases: its range, spray and control gain "
            "are not known from them" if not flowing else
            "passes steam in one case only: no turndown is used" if len(flowing) == 1
            else "")
    if not has_checks:
        return row + [note]
    counts = {v: 0 for v in style.VERDICTS}
    spray_of = {c: clean_number(r.get("spray_t_h")) or 0 for c, r in pts}
    best = None
    for (case, s2), checks in run.checks_by_point.items():
        if s2 != st:
            continue
        w = style.worst(s for _, _, s in checks.values())
        if w in counts:
            counts[w] += 1
        if w is None:
            continue
        n_at = sum(1 for _, _, s in checks.values() if style.normalise(s) == w)
        key = (style.rank(w), -n_at, -spray_of.get(case, 0), run.case_order.get(case, 0))
        if best is None or key < best[0]:
            best = (key, case, w)
    row += [counts[v] for v in style.VERDICTS]
    row += [best[2], best[1]] if best else [None, None]
    row += [_checks_at(run, st, "fail"), _checks_at(run, st, "warn")]
    advice = _across_advice(run, st)
    said = [note] if note else []
    for chk in across:
        v, li, status = run.checks_by_point.get((ACROSS, st), {}).get(
            chk, (None, None, None))
        row += [v, li, status]
        if style.rank(status) in (0, 1) and advice.get(chk):
            said.append(f"{label_of(chk)}: {advice[chk]}")
    return row + ["; ".join(said)]


def _checks_at(run: Run, st: str, verdict: str) -> str:
    """The checks of a station at ``verdict`` in some case, with how many cases."""
    n: dict[str, int] = {}
    for (case, s2), checks in run.checks_by_point.items():
        if s2 != st:
            continue
        for chk, (_, _, status) in checks.items():
            if style.normalise(status) == verdict:
                n[chk] = n.get(chk, 0) + 1
    return ", ".join(f"{label_of(c).lower()} ({k})" for c, k in n.items())


def _across_advice(run: Run, st: str) -> dict[str, str]:
    df = run.checks
    if df is None or "advice" not in df:
        return {}
    sel = df[(df["case"].astype(str) == ACROSS) & (df["station"].astype(str) == st)]
    return {str(c): str(a) for c, a in zip(sel["check"], sel["advice"])
            if isinstance(a, str) and a}

