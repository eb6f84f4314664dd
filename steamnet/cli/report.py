"""The ``report`` subcommand: solve every case and write the results workbook."""

from __future__ import annotations

import click

from ..errors import ModelError
from ..model.model import load_model
from ..solve import solve_cases
from . import EXIT_FAIL, EXIT_OK, main


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--out", "out", required=True, type=click.Path(dir_okay=False),
              help="The Excel workbook to write (.xlsx); replaced only when complete.")
@click.option("--csv", "csv_folder", type=click.Path(file_okay=False),
              help="Also write every table as a CSV file into this folder.")
@click.option("--case", "cases", multiple=True, help="Only this case (repeatable).")
@click.option("--network-case", help="The case whose flows the network drawing shows "
              "(default: the first case that balances).")
@click.option("--quiet", is_flag=True, help="Print only problems.")
@click.pass_context
def report(ctx, model: str, out: str, csv_folder: str | None, cases: tuple[str, ...],
           network_case: str | None, quiet: bool) -> None:
    """Solve every case of MODEL and write the results workbook to OUT.

    Exit 0 when every case balanced, 1 when a case is infeasible or did not converge
    (the workbook is still written and marks it), 2 for bad input, 3 when a file cannot
    be written (the previous file is left as it was).
    """
    from ..stations.run import run_checks, station_data
    from ..workbook import write_csv_folder, write_workbook
    m = load_model(model)
    data = station_data(m)
    for name in cases:
        m.case(name)
    study = solve_cases(m, list(cases) if cases else None)
    names = [c.case for c in study.cases]
    if network_case is not None and network_case not in names:
        raise ModelError(f"no case '{network_case}' in this run (cases: "
                         f"{', '.join(names)})", item="option --network-case")
    checks = run_checks(study, data=data)
    write_workbook(out, study, checks=checks.checks, envelopes=checks.envelopes,
                   gains=checks.gains, network_case=network_case)
    if csv_folder:
        write_csv_folder(csv_folder, study, checks=checks.checks,
                         envelopes=checks.envelopes)
    for c in study.cases:
        if not c.ok:
            click.echo(f"case '{c.case}': {c.status}: {c.message}")
    if not quiet:
        solved = sum(c.ok for c in study.cases)
        click.echo(f"wrote {out} ({len(study.cases)} cases, {solved} balanced)")
        if csv_folder:
            click.echo(f"wrote the tables as CSV files into {csv_folder}")
    ctx.exit(EXIT_OK if study.all_solved else EXIT_FAIL)
