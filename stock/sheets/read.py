"""Read a CSV or XLSX file into validated rows of text.

This module knows nothing about parts or the store: it finds the header row, maps the file's
headers to the caller's canonical column names, refuses oversize or hostile files, and catches the
ways a spreadsheet mangles text (dates made from ``1-10``, ``1E3`` turned into 1000, long numbers
cut to 15 digits, decimal commas mixed with points). Every refusal is an
:class:`~stock.errors.ImportFileError` naming file, sheet, row and column.

Row numbers are the ones a spreadsheet shows: 1-based, counting every row of the sheet (for CSV,
every record, so a quoted cell that spans lines is still one row).
"""

from __future__ import annotations

import codecs
import csv
import datetime as dt
import io
import re
from collections import Counter
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from enum import Enum
from itertools import chain, repeat
from operator import itemgetter
from pathlib import Path
from typing import Any

from stock.errors import ImportFileError, suggest
from stock.gcpause import cycle_collector_paused
from stock.sheets.escape import APOSTROPHE
from stock.sheets.limits import DEFAULT_LIMITS, Limits, check_file_size, check_xlsx_archive

#: The header row is looked for among the first this-many rows of the file (common practice:
#: a title, a date and a blank line or two above the header).
HEADER_SEARCH_ROWS = 20

#: Suffixes read as CSV and as XLSX workbooks.
CSV_SUFFIXES = frozenset({".csv", ".txt", ".tsv"})
XLSX_SUFFIXES = frozenset({".xlsx", ".xlsm"})

#: Delimiters tried when sniffing a CSV file, in order of preference on a tie.
DELIMITERS = (",", ";", "\t")

#: A spreadsheet keeps 15 significant decimal digits of a number (IEEE 754 double, as the
#: spreadsheet shows it; digits after the 15th are replaced by zeros).
SPREADSHEET_DIGITS = 15

_FIX_TEXT = (
    "format the column as Text (or type the value with a leading apostrophe), "
    "correct the value and save again"
)


@dataclass(frozen=True)
class Row:
    """One data row: its row number in the file and its cells by canonical column name."""

    number: int  # 1-based row number IN THE FILE (for error messages)
    cells: dict[str, str]  # canonical column -> cell text, stripped ('' for empty)


@dataclass(frozen=True)
class Table:
    """What :func:`read_table` found in a file."""

    file: str  # path as given
    sheet: str | None  # sheet name (XLSX) or None (CSV)
    header_row: int  # 1-based row number of the detected header in the file
    columns: list[str]  # canonical column names found, in file order
    rows: list[Row]
    #: (row, first row it repeats) for each data row whose cells equal an earlier row's.
    duplicates: list[tuple[int, int]] = field(default_factory=list)
    #: Header texts in the file that map to no canonical column (their cells are not read).
    ignored: list[str] = field(default_factory=list)
    #: CSV only: the text encoding and the delimiter that were detected.
    encoding: str | None = None
    delimiter: str | None = None


class _Kind(Enum):
    PLAIN = "plain"
    TEXT = "text"
    NUMERIC = "numeric"


def normalize_header(text: str) -> str:
    """Header text reduced for matching: case-folded, letters and digits only (``Part No.`` →
    ``partno``)."""
    return "".join(ch for ch in text.casefold() if ch.isalnum())


# --- spreadsheet mangling patterns (text columns of a CSV file) --------------------------------
# Spreadsheets turn typed text that looks like a day and month into a date and export the date in
# the display format of the locale: ISO, d/m/y or m/d/y, d.m.yyyy, or d-Mmm (the common default for
# "1-10" is "1-Oct" or "10-Jan"; "10-50" becomes "Oct-50"). Month abbreviations as displayed by
# the spreadsheet are title case, which keeps upper-case part names such as "MAR-6" clear.
_MONTHS = "Jan|Feb|Mar|Apr|May|Jun|Jul|Aug|Sep|Oct|Nov|Dec"
_TIME = r"(?:[ T]\d{1,2}:\d{2}(?::\d{2}(?:\.\d+)?)?)?"
_SUSPECT = re.compile(
    rf"(?P<date>\d{{4}}-\d{{1,2}}-\d{{1,2}}{_TIME}"
    rf"|\d{{1,2}}/\d{{1,2}}/(?:\d{{4}}|\d{{2}}){_TIME}"
    rf"|\d{{1,2}}\.\d{{1,2}}\.\d{{4}}{_TIME}"
    rf"|(?P<day>\d{{1,2}})-(?P<mon>{_MONTHS})(?:-\d{{2}}(?:\d{{2}})?)?"
    rf"|(?P<mon2>{_MONTHS})-(?P<num2>\d{{2}}))"
    r"|(?P<sci>[+-]?(?:\d+\.?\d*|\.\d+)[eE][+-]?\d+)"
    r"|(?P<long>\d{16,})"
)
_SUSPECT_START = frozenset("0123456789+-.JFMASOND")
# The same, for a whole column of cells joined by NUL (the fast path of a CSV import).
# Search "\0" + joined + "\0": the literal NUL first lets the regex engine skip ahead quickly.
_SUSPECT_IN_COLUMN = re.compile(rf"\0(?=[0-9+\-.JFMASOND])(?:{_SUSPECT.pattern})(?=\0)")

_BLOCK_ROWS = 4096  # rows checked together on the fast path of a CSV import

# --- numbers in numeric columns ------------------------------------------------------------------
_INT = re.compile(r"[+-]?\d+")
_POINT = re.compile(r"[+-]?(?:\d+\.\d*|\.\d+)(?:[eE][+-]?\d+)?|[+-]?\d+[eE][+-]?\d+")
_COMMA = re.compile(r"[+-]?\d*,\d+")
_THOUSANDS = re.compile(r"[+-]?\d{1,3}(?:,\d{3})+")
_NUMBER_OR_EMPTY = r"(?:[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)?"
# A column of cells joined by NUL, each empty, an integer, or a number with a decimal point.
_DROP_ASCII_DIGITS = str.maketrans("", "", "0123456789")
_POINT_COLUMN = re.compile(rf"{_NUMBER_OR_EMPTY}(?:\0{_NUMBER_OR_EMPTY})*")


def _month_number(abbrev: str) -> int:
    return _MONTHS.split("|").index(abbrev) + 1


def _csv_text_problem(text: str) -> str | None:
    """Why a CSV cell of a text column looks mangled by a spreadsheet, or None."""
    if text[0] not in _SUSPECT_START:
        return None
    m = _SUSPECT.fullmatch(text)
    if m is None:
        return None
    if m["date"]:
        if m["day"]:
            month = _month_number(m["mon"])
            guess = f" (perhaps '{m['day']}-{month}' or '{month}-{m['day']}' was typed)"
        elif m["mon2"]:
            guess = f" (perhaps '{_month_number(m['mon2'])}-{m['num2']}' was typed)"
        else:
            guess = ""
        return f"{text!r} looks like a date a spreadsheet made from the text{guess}; {_FIX_TEXT}"
    if m["sci"]:
        return (
            f"{text!r} is a number in scientific notation: a spreadsheet turned text such as "
            f"'1E3' into a number (or shortened a long number); {_FIX_TEXT}"
        )
    significant = text.lstrip("0")
    if len(significant) > SPREADSHEET_DIGITS and not significant[SPREADSHEET_DIGITS:].strip("0"):
        return (
            f"{text!r} looks like a long number a spreadsheet cut to {SPREADSHEET_DIGITS} digits "
            f"(the rest became zeros); {_FIX_TEXT}"
        )
    return None


def format_number(value: float) -> str:
    """Render a spreadsheet number as the spreadsheet shows it in General format (up to 15
    significant digits; integers without a decimal point)."""
    if value == int(value) and abs(value) < 10**SPREADSHEET_DIGITS:
        return str(int(value))
    return format(value, f".{SPREADSHEET_DIGITS}g")


@dataclass
class _Column:
    index: int  # 0-based index in the raw row
    name: str  # canonical
    header: str  # as written in the file
    kind: _Kind


@dataclass
class _Source:
    file: str
    path: Path
    sheet: str | None
    total: int  # rows in the file / sheet
    rows: Iterator[tuple[int, list[Any]]]  # (1-based row number, raw cells)
    is_xlsx: bool
    encoding: str | None = None
    delimiter: str | None = None
    col_offset: int = 0  # XLSX: 0-based sheet column of raw cell 0
    records: list[list[str]] | None = None  # CSV: every record, row n at index n - 1
    close: Callable[[], None] = lambda: None


# --- opening files -------------------------------------------------------------------------------


def _decode(data: bytes, file: str) -> tuple[str, str]:
    """Decode CSV bytes: UTF-8 (BOM stripped), UTF-16 with BOM, else Windows-1252."""
    if data.startswith(codecs.BOM_UTF8):
        try:
            return data[len(codecs.BOM_UTF8) :].decode("utf-8"), "utf-8-sig"
        except UnicodeDecodeError as exc:
            raise ImportFileError(
                f"starts as UTF-8 but byte {exc.start} is not UTF-8; save it again as CSV UTF-8",
                file=file,
            ) from None
    if data.startswith((codecs.BOM_UTF16_LE, codecs.BOM_UTF16_BE)):
        # Spreadsheets' "Unicode text" export: UTF-16 with a byte-order mark, tab-delimited.
        try:
            return data.decode("utf-16"), "utf-16"
        except UnicodeDecodeError:
            raise ImportFileError(
                "damaged UTF-16 text; save it again as CSV UTF-8", file=file
            ) from None
    try:
        return data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        pass
    # Windows-1252 is what older spreadsheets write for "CSV" on Western-European systems;
    # it has µ (0xB5) but no Ω, which such files spell "Ohm" (or get as '?').
    try:
        return data.decode("cp1252"), "cp1252"
    except UnicodeDecodeError as exc:
        raise ImportFileError(
            f"byte 0x{data[exc.start]:02X} at offset {exc.start} is neither UTF-8 nor "
            "Windows-1252 text; save the file as CSV UTF-8",
            file=file,
        ) from None


def _sniff_delimiter(text: str) -> str:
    """Pick the delimiter that splits most lines of the start of the file into the same number
    (more than one) of cells; ties go to the earlier of ``DELIMITERS``.

    A delimiter that splits the first line (the header, in most files) into that same
    number of cells comes before one that does not: quoted cells holding another candidate
    delimiter and line breaks (``";\n;"``) can make a wrong one split more lines."""
    sample = text[:65536]
    if len(text) > len(sample):
        sample = sample[: sample.rfind("\n") + 1] or sample
    best: tuple[int, int, int] = (0, 0, 0)
    chosen = DELIMITERS[0]
    for delimiter in DELIMITERS:
        try:
            records = [rec for rec in csv.reader(io.StringIO(sample, newline=""),
                                                 delimiter=delimiter) if rec]
        except csv.Error:
            continue
        widths = Counter(len(rec) for rec in records if len(rec) > 1)
        if not widths:
            continue
        width, count = max(widths.items(), key=lambda wc: (wc[1], wc[0]))
        score = (int(len(records[0]) == width), count, width)
        if score > best:
            best, chosen = score, delimiter
    return chosen


def _open_csv(path: Path, file: str, limits: Limits) -> _Source:
    data = path.read_bytes()
    if data.startswith(b"PK\x03\x04"):
        raise ImportFileError(
            "this is a zip archive (an XLSX workbook?), not CSV text; name it .xlsx", file=file
        )
    text, encoding = _decode(data, file)
    if "\x00" in text:
        raise ImportFileError(
            "the file holds NUL bytes, so it is not CSV text; export the sheet as CSV", file=file
        )
    delimiter = _sniff_delimiter(text)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    records: list[list[str]] = []
    try:
        records.extend(reader)
    except csv.Error as exc:
        raise ImportFileError(
            f"malformed CSV ({exc}); check the quotes on this row", file=file, row=len(records) + 1
        ) from None
    if len(records) > limits.max_rows:
        raise ImportFileError(
            f"{len(records):,} rows, over the limit of {limits.max_rows:,}; split the file",
            file=file,
        )
    return _Source(
        file=file,
        path=path,
        sheet=None,
        total=len(records),
        rows=((i, rec) for i, rec in enumerate(records, 1)),
        is_xlsx=False,
        records=records,
        encoding=encoding,
        delimiter=delimiter,
    )


def _open_xlsx(path: Path, file: str, sheet: str | None, limits: Limits) -> _Source:
    check_xlsx_archive(path, limits, file=file)
    from python_calamine import CalamineWorkbook, SheetTypeEnum, SheetVisibleEnum

    try:
        workbook = CalamineWorkbook.from_path(str(path))
    except Exception as exc:  # calamine raises its own error classes for every kind of damage
        raise ImportFileError(
            f"cannot read the workbook ({exc}); save it again from a spreadsheet", file=file
        ) from None
    try:
        worksheets = [m.name for m in workbook.sheets_metadata if m.typ == SheetTypeEnum.WorkSheet]
        if sheet is None:
            visible = [
                m.name
                for m in workbook.sheets_metadata
                if m.typ == SheetTypeEnum.WorkSheet and m.visible == SheetVisibleEnum.Visible
            ]
            if not (visible or worksheets):
                raise ImportFileError("the workbook has no worksheet", file=file)
            name = (visible or worksheets)[0]
        elif sheet in worksheets:
            name = sheet
        else:
            raise ImportFileError(
                f"no worksheet named {sheet!r}; the workbook has {', '.join(worksheets)}"
                + suggest(sheet, worksheets),
                file=file,
            )
        try:
            ws = workbook.get_sheet_by_name(name)
        except Exception as exc:
            raise ImportFileError(
                f"cannot read the sheet ({exc}); save the workbook again", file=file, sheet=name
            ) from None
        end = ws.end
        total = end[0] + 1 if end else 0
        start = ws.start
        if total > limits.max_rows:
            raise ImportFileError(
                f"{total:,} rows, over the limit of {limits.max_rows:,}; split the sheet",
                file=file,
                sheet=name,
            )
        if ws.width > limits.max_columns:
            raise ImportFileError(
                f"{ws.width} columns, over the limit of {limits.max_columns}; "
                "delete the unused columns",
                file=file,
                sheet=name,
            )
        # python-calamine yields rows from the sheet's first row but cells from its first used
        # column: remember the offset to name cells for the number-format check.
        return _Source(
            file=file,
            path=path,
            sheet=name,
            total=total,
            rows=((i, row) for i, row in enumerate(ws.iter_rows(), 1)),
            is_xlsx=True,
            col_offset=start[1] if start else 0,
            close=workbook.close,
        )
    except BaseException:
        workbook.close()
        raise


def _open(path: Path, file: str, sheet: str | None, limits: Limits) -> _Source:
    suffix = path.suffix.lower()
    if suffix not in CSV_SUFFIXES | XLSX_SUFFIXES:
        raise ImportFileError(
            f"cannot read {suffix or 'a file without a suffix'}; save the sheet as .csv or .xlsx",
            file=file,
        )
    check_file_size(path, limits, file=file)
    if suffix in XLSX_SUFFIXES:
        return _open_xlsx(path, file, sheet, limits)
    if sheet is not None:
        raise ImportFileError("a CSV file has no sheets; leave out the sheet name", file=file)
    return _open_csv(path, file, limits)


# --- header detection ----------------------------------------------------------------------------


def _header_text(value: Any) -> str:
    if isinstance(value, str):
        return value.strip()
    if isinstance(value, float | int) and not isinstance(value, bool):
        return format_number(value)
    return "" if value is None else str(value)


def _closest(spellings: Sequence[str], headers: Sequence[str]) -> str:
    """' (did you mean X?)' for the headers closest to any spelling of a column, or ''."""
    import difflib

    by_key = {normalize_header(h): h for h in headers}
    close: list[str] = []
    for spelling in spellings:
        for key in difflib.get_close_matches(normalize_header(spelling), list(by_key), cutoff=0.6):
            if by_key[key] not in close:
                close.append(by_key[key])
    return f" (did you mean {', '.join(close[:3])}?)" if close else ""


def _build_lookup(
    columns: Mapping[str, Sequence[str]], mapping: Mapping[str, str] | None, file: str
) -> dict[str, str]:
    lookup: dict[str, str] = {}
    for canonical, spellings in columns.items():
        for spelling in (canonical, *spellings):
            key = normalize_header(spelling)
            if lookup.get(key, canonical) != canonical:
                raise ValueError(f"header {spelling!r} is given for {lookup[key]} and {canonical}")
            lookup[key] = canonical
    for canonical, header in (mapping or {}).items():
        if canonical not in columns:
            raise ImportFileError(
                f"--map names an unknown column {canonical!r}; the columns are "
                f"{', '.join(columns)}" + suggest(canonical, list(columns)),
                file=file,
            )
        key = normalize_header(header)
        if not key:
            raise ImportFileError(
                f"--map {canonical}={header!r}: give the header text as it is in the file",
                file=file,
            )
        # The override replaces every other spelling of this column, so the file's own
        # header for it (if any) is no longer read as this column.
        for stale in [k for k, c in lookup.items() if c == canonical]:
            del lookup[stale]
        lookup[key] = canonical
    return lookup


class _Reader:
    """State for one pass over a file: header, column plan, and the file-wide checks."""

    def __init__(
        self,
        source: _Source,
        *,
        columns: Mapping[str, Sequence[str]],
        required: Sequence[str],
        mapping: Mapping[str, str] | None,
        text_columns: Sequence[str],
        numeric_columns: Sequence[str],
        unescape: bool,
        limits: Limits,
    ) -> None:
        for group, names in (
            ("required", required),
            ("text_columns", text_columns),
            ("numeric_columns", numeric_columns),
        ):
            unknown = [n for n in names if n not in columns]
            if unknown:
                raise ValueError(f"{group} names columns not in `columns`: {unknown}")
        both = set(text_columns) & set(numeric_columns)
        if both:
            raise ValueError(f"columns both text and numeric: {sorted(both)}")
        self.source = source
        self.unescape = unescape
        self.limits = limits
        self.comma_row: tuple[int, str] | None = None  # first decimal comma (row, text)
        self.point_row: tuple[int, str] | None = None  # first decimal point (row, text)
        self.suspect_numbers: dict[tuple[int, int], tuple[str, str]] = {}
        self.spellings = columns
        self.progress: Callable[[int, int], None] | None = None
        lookup = _build_lookup(columns, mapping, source.file)
        head, self._pending = self._find_header(lookup, required, mapping or {})
        self.header_row, header_cells = head
        kinds = {n: _Kind.TEXT for n in text_columns} | {n: _Kind.NUMERIC for n in numeric_columns}
        self.plan: list[_Column] = []
        self.ignored: list[str] = []
        seen: dict[str, str] = {}
        for index, value in enumerate(header_cells):
            text = _header_text(value)
            canonical = lookup.get(normalize_header(text))
            if canonical is None:
                if text:
                    self.ignored.append(text)
                continue
            if canonical in seen:
                raise ImportFileError(
                    f"two columns are read as {canonical}: {seen[canonical]!r} and {text!r}; "
                    f"delete one, or choose one with --map {canonical}=HEADER",
                    **self._where(self.header_row),
                )
            seen[canonical] = text
            self.plan.append(_Column(index, canonical, text, kinds.get(canonical, _Kind.PLAIN)))
        self.columns = [c.name for c in self.plan]

    def _where(self, row: int | None = None, column: str | None = None) -> dict[str, Any]:
        return {"file": self.source.file, "sheet": self.source.sheet, "row": row, "column": column}

    def _find_header(
        self, lookup: dict[str, str], required: Sequence[str], mapping: Mapping[str, str]
    ) -> tuple[tuple[int, list[Any]], list[tuple[int, list[Any]]]]:
        """Return the header row and the rows read after it while searching."""
        searched: list[tuple[int, list[Any]]] = []
        for number, cells in self.source.rows:
            searched.append((number, cells))
            if number >= HEADER_SEARCH_ROWS:
                break
        needed = set(required)
        scored = []
        for position, (_number, cells) in enumerate(searched):
            found = {
                lookup[k] for k in map(normalize_header, map(_header_text, cells)) if k in lookup
            }
            scored.append((position, found))
            if needed and needed <= found:
                break
        best_pos, best = max(scored, key=lambda pf: len(pf[1]), default=(0, set()))
        if not best:
            raise ImportFileError(
                f"no header row in the first {HEADER_SEARCH_ROWS} rows (looked for "
                f"{', '.join(sorted(set(lookup.values())))}); add a header row or use --map",
                **self._where(),
            )
        number, cells = searched[best_pos]
        headers = [t for t in map(_header_text, cells) if t]
        missing = [name for name in required if name not in best]
        if missing:
            unmatched = [h for h in headers if normalize_header(h) not in lookup]
            spellings = [missing[0], *self.spellings.get(missing[0], ())]
            raise ImportFileError(
                f"no {' or '.join(missing)} column in the header row (headers: "
                f"{', '.join(headers)}){_closest(spellings, unmatched)}; rename the header or "
                f"use --map {missing[0]}=HEADER",
                **self._where(number),
            )
        for canonical, header in mapping.items():
            if canonical not in best:
                raise ImportFileError(
                    f"--map {canonical}={header!r}: no such header (headers: "
                    f"{', '.join(headers)}){suggest(header, headers)}",
                    **self._where(number),
                )
        self._consumed = searched[-1][0] if searched else 0
        return searched[best_pos], searched[best_pos + 1 :]

    # --- cells ----------------------------------------------------------------------------------

    def _number_text(self, text: str, row: int, col: _Column) -> str:
        """Check and normalise a number written as text (decimal comma → point)."""
        if _INT.fullmatch(text):
            return text
        if _POINT.fullmatch(text):
            if "." in text:
                if self.comma_row is not None:
                    self._mixed(self.comma_row, (row, text), row, col)
                if self.point_row is None:
                    self.point_row = (row, text)
            return text
        if _COMMA.fullmatch(text):
            if self.source.delimiter == "," and _THOUSANDS.fullmatch(text):
                raise ImportFileError(
                    f"{text!r} is ambiguous: a thousands separator or a decimal comma; "
                    "write the number without thousands separators (or save the file with ';' "
                    "between cells if the comma is a decimal comma)",
                    **self._where(row, col.header),
                )
            if self.point_row is not None:
                self._mixed((row, text), self.point_row, row, col)
            if self.comma_row is None:
                self.comma_row = (row, text)
            return text.replace(",", ".")
        raise ImportFileError(
            f"{text!r} is not a number; write digits only, such as 4.7 "
            "(no units, no thousands separators)",
            **self._where(row, col.header),
        )

    def _mixed(
        self, comma: tuple[int, str], point: tuple[int, str], row: int, col: _Column
    ) -> None:
        raise ImportFileError(
            f"decimal commas and decimal points are mixed in the file (row {comma[0]}: "
            f"{comma[1]!r}, row {point[0]}: {point[1]!r}); use one decimal separator throughout",
            **self._where(row, col.header),
        )

    def _xlsx_cell(self, value: Any, row: int, col: _Column) -> str:
        """Text of one XLSX cell value as python-calamine gives it, with the column's checks."""
        if isinstance(value, str):
            # A string cell holds what was typed, so the text checks do not apply to it.
            if len(value) > self.limits.max_cell_chars:
                self._too_long(len(value), row, col)
            text = value.strip()
            if self.unescape and text[:1] == APOSTROPHE:
                text = text[1:]
            if col.kind is _Kind.NUMERIC and text:
                text = self._number_text(text, row, col)
            return text
        if isinstance(value, bool):
            if col.kind is _Kind.NUMERIC:
                raise ImportFileError(
                    f"{value} is not a number; type a number", **self._where(row, col.header)
                )
            return "TRUE" if value else "FALSE"
        if isinstance(value, float | int):
            if col.kind is _Kind.TEXT:
                return self._xlsx_number_in_text(float(value), row, col)
            return format_number(value)
        if isinstance(value, dt.date | dt.time | dt.timedelta):
            what = "a date" if isinstance(value, dt.date) else "a time"
            if col.kind is _Kind.TEXT:
                raise ImportFileError(
                    f"the cell holds {what} ({value}): the spreadsheet turned the text typed "
                    f"(such as '1-10') into {what}; {_FIX_TEXT}",
                    **self._where(row, col.header),
                )
            if col.kind is _Kind.NUMERIC:
                raise ImportFileError(
                    f"the cell holds {what} ({value}), not a number; format the column as "
                    "Number and type the value again",
                    **self._where(row, col.header),
                )
            return value.isoformat() if isinstance(value, dt.date | dt.time) else str(value)
        return "" if value is None else str(value).strip()

    def _xlsx_number_in_text(self, value: float, row: int, col: _Column) -> str:
        if value == int(value) and abs(value) >= 10**SPREADSHEET_DIGITS:
            raise ImportFileError(
                f"the number {value:.{SPREADSHEET_DIGITS}g} is longer than "
                f"{SPREADSHEET_DIGITS} digits, so the spreadsheet kept only {SPREADSHEET_DIGITS} "
                f"and replaced the rest with zeros; {_FIX_TEXT}",
                **self._where(row, col.header),
            )
        text = format_number(value)
        if "e" in text:
            raise ImportFileError(
                f"the number {text.upper()} is in scientific notation: the spreadsheet turned "
                f"text such as '1E3' into a number; {_FIX_TEXT}",
                **self._where(row, col.header),
            )
        # A plain-looking number may still be shown as 1.00E+03; the number format decides,
        # and only the workbook's styles know it (checked after the last row).
        self.suspect_numbers[(row, self.source.col_offset + col.index + 1)] = (col.header, text)
        return text

    def _too_long(self, length: int, row: int, col: _Column | None) -> None:
        raise ImportFileError(
            f"a cell of {length:,} characters, over the limit of {self.limits.max_cell_chars:,}; "
            "shorten it",
            **self._where(row, col.header if col else None),
        )

    def rows(self) -> Iterator[Row]:
        """Yield the data rows (blank rows skipped), checking each cell."""
        source = self.source
        try:
            if source.records is None:
                yield from self._xlsx_rows(self._pending)
                yield from self._xlsx_rows(source.rows)
            else:
                yield from self._csv_rows(self._pending)
                yield from self._csv_blocks(source.records, self._consumed)
            if self.suspect_numbers:
                self._check_number_formats()
        finally:
            self.source.close()

    def _csv_blocks(self, records: list[list[str]], start: int) -> Iterator[Row]:
        """Rows of ``records[start:]`` (file row ``start + 1`` on), a block of rows at a time.

        Fast path: each block is turned into columns and every check runs on a whole column at
        once (C-level string operations on the column's cells joined by NUL, which no CSV text
        holds). Any block with anything unusual in it (an apostrophe, a cell a check could
        refuse, a ragged or over-long row) is done again row by row by :meth:`_csv_rows`, which
        makes every decision and raises the error of the first bad row.
        """
        plan = self.plan
        if not plan:
            return
        names = [c.name for c in plan]
        need = max(c.index for c in plan) + 1
        max_columns, max_chars = self.limits.max_columns, self.limits.max_cell_chars
        unescape = self.unescape
        strip = str.strip
        indices = [c.index for c in plan]
        identity = indices == list(range(len(indices)))  # the file's columns, all, in order
        # itemgetter of one index returns the cell, not a 1-tuple: give it a second to drop.
        pick = itemgetter(*indices) if len(indices) > 1 else itemgetter(indices[0], indices[0])
        for first in range(start, len(records), _BLOCK_ROWS):
            block = records[first : first + _BLOCK_ROWS]
            numbers = range(first + 1, first + 1 + len(block))
            if min(map(len, block)) < need:  # short rows (blank lines): missing cells are ''
                for record in block:
                    if len(record) < need:
                        record.extend([""] * (need - len(record)))
            widest = max(map(len, block))
            rows: list[tuple[str, ...]] | None = None
            if widest <= max_columns and max(map(len, chain.from_iterable(block))) <= max_chars:
                stripped = list(map(tuple, map(map, repeat(strip), block)))
                if identity and widest == need:
                    rows = stripped
                elif len(indices) > 1:
                    rows = list(map(pick, stripped))
                else:
                    rows = [pair[:1] for pair in map(pick, stripped)]
                for position, col in enumerate(plan):
                    if not self._column_is_plain(col, rows, position, numbers, unescape):
                        rows = None
                        break
            if self.progress is not None and first > start:
                self.progress(first, self.source.total)
            if rows is None:
                yield from self._csv_rows(zip(numbers, block, strict=True))
                continue
            dicts: Iterator[dict[str, str]] = map(dict, map(zip, repeat(names), rows))
            if all(map(any, rows)):
                yield from map(Row, numbers, dicts)
            else:  # skip blank rows
                for number, values, cells in zip(numbers, rows, dicts, strict=True):
                    if any(values):
                        yield Row(number, cells)

    def _column_is_plain(
        self,
        col: _Column,
        rows: list[tuple[str, ...]],
        position: int,
        numbers: range,
        unescape: bool,
    ) -> bool:
        """True when no cell of this block of a column (``rows[*][position]``) needs a
        row-by-row look."""
        joined = "\0".join(map(itemgetter(position), rows))
        if unescape and (joined.startswith(APOSTROPHE) or "\0'" in joined):
            return False
        if col.kind is _Kind.TEXT:
            return _SUSPECT_IN_COLUMN.search(f"\0{joined}\0") is None
        if col.kind is _Kind.NUMERIC:
            # Digits, decimal points and separators only, at most one point per cell, no cell a
            # lone point: plain numbers (string operations, much faster than the regex below).
            rest = joined.translate(_DROP_ASCII_DIGITS)
            plain = (
                not rest.replace("\0", "").replace(".", "")
                and ".." not in rest
                and "\0.\0" not in f"\0{joined}\0"
            )
            if not plain and _POINT_COLUMN.fullmatch(joined) is None:
                return False
            if "." in rest and self.comma_row is not None:
                return False
            dot = joined.find(".")
            if dot >= 0:
                index = joined.count("\0", 0, dot)
                if self.point_row is None or numbers[index] < self.point_row[0]:
                    self.point_row = (numbers[index], rows[index][position])
        return True

    def _csv_rows(self, records: Iterable[tuple[int, list[str]]]) -> Iterator[Row]:
        # The hot loop of a 50,000-row import: locals only, and the cheap tests first.
        limits = self.limits
        max_columns, max_chars = limits.max_columns, limits.max_cell_chars
        plan = [(c.index, c.name, c.kind, c) for c in self.plan]
        text_kind, numeric_kind = _Kind.TEXT, _Kind.NUMERIC
        unescape = self.unescape
        suspect_start = _SUSPECT_START
        number_text = self._number_text
        for number, raw in records:
            width = len(raw)
            if width > max_columns:
                raise ImportFileError(
                    f"{width} cells, over the limit of {max_columns} columns; "
                    "check the delimiter and the quotes",
                    **self._where(number),
                )
            if raw and max(map(len, raw)) > max_chars:
                longest = max(raw, key=len)
                index = raw.index(longest)
                column = next((c for c in self.plan if c.index == index), None)
                self._too_long(len(longest), number, column)
            cells: dict[str, str] = {}
            blank = True
            for index, name, kind, col in plan:
                text = raw[index].strip() if index < width else ""
                if text:
                    blank = False
                    literal = unescape and text[0] == APOSTROPHE
                    if literal:
                        text = text[1:]  # a leading apostrophe marks text: take the rest literally
                    if kind is numeric_kind:
                        if text and not (text.isascii() and text.isdigit()):
                            text = number_text(text, number, col)
                    elif kind is text_kind and not literal and text[0] in suspect_start:
                        problem = _csv_text_problem(text)
                        if problem:
                            raise ImportFileError(problem, **self._where(number, col.header))
                cells[name] = text
            if not blank:
                yield Row(number, cells)

    def _xlsx_rows(self, records: Iterable[tuple[int, list[Any]]]) -> Iterator[Row]:
        plan = self.plan
        progress, total = self.progress, self.source.total
        for number, raw in records:
            if progress is not None and number % _BLOCK_ROWS == 0:
                progress(number, total)
            row = self._xlsx_row(number, raw, plan)
            if row is not None:
                yield row

    def _xlsx_row(self, number: int, raw: list[Any], plan: list[_Column]) -> Row | None:
        width = len(raw)
        cells: dict[str, str] = {}
        blank = True
        for col in plan:
            value = raw[col.index] if col.index < width else ""
            if value == "":
                text = ""
            else:
                text = self._xlsx_cell(value, number, col)
                blank = blank and not text
            cells[col.name] = text
        return None if blank else Row(number, cells)

    def _check_number_formats(self) -> None:
        """Refuse numbers in text columns that the sheet shows in scientific notation."""
        import zipfile

        from defusedxml import DefusedXmlException

        from stock.sheets._styles import (
            is_scientific_format,
            number_formats_of,
            scientific_style_ids,
        )

        try:
            if not scientific_style_ids(self.source.path):
                return  # no cell of the workbook can be shown in scientific notation
            formats = number_formats_of(self.source.path, self.source.sheet, self.suspect_numbers)
        except (
            DefusedXmlException,
            SyntaxError,
            ValueError,
            KeyError,
            OSError,
            zipfile.BadZipFile,
        ) as exc:
            # defusedxml refuses entity declarations (the XML "billion laughs" attack);
            # ElementTree's ParseError is a SyntaxError. The workbook cannot be trusted.
            raise ImportFileError(
                f"cannot read the workbook's number formats ({type(exc).__name__}: {exc}); "
                "save it again from a spreadsheet",
                **self._where(),
            ) from None
        for (row, column), fmt in sorted(formats.items()):
            if is_scientific_format(fmt):
                header, text = self.suspect_numbers[(row, column)]
                raise ImportFileError(
                    f"the number {text} is shown in scientific notation ({fmt}): the spreadsheet "
                    f"turned text such as '1E3' into a number; {_FIX_TEXT}",
                    **self._where(row, header),
                )


# --- public API ----------------------------------------------------------------------------------


def _reader(
    path: str | Path,
    *,
    columns: Mapping[str, Sequence[str]],
    required: Sequence[str],
    mapping: Mapping[str, str] | None,
    sheet: str | None,
    text_columns: Sequence[str],
    numeric_columns: Sequence[str],
    unescape: bool,
    limits: Limits,
) -> _Reader:
    file = str(path)
    source = _open(Path(path), file, sheet, limits)
    try:
        return _Reader(
            source,
            columns=columns,
            required=required,
            mapping=mapping,
            text_columns=text_columns,
            numeric_columns=numeric_columns,
            unescape=unescape,
            limits=limits,
        )
    except BaseException:
        source.close()
        raise


def read_table(
    path: str | Path,
    *,
    columns: Mapping[str, Sequence[str]],
    required: Sequence[str] = (),
    mapping: Mapping[str, str] | None = None,
    sheet: str | None = None,
    text_columns: Sequence[str] = (),
    numeric_columns: Sequence[str] = (),
    progress: Callable[[int, int], None] | None = None,
    limits: Limits = DEFAULT_LIMITS,
    unescape: bool = True,
) -> Table:
    """Read a .csv or .xlsx file into a :class:`Table` of checked text cells.

    ``columns`` maps each canonical column name to the header spellings accepted for it (matched
    ignoring case, spaces and punctuation). The header is the first of the first 20 rows holding
    every ``required`` column (or else the row with most known columns); rows above it are
    skipped. ``mapping`` overrides the spellings: ``{"qty": "Anzahl"}``. ``text_columns`` are
    checked for spreadsheet mangling; ``numeric_columns`` must hold numbers (a decimal comma is
    turned into a point when the whole file uses commas). With ``unescape`` a leading apostrophe
    is dropped from a cell and the rest taken literally. ``progress(done, total)`` is called with
    row numbers as reading goes on. Raises :class:`~stock.errors.ImportFileError`.

    ``Table.columns`` lists the canonical columns found in the file; each ``Row.cells`` has a key
    for every one of them (``''`` for an empty cell) and none for columns the file lacks.
    """
    reader = _reader(
        path,
        columns=columns,
        required=required,
        mapping=mapping,
        sheet=sheet,
        text_columns=text_columns,
        numeric_columns=numeric_columns,
        unescape=unescape,
        limits=limits,
    )
    source = reader.source
    reader.progress = progress
    # Reading makes hundreds of thousands of small acyclic objects (strings, tuples, dicts,
    # rows); the cycle collector would scan them again and again for nothing (a quarter of the
    # time of a 50,000-row CSV here). Pause it for the read only; nothing made here is cyclic.
    with cycle_collector_paused():
        rows = list(reader.rows())
    duplicates: list[tuple[int, int]] = []
    keys = [tuple(row.cells.values()) for row in rows]
    # Built from the last row to the first, the dict keeps each key's FIRST row index.
    first_index = dict(zip(reversed(keys), range(len(keys) - 1, -1, -1), strict=True))
    if len(first_index) < len(keys):
        for row, key in zip(rows, keys, strict=True):
            first = rows[first_index[key]].number
            if first != row.number:
                duplicates.append((row.number, first))
    if progress is not None:
        progress(source.total, source.total)
    return Table(
        file=source.file,
        sheet=source.sheet,
        header_row=reader.header_row,
        columns=reader.columns,
        rows=rows,
        duplicates=duplicates,
        ignored=reader.ignored,
        encoding=source.encoding,
        delimiter=source.delimiter,
    )


def iter_rows(
    path: str | Path,
    *,
    columns: Mapping[str, Sequence[str]],
    required: Sequence[str] = (),
    mapping: Mapping[str, str] | None = None,
    sheet: str | None = None,
    text_columns: Sequence[str] = (),
    numeric_columns: Sequence[str] = (),
    limits: Limits = DEFAULT_LIMITS,
    unescape: bool = True,
) -> Iterator[Row]:
    """Yield the data rows of a file one by one, with the checks of :func:`read_table`.

    The header problems are raised on the first ``next()``; a file-wide problem (decimal commas
    mixed with points, a number shown in scientific notation) may be raised after earlier rows
    were yielded, so treat the rows as provisional until the iterator is exhausted.
    """
    reader = _reader(
        path,
        columns=columns,
        required=required,
        mapping=mapping,
        sheet=sheet,
        text_columns=text_columns,
        numeric_columns=numeric_columns,
        unescape=unescape,
        limits=limits,
    )
    yield from reader.rows()
