"""Write rows to a CSV or XLSX file, safely.

Formula injection is neutralised (OWASP "CSV Injection"): text is never written so that a
spreadsheet runs it. In CSV a text cell beginning with ``= + - @``, tab or carriage return gets a
leading apostrophe; in XLSX every text cell is a string cell (``write_string``), never a formula.
A number given as ``int``/``float`` stays a number in both formats, so ``-5`` (the number) is a
number, while ``"-5"`` (text) is written ``'-5`` in CSV and as a string cell in XLSX; both read
back as ``-5`` through :func:`stock.sheets.read_table`.

The file is written to a temporary name beside the target and renamed at the end, so a failure
never leaves half a file under the target name.
"""

from __future__ import annotations

import datetime as dt
import math
import os
import secrets
from collections.abc import Iterable, Mapping, Sequence
from decimal import Decimal
from enum import Enum
from fractions import Fraction
from pathlib import Path
from typing import Any

from stock.errors import ExportFileError
from stock.sheets.escape import escape_csv, escape_xlsx

#: Hard limits of the XLSX format (ECMA-376; the spreadsheet specifications): rows per sheet,
#: columns per sheet, characters per cell, characters in a sheet name.
XLSX_MAX_ROWS = 1_048_576
XLSX_MAX_COLUMNS = 16_384
XLSX_MAX_CELL_CHARS = 32_767
XLSX_MAX_SHEET_NAME = 31
#: Significant decimal digits a spreadsheet keeps of a number (IEEE 754 double as displayed).
XLSX_DIGITS = 15
_SHEET_NAME_FORBIDDEN = frozenset("[]:*?/\\")

#: Column widths in characters, as a spreadsheet counts them (common practice: wide enough for
#: most values, never a screen-wide note column).
MIN_WIDTH = 6
MAX_WIDTH = 60
_WIDTH_SAMPLE_ROWS = 1000  # widths are judged on the first rows; long sheets cost no more

DATE_FORMAT = "yyyy-mm-dd"  # ISO 8601, unambiguous in every locale


def _scalar(value: Any) -> Any:
    """Reduce a cell value to None, bool, int, float, date/datetime or str."""
    if value is None or isinstance(value, bool | int | str | dt.date):
        return value
    if isinstance(value, float):
        # NaN and infinities are no spreadsheet number; write them as the text Python shows.
        return value if math.isfinite(value) else repr(value)
    if isinstance(value, Enum):
        return _scalar(value.value)
    if isinstance(value, Decimal | Fraction):
        return _scalar(float(value))
    return str(value)


def _csv_text(value: Any) -> str:
    value = _scalar(value)
    if value is None:
        return ""
    if isinstance(value, bool):
        return "TRUE" if value else "FALSE"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return repr(value)  # shortest text that reads back as the same float
    if isinstance(value, dt.date):
        return value.isoformat()
    return escape_csv(value)


def _check_shape(name: str, columns: Sequence[str], row: Sequence[object], number: int) -> None:
    if len(row) != len(columns):
        where = f"sheet {name}, row {number}" if name else f"row {number}"
        raise ExportFileError(
            f"{where}: {len(row)} values for {len(columns)} columns; give one value per column"
        )


def _write_csv(target: Path, columns: Sequence[str], rows: Iterable[Sequence[object]]) -> None:
    import csv

    # UTF-8 with a byte-order mark: spreadsheets then read µ and Ω correctly; RFC 4180 line ends.
    with open(target, "w", encoding="utf-8-sig", newline="") as handle:
        writer = csv.writer(handle, lineterminator="\r\n")
        writer.writerow([escape_csv(str(c)) for c in columns])
        for number, row in enumerate(rows, 2):
            _check_shape("", columns, row, number)
            writer.writerow([_csv_text(v) for v in row])


def _check_sheet_name(name: str) -> None:
    bad = sorted(set(name) & _SHEET_NAME_FORBIDDEN)
    if not name or len(name) > XLSX_MAX_SHEET_NAME or bad or name.startswith("'"):
        raise ExportFileError(
            f"sheet name {name!r} is not allowed in XLSX (1 to {XLSX_MAX_SHEET_NAME} characters, "
            "none of [ ] : * ? / \\, not starting with an apostrophe); choose another name"
        )


def _write_xlsx(
    target: Path,
    sheets: list[tuple[str, Sequence[str], Iterable[Sequence[object]]]],
    number_formats: Mapping[str, str],
) -> None:
    import xlsxwriter
    import xlsxwriter.exceptions

    workbook = xlsxwriter.Workbook(
        str(target),
        {
            # Belt and braces: write_string never makes formulas, numbers or links from text,
            # and these options keep write() from doing so either.
            "strings_to_formulas": False,
            "strings_to_numbers": False,
            "strings_to_urls": False,
        },
    )
    try:
        header_format = workbook.add_format({"bold": True})
        date_format = workbook.add_format({"num_format": DATE_FORMAT})
        formats = {
            name: workbook.add_format({"num_format": code}) for name, code in number_formats.items()
        }
        seen: set[str] = set()
        for name, columns, rows in sheets:
            _check_sheet_name(name)
            if name.casefold() in seen:
                raise ExportFileError(f"two sheets are named {name!r}; give each a new name")
            seen.add(name.casefold())
            if len(columns) > XLSX_MAX_COLUMNS:
                raise ExportFileError(
                    f"sheet {name}: {len(columns)} columns, over the XLSX limit of "
                    f"{XLSX_MAX_COLUMNS:,}"
                )
            _write_sheet(workbook, name, columns, rows, header_format, date_format, formats)
    except BaseException:
        _close_quietly(workbook)
        raise
    try:
        workbook.close()
    except xlsxwriter.exceptions.XlsxWriterException as exc:
        raise ExportFileError(f"cannot write the workbook ({exc})") from None


def _close_quietly(workbook: Any) -> None:
    try:
        workbook.close()
    except Exception:  # already failing: the temporary file is removed by the caller
        pass


def _write_sheet(
    workbook: Any,
    name: str,
    columns: Sequence[str],
    rows: Iterable[Sequence[object]],
    header_format: Any,
    date_format: Any,
    formats: Mapping[str, Any],
) -> None:
    sheet = workbook.add_worksheet(name)
    widths = [len(str(c)) + 3 for c in columns]  # + room for the autofilter's drop-down button
    for col, title in enumerate(columns):
        sheet.write_string(0, col, escape_xlsx(str(title)), header_format)
    column_formats = [formats.get(str(c)) for c in columns]
    last = 0
    for number, row in enumerate(rows, 1):
        _check_shape(name, columns, row, number + 1)
        if number >= XLSX_MAX_ROWS:
            raise ExportFileError(
                f"sheet {name}: more than {XLSX_MAX_ROWS - 1:,} rows, the XLSX limit; "
                "write CSV or split the rows over several sheets"
            )
        for col, raw in enumerate(row):
            value = _scalar(raw)
            if value is None or value == "":
                continue  # an empty cell, as in CSV (not an empty string cell)
            cell_format = column_formats[col]
            if isinstance(value, bool):
                sheet.write_boolean(number, col, value, cell_format)
                shown = 5
            elif isinstance(value, int) and abs(value) >= 10**XLSX_DIGITS:
                # A number cell would keep only 15 digits; a string cell keeps them all.
                sheet.write_string(number, col, str(value), cell_format)
                shown = len(str(value))
            elif isinstance(value, int | float):
                sheet.write_number(number, col, value, cell_format)
                shown = len(repr(value))
            elif isinstance(value, dt.date):
                if isinstance(value, dt.datetime) and value.tzinfo is not None:
                    value = value.replace(tzinfo=None)  # XLSX has no time zones
                sheet.write_datetime(number, col, value, cell_format or date_format)
                shown = 10 if not isinstance(value, dt.datetime) else 19
            else:
                text = escape_xlsx(value)
                if len(text) > XLSX_MAX_CELL_CHARS:
                    raise ExportFileError(
                        f"sheet {name}, row {number + 1}, column {columns[col]}: text of "
                        f"{len(text):,} characters, over the XLSX limit of "
                        f"{XLSX_MAX_CELL_CHARS:,}; shorten it or write CSV"
                    )
                sheet.write_string(number, col, text, cell_format)
                shown = max(map(len, text.splitlines() or [""]))
            if number <= _WIDTH_SAMPLE_ROWS and shown > widths[col]:
                widths[col] = shown
        last = number
    for col, width in enumerate(widths):
        sheet.set_column(col, col, min(max(width + 1, MIN_WIDTH), MAX_WIDTH))
    sheet.freeze_panes(1, 0)
    if columns:
        sheet.autofilter(0, 0, last, len(columns) - 1)


def write_table(
    path: str | Path,
    columns: Sequence[str],
    rows: Iterable[Sequence[object]],
    *,
    sheet: str = "stock",
    number_formats: Mapping[str, str] | None = None,
    sheets: Mapping[str, tuple[Sequence[str], Iterable[Sequence[object]]]] | None = None,
) -> None:
    """Write ``columns`` and ``rows`` to ``path``; the suffix (.csv or .xlsx) picks the format.

    Cell values may be None (empty), bool, int, float, Decimal, date/datetime, Enum (its value) or
    anything else (written as its ``str`` text). XLSX: the rows go to sheet ``sheet``, then each of
    ``sheets`` (name -> (columns, rows)) to a sheet of its own; the header is bold and frozen, with
    an autofilter and column widths fitted to the first rows. ``number_formats`` maps a column name
    to a spreadsheet number format code (``"0.00"``) for numbers in that column (XLSX only).
    CSV: UTF-8 with a byte-order mark, comma-separated, CRLF line ends; ``sheets`` is refused.
    Raises :class:`~stock.errors.ExportFileError`.
    """
    target = Path(path)
    suffix = target.suffix.lower()
    if suffix not in (".csv", ".xlsx"):
        raise ExportFileError(
            f"{path}: cannot write {suffix or 'no suffix'}; name it .csv or .xlsx"
        )
    if suffix == ".csv" and sheets:
        raise ExportFileError(f"{path}: a CSV file holds one sheet; name it .xlsx to write several")
    directory = target.parent
    if not directory.is_dir():
        raise ExportFileError(f"{path}: no folder {directory}; create it first")
    # A private name beside the target (same file system, so the rename is atomic); opened the
    # ordinary way so the finished file gets the user's usual permissions.
    temp = directory / f".{target.name}.{os.getpid()}.{secrets.token_hex(4)}.tmp"
    try:
        if suffix == ".csv":
            _write_csv(temp, columns, rows)
        else:
            all_sheets = [(sheet, columns, rows)]
            all_sheets += [(name, cols, body) for name, (cols, body) in (sheets or {}).items()]
            _write_xlsx(temp, all_sheets, number_formats or {})
        os.replace(temp, target)
    except OSError as exc:
        temp.unlink(missing_ok=True)
        raise ExportFileError(f"{path}: cannot write the file ({exc.strerror or exc})") from None
    except ExportFileError as exc:
        temp.unlink(missing_ok=True)
        raise ExportFileError(f"{path}: {exc}") from None
    except BaseException:
        temp.unlink(missing_ok=True)
        raise
