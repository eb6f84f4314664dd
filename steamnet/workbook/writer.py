"""Write the results workbook: every sheet in reading order, to a temporary file that
replaces the target only when complete (steamnet.io.atomic)."""

from __future__ import annotations

import contextlib
import io
import re
from datetime import datetime
from pathlib import Path

import pandas as pd
from openpyxl import Workbook
from openpyxl.drawing.image import Image

from ..errors import ModelError
from ..io.atomic import atomic_path, output_errors, save_guarded
from . import style
from .charts import write_charts
from .cover import write_cover
from .differences import DIFFERENCES_SHEET, differences_table

#: The sheet of the drawing of the worst case (when it is not the case drawn first).
WORST_SHEET = "Network, worst case"
from .findings import findings_table
from .inputs import inputs_table
from .network import network_png, worst_case
from .printing import finish
from .run import Run
from .sheet import Table, print_setup, text_cell, write_table
from .stations import checks_table, station_summary_table, stations_table
from .tables import (EQUIPMENT_KEYS, HEADER_KEYS, STREAM_KEYS, case_frame_table,
                     frame_table, overview_table)

__all__ = ["write_workbook", "build_tables", "network_case_of", "SHEETS", "ORDER",
           "STUDY_SHEETS", "WORST_SHEET", "table_name"]

#: What each fixed sheet holds (the cover's table of contents; docs/workbook.md).
SHEETS = {
    "Cover": "The answer first: each case in a line, the worst findings with their "
             "sources, what the cost is made of, the cautions; then the run, verdicts, "
             "units.",
    "Findings": "Everything to look at, worst first, with the source of each limit and a "
                "sentence of advice.",
    "Cases": "Each case's totals side by side: steam, fuel, power, water, cost and its "
             "parts, status.",
    DIFFERENCES_SHEET: "Each case against the first: totals, headers, equipment and the "
                       "station checks that differ.",
    "Network": "A drawing of the network with the flows of the base case (or the case "
               "asked for).",
    WORST_SHEET: "The same drawing with the flows of the worst case.",
    "Stations": "Each let-down station in each case: the balance and every check's "
                "value, limit and verdict, grouped by check.",
    "Station summary": "Each station across the cases: range, limits, turndown used, "
                       "verdicts, the checks across cases (control gain spread).",
    "Station charts": "Spray per case, each station's operating envelope, control gain.",
    "Headers": "Each header in each case: pressure, temperatures, enthalpy, flows, "
               "balance residuals.",
    "Equipment": "Each item in each case: flow, power or duty, load against its limits, "
                 "mode.",
    "Streams": "Every steam and water stream of each case: flow, pressure, temperature.",
    "Inputs": "The model file as read: every item's fields as written.",
}

#: Reading order of the fixed sheets. The sheets of the studies (the tables passed as
#: ``studies`` and any sheet a study module adds through :data:`STUDY_SHEETS`) go where
#: :data:`STUDIES_AT` stands, in the order they were given.
STUDIES_AT = "(studies)"
ORDER = ["Cover", "Findings", "Cases", DIFFERENCES_SHEET, "Network", WORST_SHEET,
         "Stations", "Station summary", "Station charts", "Headers", "Equipment",
         "Streams", STUDIES_AT, "Inputs"]

#: Where a study adds a sheet of its own: a function of the :class:`Run` returning a
#: :class:`~steamnet.workbook.sheet.Table` (or None when the study did not run), kept in
#: its own module and appended here by it. Its sheet goes with the studies' sheets.
STUDY_SHEETS: list = []

_BAD_SHEET_CHARS = re.compile(r"[\[\]:*?/\\]")


def network_case_of(run: Run) -> str | None:
    """The case drawn on the network sheet: the one asked for, else the base case (the
    first case, when it balanced), else the first that balanced, else the first."""
    if run.network_case is not None:
        return run.network_case
    for c in run.cases:
        if c.ok:
            return c.case
    return run.cases[0].case if run.cases else None


def worst_case_of(run: Run) -> str | None:
    """The case drawn on the second network sheet: the worst (a case that does not
    balance, then the most failures, then the most warnings), when it is not the case
    drawn first and the run is not a long one."""
    if run.large or len(run.cases) < 2:
        return None
    w = worst_case(run.cases, run.finding_counts)
    return w if w != network_case_of(run) else None


def _study_tables(run: Run, taken: set[str]) -> list[Table]:
    out = []
    for i, (name, df) in enumerate(run.studies.items(), 1):
        label = _BAD_SHEET_CHARS.sub(" ", str(name).replace("_", " ")).strip() or f"Study {i}"
        label = label[:1].upper() + label[1:]
        sheet = label[:31]
        while sheet in taken:
            sheet = f"{label[:26]} ({i})"
        taken.add(sheet)
        slug = re.sub(r"[^0-9A-Za-z]+", "_", str(name)).strip("_").lower() or str(i)
        out.append(frame_table(df, name=sheet, slug=f"study_{slug}",
                               title=f"Study: {label}", note=f"Results of the study "
                               f"'{name}' as it ran; columns carry their units.",
                               currency=run.currency))
    return out


def build_tables(run: Run, *, for_csv: bool = False) -> list[Table]:
    """Every table of the workbook in reading order (charts and drawing not included).

    For the CSV export the case overview is one row per case whatever the run's size;
    the workbook of a long run leaves the streams out (they are in the CSV export).
    """
    t = [findings_table(run), overview_table(run, side_by_side=False if for_csv else None),
         case_frame_table(run, "headers", HEADER_KEYS, name="Headers", slug="headers",
                          title="Headers", note="Each header in each case. The balance "
                          "residuals show that mass and energy close."),
         case_frame_table(run, "equipment", EQUIPMENT_KEYS, name="Equipment",
                          slug="equipment", title="Equipment",
                          note="Each item in each case. Load is the flow as a percentage "
                          "of the item's maximum; 'At limit' names a limit it sits on."),
         case_frame_table(run, "streams", STREAM_KEYS, name="Streams", slug="streams",
                          title="Streams", note="Every steam and water stream the balance "
                          "computes, with its state."),
         stations_table(run), station_summary_table(run)]
    diff = differences_table(run) if not run.large else None
    if diff is not None:                 # after the case overview (a long run: none)
        t.insert(2, diff)
    if run.large and not for_csv:        # a long run: streams only in the CSV export
        t = [x for x in t if x.slug != "streams"]
    if for_csv:       # the long tables the two station sheets fold, for other programs
        if run.envelopes is not None and len(run.envelopes):
            t.append(frame_table(run.envelopes, name="Station envelopes",
                                 slug="station_envelopes", title="Station envelopes",
                                 note="Each station's operating envelope across the "
                                 "cases, as the station checks computed it.",
                                 currency=run.currency))
        ct = checks_table(run)
        if ct is not None:
            t.append(ct)
    t += _study_tables(run, {x.name for x in t} | set(SHEETS))
    for make in STUDY_SHEETS:
        extra = make(run)
        if extra is not None:
            t.append(extra)
    t.append(inputs_table(run))
    return t


def table_name(slug: str, used: set[str]) -> str:
    """A unique Excel table name for ``slug`` (``used`` holds the names taken)."""
    return _table_name(slug, used)


def _table_name(slug: str, used: set[str]) -> str:
    base = "t_" + re.sub(r"[^0-9A-Za-z_]", "_", slug)
    name, i = base, 2
    while name.lower() in used:
        name, i = f"{base}_{i}", i + 1
    used.add(name.lower())
    return name


def _write_network(wb, run: Run, case_name: str | None, *, sheet: str = "Network"
                   ) -> None:
    ws = wb.create_sheet(sheet)
    ws.append([text_cell(ws, sheet, font=style.TITLE_FONT)])
    if case_name is None:
        ws.append([text_cell(ws, "(no case to draw)", font=style.NOTE_FONT)])
        return
    case = run.study.case(case_name)
    model = run.model
    if any(c.name == case_name for c in model.cases):
        try:
            model = model.for_case(case_name)
        except ModelError:
            pass
    note = f"The network in case '{case_name}' ({style.display(case.status)})."
    if sheet == WORST_SHEET:
        note = f"Case '{case_name}' ({style.display(case.status)}): the worst of the run."
    elif run.network_case is None:
        note += (" The first case that balanced is drawn; choose another with "
                 "--network-case.")
    verdicts = {st: run.worst_verdict(case_name, st) for st in run.stations}
    ws.append([text_cell(ws, note, font=style.NOTE_FONT,
                         fill=style.fill_of(case.status) if not case.ok else None)])
    img = Image(io.BytesIO(network_png(model, case, verdicts=verdicts)))
    scale = min(1.0, 1500 / img.width)
    img.width, img.height = int(img.width * scale), int(img.height * scale)
    ws.add_image(img, "A4")
    print_setup(ws, rows=3)


def write_workbook(path: str | Path, study, *, checks: pd.DataFrame | None = None,
                   envelopes: pd.DataFrame | None = None,
                   studies: dict[str, pd.DataFrame] | None = None,
                   network_case: str | None = None,
                   gains: pd.DataFrame | None = None,
                   extra_sheets: list | None = None) -> Path:
    """Write the results workbook of ``study`` (a :class:`~steamnet.solve.StudyResult`).

    Parameters
    ----------
    path : the .xlsx file to write; it is replaced only when the new one is complete
    study : the solved cases
    checks : the station checks' long table (case, station, check, value, limit, unit,
        status, basis, source, advice); without it the stations sheet says checks were
        not run
    envelopes : the station checks' envelope table (one row per station)
    studies : name -> result table of each study that ran (unit-suffixed columns)
    network_case : the case whose flows the network drawing shows (default: the first
        case that balanced)
    gains : the station checks' control gain table (case, station, steam_t_h,
        gain_k_per_t_h, gain_per_ratio_k), charted against steam flow
    extra_sheets : ``(name, description, write)`` of sheets a study writes itself,
        with the studies' sheets: ``write(wb, run, used_table_names)`` adds the sheet

    Raises
    ------
    OutputError
        The file cannot be written (folder missing or not writable, target open in
        another program); the previous file, if any, is unchanged.
    ValueError
        ``network_case`` is not a case of the study, or ``checks`` lacks a column.
    """
    run = Run(study, checks, envelopes, studies or {}, network_case, gains)
    names = [c.case for c in run.cases]
    if network_case is not None and network_case not in names:
        raise ValueError(f"network_case '{network_case}' is not a case of this study "
                         f"(cases: {', '.join(names)})")
    tables = build_tables(run)
    extra = {name: (text, write) for name, text, write in extra_sheets or ()}
    order = _reading_order(run, tables, list(extra))
    what = {t.name: t.note.split(". ")[0] for t in tables}
    what.update({name: text for name, (text, _) in extra.items()})
    contents = [(n, SHEETS.get(n) or what.get(n, "")) for n in order]
    now = datetime.now().astimezone()
    target = Path(path)
    with atomic_path(target, ".xlsx") as tmp, output_errors(target):
        wb = Workbook(write_only=True)
        try:
            write_cover(wb, run, contents, now)
            _write_sheets(wb, run, tables, order[1:], extra)
            finish(wb, run.model)
            save_guarded(wb.save, tmp)
        except BaseException:
            _discard(wb)
            raise
    return target


def _reading_order(run: Run, tables: list[Table], extra: list[str]) -> list[str]:
    """Every sheet in :data:`ORDER`, the studies' sheets (and ``extra``, the sheets a
    study writes itself) where they stand."""
    have = {t.name for t in tables} | {"Cover", "Network", "Station charts"}
    if worst_case_of(run) is not None:
        have.add(WORST_SHEET)
    fixed = set(ORDER)
    studies = [t.name for t in tables if t.name not in fixed] + extra
    out = []
    for name in ORDER:
        if name == STUDIES_AT:
            out += studies
        elif name in have:
            out.append(name)
    return out


def _write_sheets(wb, run: Run, tables: list[Table], order: list[str],
                  extra: dict | None = None) -> None:
    used: set[str] = set()
    by_name = {t.name: t for t in tables}
    for name in order:
        if extra and name in extra:
            extra[name][1](wb, run, used)
        elif name == "Network":
            _write_network(wb, run, network_case_of(run))
        elif name == WORST_SHEET:
            _write_network(wb, run, worst_case_of(run), sheet=WORST_SHEET)
        elif name == "Station charts":
            write_charts(wb, run)
        else:
            tb = by_name[name]
            write_table(wb, tb, run.status_of, table_name=_table_name(tb.slug, used))


def _discard(wb) -> None:
    """After a failure: close the streamed sheets and remove their temporary files
    (openpyxl keeps one per sheet until the workbook is saved)."""
    for ws in wb.worksheets:
        with contextlib.suppress(Exception):
            if not ws.closed:
                ws.close()
        with contextlib.suppress(Exception):
            if ws._writer is not None:
                ws._writer.cleanup()
