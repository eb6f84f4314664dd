"""Core subcommands: ``check`` and ``solve``."""

from __future__ import annotations

import click

from ..io.textsafe import escape_controls
from . import EXIT_FAIL, EXIT_OK, main, parallel_options
from ..status import CaseStatus
from .verdict import word


def _fmt(v, nd=1):
    try:
        return f"{v:,.{nd}f}"
    except (TypeError, ValueError):
        return "-"


def print_summary(study) -> None:
    """A concise summary per case."""
    m = study.model
    click.echo(f"{m.site.name} ({escape_controls(m.source)}, sha256 {m.sha256[:12]})")
    for c in study.cases:
        s = c.summary
        click.echo(f"\ncase '{c.case}': {word(c.status)}")
        if c.status != CaseStatus.SOLVED:
            click.echo(f"  {c.message}")
            if c.status != CaseStatus.INFEASIBLE:
                continue
        click.echo(f"  steam raised {_fmt(s.get('steam_raised_t_h'))} t/h, fuel "
                   f"{_fmt(s.get('fuel_mw'))} MW, power {_fmt(s.get('power_generated_mw'), 2)}"
                   f" MW(e) + {_fmt(s.get('mechanical_power_mw'), 2)} MW shaft")
        click.echo(f"  spray {_fmt(s.get('spray_t_h'))} t/h, deaerator steam "
                   f"{_fmt(s.get('da_steam_t_h'))} t/h, make-up {_fmt(s.get('makeup_t_h'))} "
                   f"t/h, vented {_fmt(s.get('vented_t_h'))} t/h, cost "
                   f"{_fmt(s.get('cost_per_h'), 0)} {m.site.currency}/h")
        if len(c.headers):
            for _, h in c.headers.iterrows():
                click.echo(f"    header   {h['header']:<14} {h['p_barg']:7.2f} bar(g) "
                           f"{h['t_degc']:7.1f} degC  {h['state']:<20}  "
                           f"throughput {h['inflow_t_h']:8.1f} t/h")
        print_equipment(c.equipment)
        if c.status == CaseStatus.SOLVED:
            click.echo(f"  balance closes: mass {s['mass_residual_rel']:.1e}, energy "
                       f"{s['energy_residual_rel']:.1e}, water "
                       f"{s['water_residual_rel']:.1e} relative; {c.iterations} iterations")


def _num(r, key) -> float | None:
    v = r.get(key)
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if f == f else None


def _path(r) -> str:
    return f"{r.get('from', '')}->{r.get('to', '')}"


def print_equipment(eq) -> None:
    """The turbines, the let-downs with their spray, and the deaerator of one case."""
    if eq is None or not len(eq):
        return
    rows = eq.to_dict("records")
    turbines = [r for r in rows if r.get("type") in ("turbine", "extraction_turbine")]
    letdowns = [r for r in rows if r.get("type") == "letdown"]
    da = [r for r in rows if r.get("type") == "deaerator"]
    for r in turbines:
        drive = "MW(e)" if r.get("drive") == "generator" else "MW shaft"
        extra = ""
        if _num(r, "exhaust_t_h") is not None:
            extra = f", to the condenser {_fmt(_num(r, 'exhaust_t_h'))} t/h"
        click.echo(f"    turbine  {str(r['item']):<14} {_path(r):<15} steam {_fmt(_num(r, 'flow_t_h')):>7} t/h  "
                   f"{_fmt((_num(r, 'power_kw') or 0) / 1e3, 2):>6} {drive}{extra}")
    for r in letdowns:
        out = _num(r, "t_out_degc") if (_num(r, "flow_t_h") or 0) > 0 else None
        t_out = f"  outlet {_fmt(out)} degC" if out is not None else ""
        click.echo(f"    let-down {str(r['item']):<14} {_path(r):<15} steam {_fmt(_num(r, 'flow_t_h')):>7} t/h  "
                   f"spray {_fmt(_num(r, 'spray_t_h'), 2):>6} t/h{t_out}")
    for r in da:
        click.echo(f"    deaerator {str(r['item']):<13} {'':<15} steam {_fmt(_num(r, 'flow_t_h')):>7}"
                   f" t/h  feedwater {_fmt(_num(r, 'feedwater_t_h'))} t/h at "
                   f"{_fmt(_num(r, 't_out_degc'))} degC, make-up "
                   f"{_fmt(_num(r, 'makeup_t_h'))} t/h, vent {_fmt(_num(r, 'vent_t_h'), 2)}"
                   " t/h")


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
def check(model: str) -> None:
    """Validate MODEL (the base and every case) without solving."""
    from ..evaluate import case_input_warnings
    from ..stations.checks import ALL_CASES
    from ..model.load import load_model
    m = load_model(model)
    n_items = sum(len(v) for v in m.items.values())
    click.echo(f"{escape_controls(model)}: valid ({len(m.headers)} headers, {n_items} items, "
               f"{len(m.cases)} cases)")
    for case, w in case_input_warnings(m, [c.name for c in m.cases]):
        click.echo("warning: " + w.line(escape_controls(model),
                                        "" if case == ALL_CASES else case))


@main.command()
@click.argument("model", type=click.Path(dir_okay=False))
@click.option("--case", "cases", multiple=True, help="Solve only this case (repeatable).")
@click.option("--json", "json_path", type=click.Path(),
              help="Write every result to this JSON file (layout: docs/results.md).")
@click.option("--quiet", is_flag=True, help="Print only problems.")
@parallel_options
@click.pass_context
def solve(ctx, model: str, cases: tuple[str, ...], json_path: str | None,
          quiet: bool, workers: int, scheduler: str | None) -> None:
    """Solve every case of MODEL and print a summary per case, then the findings of
    every balance (the same evaluation as ``steamnet stations``).

    \b
    Exit codes: 0 when every case balances and no check fails; 1 when a case is
    infeasible, did not converge or could not be computed, or a check fails; 2 for bad
    input; 3 when the JSON file could not be written.
    """
    from ..model.load import load_model
    from ..sweep import solve_cases
    from ..evaluate import evaluate
    from .verdict import finish_evaluation, print_findings
    m = load_model(model)
    for name in cases:
        m.case(name)
    study = solve_cases(m, list(cases) if cases else None, workers=workers,
                        scheduler=scheduler, station_checks=True)
    ev = evaluate(study)
    if not quiet:
        print_summary(study)
    else:
        for c in study.cases:
            if not c.ok:
                click.echo(f"case '{c.case}': {word(c.status)}: {c.message}")
    if not quiet:
        click.echo("")
        print_findings(ev.findings, limit=10)
    if json_path:
        from ..io.jsonout import write_json
        write_json(study, json_path, extra={"findings": ev.findings})
        if not quiet:
            click.echo(f"\nwrote {json_path}")
    finish_evaluation(ctx, study, ev)
