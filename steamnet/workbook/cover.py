"""The cover sheet: what was run, on what, when; the cautions; the cases and their
status; the legend of verdicts; the units; what each sheet holds."""

from __future__ import annotations

from datetime import datetime

from openpyxl.styles import Font
from openpyxl.worksheet.hyperlink import Hyperlink

from .. import _version
from . import style
from .run import LARGE_RUN, Run
from .sheet import print_setup, text_cell

__all__ = ["CAUTIONS", "UNITS", "write_cover", "run_facts"]

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
    "The numbers are steady-state balances of the model file: compare them with plant "
    "measurements before acting on them.",
]

#: Units used throughout the workbook.
UNITS = [
    ("Mass flow (steam, water)", "t/h"),
    ("Pressure", "bar(g) gauge, at the site's atmospheric pressure; bar(a) absolute"),
    ("Temperature", "°C"),
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


def write_cover(wb, run: Run, contents: list[tuple[str, str]], now: datetime):
    """Write the cover as the first sheet; ``contents`` lists (sheet, what it holds)."""
    ws = wb.create_sheet("Cover")
    for letter, w in zip("ABCDEFG", (42, 70, 15, 11, 11, 13, 60)):
        ws.column_dimensions[letter].width = w
    t = lambda v, **kw: text_cell(ws, v, **kw)   # noqa: E731
    row = [0]

    def add(cells, height=None):
        row[0] += 1
        if height:
            ws.row_dimensions[row[0]].height = height
        ws.append(cells)

    def lines(text, width=70):
        return max(1, -(-len(text) // width))

    add([t(f"{run.model.site.name}: steam balance", font=style.TITLE_FONT)], 22)
    add([t("Results of steamnet, a plant steam and spray-water balance with let-down "
           "station checks.", font=style.NOTE_FONT)])
    add([])
    for k, v in run_facts(run, now):
        add([t(k, font=_BOLD), t(v)])
    add([])
    add([t("Cautions", font=_SECTION)])
    for text in CAUTIONS:
        add([t("Caution", font=_CAUTION, alignment=style.WRAP_TOP),
             t(text, alignment=style.WRAP_TOP)], 15 * lines(text) + 2)
    add([])
    add([t("Cases", font=_SECTION)])
    add([t(h, font=style.HEADING_FONT, fill=style.HEADING_FILL) for h in
         ("Case", "Description", "Status", "Failures", "Warnings", "Not assessed",
          "Message")])
    descriptions = {c.name: c.description for c in run.model.cases}
    listed = run.cases if not run.large else [c for c in run.cases
                                              if style.is_bad_status(c.status)][:500]
    for c in listed:
        n = run.finding_counts.get(c.case, {})
        message = c.message if c.message != "solved" else ""
        top = style.WRAP_TOP
        add([t(c.case, fill=style.fill_of(c.status) if style.is_bad_status(c.status)
               else None, alignment=top),
             t(descriptions.get(c.case, ""), alignment=top),
             t(style.display(c.status), fill=style.fill_of(c.status),
               font=style.font_of(c.status), alignment=top),
             n.get("fail", 0), n.get("warn", 0), n.get("not_assessed", 0),
             t(message, alignment=top)],
            15 * max(lines(message, 60), lines(descriptions.get(c.case, ""))) + 2)
    if run.large:
        add([t(f"All {len(run.cases)} cases are on the Cases sheet; listed here are the "
               f"{len(listed)} that did not balance.", font=style.NOTE_FONT)])
    add([])
    add([t("Verdicts", font=_SECTION)])
    for word, meaning in style.LEGEND:
        add([t(style.display(word), fill=style.fill_of(word), font=style.font_of(word),
               alignment=style.WRAP_TOP),
             t(meaning, alignment=style.WRAP_TOP)], 15 * lines(meaning) + 2)
    add([])
    add([t("Units", font=_SECTION)])
    for q, u in UNITS:
        add([t(q), t(u.replace("{cur}", run.currency))])
    add([])
    add([t("Sheets", font=_SECTION)])
    for name, what in contents:
        c = t(name, font=Font(color="1F4E79", underline="single"))
        c.hyperlink = Hyperlink(ref="", location=f"'{name}'!A1", display=name)
        add([c, t(what)])
    print_setup(ws, rows=row[0], key_cols=1)       # column A names each row
    return ws
