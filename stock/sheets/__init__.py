"""Spreadsheets in and out: CSV and XLSX files as validated rows of text, and rows as files.

Knows nothing about parts or the store. Heavy libraries (python-calamine, openpyxl, xlsxwriter)
are imported inside the functions that use them, so importing this package is cheap.
"""

from stock.sheets.limits import DEFAULT_LIMITS, Limits
from stock.sheets.read import Row, Table, iter_rows, normalize_header, read_table
from stock.sheets.write import write_table

__all__ = [
    "DEFAULT_LIMITS",
    "Limits",
    "Row",
    "Table",
    "iter_rows",
    "normalize_header",
    "read_table",
    "write_table",
]
