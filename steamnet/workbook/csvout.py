"""The workbook's tables as CSV files, one per table, for scripting.

Same tables, columns and headings as the workbook (the case overview one row per case).
UTF-8, comma separated, numbers at full precision, empty for missing. Text that a
spreadsheet would take for a formula (beginning with = + - @) is written with a leading
apostrophe, so that opening a CSV in a spreadsheet cannot run anything. Each file is
written atomically: a failure leaves the previous file as it was.
"""

from __future__ import annotations

import csv
import math
from datetime import datetime
from pathlib import Path

import numpy as np
import pandas as pd

from ..io.atomic import OutputError, write_atomic
from . import style
from .columns import Column
from .cover import run_facts
from .run import Run
from .sheet import FORMULA_START, Table
from .writer import build_tables

__all__ = ["write_csv_folder", "csv_value"]


def csv_value(column: Column, v) -> str:
    """One value as CSV text."""
    if v is None:
        return ""
    if isinstance(v, (bool, np.bool_)):
        return "true" if v else "false"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    if isinstance(v, (float, np.floating)):
        return repr(float(v)) if math.isfinite(v) else ""
    s = str(v)
    if column.kind in ("verdict", "status") and style.rank(s) is not None:
        s = style.display(s)
    return "'" + s if s.startswith(FORMULA_START) else s


def _write_table(path: Path, table: Table) -> None:
    def writer(tmp: Path) -> None:
        with open(tmp, "w", encoding="utf-8", newline="") as fh:
            w = csv.writer(fh)
            w.writerow([c.heading for c in table.columns])
            cols = table.columns
            for row in table.rows():
                w.writerow([csv_value(c, v) for c, v in zip(cols, row)])
    write_atomic(path, writer, suffix=".csv")


def write_csv_folder(folder: str | Path, study, *, checks: pd.DataFrame | None = None,
                     envelopes: pd.DataFrame | None = None,
                     studies: dict[str, pd.DataFrame] | None = None) -> list[Path]:
    """Write every table of the workbook as ``folder/<table>.csv``; returns the files.

    The folder is made if it does not exist (its parent must). Raises
    :class:`~steamnet.io.atomic.OutputError` when a file cannot be written.
    """
    run = Run(study, checks, envelopes, studies or {})
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise OutputError(f"{folder}: is a file, not a folder for the CSV files")
    try:
        folder.mkdir(exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{folder}: cannot make the folder ({exc.strerror})") from None
    now = datetime.now().astimezone()
    facts = run_facts(run, now)
    run_table = Table("Run", "run", "Run", "", [Column("fact", "Fact", "text"),
                                                 Column("value", "Value", "text")],
                      lambda: ([k, v] for k, v in facts))
    out = []
    for t in [run_table, *build_tables(run, for_csv=True)]:
        path = folder / f"{t.slug}.csv"
        _write_table(path, t)
        out.append(path)
    return out
