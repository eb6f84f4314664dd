"""How every sheet prints: a page setup decided from the sheet's shape.

Nothing here knows a sheet by name. A sheet's shape is what it holds: its column widths,
its rows and their heights, its drawings (pictures, charts) and where they sit, the key
columns that name a row (the frozen columns: case, item) and the heading rows (the print
titles). From it :func:`page_setup` chooses

- a print scale that keeps the smallest text of the sheet at :data:`MIN_TEXT_PT` or more
  (never a fit-to-page that shrinks a wide sheet to unreadable text);
- the orientation that takes the fewest pages (a wide sheet lands on its side, a long
  narrow one upright), then the larger scale;
- printed column groups when the sheet is wider than a page: manual column breaks
  between groups, never inside a drawing, the key columns repeated at the left of every
  group and the heading rows at the top of every page;
- drawings larger than a page shrunk (in proportion) so that each prints whole on one.

Pages are laid out for the area that A4 and US Letter have in common, so the workbook
prints at 100 % on either; A4 is the paper declared. :func:`finish` gives every sheet of
the workbook (including one written without a page setup) the same header (plant and
sheet) and footer (model file hash, program version, page N of M).

The widths are reckoned for the widest common rendering: a spreadsheet program sizes a
column by the digit width of the workbook's default font, Calibri 11 pt, about 5.3 pt a
character in a program that has it; LibreOffice without it substitutes a wider font
(DejaVu, measured 7.04 pt a character in LibreOffice 7.4's PDF export). A group that fits
the wider one fits both.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from openpyxl.utils import column_index_from_string, get_column_letter
from openpyxl.utils.cell import coordinate_from_string
from openpyxl.worksheet.pagebreak import Break, ColBreak, RowBreak

from .. import _version

__all__ = ["page_setup", "finish", "PageLayout", "MIN_TEXT_PT", "usable_area"]

#: The smallest text a printed page may carry [pt] (what the workbook promises).
MIN_TEXT_PT = 8.0
#: The smallest font of the sheets' cells [pt]: openpyxl's default, Calibri 11; the
#: workbook's own fonts (style.py) are 11 pt or larger.
CELL_FONT_PT = 11.0
#: Text of a chart that sets no size (axes, legend) [pt]: Excel and LibreOffice draw it
#: at 10 pt (from memory).
CHART_FONT_PT = 10.0
#: Text of the page header and footer [pt] (not scaled with the sheet).
HEADER_FONT_PT = 9.0
FOOTER_FONT_PT = 8.0
#: Width of one character of column width, in the widest common rendering [pt] (see the
#: module's docstring).
PT_PER_CHAR = 7.1
#: Height of a row without a height of its own [pt] (openpyxl's default row height).
ROW_PT = 15.0
#: Paper sizes [pt]: ISO 216 A4 (210 x 297 mm) and ANSI US Letter (8.5 x 11 in).
PAPERS = {"A4": (595.28, 841.89), "Letter": (612.0, 792.0)}
#: Paper declared in the file (OOXML paperSize 9 = A4).
PAPER_CODE = 9
#: Margins [in]: sides, top and bottom (the header and footer sit inside them).
MARGIN_SIDE, MARGIN_TOP, MARGIN_HEADER = 0.5, 0.75, 0.3
#: Share of a page's room a drawing may fill: rows of large text (a title) are taller in
#: a program that substitutes a wider font than the height the file gives them.
DRAWING_FILL = 0.94
#: Keys wider than this share of a page are not repeated (they would crowd out the rest).
KEY_SHARE = 0.45


def usable_area(orientation: str) -> tuple[float, float]:
    """Width and height inside the margins [pt] common to A4 and Letter."""
    w = min(min(p) for p in PAPERS.values())
    h = min(max(p) for p in PAPERS.values())
    if orientation == "landscape":
        w, h = h, w
    return w - 2 * 72 * MARGIN_SIDE, h - 2 * 72 * MARGIN_TOP


@dataclass
class _Drawing:
    obj: object             # openpyxl Image (px) or chart (cm)
    col: int                # first column (0-based)
    row: int                # first row (1-based)
    width: float            # [pt]
    height: float           # [pt]

    def copy(self) -> "_Drawing":
        return _Drawing(self.obj, self.col, self.row, self.width, self.height)

    def resize_object(self, factor: float) -> None:
        """Shrink the drawing itself (an Image's size is in pixels, a chart's in cm)."""
        o = self.obj
        if hasattr(o, "_data"):
            o.width, o.height = int(o.width * factor), int(o.height * factor)
        else:
            o.width, o.height = o.width * factor, o.height * factor


@dataclass
class PageLayout:
    """What :func:`page_setup` chose for a sheet."""

    orientation: str
    scale: int                                  # [%]
    groups: list[tuple[int, int]]               # printed column groups (0-based, end excl.)
    key_cols: int                               # columns repeated on every group
    row_pages: int                              # pages down each group (estimate)
    smallest_text_pt: float                     # smallest printed text of the cells/charts

    @property
    def pages(self) -> int:
        return len(self.groups) * self.row_pages


def _anchor(anchor) -> tuple[int, int]:
    if isinstance(anchor, str):
        letters, row = coordinate_from_string(anchor)
        return column_index_from_string(letters) - 1, row
    frm = anchor._from                          # a OneCell/TwoCell anchor object
    return frm.col, frm.row + 1


def _drawings(ws) -> list[_Drawing]:
    out = []
    for img in getattr(ws, "_images", []):
        c, r = _anchor(img.anchor)
        out.append(_Drawing(img, c, r, img.width * 0.75, img.height * 0.75))
    for ch in getattr(ws, "_charts", []):
        c, r = _anchor(ch.anchor)
        out.append(_Drawing(ch, c, r, ch.width / 2.54 * 72, ch.height / 2.54 * 72))
    return out


def _widths(ws, ncols: int) -> list[float]:
    out = []
    for i in range(1, ncols + 1):
        d = ws.column_dimensions.get(get_column_letter(i))
        w = d.width if d is not None and d.width else 8.43      # Excel's default width
        out.append(w * PT_PER_CHAR)
    return out


def _row_heights(ws, rows: int) -> list[float]:
    out = []
    for r in range(1, rows + 1):
        d = ws.row_dimensions.get(r)
        out.append(d.height if d is not None and d.height else ROW_PT)
    return out


def _groups(widths: list[float], room: float, keys: float, nkeys: int,
            no_break: set[int]) -> list[tuple[int, int]]:
    """Column groups of at most ``room`` points each (the later ones also carry the key
    columns); a break never falls before a column of ``no_break``."""
    out, start, n = [], 0, len(widths)
    while start < n:
        avail = room - (keys if out and nkeys else 0)
        end, used = start, 0.0
        best = None
        while end < n and used + widths[end] <= avail + 1e-6:
            used += widths[end]
            end += 1
            if end == n or end not in no_break:
                best = end
        if best is None or best <= start:       # one column or drawing wider than a page
            best = start + 1
            while best < n and best in no_break:
                best += 1
        out.append((start, best))
        start = best
    return out


def _plan(widths, ncols, heights, head_rows, nkeys, drawings, orientation, smallest_pt,
          keep=()):
    """The layout with the fewest pages, then the largest scale; ``widths`` go past the
    ``ncols`` columns of cells as far as a drawing could reach; a column group of
    ``keep`` ((first, count), 0-based) that fits a page is never broken."""
    page_w, page_h = usable_area(orientation)
    reach = ncols
    for d in drawings:
        x = 0.0
        for i in range(d.col, len(widths)):
            reach = max(reach, i + 1)
            x += widths[i]
            if x >= d.width - 1e-6:
                break
    widths = widths[:reach]
    s_min = math.ceil(100 * MIN_TEXT_PT / smallest_pt)
    keys = sum(widths[:nkeys])
    no_break: set[int] = set()
    starts = [0.0]
    for w in widths:
        starts.append(starts[-1] + w)
    for d in drawings:                          # columns a drawing covers
        x1 = starts[min(d.col, len(widths))] + d.width
        last = next((i for i in range(d.col, len(widths)) if starts[i + 1] >= x1 - 1e-6),
                    len(widths) - 1)
        no_break.update(range(d.col + 1, last + 1))
    for first, count in keep:                   # grouped headings: a group whole
        if sum(widths[first:first + count]) + keys <= page_w:
            no_break.update(range(first + 1, min(first + count, len(widths))))

    head = sum(heights[r - 1] for r in range(head_rows[0], head_rows[1] + 1)
               if r <= len(heights)) if head_rows else 0.0
    bottom = max([sum(heights)] + [sum(heights[:d.row - 1]) + d.height for d in drawings])
    best = None
    for s in range(100, s_min - 1, -1):        # the fewest pages, then the largest scale
        k = nkeys if keys <= KEY_SHARE * page_w * 100 / s else 0
        groups = _groups(widths, page_w * 100 / s, keys if k else 0.0, k, no_break)
        room_h = page_h * 100 / s
        row_pages = 1 if bottom <= room_h + 1e-6 else 1 + math.ceil(
            (bottom - room_h) / max(room_h - head, ROW_PT))
        lay = PageLayout(orientation, s, groups, k, row_pages, smallest_pt * s / 100)
        if best is None or lay.pages < best.pages:
            best = lay
    return best


def _fit_drawings(drawings, orientation, scale, widths, heights) -> bool:
    """Shrink each drawing (its planned size) to fit whole on a page at ``scale``: within
    the whole columns from its own that fit a page, below the rows above it when it
    starts on the first page; True if one was shrunk."""
    page_w, page_h = usable_area(orientation)
    room_w, room_h = page_w * 100 / scale, page_h * 100 / scale * DRAWING_FILL
    shrunk = False
    for d in drawings:
        across = 0.0
        for w in widths[d.col:]:
            if across + w > room_w:
                break
            across += w
        above = sum(heights[:d.row - 1])
        top = above if above < room_h / 2 else 0.0
        f = min(1.0, max(across, widths[d.col]) / d.width,   # a row to spare below
                (room_h - top - ROW_PT) / d.height)
        if f < 1.0 - 1e-9:
            d.width, d.height = d.width * f, d.height * f
            shrunk = True
    return shrunk


def page_setup(ws, *, rows: int | None = None, key_cols: int | None = None,
               head_rows: tuple[int, int] | None = None, ncols: int | None = None,
               keep: tuple = ()) -> PageLayout:
    """Decide and set how ``ws`` prints, from its shape (see the module's docstring).

    ``rows`` is how many rows the sheet holds (a streamed sheet cannot tell; unknown,
    the height counts only the rows with a height of their own and the drawings);
    ``key_cols`` the columns that name a row (default: the frozen columns);
    ``head_rows`` the first and last heading row repeated on every page (default: the
    print title rows already set); ``ncols`` the columns (default: those with a width);
    ``keep`` column groups ((first, count), 0-based) printed on one page where they fit.
    Call it once the sheet's widths, rows and drawings are in place, before the
    workbook is saved.
    """
    if key_cols is None:
        key_cols = _frozen_cols(ws)
    if head_rows is None and ws.print_title_rows:
        a, _, b = ws.print_title_rows.partition(":")
        head_rows = (int(a), int(b or a))
    if ncols is None:
        ncols = max([column_index_from_string(k) for k in ws.column_dimensions] + [1])
    drawings = _drawings(ws)
    for d in drawings:
        ncols = max(ncols, d.col + 1)
    known_rows = rows is not None
    if rows is None:
        rows = max([r for r in ws.row_dimensions] + [d.row for d in drawings] + [1])
    widths, heights = _widths(ws, ncols), _row_heights(ws, rows)
    for d in drawings:                          # the columns a drawing reaches
        while sum(widths[d.col:]) < d.width:
            widths.append(_widths(ws, len(widths) + 1)[-1])
    smallest = min([CELL_FONT_PT] + [CHART_FONT_PT for _ in ws._charts])
    best = None
    for orientation in ("portrait", "landscape"):
        trial = [d.copy() for d in drawings]

        def plan():
            return _plan(widths, ncols, heights, head_rows, key_cols, trial, orientation,
                         smallest, keep)
        lay = plan()
        for _ in range(3):                      # drawings shrunk to a page, then replanned
            if not _fit_drawings(trial, orientation, lay.scale, widths, heights):
                break
            lay = plan()
        drawn = sum(d.width * d.height for d in trial) * (lay.scale / 100) ** 2
        rank = (lay.pages, -drawn, -lay.scale, orientation != "portrait")
        if best is None or rank < best[0]:
            best = (rank, lay, trial)
    _, lay, trial = best
    for d, t in zip(drawings, trial):
        if t.width < d.width - 1e-9:
            d.resize_object(t.width / d.width)
    _apply(ws, lay, head_rows)
    if trial:
        _row_breaks(ws, lay, heights, head_rows, trial)
    last_col = get_column_letter(lay.groups[-1][1])
    if known_rows:                  # nothing beyond: a long text does not spill a page
        bottom = max([rows] + [_row_of(heights, d) for d in trial])
        ws.print_area = f"A1:{last_col}{bottom}"
    ws._steamnet_layout = lay
    return lay


def _row_breaks(ws, lay: PageLayout, heights: list[float], head_rows,
                drawings: list[_Drawing]) -> None:
    """Manual row breaks so that no drawing is cut across two pages: a page ends before
    the row of a drawing that would not fit on it whole."""
    _, page_h = usable_area(lay.orientation)
    room = page_h * 100 / lay.scale * DRAWING_FILL
    head = sum(heights[r - 1] for r in range(head_rows[0], head_rows[1] + 1)) \
        if head_rows else 0.0
    spans = {}                                  # first row -> last row of drawings there
    for d in drawings:
        spans[d.row] = max(spans.get(d.row, 0), _row_of(heights, d))
    last = max([len(heights)] + list(spans.values()))
    hs = heights + [ROW_PT] * (last - len(heights))
    ws.row_breaks = RowBreak()
    used, r = 0.0, 1
    while r <= last:
        end, k = spans.get(r, r), r
        while k < end:                          # drawings that start inside this one
            k += 1
            end = max(end, spans.get(k, k))
        block = sum(hs[r - 1:end])
        if used > 0 and used + block > room:
            ws.row_breaks.append(Break(id=r - 1, max=16383, man=True))   # below row r-1
            used = head if head_rows and r > head_rows[1] else 0.0
        used += block
        r = end + 1
    lay.row_pages = len(ws.row_breaks.brk) + 1


def _row_of(heights: list[float], d: _Drawing) -> int:
    """The last row a drawing reaches (rows past the known ones at the default height)."""
    y, r = sum(heights[:d.row - 1]) + d.height, 0
    for h in heights:
        if y <= 0:
            return r
        y -= h
        r += 1
    return r + max(0, math.ceil(y / ROW_PT))


def _frozen_cols(ws) -> int:
    top_left = ws.freeze_panes
    if not top_left:
        return 0
    letters, _ = coordinate_from_string(top_left)
    return column_index_from_string(letters) - 1


def _apply(ws, lay: PageLayout, head_rows) -> None:
    ws.sheet_properties.pageSetUpPr.fitToPage = False
    ps = ws.page_setup
    ps.orientation = lay.orientation
    ps.paperSize = PAPER_CODE
    ps.scale = lay.scale
    ps.fitToWidth = ps.fitToHeight = None
    m = ws.page_margins
    m.left = m.right = MARGIN_SIDE
    m.top = m.bottom = MARGIN_TOP
    m.header = m.footer = MARGIN_HEADER
    if head_rows:
        ws.print_title_rows = f"{head_rows[0]}:{head_rows[1]}"
    if len(lay.groups) > 1 and lay.key_cols:
        ws.print_title_cols = f"A:{get_column_letter(lay.key_cols)}"
    ws.col_breaks = ColBreak()
    for _, end in lay.groups[:-1]:
        ws.col_breaks.append(Break(id=end, max=1048575, man=True))   # after column `end`


def _header_text(text: str) -> str:
    return str(text).replace("&", "&&")


def stamp(ws, model) -> None:
    """The page header (plant, sheet) and footer (model file hash, program, page N of
    M) of ``ws``. Header and footer scale with the sheet (LibreOffice scales them
    whatever the file says), so their sizes are set to print at the sizes above."""
    lay = getattr(ws, "_steamnet_layout", None)
    grow = 100 / lay.scale if lay is not None else 1.0
    hf = ws.HeaderFooter
    hf.scaleWithDoc = True
    hf.alignWithMargins = True
    ws.oddHeader.left.text = _header_text(model.site.name)
    ws.oddHeader.right.text = "&A"
    for part in (ws.oddHeader.left, ws.oddHeader.right):
        part.size = math.ceil(HEADER_FONT_PT * grow)
    ws.oddFooter.left.text = f"Model file SHA-256 {model.sha256}"
    ws.oddFooter.right.text = f"steamnet {_version.__version__}, page &P of &N"
    for part in (ws.oddFooter.left, ws.oddFooter.right):
        part.size = math.ceil(FOOTER_FONT_PT * grow)


def finish(wb, model) -> None:
    """Before the workbook is saved: a page setup for every sheet that has none yet
    (decided from its shape), and the header and footer on every sheet."""
    for ws in wb.worksheets:
        if getattr(ws, "_steamnet_layout", None) is None:
            page_setup(ws)
        stamp(ws, model)
