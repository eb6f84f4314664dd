"""A table, and how one is written into a streamed (write-only) worksheet.

A :class:`Table` is columns plus a function that yields its rows, so that a table of an
annual hourly run (hundreds of thousands of rows) is never held in memory as cells: the
rows go straight to the file. The same tables feed the CSV export.

Layout of a table sheet: row 1 the title, row 2 a note on how to read it, row 3 the
headings (frozen, with the Excel table's filters), data from row 4.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass, field
from typing import Callable, Iterable, Sequence

import numpy as np
from openpyxl.cell import Cell, WriteOnlyCell
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.utils import get_column_letter
from openpyxl.worksheet.filters import AutoFilter
from openpyxl.worksheet.table import Table as ExcelTable
from openpyxl.worksheet.table import TableColumn, TableStyleInfo

from . import style
from .columns import Column, clean_number, format_for_unit
from .printing import PageLayout, page_setup

__all__ = ["Table", "CellMaker", "write_table", "text_cell", "print_setup", "HEAD_ROW",
           "FORMULA_START"]

#: Row of the headings on a table sheet (1-based).
HEAD_ROW = 3
#: Text that a spreadsheet would take for a formula if typed in.
FORMULA_START = ("=", "+", "-", "@")
#: The format of a number whose unit gives no decimals: up to three decimals, never the
#: spreadsheet's General (which shows every digit the solver made).
GENERAL_NUMBER = "#,##0.0##"
#: Grouped headings of at most this many columns print on one page.
KEEP_GROUP = 4
#: Rows sampled to fit column widths (the rest streams without being looked at twice).
WIDTH_SAMPLE = 400


@dataclass
class Table:
    """A titled table: columns and a function yielding rows (values in column order)."""

    name: str                                  # sheet name (at most 31 characters)
    slug: str                                  # CSV file stem and Excel table name
    title: str
    note: str
    columns: list[Column]
    rows: Callable[[], Iterable[Sequence]]
    freeze_cols: int = 1
    extra: dict = field(default_factory=dict)   # builder data for charts
    #: Grouped column headings above the headings: (first column index, count, label).
    groups: list[tuple[int, int, str]] = field(default_factory=list)

    @property
    def head_row(self) -> int:
        """Row of the column headings (1-based): one lower when groups head them."""
        return HEAD_ROW + (1 if self.groups else 0)

    def __post_init__(self):
        seen: dict[str, int] = {}
        cols = []
        for c in self.columns:                 # headings must be unique in an Excel table
            n = seen.get(c.heading, 0)
            seen[c.heading] = n + 1
            cols.append(c if n == 0 else Column(c.key, f"{c.heading} ({n + 1})", c.kind,
                                                c.fmt, c.unit_from))
        self.columns = cols


#: The most characters a cell holds (Excel's limit).
CELL_TEXT_LIMIT = 32767


def _safe_text(v) -> str:
    """Text a cell can hold: without the control characters XML forbids, and cut to
    Excel's limit."""
    return ILLEGAL_CHARACTERS_RE.sub("", str(v))[:CELL_TEXT_LIMIT]


def text_cell(ws, value, *, font=None, fill=None, alignment=None) -> Cell:
    """A cell that holds ``value`` as text, never as a formula (even '=...')."""
    c = WriteOnlyCell(ws)
    _set_text(c, value)
    if str(value).startswith(FORMULA_START):
        c.quotePrefix = True
    if font is not None:
        c.font = font
    if fill is not None:
        c.fill = fill
    if alignment is not None:
        c.alignment = alignment
    return c


def _set_text(c, value) -> None:
    c.value = _safe_text(value)
    c.data_type = "s"                 # openpyxl would store '=...' as a formula


class CellMaker:
    """Turns values of one column into cells, reusing one styled cell per look.

    The write-only worksheet writes each appended row at once, so a styled cell can be
    reused for the next row; this keeps a million-cell table fast and small.
    """

    def __init__(self, ws, column: Column, status_of: dict[str, str],
                 unit_index: int | None = None):
        self.ws, self.col, self.status_of, self.unit_index = ws, column, status_of, unit_index
        self._looks: dict[tuple, Cell] = {}
        self._num: Cell | None = None

    def _look(self, key: tuple, *, fmt=None, word=None, quote=False) -> Cell:
        c = self._looks.get(key)
        if c is None:
            c = WriteOnlyCell(self.ws)
            if fmt:
                c.number_format = fmt
            if word is not None:
                fill, font = style.fill_of(word), style.font_of(word)
                if fill is not None:
                    c.fill = fill
                if font is not None:
                    c.font = font
            if quote:
                c.quotePrefix = True
            self._looks[key] = c
        return c

    def text(self, v, word=None):
        s = _safe_text(v)
        quote = s.startswith(FORMULA_START)
        c = self._look(("t", word, quote), word=word, quote=quote)
        _set_text(c, s)
        return c

    def __call__(self, v, row: Sequence | None = None):
        if type(v) is float and self._num is not None:        # the common case, fast
            if v != v or v in (math.inf, -math.inf):
                return None
            self._num.value = v
            return self._num
        if v is None:
            return None
        kind = self.col.kind
        if isinstance(v, str):
            if not v:
                return None
            if kind in ("verdict", "status") and style.rank(v) is not None:
                return self.text(style.display(v), word=v)
            if kind == "case":
                st = self.status_of.get(v)
                return self.text(v, word=st if st and style.is_bad_status(st) else None)
            return self.text(v)
        if isinstance(v, (bool, np.bool_)):
            return bool(v)
        f = clean_number(v)
        if f is None:
            return None if isinstance(v, (float, np.floating)) else self.text(v)
        if kind == "int" or (isinstance(v, (int, np.integer)) and kind not in ("num",)):
            c = self._look(("i",), fmt="0" if f.is_integer() else "0.00")
            c.value = int(f) if f.is_integer() else f
            return c
        fmt = self.col.fmt
        if self.col.unit_from is not None and row is not None and self.unit_index is not None:
            fmt = format_for_unit(row[self.unit_index]) or fmt
        fmt = fmt or GENERAL_NUMBER
        c = self._look(("n", fmt), fmt=fmt)
        if self.col.unit_from is None and kind == "num":
            self._num = c                  # one format for the whole column
        c.value = f
        return c


# ---------------------------------------------------------------------- widths
_DECIMALS = re.compile(r"\.(0+)")


def shown_length(v, fmt: str | None) -> int:
    """About how many characters a value takes on screen with its number format."""
    if v is None:
        return 0
    if isinstance(v, (bool, np.bool_)):
        return 5
    f = clean_number(v) if not isinstance(v, str) else None
    if f is None:
        return len(str(v))
    if fmt and "E" in fmt:
        return 8
    m = _DECIMALS.search(fmt or "")
    nd = len(m.group(1)) if m else (0 if fmt and fmt.startswith(("0", "#")) else 6)
    text = f"{f:,.{nd}f}" if fmt and "," in fmt else f"{f:.{nd}f}"
    return len(text)


def fit_widths(columns: Sequence[Column], sample: Iterable[Sequence],
               limit: int = 60) -> list[float]:
    """Column widths that fit the headings (wrapped on up to three lines) and values."""
    longest = [0] * len(columns)
    for row in sample:
        for i, (c, v) in enumerate(zip(columns, row)):
            if c.kind in ("verdict", "status") and v is not None:
                v = style.display(v)
            longest[i] = max(longest[i], shown_length(v, c.fmt))
    out = []
    for c, n in zip(columns, longest):
        words = max((len(w) for w in c.heading.split()), default=0)
        head = max(words, math.ceil(len(c.heading) / 3))
        out.append(float(min(limit, max(6, n, head) + 2)))
    return out


def heading_height(columns: Sequence[Column], widths: Sequence[float]) -> float:
    lines = 1
    for c, w in zip(columns, widths):
        lines = max(lines, math.ceil(len(c.heading) / max(1.0, w - 2)))
    return 15.0 * min(lines, 4) + 3


def _sample(rows: Iterable[Sequence], n: int) -> list[Sequence]:
    out = []
    for r in rows:
        out.append(r)
        if len(out) >= n:
            break
    return out


# ---------------------------------------------------------------------- writing
def write_table(wb, table: Table, status_of: dict[str, str], *, table_name: str):
    """Write ``table`` as a new sheet of the write-only workbook ``wb``; returns the
    sheet and the number of data rows written."""
    ws = wb.create_sheet(table.name)
    cols = table.columns
    widths = fit_widths(cols, _sample(table.rows(), WIDTH_SAMPLE))
    widths[0] = max(widths[0], 12.0)
    for i, w in enumerate(widths, 1):
        ws.column_dimensions[get_column_letter(i)].width = w
    head = table.head_row
    ws.row_dimensions[head].height = heading_height(cols, widths)
    ws.freeze_panes = f"{get_column_letter(table.freeze_cols + 1)}{head + 1}"
    ws.append([text_cell(ws, table.title, font=style.TITLE_FONT)])
    ws.append([text_cell(ws, table.note, font=style.NOTE_FONT)] if table.note else [])
    if table.groups:
        _group_row(ws, table, widths)
    ws.append([_heading_cell(ws, table, c, status_of) for c in cols])
    keys = [c.key for c in cols]
    makers = [CellMaker(ws, c, status_of,
                        keys.index(c.unit_from) if c.unit_from in keys else None)
              for c in cols]
    n = 0
    for row in table.rows():
        ws.append([m(v, row) for m, v in zip(makers, row)])
        n += 1
    heads = (HEAD_ROW, head)
    # a check's value, limit and verdict print together; a long group may break
    keep = tuple((f, c) for f, c, _ in table.groups if c <= KEEP_GROUP)
    if n == 0:
        ws.append([text_cell(ws, "(no rows)", font=style.NOTE_FONT)])
        print_setup(ws, rows=head + 1, key_cols=table.freeze_cols,
                    head_rows=heads, ncols=len(cols), keep=keep)
        return ws, 0
    ref = f"A{head}:{get_column_letter(len(cols))}{head + n}"
    add_excel_table(ws, table_name, ref, [c.heading for c in cols])
    print_setup(ws, rows=head + n, key_cols=table.freeze_cols,
                head_rows=heads, ncols=len(cols), keep=keep)
    return ws, n


def _group_row(ws, table: Table, widths: Sequence[float]) -> None:
    """The grouped headings: each label over its columns (merged), filled like the
    headings; the key columns' cells stay blank."""
    cells: list = [None] * len(table.columns)
    for first, count, label in table.groups:
        cells[first] = text_cell(ws, label, font=style.HEADING_FONT,
                                 fill=style.GROUP_FILL, alignment=style.CENTRE_WRAP)
        for k in range(first + 1, first + count):
            cells[k] = text_cell(ws, "", fill=style.GROUP_FILL)
    longest = max((len(label) / max(1.0, sum(widths[f:f + c]) - 2)
                   for f, c, label in table.groups), default=1)
    ws.row_dimensions[HEAD_ROW].height = 15.0 * min(3, math.ceil(longest)) + 3
    ws.append(cells)
    for first, count, _ in table.groups:
        if count > 1:
            ws.merged_cells.add(f"{get_column_letter(first + 1)}{HEAD_ROW}:"
                                f"{get_column_letter(first + count)}{HEAD_ROW}")


def print_setup(ws, **shape) -> PageLayout:
    """How a sheet prints, decided from its shape once it is written
    (:func:`steamnet.workbook.printing.page_setup`: text at 8 pt or more, printed column
    groups with the key columns repeated, headings on every page)."""
    return page_setup(ws, **shape)


def _heading_cell(ws, table: Table, c: Column, status_of: dict[str, str]):
    """A heading; the column of a case that did not balance is marked like its status."""
    st = status_of.get(c.key) if table.extra.get("case_columns") else None
    if st is not None and style.is_bad_status(st):
        return text_cell(ws, c.heading, font=style.font_of(st), fill=style.fill_of(st),
                         alignment=style.WRAP_TOP)
    return text_cell(ws, c.heading, font=style.HEADING_FONT, fill=style.HEADING_FILL,
                     alignment=style.WRAP_TOP)


def add_excel_table(ws, name: str, ref: str, headings: Sequence[str]) -> None:
    """An Excel table (filters, banded rows) over ``ref`` with the given headings."""
    t = ExcelTable(displayName=name, ref=ref)
    t.tableColumns = [TableColumn(id=i, name=_safe_text(h)) for i, h in enumerate(headings, 1)]
    t.autoFilter = AutoFilter(ref=ref)
    t.tableStyleInfo = TableStyleInfo(name="TableStyleLight1", showRowStripes=True,
                                      showColumnStripes=False, showFirstColumn=False,
                                      showLastColumn=False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")      # "add table columns manually": we do
        ws.add_table(t)
