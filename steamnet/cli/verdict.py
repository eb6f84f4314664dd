"""The findings and the last line of every command, in one place.

Every command that balances cases prints its findings with :func:`print_findings` (worst
first, each with its source) and ends with :func:`finish`: one last line that says whether
all is well, and the exit code of the README's table (0 all well, 1 a case does not
balance or a check fails).
"""

from __future__ import annotations

import math

import click

from . import EXIT_FAIL, EXIT_OK

__all__ = ["print_findings", "finish", "verdict_line", "EXIT_CODES_HELP"]

#: The exit-code paragraph of every balancing command's --help.
EXIT_CODES_HELP = ("Exit codes: 0 when every case balances and no check fails; 1 when a "
                   "case is infeasible, did not converge or could not be computed, or a "
                   "check fails; 2 for bad input; 3 when an output file could not be "
                   "written (the previous file is kept).")


def word(status) -> str:
    """A verdict or case status as every command, the workbook and the JSON export
    write it: 'not_assessed' -> 'not assessed'."""
    return str(status).replace("_", " ")


def _num(v) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "-"
    return f"{v:.3g}" if isinstance(v, (int, float)) else str(v)


def print_findings(findings, limit: int = 25, *, title: str = "findings") -> None:
    """Counts per verdict, then the worst findings (fail, warn, not assessed), each with
    its value, limit, source and advice; ``findings`` in
    :data:`steamnet.evaluate.FINDING_COLUMNS` layout, worst first."""
    counts = findings["status"].value_counts().to_dict() if len(findings) else {}
    click.echo(f"{title}: " + ", ".join(f"{counts.get(k, 0)} {k.replace('_', ' ')}"
                                        for k in ("fail", "warn", "not_assessed", "ok")))
    bad = findings[findings["status"].isin(("fail", "warn", "not_assessed"))] \
        if len(findings) else findings
    for r in bad.head(limit).itertuples(index=False):
        unit = f" {r.unit}" if r.unit else ""
        lim = f" (limit {_num(r.limit)}{unit})" if _num(r.limit) != "-" else ""
        val = f" {_num(r.value)}{unit}" if _num(r.value) != "-" else ""
        click.echo(f"  {word(r.status):<13} {r.case:<18} "
                   f"{r.item:<12} {r.check:<24}{val}{lim}")
        detail = "; ".join(x for x in (str(r.basis or ""), str(r.advice or "")) if x)
        if detail:
            click.echo(f"      {detail}")
        if r.source:
            click.echo(f"      source: {r.source}")
    if len(bad) > limit:
        click.echo(f"  ... {len(bad) - limit} more (--all, the JSON export or the "
                   "workbook list them)")


def verdict_line(*, not_balanced: list[str], fails: int, warns: int = 0,
                 what: str = "") -> str:
    """The last line of a command: what is wrong, or that all is well."""
    parts = []
    if not_balanced:
        names = ", ".join(f"'{n}'" for n in not_balanced[:5])
        more = f" and {len(not_balanced) - 5} more" if len(not_balanced) > 5 else ""
        parts.append(f"{len(not_balanced)} case(s) do not balance ({names}{more})")
    if fails:
        parts.append(f"{fails} check(s) fail")
    if parts:
        return "verdict: " + "; ".join(parts) + (f" {what}" if what else "") + \
            " -> exit 1"
    tail = f", {warns} warning(s)" if warns else ""
    return f"verdict: every case balances and no check fails{tail}" + \
        (f" {what}" if what else "") + " -> exit 0"


def finish(ctx, *, not_balanced: list[str], fails: int, warns: int = 0,
           what: str = "") -> None:
    """Print the verdict line and exit with its code."""
    click.echo(verdict_line(not_balanced=not_balanced, fails=fails, warns=warns,
                            what=what))
    ctx.exit(EXIT_FAIL if (not_balanced or fails) else EXIT_OK)


def addition_effect(df) -> tuple[list[str], int, int]:
    """What a new user changes, from the table of
    :func:`steamnet.studies.consumer.new_consumer_impact`: the cases that do not balance
    with it, the checks that fail with it and did not without it, and the warnings it
    creates."""
    from ..status import CaseStatus
    if df is None or not len(df):
        return [], 0, 0
    fd = df[df["section"] == "finding"]
    made_fail = fd[(fd["verdict_with"] == "fail") & (fd["verdict_without"] != "fail")
                   & (fd["quantity"] != "balance")]
    cases = df.drop_duplicates("case")
    infeasible = [c for c, s1 in zip(cases["case"], cases["status_with"])
                  if s1 != CaseStatus.SOLVED]
    warns = int(((fd["verdict_with"] == "warn") & (fd["effect"] == "created")).sum())
    return infeasible, len(made_fail), warns


def finish_evaluation(ctx, study, evaluation, what: str = "", addition=None) -> None:
    """:func:`finish` for a study and its evaluation; with ``addition`` (the table of a
    new user's impact) also what the addition changes: a case it leaves unbalanced or a
    check it makes fail is said on a line of its own and makes the exit code 1."""
    bad = [c.case for c in study.cases if not c.ok]
    f = evaluation.findings
    fails = int(((f["status"] == "fail") & (f["check"] != "balance")).sum()) \
        if len(f) else 0
    if addition is not None:
        inf, made, _ = addition_effect(addition)
        if inf or made:
            click.echo("the new user: " + verdict_line(
                not_balanced=inf, fails=made, what="because of the addition"
            ).removeprefix("verdict: ").removesuffix(" -> exit 1"))
            if not (bad or fails):
                finish(ctx, not_balanced=inf, fails=made, what="because of the new user")
                return
    finish(ctx, not_balanced=bad, fails=fails, warns=evaluation.count("warn"), what=what)
