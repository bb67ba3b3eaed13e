"""Size limits for spreadsheets we read, and the zip checks that enforce them before unpacking.

An XLSX workbook is a zip archive of XML files. A hostile or broken one can declare a small file
that unpacks to gigabytes (a "zip bomb"); the zip central directory lists every member's packed and
unpacked size, so we read that directory (``zipfile.ZipFile.infolist``, which decompresses nothing)
and refuse the file before any XML is parsed.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from stock.errors import ImportFileError

#: Members of an OOXML spreadsheet package that every workbook has (ECMA-376 Part 2, Open
#: Packaging Conventions: the content-types part; Part 1 §12.3.23: the workbook part).
_XLSX_REQUIRED_MEMBERS = ("[Content_Types].xml", "xl/workbook.xml")

_ZIP_MAGIC = b"PK\x03\x04"


@dataclass(frozen=True)
class Limits:
    """Upper bounds on what ``read_table`` accepts; a file over any of them is refused.

    The defaults are generous for a parts list (common practice: a builder's inventory or a kit's
    BOM runs to thousands of rows, not millions) and small enough that a mistaken or hostile file
    cannot exhaust memory.
    """

    max_file_bytes: int = 50 * 2**20
    max_rows: int = 1_000_000
    max_columns: int = 200
    max_cell_chars: int = 10_000
    max_xlsx_uncompressed: int = 500 * 2**20  # sum of the zip members' unpacked sizes
    max_xlsx_ratio: float = 200.0  # unpacked / packed size of any one member
    # Members smaller than this are not held to max_xlsx_ratio: a few kilobytes of repetitive XML
    # (styles, a sheet of identical cells) can pack very well and cannot hurt anyone.
    xlsx_ratio_floor: int = 2**20


DEFAULT_LIMITS = Limits()


def check_file_size(path: Path, limits: Limits, *, file: str) -> int:
    """Return the size of ``path`` in bytes; raise if it is missing or over ``max_file_bytes``."""
    try:
        size = os.stat(path).st_size
    except FileNotFoundError:
        raise ImportFileError("no such file; check the path", file=file) from None
    except OSError as exc:
        raise ImportFileError(
            f"cannot read the file ({exc.strerror}); check the path", file=file
        ) from None
    if not path.is_file():
        raise ImportFileError(
            "not a regular file; give the path of a .csv or .xlsx file", file=file
        )
    if size > limits.max_file_bytes:
        raise ImportFileError(
            f"the file is {size:,} bytes, over the limit of {limits.max_file_bytes:,}; "
            "split it into smaller files",
            file=file,
        )
    return size


def check_xlsx_archive(path: Path, limits: Limits, *, file: str) -> None:
    """Refuse ``path`` unless it is a zip holding a workbook within ``limits``.

    Reads only the zip central directory (sizes as declared); nothing is decompressed here.
    """
    import zipfile

    with open(path, "rb") as handle:
        magic = handle.read(4)
    if magic != _ZIP_MAGIC:
        raise ImportFileError(
            "not an XLSX workbook (an .xlsx file is a zip archive and this one is not); "
            "open it in a spreadsheet and save it as .xlsx or .csv",
            file=file,
        )
    try:
        with zipfile.ZipFile(path) as archive:
            members = archive.infolist()
    except (zipfile.BadZipFile, OSError, ValueError) as exc:
        raise ImportFileError(
            f"the XLSX file is damaged ({exc}); save it again from the spreadsheet", file=file
        ) from None
    names = {m.filename for m in members}
    missing = [name for name in _XLSX_REQUIRED_MEMBERS if name not in names]
    if missing:
        raise ImportFileError(
            f"a zip archive but not an XLSX workbook (no {missing[0]}); "
            "save the sheet as .xlsx or .csv",
            file=file,
        )
    total = sum(m.file_size for m in members)
    if total > limits.max_xlsx_uncompressed:
        raise ImportFileError(
            f"the workbook unpacks to {total:,} bytes, over the limit of "
            f"{limits.max_xlsx_uncompressed:,}; split it into smaller workbooks or export CSV",
            file=file,
        )
    for member in members:
        if member.file_size < limits.xlsx_ratio_floor:
            continue
        ratio = member.file_size / max(member.compress_size, 1)
        if ratio > limits.max_xlsx_ratio:
            raise ImportFileError(
                f"refused: zip member {member.filename} would unpack {ratio:,.0f} times its packed "
                f"size (limit {limits.max_xlsx_ratio:,.0f}), the mark of a zip bomb; "
                "re-save the workbook from a spreadsheet or export CSV",
                file=file,
            )
