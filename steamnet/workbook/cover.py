"""The cover sheet: what was run, on what, when; the cautions; the cases and their
status; the legend of verdicts; the units; what each sheet holds."""

from __future__ import annotations

import math
from datetime import datetime

from openpyxl.cell import WriteOnlyCell
from openpyxl.styles import Font, PatternFill
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.hyperlink import Hyperlink

from .. import _version
from . import style
from .columns import clean_number, format_for_unit, label_of
from .run import LARGE_RUN, Run
from .sheet import print_setup, text_cell
from .tables import COST_NOTE

__all__ = ["CAUTIONS", "UNITS", "write_cover", "run_facts", "worst_station_verdict",
           "TOP_FINDINGS", "INVENTED"]

#: The cautions of docs/cautions.md, on the first sheet of every workbook.
CAUTIONS = [
    "Let-down stations, relief valves and desuperheaters protect people and equipment.",
    "This workbook supports studies. It does not replace design by a licensed engineer, "
    "the equipment maker's data, or the governing codes: the boiler and pressure vessel "
    "code, the power piping code and the relief-device standards in force at the site, "
    "and local regulations.",
    "Spray water that does not evaporate causes water hammer, thermal shock and erosion "
    "downstream of a desuperheater.",
    "A let-down valve that fails open must be covered by relief capacity on the header "
    "downstream of it.",
    "Limits the model file does not give are default starting values, each with its "
    "source in the Source column (\"common practice, no source\", \"from memory\"): the "
    "equipment maker's figures and the site's standards win over them; set them in the "
    "model file.",
    "The numbers are steady-state balances of the model file: compare them with plant "
    "measurements before acting on them.",
]

#: Units used throughout the workbook.
UNITS = [
    ("Mass flow (steam, water)", "t/h"),
    ("Pressure", "bar(g) gauge, at the site's atmospheric pressure; bar(a) absolute"),
    ("Temperature", "degC"),
    ("Temperature difference (superheat, approach)", "K"),
    ("Specific enthalpy", "kJ/kg"),
    ("Power of a single machine; heat loss", "kW"),
    ("Plant power, fuel and heat duty", "MW"),
    ("Cost", "{cur}/h (site currency per hour)"),
    ("Steam quality, efficiency", "- (fraction, 1 = dry saturated steam, 100 %)"),
    ("Load and use of capacity", "% of the maximum"),
    ("Balance residuals", "relative (fraction of the throughput)"),
]

_BOLD = Font(bold=True)
_SECTION = Font(bold=True, size=12, color="1F2D3A")
_CAUTION = Font(bold=True, color="7A1F1F")
_INVENTED_FILL = PatternFill("solid", fgColor="FCE8B2")


def run_facts(run: Run, now: datetime) -> list[tuple[str, str]]:
    """The identity of the run (also written to the CSV export)."""
    m = run.model
    counts: dict[str, int] = {}
    for c in run.cases:
        counts[c.status] = counts.get(c.status, 0) + 1
    status = ", ".join(f"{n} {style.display(s)}" for s, n in counts.items())
    checks = (f"run: {len(run.checks)} check results" if run.checks is not None
              else "not run (no verdicts in this workbook)")
    layout = ("cases side by side" if not run.large else
              f"long run ({len(run.cases)} cases > {LARGE_RUN}): the case overview has one "
              "row per case; the spray bar chart and the streams sheet are left out "
              "(the streams are in the CSV export)")
    return [
        ("Plant", m.site.name),
        ("Model file", m.source),
        ("Model file SHA-256", m.sha256),
        ("Program", f"steamnet {_version.__version__} (model file format "
                    f"{_version.FORMAT_VERSION})"),
        ("Run at", now.isoformat(sep=" ", timespec="seconds")),
        ("Steam properties", "IAPWS-IF97 (IAPWS R7-97(2012)) through the iapws package"),
        ("Cases", f"{len(run.cases)} ({status})"),
        ("Station checks", checks),
        ("Studies", ", ".join(run.studies) if run.studies else "none"),
        ("Layout", layout),
    ]


#: Columns of the cover: widths [characters]. Column A names each row; the tables of
#: cases and findings use the others; long texts span B to the last column.
_WIDTHS = (18, 11, 10, 10, 9, 9, 11, 11, 9, 9, 28)
_LAST = len(_WIDTHS)
#: How many findings the cover lists.
TOP_FINDINGS = 5
INVENTED = "invented demo plant"

#: The one-line-per-case table of the cover: heading, kind, number format, value getter.
def _case_lines(run: Run) -> list[tuple[str, str, str | None, object]]:
    cur = run.currency

    def s(key):
        return lambda c: c.summary.get(key)
    return [
        ("Case", "case", None, lambda c: c.case),
        ("Balanced", "status", None, lambda c: c.status),
        ("Steam raised [t/h]", "num", "0.0", s("steam_raised_t_h")),
        ("Fuel [MW]", "num", "0.0", s("fuel_mw")),
        ("Power generated [MW]", "num", "0.00", s("power_generated_mw")),
        ("Spray water [t/h]", "num", "0.00", s("spray_t_h")),
        (f"Operating cost, net [{cur}/h]", "num", "#,##0", s("cost_per_h")),
        ("Worst station verdict", "verdict", None,
         lambda c: worst_station_verdict(run, c.case)),
        ("Fail [count]", "int", "0",
         lambda c: run.finding_counts.get(c.case, {}).get("fail", 0)),
        ("Warn [count]", "int", "0",
         lambda c: run.finding_counts.get(c.case, {}).get("warn", 0)),
        ("What it means", "text", None, lambda c: _case_meaning(run, c)),
    ]


def worst_station_verdict(run: Run, case: str) -> str | None:
    """The most severe verdict of any station check in ``case`` (None: none ran)."""
    return style.worst(run.worst_verdict(case, st) for st in run.stations)


def _case_meaning(run: Run, c) -> str:
    if style.is_bad_status(c.status):
        return f"does not balance: {c.message}"
    n = run.finding_counts.get(c.case, {})
    if n.get("fail"):
        return "balances, but a limit is exceeded: see the findings below"
    if n.get("warn"):
        return "balances; some items are close to a limit"
    return "balances within every limit checked"


def write_cover(wb, run: Run, contents: list[tuple[str, str]], now: datetime):
    """Write the cover as the first sheet; ``contents`` lists (sheet, what it holds).

    It answers first: the plant and the model file, one line per case, the worst
    findings with the sources of their limits, what the cost is made of and the
    cautions; then the run's details, the verdict words, the units and the sheets."""
    ws = wb.create_sheet("Cover")
    for i, w in enumerate(_WIDTHS, 1):
        ws.column_dimensions[get_column_letter(i)].width = w
    t = lambda v, **kw: text_cell(ws, v, **kw)   # noqa: E731
    row = [0]
    span_chars = sum(_WIDTHS[1:]) - 2

    def add(cells, height=None):
        row[0] += 1
        if height:
            ws.row_dimensions[row[0]].height = height
        ws.append(cells)
        return row[0]

    def lines(text, width):
        return max(1, -(-len(str(text)) // max(1, width)))

    def long(label, text, *, font=None, label_font=_BOLD, fill=None):
        """A label in column A and a text spanning the other columns, wrapped."""
        add([t(label, font=label_font, alignment=style.WRAP_TOP, fill=fill),
             t(text, alignment=style.WRAP_TOP, font=font, fill=fill)],
            15 * max(lines(text, span_chars), lines(label, _WIDTHS[0] - 2)) + 3)
        ws.merged_cells.add(f"B{row[0]}:{get_column_letter(_LAST)}{row[0]}")

    m = run.model
    invented = bool(getattr(m.site, "invented", False))
    title = f"{m.site.name}: steam balance" + (f" ({INVENTED})" if invented else "")
    add([t(title, font=style.TITLE_FONT)], 22)
    if invented:
        long("Invented data", f"This is an {INVENTED}: the plant and every number of its "
             "model file are invented for demonstration. They describe no real plant.",
             label_font=_CAUTION, font=_CAUTION, fill=_INVENTED_FILL)
    long("Plant", m.site.name)
    long("Model file", m.source)
    long("Model file SHA-256", m.sha256)
    add([])
    _case_section(ws, run, add, t)
    add([])
    _findings_section(ws, run, add, t, long)
    add([])
    add([t("Operating cost", font=_SECTION)])
    long("Net of the power credit", COST_NOTE + " Its parts per case are on the Cases "
         "sheet.")
    add([])
    add([t("Cautions", font=_SECTION)])
    for text in CAUTIONS:
        long("Caution", text, label_font=_CAUTION)
    add([])
    add([t("This run", font=_SECTION)])
    for k, v in run_facts(run, now)[3:]:
        long(k, v)
    add([])
    add([t("Verdicts", font=_SECTION)])
    for word, meaning in style.LEGEND:
        add([t(style.display(word), fill=style.fill_of(word), font=style.font_of(word),
               alignment=style.WRAP_TOP),
             t(meaning, alignment=style.WRAP_TOP)], 15 * lines(meaning, span_chars) + 3)
        ws.merged_cells.add(f"B{row[0]}:{get_column_letter(_LAST)}{row[0]}")
    add([])
    add([t("Units", font=_SECTION)])
    for q, u in UNITS:
        long(q, u.replace("{cur}", run.currency), label_font=None)
    add([])
    add([t("Sheets", font=_SECTION)])
    for name, what in contents:
        c = t(name, font=Font(color="1F4E79", underline="single"))
        c.hyperlink = Hyperlink(ref="", location=f"'{name}'!A1", display=name)
        add([c, t(what)])
    print_setup(ws, rows=row[0], key_cols=1)       # column A names each row
    return ws


def _heading_row(t, headings):
    return [t(h, font=style.HEADING_FONT, fill=style.HEADING_FILL,
              alignment=style.WRAP_TOP) for h in headings]


def _case_section(ws, run: Run, add, t) -> None:
    spec = _case_lines(run)
    add([t("Cases", font=_SECTION)])
    add(_heading_row(t, [h for h, *_ in spec]), 48)
    listed = run.cases if not run.large else [c for c in run.cases
                                              if style.is_bad_status(c.status)][:500]
    for c in listed:
        cells = []
        for _, kind, fmt, get in spec:
            cells.append(_cell(ws, run, kind, fmt, get(c)))
        add(cells, 15 * max(1, -(-len(_case_meaning(run, c)) // (_WIDTHS[-1] - 2))) + 3)
    if run.large:
        add([t(f"All {len(run.cases)} cases are on the Cases sheet; listed here are the "
               f"{len(listed)} that did not balance.", font=style.NOTE_FONT)])


def _cell(ws, run: Run, kind: str, fmt: str | None, v):
    if v is None or (isinstance(v, float) and not math.isfinite(v)):
        return None
    if kind in ("status", "verdict"):
        word = str(v)
        return text_cell(ws, style.display(word), fill=style.fill_of(word),
                         font=style.font_of(word), alignment=style.WRAP_TOP)
    if kind == "case":
        st = run.status_of.get(str(v))
        bad = st is not None and style.is_bad_status(st)
        return text_cell(ws, v, fill=style.fill_of(st) if bad else None,
                         alignment=style.WRAP_TOP)
    if kind == "text":
        return text_cell(ws, v, alignment=style.WRAP_TOP)
    c = WriteOnlyCell(ws, value=float(v) if kind == "num" else int(v))
    c.number_format = fmt or "General"
    c.alignment = style.WRAP_TOP
    return c


def _findings_section(ws, run: Run, add, t, long) -> None:
    top = run.findings[:TOP_FINDINGS]
    n = len(run.findings)
    add([t(f"The {len(top)} worst findings" if n > len(top) else "Findings",
           font=_SECTION)])
    if not top:
        long("None", "Every case balanced and no check reported a problem.")
        return
    r = add(_heading_row(t, ["Case", "Verdict", "Item", "Check", "Value", "Limit", "Unit",
                             "Source of the limit", "", "", "What to do"]), 33)
    ws.merged_cells.add(f"H{r}:J{r}")
    for f in top:
        fmt = format_for_unit(f["unit"]) or "0.00"
        cells = [_cell(ws, run, "case", None, f["case"]),
                 _cell(ws, run, "verdict", None, f["severity"]),
                 t(f["item"], alignment=style.WRAP_TOP),
                 t(label_of(f["check"]).lower(), alignment=style.WRAP_TOP),
                 _cell(ws, run, "num", fmt, clean_number(f["value"])),
                 _cell(ws, run, "num", fmt, clean_number(f["limit"])),
                 t(f["unit"] or "", alignment=style.WRAP_TOP),
                 t(f["source"] or "(none given)", alignment=style.WRAP_TOP), None, None,
                 t(f["advice"] or "", alignment=style.WRAP_TOP)]
        r = add(cells, 15 * max(lines_of(f["advice"], _WIDTHS[-1] - 2),
                            lines_of(f["source"], sum(_WIDTHS[7:10]) - 2),
                            lines_of(f["item"], _WIDTHS[2] - 2),
                            lines_of(label_of(f["check"]), _WIDTHS[3] - 2)) + 3)
        ws.merged_cells.add(f"H{r}:J{r}")
    more = n - len(top)
    if more > 0:
        add([t(f"{more} more on the Findings sheet, worst first.", font=style.NOTE_FONT)])


def lines_of(text, width: int) -> int:
    """About how many lines a text wraps to in a column ``width`` characters wide (a
    spreadsheet fits a few more characters of text than of digits)."""
    return max(1, -(-len(str(text or "")) // max(1, int(width * 1.15))))

