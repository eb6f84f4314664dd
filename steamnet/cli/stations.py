"""``steamnet stations``: every let-down desuperheater checked in every case."""

from __future__ import annotations

import click

from ..model.model import load_model
from ..solve import solve_cases
from . import EXIT_FAIL, EXIT_OK, main


def print_findings(report, limit: int = 25) -> None:
    """Worst findings first: fail, warn, not assessed; then a count per verdict."""
    worst = report.worst_first()
    bad = worst[worst["status"].isin(["fail", "warn", "not_assessed"])]
    counts = report.checks["status"].value_counts().to_dict()
    click.echo("station checks: " + ", ".join(f"{counts.get(k, 0)} {k}"
                                              for k in ("fail", "warn", "not_assessed", "ok")))
    for _, r in bad.head(limit).iterrows():
        val = "-" if r["value"] is None or r["value"] != r["value"] else f"{r['value']:.3g}"
        lim = "-" if r["limit"] is None or r["limit"] != r["limit"] else f"{r['limit']:.3g}"
        click.echo(f"  {r['status'].upper():<12} {r['station']:<10} {r['case']:<18} "
                   f"{r['check']:<24} {val:>8} {r['unit']:<4} (limit {lim}): {r['advice']}"
                   + (f" [source: {r['source']}]" if r["source"] else ""))
    if len(bad) > limit:
        click.echo(f"  ... {len(bad) - limit} more (see the JSON export or the workbook)")


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--case", "cases", multiple=True, help="Only this case (repeatable).")
@click.option("--json", "json_path", type=click.Path(dir_okay=False),
              help="Write the balance and every check to this JSON file.")
@click.option("--all", "show_all", is_flag=True, help="List every finding, not the 25 "
              "worst.")
@click.pass_context
def stations(ctx, model, cases, json_path, show_all):
    """Check every let-down station of MODEL in every case (engineering.md section 8).

    Prints the worst findings first. Exit 0 when no check failed, 1 when any check
    failed or a case did not solve.
    """
    from ..stations.run import run_checks, station_data
    m = load_model(model)
    data = station_data(m)
    for name in cases:
        m.case(name)
    study = solve_cases(m, list(cases) if cases else None, station_checks=data)
    for c in study.cases:
        if not c.ok:
            click.echo(f"case '{c.case}': {c.status}: {c.message}")
    report = run_checks(study, data=data)
    print_findings(report, limit=10**9 if show_all else 25)
    if json_path:
        from ..io.jsonout import write_json
        write_json(study, json_path, extra={"stations": {
            "checks": report.checks, "envelopes": report.envelopes,
            "gains": report.gains}})
        click.echo(f"wrote {json_path}")
    ctx.exit(EXIT_FAIL if (report.failed or not study.all_solved) else EXIT_OK)
