"""The ``report`` subcommand: solve every case and write the results workbook."""

from __future__ import annotations

import click

from ..errors import ModelError
from ..io.atomic import clean_earlier_runs
from . import main
from .verdict import word


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--out", "out", required=True, type=click.Path(),
              help="The Excel workbook to write (.xlsx); replaced only when complete.")
@click.option("--csv", "csv_folder", type=click.Path(),
              help="Also write every table as a CSV file into this folder.")
@click.option("--case", "cases", multiple=True, help="Only this case (repeatable).")
@click.option("--network-case", help="The case whose flows the network drawing shows "
              "(default: the first case that balances).")
@click.option("--studies", "studies_mode", type=click.Choice(["auto", "all", "none"]),
              default="auto", show_default=True,
              help="Trip screening, headroom and marginal steam cost: 'auto' runs them "
              f"for up to {60} cases.")
@click.option("--new-user", metavar="'HEADER=DEMAND'", help="Also study a new steam "
              "user, e.g. 'LP=12 t/h' (or a duty, 'LP=8 MW').")
@click.option("--new-user-return", default="0 %", show_default=True,
              help="Condensate returned by the new user.")
@click.option("--new-user-return-temperature", help="Temperature of that condensate, "
              "e.g. '90 degC'.")
@click.option("--quiet", is_flag=True, help="Print only problems.")
@click.pass_context
def report(ctx, model: str, out: str, csv_folder: str | None, cases: tuple[str, ...],
           network_case: str | None, studies_mode: str, new_user: str | None,
           new_user_return: str, new_user_return_temperature: str | None,
           quiet: bool) -> None:
    """Solve every case of MODEL and write the results workbook to OUT.

    The studies start from the balances of the cases already solved; every balance goes
    through the same evaluation as ``steamnet stations``.

    \b
    Exit codes: 0 when every case balances and no check fails; 1 when a case is
    infeasible, did not converge or could not be computed, or a check fails, or the
    --new-user addition leaves a case unbalanced or makes a check fail that passed
    without it (the workbook is still written and shows it); 2 for bad input; 3 when a
    file cannot be written (the previous file is left as it was).
    """
    from ..model.load import load_model
    from ..sweep import solve_cases
    from ..evaluate import evaluate
    from .verdict import finish_evaluation
    from ..workbook import write_csv_folder, write_workbook
    clean_earlier_runs(out, csv_folder)     # temporary files a killed run left
    m = load_model(model)
    data = m.stations
    for name in cases:
        m.case(name)
    if new_user:
        _new_user(m, new_user, new_user_return, new_user_return_temperature)
    study = solve_cases(m, list(cases) if cases else None, station_checks=data)
    names = [c.case for c in study.cases]
    if network_case is not None and network_case not in names:
        raise ModelError(f"no case '{network_case}' in this run (cases: "
                         f"{', '.join(names)})", item="option --network-case")
    ev = evaluate(study, data=data)
    checks = ev.stations
    studies = _run_studies(m, list(cases) if cases else None, len(study.cases),
                           studies_mode, new_user, new_user_return,
                           new_user_return_temperature, quiet,
                           solved={c.case: c for c in study.cases})
    write_workbook(out, study, checks=checks.checks, envelopes=checks.envelopes,
                   gains=checks.gains, studies=studies, network_case=network_case)
    if csv_folder:
        write_csv_folder(csv_folder, study, checks=checks.checks,
                         envelopes=checks.envelopes, studies=studies)
    for c in study.cases:
        if not c.ok:
            click.echo(f"case '{c.case}': {word(c.status)}: {c.message}")
    if not quiet:
        solved = sum(c.ok for c in study.cases)
        counts = ev.findings["status"].value_counts().to_dict()
        click.echo("findings: " + ", ".join(
            f"{counts.get(k, 0)} {k.replace('_', ' ')}"
            for k in ("fail", "warn", "not_assessed", "ok")) + " (see the Findings sheet)")
        click.echo(f"wrote {out} ({len(study.cases)} cases, {solved} balanced)")
        if csv_folder:
            click.echo(f"wrote the tables as CSV files into {csv_folder}")
    finish_evaluation(ctx, study, ev, addition=studies.get("New consumer"))


#: The options of ``report`` that give the new user's fields.
_NEW_USER_OPTIONS = {"header": "option --new-user", "demand": "option --new-user",
                     "duty": "option --new-user",
                     "condensate_return": "option --new-user-return",
                     "condensate_temperature": "option --new-user-return-temperature"}


def _new_user(m, new_user: str, ret, ret_t) -> tuple[str, str, str]:
    """(header, 'demand' or 'duty', amount) of ``--new-user``, checked as a user of the
    model file would be (before any case is solved)."""
    from ..studies.common import condensate, free_name, quantity, with_user
    from ..units import Kind, parse_quantity
    if "=" not in new_user:
        raise ModelError("write the new user as 'HEADER=DEMAND', e.g. 'LP=12 t/h'",
                         item="option --new-user")
    header, amount = (p.strip() for p in new_user.split("=", 1))
    try:
        parse_quantity(amount, Kind.MASS_FLOW)
        kind = "demand"
    except ModelError:
        kind = "duty"           # a heat duty ('8 MW'); its own errors name the unit
    value = quantity(amount, Kind.MASS_FLOW if kind == "demand" else Kind.POWER, m,
                     "option --new-user")
    r, t = condensate(m, ret, ret_t, _NEW_USER_OPTIONS)
    with_user(m, header, **{kind: value}, condensate_return=r, condensate_temperature=t,
              name=free_name(m, "new consumer"), origin="option --new-user",
              options=_NEW_USER_OPTIONS)
    return header, kind, amount


#: Above this many cases, --studies auto skips the studies (each needs several balances
#: per case and header).
STUDY_CASES_AUTO = 60


def _run_studies(m, cases, n_cases, mode, new_user, ret, ret_t, quiet,
                 solved: dict | None = None) -> dict:
    """The study tables for the workbook: name -> DataFrame."""
    from ..studies.headroom import header_headroom
    from ..studies.marginal import marginal_steam_cost
    from ..studies.progress import ProgressBar
    from ..studies.trips import screen_trips
    out = {}
    run_std = mode == "all" or (mode == "auto" and n_cases <= STUDY_CASES_AUTO)
    if mode == "auto" and not run_std and not quiet:
        click.echo(f"{n_cases} cases: studies skipped (use --studies all to run them)")
    if run_std:
        with ProgressBar("trip screening", quiet=quiet) as bar:
            trips = screen_trips(m, cases, progress=bar)
        out["Trip screening"] = trips.table
        out["Trip findings"] = trips.findings
        with ProgressBar("headroom", quiet=quiet) as bar:
            out["Headroom"] = header_headroom(m, cases, progress=bar, solved=solved)
        with ProgressBar("marginal steam cost", quiet=quiet) as bar:
            out["Marginal steam cost"] = marginal_steam_cost(m, cases, progress=bar,
                                                             solved=solved)
    if new_user:
        from ..studies.consumer import new_consumer_impact
        header, kind, amount = _new_user(m, new_user, ret, ret_t)
        with ProgressBar("new consumer", quiet=quiet) as bar:
            out["New consumer"] = new_consumer_impact(
                m, header, **{kind: amount}, condensate_return=ret,
                condensate_temperature=ret_t, cases=cases, progress=bar, solved=solved)
    return out

