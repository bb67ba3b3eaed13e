"""stock.sheets.write_table: formula injection neutralised, formats as promised, round trips.

Reference points: OWASP "CSV Injection" (cells beginning = + - @ tab CR are prefixed with an
apostrophe); RFC 4180 (CSV quoting, CRLF); ECMA-376 (an XLSX cell is a formula only with an <f>
element; string cells have t="s" or t="inlineStr"); openpyxl and Python's csv module as
independent readers of what we write; our own read_table for the round trip.
"""

from __future__ import annotations

import csv
import datetime as dt
import math
import re
import zipfile
from decimal import Decimal
from enum import Enum
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stock.errors import ExportFileError
from stock.sheets import read_table, write_table

#: OWASP CSV Injection: the characters that may start a formula.
TRIGGERS = ["=", "+", "-", "@", "\t", "\r"]

INJECTIONS = [
    "=1+1",
    "+41",
    "-5",
    "@SUM(A1:A2)",
    '=HYPERLINK("http://example.invalid","x")',
    "\t=1",
    "\r=1",
    " =1+1",
]


class Colour(Enum):
    BROWN = "brown"


def _ooxml_text(value: object) -> object:
    """Decode the _xHHHH_ escapes of an OOXML string (ECMA-376 Part 1, 22.9.2.19 ST_Xstring):
    writers store a carriage return as _x000D_, and openpyxl hands the escape back undecoded."""
    if not isinstance(value, str):
        return value
    return re.sub(r"_x([0-9A-Fa-f]{4})_", lambda m: chr(int(m[1], 16)), value)


def _raw_csv(path: Path) -> list[list[str]]:
    # Python's csv module, not ours: what a spreadsheet receives cell by cell.
    with open(path, encoding="utf-8-sig", newline="") as handle:
        return list(csv.reader(handle))


def test_csv_injection_neutralised(tmp_path: Path) -> None:
    path = tmp_path / "out.csv"
    write_table(path, ["text"], [[t] for t in INJECTIONS])
    cells = [row[0] for row in _raw_csv(path)[1:]]
    assert cells == ["'" + t for t in INJECTIONS]
    for cell in cells:  # no cell starts with a trigger any more
        assert cell[0] not in TRIGGERS


def test_csv_numbers_stay_numbers(tmp_path: Path) -> None:
    path = tmp_path / "out.csv"
    write_table(
        path,
        ["a", "b", "c", "d", "e", "f", "g"],
        [
            [-5, -0.25, 3, True, None, Decimal("1.10"), Colour.BROWN],
            ["-5", "", "x", "", "", "", ""],
        ],
    )
    rows = _raw_csv(path)
    assert rows[1] == ["-5", "-0.25", "3", "TRUE", "", "1.1", "brown"]
    # the text "-5" is prefixed (OWASP), the number -5 is not
    assert rows[2][0] == "'-5"


def test_csv_bytes_bom_and_crlf(tmp_path: Path) -> None:
    path = tmp_path / "out.csv"
    write_table(path, ["part", "value"], [["C1", "100µF"], ["R1", "47Ω"]])
    data = path.read_bytes()
    assert data.startswith(b"\xef\xbb\xbf")  # UTF-8 BOM so spreadsheets read µ and Ω
    assert data[3:] == "part,value\r\nC1,100µF\r\nR1,47Ω\r\n".encode()  # RFC 4180 line ends


def test_xlsx_text_is_never_a_formula(tmp_path: Path) -> None:
    import openpyxl

    path = tmp_path / "out.xlsx"
    write_table(path, ["text", "n"], [[t, -5] for t in INJECTIONS])
    with zipfile.ZipFile(path) as archive:
        sheet_xml = archive.read("xl/worksheets/sheet1.xml").decode()
    assert "<f>" not in sheet_xml and "<f " not in sheet_xml  # ECMA-376: formulas are <f>
    sheet = openpyxl.load_workbook(path)["stock"]
    for row, text in enumerate(INJECTIONS, 2):
        cell = sheet.cell(row, 1)
        assert cell.data_type == "s"
        expected = "'" + text if text[0].isspace() else text  # see escape_xlsx
        assert _ooxml_text(cell.value) == expected
        assert (sheet.cell(row, 2).data_type, sheet.cell(row, 2).value) == ("n", -5)


def test_xlsx_layout(tmp_path: Path) -> None:
    import openpyxl

    path = tmp_path / "out.xlsx"
    rows = [["R1", 5, 0.1, dt.date(2026, 3, 4)], ["C22 with a longer name", 12, 2.5, None]]
    write_table(
        path,
        ["part", "qty", "price", "added"],
        rows,
        sheet="shopping",
        number_formats={"price": "0.00"},
    )
    book = openpyxl.load_workbook(path)
    sheet = book["shopping"]
    assert [c.value for c in sheet[1]] == ["part", "qty", "price", "added"]
    assert all(c.font.b for c in sheet[1])  # bold header
    assert sheet.freeze_panes == "A2"  # header row frozen
    assert sheet.auto_filter.ref == "A1:D3"
    assert sheet["C2"].number_format == "0.00"
    assert (
        sheet["D2"].value == dt.datetime(2026, 3, 4) and sheet["D2"].number_format == "yyyy-mm-dd"
    )
    widths = {col: sheet.column_dimensions[col].width for col in "ABCD"}
    assert widths["A"] > len("C22 with a longer name")  # fitted to the longest cell
    assert all(6 <= w <= 61 for w in widths.values())


def test_xlsx_several_sheets(tmp_path: Path) -> None:
    path = tmp_path / "out.xlsx"
    write_table(
        path,
        ["part", "qty"],
        [["R1", 2]],
        sheets={"vendor A": (["part", "price"], [["R1", 0.02]]), "notes": (["note"], [])},
    )
    assert read_table(path, columns={"part": [], "qty": []}).rows[0].cells == {
        "part": "R1",
        "qty": "2",
    }
    vendor = read_table(path, sheet="vendor A", columns={"part": [], "price": []})
    assert vendor.rows[0].cells == {"part": "R1", "price": "0.02"}
    assert read_table(path, sheet="notes", columns={"note": []}).rows == []


@pytest.mark.parametrize(
    ("name", "kwargs", "says"),
    [
        ("out.csv", {"sheets": {"b": (["x"], [])}}, "holds one sheet"),
        ("out.ods", {}, "name it .csv or .xlsx"),
        ("out.xlsx", {"sheet": "a/b"}, "not allowed in XLSX"),
        ("out.xlsx", {"sheet": "x" * 32}, "not allowed in XLSX"),
        ("out.xlsx", {"sheets": {"STOCK": (["x"], [])}}, "two sheets are named"),
    ],
)
def test_refusals(tmp_path: Path, name: str, kwargs: dict, says: str) -> None:
    with pytest.raises(ExportFileError, match=says):
        write_table(tmp_path / name, ["a"], [["1"]], **kwargs)
    assert list(tmp_path.iterdir()) == []  # no half-written or temporary file left behind


@pytest.mark.parametrize("name", ["out.csv", "out.xlsx"])
def test_row_of_wrong_length(tmp_path: Path, name: str) -> None:
    with pytest.raises(
        ExportFileError, match=r"out\.(csv|xlsx): (sheet stock, )?row 3: 1 values for 2 columns"
    ):
        write_table(tmp_path / name, ["a", "b"], [["x", "y"], ["z"]])
    assert list(tmp_path.iterdir()) == []


def test_xlsx_cell_too_long(tmp_path: Path) -> None:
    # 32,767 characters is the most an XLSX cell holds (spreadsheet specifications and limits).
    write_table(tmp_path / "ok.xlsx", ["a"], [["x" * 32767]])
    with pytest.raises(ExportFileError, match="over the XLSX limit of 32,767"):
        write_table(tmp_path / "long.xlsx", ["a"], [["x" * 32768]])


def test_missing_folder(tmp_path: Path) -> None:
    with pytest.raises(ExportFileError, match="no folder"):
        write_table(tmp_path / "nope" / "out.csv", ["a"], [])


def test_existing_file_is_replaced(tmp_path: Path) -> None:
    path = tmp_path / "out.csv"
    path.write_text("old contents")
    write_table(path, ["a"], [["new"]])
    assert _raw_csv(path) == [["a"], ["new"]]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.csv"]


def test_text_like_minus_five_reads_back(tmp_path: Path) -> None:
    # Documented behaviour: text "-5" is '-5 in CSV and a string cell in XLSX; the number -5 is a
    # number in both; read_table gives "-5" for all four, and "-5" passes as a number.
    for name in ("out.csv", "out.xlsx"):
        path = tmp_path / name
        write_table(path, ["qty"], [["-5"], [-5]])
        table = read_table(path, columns={"qty": []}, numeric_columns=["qty"])
        assert [r.cells["qty"] for r in table.rows] == ["-5", "-5"]


# --- round trips (Hypothesis) -------------------------------------------------------------------

# Text a builder might put in a cell: letters, digits, unit symbols, punctuation that matters to
# CSV (comma, semicolon, quote), newlines inside a cell, and the formula triggers.
_ALPHABET = st.sampled_from(
    list("abcXYZ019 .,;:\"'\n=+-@µΩ°±/()#%$_") + ["\r\n", "\t", "é", "中", "😀"]
)
_BODY = st.lists(_ALPHABET, max_size=20).map("".join).filter(lambda s: s == s.strip())
_PREFIX = st.sampled_from(["", "=", "+", "-", "@", "\t", "\r", "'", "''", " ", "\t=", "-=", "@@"])
# Reading strips white space around a cell (documented), except what an apostrophe protects, so
# the text round-trips exactly when it does not end in white space.
_TEXT = st.builds(lambda p, b: p + b, _PREFIX, _BODY).filter(lambda s: s == s.rstrip())


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(cells=st.lists(st.tuples(_TEXT, _TEXT), min_size=1, max_size=8))
@pytest.mark.parametrize("name", ["rt.csv", "rt.xlsx"])
def test_text_round_trip(tmp_path: Path, name: str, cells: list[tuple[str, str]]) -> None:
    path = tmp_path / name
    write_table(path, ["part", "note"], cells)
    table = read_table(path, columns={"part": [], "note": []})
    got = [(r.cells["part"], r.cells["note"]) for r in table.rows]
    assert got == [c for c in cells if c != ("", "")]  # an empty row is a blank row, skipped


@settings(
    max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(cells=st.lists(_TEXT, min_size=1, max_size=8))
def test_xlsx_text_matches_openpyxl(tmp_path: Path, cells: list[str]) -> None:
    # openpyxl reads our XLSX independently: every text cell is the string we gave (plus the
    # one apostrophe escape_xlsx adds before leading white space or an apostrophe).
    import openpyxl

    path = tmp_path / "o.xlsx"
    write_table(path, ["t"], [[c] for c in cells])
    sheet = openpyxl.load_workbook(path)["stock"]
    values = [_ooxml_text(sheet.cell(row, 1).value) for row in range(2, len(cells) + 2)]
    expected = [
        None if c == "" else ("'" + c if c[0] == "'" or c[0].isspace() else c) for c in cells
    ]
    assert values == expected


@settings(
    max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    numbers=st.lists(
        st.one_of(
            st.integers(min_value=-(10**14), max_value=10**14),
            st.floats(allow_nan=False, allow_infinity=False, min_value=-1e12, max_value=1e12),
        ),
        min_size=1,
        max_size=8,
    )
)
@pytest.mark.parametrize("name", ["n.csv", "n.xlsx"])
def test_number_round_trip(tmp_path: Path, name: str, numbers: list[float]) -> None:
    path = tmp_path / name
    write_table(path, ["price"], [[n] for n in numbers])
    table = read_table(path, columns={"price": []}, numeric_columns=["price"])
    got = [float(r.cells["price"]) for r in table.rows]
    for value, back in zip(numbers, got, strict=True):
        if name.endswith(".csv"):
            assert back == value  # repr() is the shortest text that reads back exactly
        else:
            # XLSX shows 15 significant digits (spreadsheet precision), as read_table reports
            assert math.isclose(back, value, rel_tol=1e-14, abs_tol=1e-300)


def test_xlsx_long_integer_keeps_its_digits(tmp_path: Path) -> None:
    # A spreadsheet number keeps 15 significant digits (IEEE 754 double as displayed); an int
    # longer than that is written as a string cell so no digit is lost.
    import openpyxl

    path = tmp_path / "long.xlsx"
    write_table(path, ["code", "small"], [[123456789012345678, 10**15 - 1]])
    sheet = openpyxl.load_workbook(path)["stock"]
    assert (sheet["A2"].data_type, sheet["A2"].value) == ("s", "123456789012345678")
    assert (sheet["B2"].data_type, sheet["B2"].value) == ("n", 10**15 - 1)
    table = read_table(path, columns={"code": [], "small": []}, text_columns=["code", "small"])
    assert table.rows[0].cells == {"code": "123456789012345678", "small": "999999999999999"}
