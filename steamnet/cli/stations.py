"""``steamnet stations``: every let-down desuperheater checked in every case."""

from __future__ import annotations

import click

from . import main
from .verdict import EXIT_CODES_HELP, finish_evaluation, print_findings


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--case", "cases", multiple=True, help="Only this case (repeatable).")
@click.option("--json", "json_path", type=click.Path(),
              help="Write the balance and every check to this JSON file.")
@click.option("--all", "show_all", is_flag=True, help="List every finding, not the 25 "
              "worst.")
@click.pass_context
def stations(ctx, model, cases, json_path, show_all):
    """Check every let-down station of MODEL in every case (docs/checks/index.md).

    Prints the spray of each station per case, then the findings of every balance worst
    first: the balance itself, what it flags, and every station check (the same
    evaluation every command uses).

    \b
    Exit codes: 0 when every case balances and no check fails; 1 when a case does not
    balance or a check fails; 2 for bad input; 3 when the JSON file could not be
    written.
    """
    from ..model.load import load_model
    from ..sweep import solve_cases
    from ..evaluate import evaluate
    m = load_model(model)
    data = m.stations
    for name in cases:
        m.case(name)
    study = solve_cases(m, list(cases) if cases else None, station_checks=data)
    for c in study.cases:
        if not c.ok:
            click.echo(f"case '{c.case}': {c.status}: {c.message}")
    ev = evaluate(study, data=data)
    report = ev.stations
    print_spray(study)
    print_findings(ev.findings, limit=10**9 if show_all else 25)
    if json_path:
        from ..io.jsonout import write_json
        write_json(study, json_path, extra={"findings": ev.findings, "stations": {
            "checks": report.checks, "envelopes": report.envelopes,
            "gains": report.gains}})
        click.echo(f"wrote {json_path}")
    finish_evaluation(ctx, study, ev)


def print_spray(study) -> None:
    """Steam and spray of every let-down station per case, compact."""
    rows = []
    for c in study.cases:
        eq = c.equipment
        if not len(eq):
            continue
        for r in eq[eq["type"] == "letdown"].itertuples(index=False):
            rows.append((r.item, c.case, r.flow_t_h, getattr(r, "spray_t_h", 0.0)))
    if not rows:
        return
    click.echo("let-down stations, steam and spray [t/h]:")
    for item, case, flow, spray in rows:
        click.echo(f"  {item:<12} {case:<18} steam {flow:8.2f}  spray {spray:7.2f}")
