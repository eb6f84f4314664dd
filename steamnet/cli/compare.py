"""The ``compare`` subcommand: cases side by side, with the difference of every number."""

from __future__ import annotations

import click

from ..errors import ModelError
from . import main
from .studies import _caution, _header_line, _print_rows, _write_json
from .verdict import finish_evaluation


def _columns(ref: str, case: str) -> tuple[dict, dict]:
    """Printed columns of the quantities and of the checks (the cases by name, unless
    a name is one of the other headings)."""
    if len({ref, case, "item", "quantity", "difference", "station", "check",
            "unit"}) < 8:
        ref, case = "reference", "case"
    values = {"item": ("item", -1), "label": ("quantity", -1),
              "reference_value": (ref, 2), "value": (case, 2),
              "difference": ("difference", 2)}
    checks = {"item": ("station", -1), "quantity": ("check", -1), "unit": ("unit", -1),
              "reference_verdict": (ref, -1), "verdict": (case, -1),
              "reference_value": (f"value in {ref}", 2), "value": (f"value in {case}", 2),
              "difference": ("difference", 2)}
    return values, checks


def _changed(d):
    """The rows whose quantity changed (beyond rounding, or on one side only)."""
    from ..studies.compare import changed
    return d[[changed(a, b, x) for a, b, x in zip(d["reference_value"], d["value"],
                                                  d["difference"])]]


def _print_pair(d, ref: str, case: str, rows: int, every: bool) -> None:
    """The totals that changed, the largest equipment changes (flows first, as
    compare_cases orders them) and the checks that differ; with ``every`` all rows,
    the headers' too."""
    values, checks = _columns(ref, case)
    d = d.assign(label=d["quantity"] + " [" + d["unit"] + "]")
    for title, section in (("plant totals", "total"), ("headers", "header"),
                           ("equipment, largest change first", "equipment")):
        part = d[d["section"] == section]
        part = part if every else _changed(part)
        if section == "header" and not every:
            if len(part):
                click.echo(f"  headers: {len(part)} quantities changed (--all prints "
                           "them)")
            continue
        click.echo(f"  {title}{':' if len(part) else ': no change'}")
        if len(part):
            _print_rows(part, values, 0 if every or section == "total" else rows)
    f = d[d["section"] == "finding"]
    click.echo(f"  station checks that differ{':' if len(f) else ': none'}")
    if len(f):
        _print_rows(f, checks, 0 if every else rows)


@main.command("compare")
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--case", "cases", multiple=True,
              help="Compare this case (repeatable); default every other case.")
@click.option("--against", "reference",
              help="The case compared against; default the model file's first case.")
@click.option("--json", "json_path", type=click.Path(dir_okay=False),
              help="Also write the balances and the differences to this JSON file.")
@click.option("--rows", default=10, show_default=True, type=click.IntRange(0),
              help="Equipment changes and check rows to print per case (0: all).")
@click.option("--all", "every", is_flag=True,
              help="Print every compared quantity, also those that did not change.")
@click.pass_context
def compare_command(ctx, model, cases, reference, json_path, rows, every):
    """Set cases of MODEL side by side: plant totals, header states, equipment flows
    and the station checks that differ, each with value minus reference
    (docs/studies.md).

    Exit codes: 0 every compared case (and the reference) balances and no check fails
    in them; 1 a compared case or the reference is infeasible, did not converge or
    could not be solved, or a check fails in one of them; 2 bad input (an unknown case
    name: the message lists the known cases); 3 the JSON file could not be written (the
    previous file is kept).
    """
    from ..evaluate import evaluate
    from ..model.load import load_model
    from ..studies.compare import compare_cases
    from ..sweep import solve_cases
    m = load_model(model)
    known = [c.name for c in m.cases]
    if len(known) < 2:
        raise ModelError(f"compare needs at least two cases; the model has "
                         f"{len(known)} ({', '.join(known) or 'none'})", file=m.source)
    ref = reference if reference is not None else known[0]
    for name, option in [(ref, "--against"), *((c, "--case") for c in cases)]:
        if name not in known:
            raise ModelError(f"no case named '{name}' (cases: {', '.join(known)})",
                             file=m.source, item=f"option {option}")
    others = [c for c in dict.fromkeys(cases) if c != ref] if cases else \
        [c for c in known if c != ref]
    if not others:
        raise ModelError(f"nothing to compare: give a case other than '{ref}'",
                         item="option --case")
    names = [ref, *others]
    study = solve_cases(m, names, station_checks=True)
    evaluation = evaluate(study)
    df = compare_cases(study, evaluation.stations, reference=ref, cases=others)
    _header_line(m, f"case differences against '{ref}'", len(others))
    for name in others:
        d = df[df["case"] == name]
        click.echo(f"\ncase '{name}' against '{ref}':")
        st = d[d["section"] == "status"]
        if len(st):
            click.echo(f"  NOT COMPARED: {st.iloc[0]['message']}")
            continue
        _print_pair(d, ref, name, rows, every)
    _caution(False)
    if json_path:
        _write_json(study, json_path, "case_differences",
                    {"reference": ref, "cases": others, "rows": df}, False)
    finish_evaluation(ctx, study, evaluation, what="(the compared cases and the reference)")
