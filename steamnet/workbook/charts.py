"""The station charts sheet: native Excel charts over data blocks written below them.

- spray water per station and case (clustered bars; left out for a long run, where a
  bar per case cannot be read);
- each station's operating envelope: spray against steam, one point per case in which
  the station passes steam, with its limits from the model file drawn as lines;
- the control gain of the outlet temperature against steam flow, when the station checks
  give gain values (rows of a check whose name holds 'gain', other than a spread).
"""

from __future__ import annotations

import re

from openpyxl.chart import BarChart, Reference, ScatterChart, Series
from openpyxl.chart.shapes import GraphicalProperties
from openpyxl.styles import Font
from openpyxl.utils import get_column_letter

from . import style
from .columns import Column, clean_number, format_for_unit, label_of
from .run import Run
from .sheet import CellMaker, print_setup, text_cell
from .stations import station_limits

__all__ = ["write_charts", "gain_points", "GAIN_CHECK"]

#: A check whose rows give the control gain (value = gain at the case's steam flow).
GAIN_CHECK = re.compile(r"gain", re.I)
_SPREAD = re.compile(r"spread|ratio_of|range", re.I)

_CHART_ROWS = 18          # rows one chart takes, with a gap
_CHART_COLS = 6           # columns one chart takes, with a gap
_COL_WIDTH = 13.0
#: Series colours: points, then one per station for the gain chart.
_POINTS = ["2F5597", "548235", "BF8F00", "7030A0", "C55A11", "1F7F7F", "7F6000",
           "404040"]
#: Limit line colours by what the limit is.
_LIMIT = {"maximum spray": "C00000", "minimum spray": "ED7D31",
          "rated minimum steam": "7F7F7F", "rated maximum steam": "7F7F7F",
          "station maximum flow": "404040"}
_BLOCK_TITLE = Font(bold=True, size=11, color="1F2D3A")


class _Block:
    """A titled block of columns (headings, then rows) in the data area."""

    def __init__(self, title: str, headings: list[str], rows: list[list],
                 fmts: list[str | None]):
        self.title, self.headings, self.rows, self.fmts = title, headings, rows, fmts
        self.col = 0                            # first column (1-based), set on layout

    @property
    def width(self) -> int:
        return len(self.headings)


#: Gain tables of the station checks (StationReport.gains): chart name -> (column, unit).
GAIN_TABLE = {"control_gain_per_spray": ("gain_k_per_t_h", "K/(t/h)"),
              "control_gain_per_ratio": ("gain_per_ratio_k", "K")}


def gain_points(run: Run) -> dict[str, list[tuple[str, float, float, str]]]:
    """(check) -> [(station, steam t/h, gain, case)], from the station checks' gain
    table when given, else from gain rows of the checks."""
    g = getattr(run, "gains", None)
    if g is not None and len(g):
        return {name: [(str(r["station"]), float(r["steam_t_h"]), float(r[col]),
                        str(r["case"])) for r in g.to_dict("records")]
                for name, (col, _) in GAIN_TABLE.items()}
    df = run.checks
    out: dict[str, list] = {}
    if df is None:
        return out
    names = [n for n in run.check_names if GAIN_CHECK.search(n) and not _SPREAD.search(n)]
    if not names:
        return out
    flows = {(c, s): clean_number(r.get("flow_t_h"))
             for s, pts in run.letdown_points.items() for c, r in pts}
    steam_col = next((k for k in ("steam_t_h", "flow_t_h") if k in df.columns), None)
    sel = df[df["check"].astype(str).isin(names)]
    for r in sel.to_dict("records"):
        g = clean_number(r.get("value"))
        x = clean_number(r.get(steam_col)) if steam_col else None
        if x is None:
            x = flows.get((str(r["case"]), str(r["station"])))
        if g is None or x is None:
            continue
        out.setdefault(str(r["check"]), []).append((str(r["station"]), x, g,
                                                    str(r["case"])))
    return out


def _blocks(run: Run):
    """Data blocks and the charts drawn from them (as closures over the blocks)."""
    blocks: list[_Block] = []
    charts: list = []
    pts = run.letdown_points
    stations = [s for s in run.stations if s in run.model.table("letdown")]
    if not run.large and stations:
        spray = {(case, s): clean_number(r.get("spray_t_h"))
                 for s in stations for case, r in pts.get(s, [])}
        rows = [[c.case, *(spray.get((c.case, s)) for s in stations)] for c in run.cases]
        b = _Block("Spray water per case", ["Case", *(f"{s} spray [t/h]" for s in stations)],
                   rows, [None] + ["0.00"] * len(stations))
        blocks.append(b)
        charts.append(lambda ws, top, b=b: _bar(ws, b, top, len(rows)))
    for s in stations:
        flowing = [(c, clean_number(r.get("flow_t_h")), clean_number(r.get("spray_t_h")))
                   for c, r in pts.get(s, []) if (clean_number(r.get("flow_t_h")) or 0) > 1e-9]
        b = _Block(f"{s}: operating points", ["Case", f"{s} steam in [t/h]",
                                              f"{s} spray [t/h]"],
                   [list(p) for p in flowing], [None, "0.00", "0.00"])
        lines = _limit_lines(run, s, flowing)
        lb = _Block(f"{s}: limits", [f"{s} limit", "Steam in [t/h]", "Spray [t/h]"],
                    [row for _, rows in lines for row in rows], [None, "0.00", "0.00"])
        blocks += [b, lb]
        charts.append(lambda ws, top, b=b, lb=lb, s=s, lines=lines:
                      _envelope(ws, s, b, lb, lines, top))
    gains = gain_points(run)
    for chk, points in gains.items():
        unit = GAIN_TABLE[chk][1] if chk in GAIN_TABLE else run.check_units.get(chk, "")
        gb = []
        for s in stations:
            mine = sorted((x, g, c) for st, x, g, c in points if st == s)
            if mine:
                gb.append(_Block(f"{s}: {chk}", ["Case", f"{s} steam in [t/h]",
                                                 f"{s} gain [{unit}]" if unit else
                                                 f"{s} gain"],
                                 [[c, x, g] for x, g, c in mine],
                                 [None, "0.00", format_for_unit(unit) or "0.000"]))
        blocks += gb
        if gb:
            charts.append(lambda ws, top, gb=gb, chk=chk, unit=unit:
                          _gain(ws, chk, unit, gb, top))
    return blocks, charts


def _limit_lines(run: Run, s: str, flowing) -> list[tuple[str, list[list]]]:
    """Each known limit as a two-point line: (label, [[label, x, y], [label, x, y]])."""
    lim = station_limits(run, s)
    xs = [x for _, x, _ in flowing] + [v for v in (lim["max_flow"], lim["rated_max_steam"])
                                       if v]
    ys = [y or 0 for _, _, y in flowing] + [v for v in (lim["max_spray"],) if v]
    x_hi = 1.05 * max(xs, default=1.0) or 1.0
    y_hi = 1.15 * max(ys, default=1.0) or 1.0
    out = []

    def h(label, y):
        out.append((label, [[label, 0.0, y], [label, x_hi, y]]))

    def v(label, x):
        out.append((label, [[label, x, 0.0], [label, x, y_hi]]))
    if lim["max_spray"]:
        h(f"maximum spray {lim['max_spray']:.2f} t/h", lim["max_spray"])
    if lim["min_spray"]:
        h(f"minimum spray {lim['min_spray']:.2f} t/h", lim["min_spray"])
    if lim["rated_min_steam"]:
        v(f"rated minimum steam {lim['rated_min_steam']:.1f} t/h", lim["rated_min_steam"])
    if lim["rated_max_steam"]:
        v(f"rated maximum steam {lim['rated_max_steam']:.1f} t/h", lim["rated_max_steam"])
    if lim["max_flow"] and (not lim["rated_max_steam"]
                            or abs(lim["max_flow"] - lim["rated_max_steam"]) > 1e-6):
        v(f"station maximum flow {lim['max_flow']:.1f} t/h", lim["max_flow"])
    return out


# ------------------------------------------------------------------ charts
def _axes(chart, x_title: str, y_title: str) -> None:
    chart.x_axis.title = x_title
    chart.y_axis.title = y_title
    chart.x_axis.delete = False          # openpyxl >= 3.1 hides axes unless told
    chart.y_axis.delete = False
    chart.y_axis.scaling.min = 0
    chart.y_axis.number_format = "0.0"
    chart.width, chart.height = 15.0, 8.5
    chart.legend.position = "b"


def _bar(ws, b: _Block, top: int, n: int):
    ch = BarChart()
    ch.type, ch.grouping = "col", "clustered"
    ch.title = "Spray water per station and case"
    data = Reference(ws, min_col=b.col + 1, max_col=b.col + b.width - 1, min_row=top + 1,
                     max_row=top + 1 + n)
    ch.add_data(data, titles_from_data=True)
    ch.set_categories(Reference(ws, min_col=b.col, min_row=top + 2, max_row=top + 1 + n))
    _axes(ch, "Case", "Spray water [t/h]")
    return ch


def _scatter(title: str, x_title: str, y_title: str) -> ScatterChart:
    ch = ScatterChart()
    ch.title = title
    ch.style = 13
    _axes(ch, x_title, y_title)
    ch.x_axis.scaling.min = 0
    ch.x_axis.number_format = "0"
    return ch


def _points(ws, b: _Block, top: int, title: str, *, line: bool, colour: str) -> Series:
    n = len(b.rows)
    x = Reference(ws, min_col=b.col + 1, min_row=top + 2, max_row=top + 1 + max(n, 1))
    y = Reference(ws, min_col=b.col + 2, min_row=top + 2, max_row=top + 1 + max(n, 1))
    s = Series(y, x, title=title)
    s.marker.symbol = "circle"
    s.marker.size = 7
    s.marker.graphicalProperties = GraphicalProperties(solidFill=colour)
    s.marker.graphicalProperties.line.solidFill = colour
    if line:
        s.graphicalProperties.line.solidFill = colour
    else:
        s.graphicalProperties.line.noFill = True
    return s


def _envelope(ws, station: str, b: _Block, lb: _Block, lines, top: int):
    ch = _scatter(f"{station}: operating envelope",
                  "Steam in [t/h]", "Spray water [t/h]")
    if b.rows:
        ch.series.append(_points(ws, b, top, "cases", line=False, colour=_POINTS[0]))
    for i, (label, _) in enumerate(lines):
        r0 = top + 2 + 2 * i
        x = Reference(ws, min_col=lb.col + 1, min_row=r0, max_row=r0 + 1)
        y = Reference(ws, min_col=lb.col + 2, min_row=r0, max_row=r0 + 1)
        s = Series(y, x, title=label)
        s.marker.symbol = "none"
        s.graphicalProperties.line.solidFill = next(
            (c for k, c in _LIMIT.items() if label.startswith(k)), "404040")
        s.graphicalProperties.line.dashStyle = "dash"
        s.graphicalProperties.line.width = 19050        # 1.5 pt in EMU
        s.smooth = False
        ch.series.append(s)
    return ch


def _gain(ws, chk: str, unit: str, blocks: list[_Block], top: int):
    ch = _scatter(f"{label_of(chk)} against steam flow", "Steam in [t/h]",
                  f"Gain [{unit}]" if unit else "Gain")
    for i, b in enumerate(blocks):
        s = _points(ws, b, top, b.title.split(":")[0], line=True,
                    colour=_POINTS[i % len(_POINTS)])
        s.smooth = False
        ch.series.append(s)
    return ch


# ------------------------------------------------------------------ the sheet
def write_charts(wb, run: Run):
    """The station charts sheet; returns it (None when the model has no station)."""
    blocks, charts = _blocks(run)
    ws = wb.create_sheet("Station charts")
    col = 1
    for b in blocks:
        b.col = col
        col += b.width + 1
    for i in range(1, max(col, 2 * _CHART_COLS + 1)):
        ws.column_dimensions[get_column_letter(i)].width = _COL_WIDTH
    per_row = 2
    chart_rows = -(-len(charts) // per_row) * _CHART_ROWS
    top = 4 + chart_rows                      # title row of the data blocks
    ws.append([text_cell(ws, "Station charts", font=style.TITLE_FONT)])
    note = ("Charts of the let-down stations; their data are the blocks below the charts. "
            "Envelope: each point is a case in which the station passes steam; dashed "
            "lines are the station's limits from the model file.")
    if run.large:
        note += f" Long run ({len(run.cases)} cases): the spray bar chart is left out."
    if not gain_points(run):
        note += (" No control gain chart: the station checks gave no gain values."
                 if run.checks is not None else " Station checks were not run: no gain "
                 "chart.")
    ws.append([text_cell(ws, note, font=style.NOTE_FONT)])
    for _ in range(3, top):
        ws.append([])
    if not blocks:
        ws.append([text_cell(ws, "(the model has no let-down station)",
                             font=style.NOTE_FONT)])
        print_setup(ws, rows=top)
        return ws
    _write_blocks(ws, run, blocks)
    for i, make in enumerate(charts):
        ch = make(ws, top)
        column = get_column_letter(1 + (i % per_row) * _CHART_COLS)
        ws.add_chart(ch, f"{column}{4 + (i // per_row) * _CHART_ROWS}")
    print_setup(ws, rows=top + 1 + max(len(b.rows) for b in blocks))
    return ws


def _write_blocks(ws, run: Run, blocks: list[_Block]) -> None:
    width = blocks[-1].col + blocks[-1].width
    title = [None] * width
    head = [None] * width
    for b in blocks:
        title[b.col - 1] = text_cell(ws, b.title, font=_BLOCK_TITLE)
        for j, h in enumerate(b.headings):
            head[b.col - 1 + j] = text_cell(ws, h, font=style.HEADING_FONT,
                                            fill=style.HEADING_FILL,
                                            alignment=style.WRAP_TOP)
    ws.append(title)
    ws.append(head)
    makers = {}
    for b in blocks:
        for j, f in enumerate(b.fmts):
            kind = "case" if j == 0 and b.headings[0] == "Case" else (
                "text" if f is None else "num")
            makers[b.col + j] = CellMaker(ws, Column(f"c{b.col + j}", b.headings[j], kind,
                                                     f), run.status_of)
    n = max(len(b.rows) for b in blocks)
    for i in range(n):
        row = [None] * width
        for b in blocks:
            if i < len(b.rows):
                for j, v in enumerate(b.rows[i]):
                    row[b.col - 1 + j] = makers[b.col + j](v)
        ws.append(row)
