"""The results workbook (Excel, written with openpyxl) and its CSV twin.

>>> import steamnet
>>> from steamnet.workbook import write_workbook
>>> study = steamnet.solve_cases(steamnet.load_model("cases/orlewick.toml"))
>>> path = write_workbook("orlewick.xlsx", study)
>>> path.name
'orlewick.xlsx'

Sheets and columns: docs/workbook.md.
"""

from .csvout import write_csv_folder
from .writer import SHEETS, build_tables, write_workbook

__all__ = ["write_workbook", "write_csv_folder", "build_tables", "SHEETS"]
