"""``steamnet optimise``: the cheapest dispatch of each case (docs/howto-optimise.md)."""

from __future__ import annotations

import click

from . import main, parallel_options
from .studies import _case_set, _caution, _fmt, _header_line, _print_rows, _study_options
from .verdict import finish, print_findings


@main.command("optimise")
@click.argument("model", type=click.Path(dir_okay=False))
@_study_options
@click.option("--workbook", "workbook_path", type=click.Path(dir_okay=False),
              help="Also write the workbook of the optimal balances, with the "
              "cheapest-dispatch sheets (written at the end).")
@parallel_options
@click.pass_context
def optimise_command(ctx, model, cases, table, base, json_path, quiet, rows,
                     workbook_path, workers, scheduler):
    """The cheapest way to run each case within every limit: the dispatch of the
    elements that may move (swing, auto and shared elements, vents, and those marked
    dispatchable or can_stop) that costs least, beside the control philosophy's, with
    the saving, the limits that bind and the shadow price of steam on each header
    (docs/howto-optimise.md). With --table an hourly profile gives the year's saving
    and the saving per month. The optimal point of each case is re-solved as an
    ordinary balance and goes through every check.

    \b
    Exit codes: 0 when every case has an optimal dispatch and no check of an optimal
    balance fails; 1 when a case has none (no dispatch meets every limit, the rounds
    did not settle, or the case could not be computed) or a check of an optimal
    balance fails; 2 for bad input; 3 when an output file could not be written (the
    previous file is kept).
    """
    from ..model.load import load_model
    from ..studies.optimise import optimise
    from ..studies.progress import ProgressBar
    m = load_model(model)
    cs = _case_set(m, table, base, cases, quiet)
    with ProgressBar("cheapest dispatch", quiet=quiet) as bar:
        res = optimise(m, cs, progress=bar, workers=workers, scheduler=scheduler)
    t = res.table
    cur = m.site.currency
    bad = t[t["status"] != "optimal"]
    if not quiet:
        _header_line(m, "cheapest dispatch", len(t))
        if res.kind == "profile":
            y = res.year
            click.echo(f"  over the {y['optimal_hours']} of {y['hours']} hours with an "
                       f"optimum: control cost {_fmt(y['control_cost'], 0)} {cur}, "
                       f"optimal {_fmt(y['optimal_cost'], 0)} {cur}, saving "
                       f"{_fmt(y['saving'], 0)} {cur}")
            mo = res.monthly
            if len(mo):
                click.echo("  saving per month: " + ", ".join(
                    f"{r.month} {_fmt(r.saving, 0)}" for r in mo.itertuples()))
        click.echo("")
        _print_rows(t, {"case": ("case", -1), "status": ("status", -1),
                        "control_cost_per_h": (f"control {cur}/h", 1),
                        "optimal_cost_per_h": (f"optimal {cur}/h", 1),
                        "saving_per_h": (f"saving {cur}/h", 1),
                        "moves": ("largest moves", -1),
                        "binding": ("binding limits", -1)}, rows)
        sp = res.shadow
        if len(sp) and res.kind != "profile":
            click.echo(f"\n  shadow price of steam at the optimum [{cur}/t]:")
            wide = sp.pivot(index="case", columns="header", values="shadow_price_per_t")
            wide = wide[[h for h in dict.fromkeys(sp["header"])]]
            wide = wide.loc[[c for c in dict.fromkeys(sp["case"])]].reset_index()
            _print_rows(wide, {"case": ("case", -1),
                               **{h: (h, 2) for h in wide.columns if h != "case"}}, rows)
    for r in bad.itertuples():
        click.echo(f"case '{r.case}': {r.status}: {r.message}")
    ev = res.evaluation
    if not quiet:
        click.echo("")
        print_findings(ev.findings, limit=rows or 10**9,
                       title="findings of the optimal balances")
    _caution(quiet)
    if json_path:
        from ..io.jsonout import write_json
        write_json(res.study, json_path, extra={"studies": {"optimise": {
            "source": table or "", "kind": res.kind, "cases": t,
            "dispatch": res.dispatch, "binding": res.binding, "shadow": res.shadow,
            "monthly": res.monthly, "findings": ev.findings}}})
        if not quiet:
            click.echo(f"\nwrote {json_path}")
    if workbook_path:
        from ..workbook.dispatch import write_optimise_workbook
        write_optimise_workbook(workbook_path, res)
        if not quiet:
            click.echo(f"wrote {workbook_path}")
    f = ev.findings
    fails = int(((f["status"] == "fail") & (f["check"] != "balance")).sum()) \
        if len(f) else 0
    finish(ctx, not_balanced=list(bad["case"]), fails=fails, warns=ev.count("warn"),
           what="at the optimum")
