"""Number formats of XLSX cells: the one thing python-calamine does not report.

Used only after reading, and only when a text column held numbers: the workbook's styles part is
small, so we first look there for any scientific number format; only if one exists do we pay for
an openpyxl pass over the sheet to learn which cells use it.
"""

from __future__ import annotations

import re
import warnings
import zipfile
from collections.abc import Iterable
from pathlib import Path

#: Built-in number formats that show scientific notation (ECMA-376 Part 1, §18.8.30 numFmt:
#: id 11 is ``0.00E+00``, id 48 is ``##0.0E+0``).
BUILTIN_SCIENTIFIC_FORMATS = frozenset({11, 48})


def is_scientific_format(code: str) -> bool:
    """True when an OOXML number format code shows scientific notation (``0.00E+00``)."""
    # Drop quoted literals and backslash-escaped characters before looking for E+ / E-.
    bare = re.sub(r'"[^"]*"|\\.', "", code)
    return re.search(r"[eE][+-]", bare) is not None


def _local(tag: str) -> str:
    # Namespace-agnostic: transitional and strict OOXML use different namespace URIs.
    return tag.rsplit("}", 1)[-1]


def scientific_style_ids(path: Path) -> set[int]:
    """Indices of the cell styles (cellXfs) of a workbook whose number format is scientific."""
    from defusedxml import ElementTree

    with zipfile.ZipFile(path) as archive:
        try:
            data = archive.read("xl/styles.xml")
        except KeyError:
            return set()
    root = ElementTree.fromstring(data)
    scientific = set(BUILTIN_SCIENTIFIC_FORMATS)
    ids: set[int] = set()
    for child in root:
        name = _local(child.tag)
        if name == "numFmts":
            for fmt in child:
                if is_scientific_format(fmt.get("formatCode", "")):
                    scientific.add(int(fmt.get("numFmtId", "-1")))
        elif name == "cellXfs":
            for index, xf in enumerate(child):
                if int(xf.get("numFmtId", "0")) in scientific:
                    ids.add(index)
    return ids


def number_formats_of(
    path: Path, sheet: str | None, cells: Iterable[tuple[int, int]]
) -> dict[tuple[int, int], str]:
    """Number format codes of the given (row, column) cells, both 1-based, read with openpyxl."""
    import defusedxml  # noqa: F401  openpyxl guards against XML entity expansion only with it
    import openpyxl

    wanted = set(cells)
    if not wanted:
        return {}
    rows = [r for r, _ in wanted]
    cols = [c for _, c in wanted]
    found: dict[tuple[int, int], str] = {}
    with warnings.catch_warnings():
        # openpyxl warns about workbook features it does not read (data validation, ...).
        warnings.simplefilter("ignore")
        workbook = openpyxl.load_workbook(path, read_only=True, data_only=True)
        try:
            worksheet = workbook[sheet] if sheet else workbook.worksheets[0]
            first_row, first_col = min(rows), min(cols)
            for i, row in enumerate(
                worksheet.iter_rows(
                    min_row=first_row, max_row=max(rows), min_col=first_col, max_col=max(cols)
                )
            ):
                for j, cell in enumerate(row):
                    key = (first_row + i, first_col + j)
                    if key in wanted:
                        found[key] = getattr(cell, "number_format", "General") or "General"
        finally:
            workbook.close()
    return found
