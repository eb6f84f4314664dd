"""The workbook's tables as CSV files, one per table, for scripting.

Same tables, columns and headings as the workbook (the case overview one row per case).
UTF-8, comma separated, numbers at full precision, empty for missing. Text that a
spreadsheet would take for a formula (= + - @ as its first non-blank character, or a
leading tab or carriage return) is written with a leading apostrophe, so that opening a
CSV in a spreadsheet cannot run anything. The files are written into a temporary folder
that replaces the folder's files as a whole (steamnet.io.atomicdir): a failure leaves the
previous files as they were, and the folder never mixes two runs.
"""

from __future__ import annotations

import csv
import math
import re
from datetime import datetime
from pathlib import Path

import numpy as np
import pandas as pd

from ..io.atomic import OutputError, write_atomic
from ..io.atomicdir import atomic_folder
from ..io.textsafe import formula_like
from . import style
from .columns import Column
from .cover import run_facts
from .run import Run
from .sheet import Table
from .writer import build_tables

__all__ = ["write_csv_folder", "csv_value", "csv_file_of_ours"]

#: The CSV files this program writes: the fixed tables and one per study. Only these are
#: replaced or removed when the folder is written again; other files there are kept.
_OUR_CSV = re.compile(r"(run|cases|headers|equipment|streams|stations|station_summary|"
                      r"station_envelopes|station_checks|findings|inputs|"
                      r"study_[0-9a-z_]+)\.csv")


def csv_file_of_ours(name: str) -> bool:
    """True for the name of a CSV file this program writes (see :data:`_OUR_CSV`)."""
    return _OUR_CSV.fullmatch(name) is not None


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
    return "'" + s if formula_like(s) else s


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
    with atomic_folder(folder, csv_file_of_ours) as tmp:
        for t in [run_table, *build_tables(run, for_csv=True)]:
            _write_table(tmp / f"{t.slug}.csv", t)
            out.append(folder / f"{t.slug}.csv")
    return out
