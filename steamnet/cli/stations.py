"""``steamnet stations``: every let-down desuperheater checked in every case."""

from __future__ import annotations

import click

from . import main
from .verdict import EXIT_CODES_HELP, finish_evaluation, print_findings, word


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
            click.echo(f"case '{c.case}': {word(c.status)}: {c.message}")
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
    """Steam and spray of every let-down station, one line per station and a column per
    case ("steam/spray", t/h); a station without flow in a case shows '-'."""
    cells: dict[str, dict[str, str]] = {}
    cases = [c.case for c in study.cases]
    for c in study.cases:
        eq = c.equipment
        if not len(eq):
            continue
        for r in eq[eq["type"] == "letdown"].to_dict("records"):
            flow = float(r.get("flow_t_h") or 0.0)
            spray = r.get("spray_t_h")
            spray = float(spray) if spray == spray and spray is not None else 0.0
            cells.setdefault(str(r["item"]), {})[c.case] = (
                f"{flow:.1f}/{spray:.2f}" if flow > 0 else "-")
    if not cells:
        return
    width = max(12, *(len(c) for c in cases))
    name_w = max(10, *(len(s) for s in cells))
    click.echo("spray per let-down station, steam/spray [t/h]:")
    click.echo(f"  {'station':<{name_w}} " + " ".join(f"{c:>{width}}" for c in cases))
    for st, by_case in cells.items():
        click.echo(f"  {st:<{name_w}} " + " ".join(f"{by_case.get(c, '-'):>{width}}"
                                                  for c in cases))
    click.echo("")
