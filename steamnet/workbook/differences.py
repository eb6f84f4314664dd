"""The "Case differences" sheet: each case against the first, quantity by quantity
(steamnet.studies.compare)."""

from __future__ import annotations

import pandas as pd

from ..stations.rows import CHECK_COLUMNS
from ..studies.compare import COMPARE_COLUMNS, compare_cases
from .columns import Column, col
from .run import Run
from .sheet import Table

__all__ = ["differences_table", "DIFFERENCES_SHEET"]

DIFFERENCES_SHEET = "Case differences"

#: Units as the other sheets write them (degC already is: one spelling everywhere).
_UNIT_SHOWN: dict[str, str] = {}

_ROW_UNIT = "unit of the row"


def _columns() -> list[Column]:
    return [col("case"), Column("reference", "Reference case", "case"),
            Column("status", "Case status", "status"),
            Column("reference_status", "Reference status", "status"),
            Column("section", "Section", "text"), col("item"), col("type"),
            Column("quantity", "Quantity", "text"), col("unit"),
            Column("reference_value", f"Reference value [{_ROW_UNIT}]", "num", None,
                   "unit"),
            Column("value", f"Value [{_ROW_UNIT}]", "num", None, "unit"),
            Column("difference", f"Difference [{_ROW_UNIT}]", "num", None, "unit"),
            Column("reference_verdict", "Reference verdict", "verdict"),
            Column("verdict", "Verdict", "verdict"),
            Column("message", "Message", "text")]


def differences_table(run: Run) -> Table | None:
    """The sheet's table; None with fewer than two cases."""
    if len(run.cases) < 2:
        return None
    checks = run.checks if run.checks is not None else \
        pd.DataFrame(columns=list(CHECK_COLUMNS))
    df = compare_cases(run.study, checks)
    unit_at = COMPARE_COLUMNS.index("unit")
    ref = run.cases[0].case
    note = (f"Each case against the first, '{ref}': plant totals, headers, equipment, "
            "and the station checks whose verdict differs (or whose value changed while "
            "it warns or fails). Difference = value minus reference value, in the row's "
            "unit. A pair in which a case did not balance has one status row instead.")
    if run.checks is None:
        note += " Station checks were not run for this workbook."

    def rows():
        for values in df.itertuples(index=False, name=None):
            values = list(values)
            values[unit_at] = _UNIT_SHOWN.get(values[unit_at], values[unit_at])
            yield values
    return Table(DIFFERENCES_SHEET, "case_differences", "Case differences", note,
                 _columns(), rows, freeze_cols=2)
