"""Study subcommands: ``cases``, ``trips``, ``add-user``, ``headroom``, ``marginal``.

Each prints the most important rows first and exits 0 when every balance held, 1 when a
case (or a trip) cannot balance or a station limit is exceeded, 2 for bad input.
Outputs are written once, at the end, atomically; Ctrl-C leaves nothing half-written.
"""

from __future__ import annotations

import math

import click

from ..errors import ModelError
from . import EXIT_FAIL, EXIT_OK, main, parallel_options
from .verdict import (EXIT_CODES_HELP, addition_effect, finish, finish_evaluation,
                      print_findings)
from .verdict import word as _word
from ..status import CaseStatus

_CAUTION = ("Results support studies; they do not replace licensed engineering, the "
            "equipment maker's data or the site's codes.")


# ----------------------------------------------------------------- shared parts
_STUDY_OPTIONS = [
    click.option("--case", "cases", multiple=True,
                 help="Only this case (repeatable); default every case."),
    click.option("--table", type=click.Path(dir_okay=False),
                 help="Take the cases from this case table or hourly profile (.csv or "
                 ".xlsx) instead of the model file."),
    click.option("--base", help="Model-file case that table rows without based_on (and "
                 "every hour of a profile) start from; default the base model."),
    click.option("--json", "json_path", type=click.Path(),
                 help="Also write the results to this JSON file (written at the end)."),
    click.option("--quiet", is_flag=True, help="No progress bar; print only problems."),
    click.option("--rows", default=20, show_default=True, type=click.IntRange(0),
                 help="Rows to print (0: all)."),
]


def _study_options(func=None, *, table: bool = True):
    """--case, --table, --base, --json, --quiet, --rows (without --table when the
    command takes the table as its argument)."""
    def deco(f):
        for option in reversed(_STUDY_OPTIONS):
            if table or option is not _STUDY_OPTIONS[1]:
                f = option(f)
        return f
    return deco(func) if func is not None else deco


def _case_set(model, table, base, cases, quiet):
    from ..studies.progress import ProgressBar
    from ..studies import model_case_set, read_case_table
    if table is None:
        if base is not None:
            raise ModelError("--base applies to the rows of a case table; give --table "
                             "too", item="option --base")
        return model_case_set(model, cases)
    with ProgressBar("checking the table", quiet=quiet) as bar:
        cs = read_case_table(table, model, base=base, progress=bar)
    return cs.select(cases)


def _header_line(model, what: str, n: int) -> None:
    click.echo(f"{model.site.name} ({model.source}, sha256 {model.sha256[:12]}): {what}, "
               f"{n} case{'s' if n != 1 else ''}")


def _fmt(v, nd=1) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-"
    if isinstance(v, float):
        return f"{(v if round(v, nd) != 0 else 0.0):,.{nd}f}"     # no '-0.0
    return str(v)


def _print_rows(df: pd.DataFrame, cols: dict[str, tuple[str, int]], rows: int) -> None:
    """Print columns (name -> (heading, decimals; -1 for text)) of the first rows."""
    if not len(df):
        click.echo("  (no rows)")
        return
    shown = df if rows == 0 else df.head(rows)
    table = {head: [(_fmt(v, nd) if nd >= 0 else ("" if v is None or v != v else str(v)))
                    for v in shown[c]] for c, (head, nd) in cols.items()}
    widths = {h: max(len(h), *(len(x) for x in vals)) for h, vals in table.items()}
    click.echo("  " + "  ".join(h.ljust(widths[h]) for h in table))
    for i in range(len(shown)):
        click.echo("  " + "  ".join(
            table[h][i].rjust(widths[h]) if cols[c][1] >= 0 else table[h][i].ljust(widths[h])
            for h, c in zip(table, cols)))
    if rows and len(df) > rows:
        click.echo(f"  ... {len(df) - rows} more rows (--rows 0 prints all; --json "
                   "writes all)")


def _caution(quiet: bool) -> None:
    if not quiet:
        click.echo(f"\n{_CAUTION}")


def _write_json(study, path, key: str, payload: dict, quiet: bool) -> None:
    from ..io.jsonout import write_json
    write_json(study, path, extra={"studies": {key: payload}})
    if not quiet:
        click.echo(f"\nwrote {path}")


def _solved(study) -> dict:
    """The balances of a study by case name, for a study to start from."""
    return {c.case: c for c in study.cases}


def _base_study(cs, quiet: bool, workers: int = 1, scheduler: str | None = None):
    """The balances of the cases themselves, for the JSON export."""
    from ..studies.progress import ProgressBar
    from ..studies import solve_case_set
    with ProgressBar("balancing the cases", quiet=quiet) as bar:
        return solve_case_set(cs, progress=bar, workers=workers, scheduler=scheduler)


# ------------------------------------------------------------------------ cases
@main.command("cases")
@click.argument("model", type=click.Path(dir_okay=False))
@click.argument("table", type=click.Path(dir_okay=False))
@_study_options(table=False)
@parallel_options
@click.pass_context
def cases_command(ctx, model, table, base, cases, json_path, quiet, rows, workers,
                  scheduler):
    """Solve every case of a case table or hourly profile TABLE on MODEL.

    TABLE is a .csv or .xlsx file with a 'case' column (or 'timestamp' for an hourly
    profile), optional 'based_on' and 'description', and one column per change such as
    'user.PM1 dryer section.demand [t/h]' (docs/howto-cases.md). Every row's balance
    goes through the same evaluation as a model case (balance, flags, station checks).

    \b
    Exit codes: 0 when every case balances and no check fails; 1 when a case does not
    balance or a check fails; 2 for bad input; 3 when the JSON file could not be
    written.
    """
    from ..studies.progress import ProgressBar
    from ..studies import case_results, solve_case_set
    from ..evaluate import evaluate
    from ..model.load import load_model
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    if not quiet:
        click.echo(f"solving {len(cs)} cases from {table}", err=True)
    with ProgressBar("solving cases", quiet=quiet) as bar:
        study = solve_case_set(cs, progress=bar, workers=workers, scheduler=scheduler)
    df = case_results(study)
    bad = df[df["status"] != CaseStatus.SOLVED]
    if not quiet:
        _header_line(m, f"case table {table}", len(cs))
        click.echo(f"  {len(df) - len(bad)} solved, {len(bad)} cannot balance or failed")
        if cs.kind == "profile":
            ok = df[df["status"] == CaseStatus.SOLVED]
            click.echo(f"  over the {len(ok)} solved hours: steam raised "
                       f"{_fmt(ok['steam_raised_t_h'].sum(), 0)} t, fuel "
                       f"{_fmt(ok['fuel_mw'].sum(), 0)} MWh, power "
                       f"{_fmt(ok['power_generated_mw'].sum(), 0)} MWh(e), vented "
                       f"{_fmt(ok['vented_t_h'].sum(), 0)} t, cost "
                       f"{_fmt(ok['cost_per_h'].sum(), 0)} {m.site.currency}")
        click.echo("")
        _print_rows(df, {"case": ("case", -1), "status": ("status", -1),
                         "steam_raised_t_h": ("steam t/h", 1), "fuel_mw": ("fuel MW", 1),
                         "power_generated_mw": ("power MW", 2),
                         "spray_t_h": ("spray t/h", 2), "vented_t_h": ("vented t/h", 1),
                         "cost_per_h": (f"cost {m.site.currency}/h", 0)}, rows)
    for r in bad.itertuples():
        click.echo(f"case '{r.case}': {r.status}: {r.message}")
    ev = evaluate(study)
    if not quiet:
        click.echo("")
        print_findings(ev.findings, limit=rows or 10**9)
    _caution(quiet)
    if json_path:
        _write_json(study, json_path, "case_table",
                    {"source": table, "base": base or "", "kind": cs.kind, "rows": df,
                     "findings": ev.findings}, quiet)
    finish_evaluation(ctx, study, ev)


# ------------------------------------------------------------------------ trips
@main.command("trips")
@click.argument("model", type=click.Path(dir_okay=False))
@_study_options
@click.option("--boilers", is_flag=True, help="Also trip each running boiler.")
@parallel_options
@click.pass_context
def trips_command(ctx, model, cases, table, base, json_path, quiet, rows, boilers,
                  workers, scheduler):
    """Trip each running turbine (and with --boilers each boiler) of each case in turn;
    the post-trip steam and spray of every let-down station against its limits, and
    every finding of the tripped balance (the same checks as ``steamnet stations``),
    worst first (docs/howto-trips.md).

    \b
    Exit codes: 0 when every trip balances and no check of a tripped balance fails; 1
    when a trip leaves the plant unable to balance or a check fails after a trip; 2 for
    bad input; 3 when the JSON file could not be written.
    """
    from ..studies.progress import ProgressBar
    from ..model.load import load_model
    from ..studies.trips import EVERY_TRIP, screen_trips
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    with ProgressBar("trip screening", quiet=quiet) as bar:
        screened = screen_trips(m, cs, boilers=boilers, progress=bar, workers=workers,
                                scheduler=scheduler)
    df, trip_findings = screened.table, screened.findings
    findings = df[df["row"] == "finding"]
    over = df[(df["row"] == "station") & (df["verdict"] == "over limit")]
    if not quiet:
        _header_line(m, "trip screening", len(cs))
        n_bad = findings[["case", "trip"]].drop_duplicates().shape[0]
        click.echo(f"  {df[['case', 'trip']].drop_duplicates().shape[0]} trips, {n_bad} "
                   f"leave{'s' if n_bad == 1 else ''} the plant unable to balance, "
                   f"{len(over)} station rows beyond a limit\n")
    for r in findings.itertuples():
        trip = f"trip of {r.trip}" if r.trip else "untripped"
        click.echo(f"  case '{r.case}', {trip}: CANNOT BALANCE: {r.message}")
    if not quiet:
        st = df[df["row"] == "station"]
        if len(findings):
            click.echo("")
        _print_rows(st, {"case": ("case", -1), "trip": ("trip", -1),
                         "status": ("balance", -1), "station": ("station", -1), "steam_t_h": ("steam t/h", 1),
                         "steam_change_t_h": ("change", 1),
                         "max_flow_t_h": ("max t/h", 1), "spray_t_h": ("spray t/h", 2),
                         "max_spray_t_h": ("max spray", 2),
                         "worst_use_percent": ("use %", 0),
                         "worst_limit": ("of", -1), "verdict": ("verdict", -1)}, rows)
    elif len(over):
        for r in over.itertuples():
            click.echo(f"  case '{r.case}', trip of {r.trip}: station {r.station} "
                       f"{r.worst_limit} at {r.worst_use_percent:.0f} %")
    if not quiet:
        across = trip_findings["trip"] == EVERY_TRIP
        shown = trip_findings.assign(case=(trip_findings["case"] + ", trip of " +
                                           trip_findings["trip"]).where(~across, EVERY_TRIP))
        click.echo("")
        print_findings(shown, limit=rows or 10**9, title="findings after the trips")
    _caution(quiet)
    if json_path:
        base = _base_study(cs, True, workers, scheduler)
        _write_json(base, json_path, "trip_screening", {"boilers": boilers, "rows": df,
                                                        "findings": trip_findings},
                    quiet)
    cannot = findings[["case", "trip"]].drop_duplicates()
    finish(ctx, not_balanced=[f"{c}, trip of {t}" if t else c
                              for c, t in cannot.itertuples(index=False)],
           fails=int(((trip_findings["status"] == "fail")
                      & (trip_findings["check"] != "balance")).sum())
           if len(trip_findings) else 0,
           warns=int((trip_findings["status"] == "warn").sum())
           if len(trip_findings) else 0, what="after the trips")


# --------------------------------------------------------------------- add-user
@main.command("add-user")
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--header", required=True, help="Header the new user draws from.")
@click.option("--demand", help="Steam flow with its unit, e.g. '12 t/h'.")
@click.option("--duty", help="Or a heat duty with its unit, e.g. '8 MW'.")
@click.option("--return", "ret", default="0 %", show_default=True,
              help="Condensate returned to the deaerator, e.g. '60 %'.")
@click.option("--return-temperature", help="Temperature of the returned condensate, "
              "e.g. '90 degC' (needed with a return above zero).")
@click.option("--name", default="new consumer", show_default=True,
              help="Name of the new user in the results.")
@_study_options
@click.pass_context
def add_user_command(ctx, model, header, demand, duty, ret, return_temperature, name,
                     cases, table, base, json_path, quiet, rows):
    """Add a steam user to every case (or --case) without editing MODEL, and show what
    changes: plant totals, headers, equipment flows, and the findings the addition
    creates, worsens or clears against the same case without it
    (docs/howto-new-consumer.md).

    \b
    Exit codes: 0 when the addition makes no case infeasible and no check fail that
    passed without it; 1 when it does (or a case does not balance even without it); 2
    for bad input; 3 when the JSON file could not be written.
    """
    from ..studies.progress import ProgressBar
    from ..model.load import load_model
    from ..studies import new_consumer_impact
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    with ProgressBar("new consumer", quiet=quiet) as bar:
        df = new_consumer_impact(m, header, demand=demand, duty=duty,
                                 condensate_return=ret,
                                 condensate_temperature=return_temperature, name=name,
                                 cases=cs, progress=bar)
    bad = df[(df["status_with"] != CaseStatus.SOLVED) | (df["status_without"] != CaseStatus.SOLVED)]
    what = f"{demand or duty} on {header}, condensate return {ret}"
    if not quiet:
        _header_line(m, f"new user '{name}': {what}", len(cs))
    for case in df["case"].drop_duplicates():
        d = df[df["case"] == case]
        s0, s1 = d["status_without"].iloc[0], d["status_with"].iloc[0]
        if s1 != CaseStatus.SOLVED or s0 != CaseStatus.SOLVED:
            click.echo(f"\ncase '{case}': without the user {_word(s0)}, with it "
                       f"{_word(s1)}")
        if quiet:
            continue
        if s1 == CaseStatus.SOLVED and s0 == CaseStatus.SOLVED:
            click.echo(f"\ncase '{case}':")
        d = d.assign(label=d["quantity"] + " [" + d["unit"] + "]")
        cols = {"item": ("item", -1), "label": ("quantity", -1),
                "without": ("without", 2), "with": ("with", 2), "change": ("change", 2)}
        _print_rows(d[d["section"] == "total"], cols, 0)
        _print_rows(d[(d["section"] == "header") & (d["quantity"] == "throughput")],
                    cols, 0)
        click.echo("  equipment, largest change first:")
        _print_rows(d[d["section"] == "equipment"], cols, rows)
        fd = d[d["section"] == "finding"]
        if len(fd):
            click.echo("  findings the addition changes:")
            for r in fd.itertuples(index=False):
                click.echo(f"    {r.effect:<9} {r.item:<12} {r.quantity:<24} "
                           f"{_word(r.verdict_without)} -> {_word(r.verdict_with)}"
                           f"  ({r.advice})")
                if r.source:
                    click.echo(f"              source: {r.source}")
    _caution(quiet)
    if json_path:
        _write_json(_base_study(cs, True), json_path, "new_consumer",
                    {"user": {"name": name, "header": header, "demand": demand,
                              "duty": duty, "condensate_return": ret,
                              "condensate_temperature": return_temperature},
                     "rows": df}, quiet)
    infeasible, made, warns = addition_effect(df)
    finish(ctx, not_balanced=infeasible, fails=made, warns=warns,
           what="because of the addition")


# --------------------------------------------------------------------- headroom
@main.command("headroom")
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--header", "headers", multiple=True, help="Only this header (repeatable).")
@click.option("--return", "ret", default="0 %", show_default=True,
              help="Condensate return of the added demand, e.g. '60 %'.")
@click.option("--return-temperature", help="Its temperature, e.g. '90 degC'.")
@click.option("--max-added", default="200 t/h", show_default=True,
              help="Cap of the search.")
@click.option("--accuracy", default="0.1 t/h", show_default=True,
              help="Accuracy of the headroom.")
@_study_options
@click.pass_context
def headroom_command(ctx, model, headers, ret, return_temperature, max_added, accuracy,
                     cases, table, base, json_path, quiet, rows):
    """For every header of every case, the largest added demand at which the case still
    balances and no check fails that passed without it, and what ends it; beside it the
    balance-only headroom and the first limit met (docs/howto-headroom.md); smallest
    headroom first.

    \b
    Exit codes: 0 when every case balances and no check fails (without the addition);
    1 when a case does not balance or a check fails; 2 for bad input; 3 when the JSON
    file could not be written.
    """
    from ..studies.progress import ProgressBar
    from ..evaluate import evaluate
    from ..studies import header_headroom
    from ..model.load import load_model
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    study = _base_study(cs, True)
    with ProgressBar("headroom", quiet=quiet) as bar:
        df = header_headroom(m, cs, headers=list(headers) or None, condensate_return=ret,
                             condensate_temperature=return_temperature,
                             max_added=max_added, accuracy=accuracy, progress=bar,
                             solved=_solved(study))
    bad = df[df["status"] != CaseStatus.SOLVED]
    if not quiet:
        _header_line(m, f"headroom per header (condensate return {ret}, accuracy "
                     f"{accuracy}, searched up to {max_added})", len(cs))
        click.echo("")
        _print_rows(df, {"case": ("case", -1), "header": ("header", -1),
                         "headroom_t_h": ("headroom t/h", 1),
                         "balance_headroom_t_h": ("balances to t/h", 1),
                         "ends_message": ("what ends it", -1)}, rows)
        ex = df[df["exceeded_in_case"].fillna("") != ""][["case", "exceeded_in_case"]]
        for r in ex.drop_duplicates().itertuples():
            click.echo(f"  note: case '{r.case}' is already beyond: {r.exceeded_in_case}")
    for r in bad.drop_duplicates("case").itertuples():
        click.echo(f"case '{r.case}': {r.status}: {r.binding_message}")
    _caution(quiet)
    if json_path:
        _write_json(study, json_path, "headroom",
                    {"condensate_return": ret, "max_added": max_added,
                     "accuracy": accuracy, "rows": df}, quiet)
    finish_evaluation(ctx, study, evaluate(study), what="in the cases themselves")


# --------------------------------------------------------------------- marginal
@main.command("marginal")
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--header", "headers", multiple=True, help="Only this header (repeatable).")
@click.option("--step", default="1 t/h", show_default=True,
              help="Added demand of the finite difference; the dual is taken where it "
              "holds over this much.")
@_study_options
@click.pass_context
def marginal_command(ctx, model, headers, step, cases, table, base, json_path, quiet,
                     rows):
    """Marginal cost of one more tonne of steam on each header of each case, beside
    the average cost of steam (docs/howto-marginal-cost.md). Two methods: a finite
    difference (the case balanced again with the step added on the header) and the
    dual of the header's row in the linear programme of the control philosophy at
    the case's enthalpies, with how far it holds. The figure is the dual where the
    step lies within its range and the two agree within 0.5 %, else the finite
    difference; the column 'method' says which.

    \b
    Exit codes: 0 when every case balances and no check fails (without the step); 1
    when a case does not balance or a check fails; 2 for bad input; 3 when the JSON
    file could not be written.
    """
    from ..studies.progress import ProgressBar
    from ..evaluate import evaluate
    from ..model.load import load_model
    from ..studies import marginal_steam_cost
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    study = _base_study(cs, True)
    with ProgressBar("marginal cost", quiet=quiet) as bar:
        df = marginal_steam_cost(m, cs, headers=list(headers) or None, step=step,
                                 progress=bar, solved=_solved(study))
    bad = df[df["marginal_cost_per_t"].isna()]
    cur = m.site.currency
    if not quiet:
        _header_line(m, f"marginal cost of steam (+{step}, no condensate return)", len(cs))
        click.echo("")
        _print_rows(df, {"case": ("case", -1), "header": ("header", -1),
                         "marginal_cost_per_t": (f"marginal {cur}/t", 2),
                         "method": ("method", -1),
                         "fuel_part_per_t": ("fuel", 2), "water_part_per_t": ("water", 2),
                         "power_part_per_t": ("power", 2), "other_part_per_t": ("other", 2),
                         "finite_difference_per_t": (f"finite difference {cur}/t", 2),
                         "dual_marginal_cost_per_t": (f"dual {cur}/t", 2),
                         "dual_range_t_h": ("dual holds t/h", 1),
                         "average_cost_per_t": (f"average {cur}/t", 2),
                         "limit_in_step": ("limit met within the step", -1)}, rows)
    for r in bad.itertuples():
        click.echo(f"case '{r.case}', header {r.header}: {r.message}")
    _caution(quiet)
    if json_path:
        _write_json(study, json_path, "marginal_cost",
                    {"step": step, "rows": df}, quiet)
    finish_evaluation(ctx, study, evaluate(study), what="in the cases themselves")