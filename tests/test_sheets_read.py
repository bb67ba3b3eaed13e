"""stock.sheets.read_table: every case is a real file with real bytes, made in tmp_path.

Reference points: the CSV grammar of RFC 4180 and Python's csv module; the character tables of
UTF-8 (RFC 3629) and Windows-1252; the OOXML package (ECMA-376, a zip archive); the data tables
tests/data/sheet_text_cells.toml and sheet_number_cells.toml (each case with its source); and
pandas / openpyxl as independent readers of the same files.
"""

from __future__ import annotations

import datetime as dt
import tomllib
import zipfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stock.errors import ImportFileError
from stock.sheets import DEFAULT_LIMITS, Limits, iter_rows, read_table

DATA = Path(__file__).parent / "data"

COLUMNS = {
    "number": ["part", "part number", "part no", "mpn", "pn"],
    "qty": ["qty", "quantity", "count"],
    "value": ["value"],
    "drawer": ["drawer"],
    "price": ["price", "unit price"],
    "note": ["note", "notes"],
}


def _cases(name: str) -> list[dict]:
    return tomllib.loads((DATA / name).read_text(encoding="utf-8"))["case"]


def _csv(tmp_path: Path, data: bytes, name: str = "in.csv") -> Path:
    path = tmp_path / name
    path.write_bytes(data)
    return path


def _xlsx(tmp_path: Path, build, name: str = "in.xlsx") -> Path:
    """A workbook written cell by cell with xlsxwriter: build(workbook, worksheet)."""
    import xlsxwriter

    path = tmp_path / name
    workbook = xlsxwriter.Workbook(str(path))
    build(workbook, workbook.add_worksheet("parts"))
    workbook.close()
    return path


def _read(path: Path, **kw) -> object:
    kw.setdefault("columns", COLUMNS)
    return read_table(path, **kw)


# --- encodings and delimiters ------------------------------------------------------------------


def test_utf8_with_bom_is_stripped(tmp_path: Path) -> None:
    # EF BB BF is the UTF-8 byte-order mark (Unicode FAQ); µ is C2 B5, Ω is CE A9 (RFC 3629).
    path = _csv(tmp_path, b"\xef\xbb\xbfpart,value,qty\r\nC7,100\xc2\xb5F,3\r\nR9,47\xce\xa9,2\r\n")
    table = _read(path, required=["number"])
    assert table.encoding == "utf-8-sig"
    assert table.header_row == 1
    assert table.columns == ["number", "value", "qty"]  # "part" matched despite the BOM
    assert [r.cells["value"] for r in table.rows] == ["100\u00b5F", "47\u03a9"]


def test_utf8_without_bom(tmp_path: Path) -> None:
    path = _csv(tmp_path, "part,value\nL1,22µH\n".encode())
    table = _read(path)
    assert table.encoding == "utf-8"
    assert table.rows[0].cells == {"number": "L1", "value": "22µH"}


def test_cp1252_fallback_reads_micro_sign(tmp_path: Path) -> None:
    # Windows-1252: 0xB5 is MICRO SIGN U+00B5, 0xB0 is DEGREE SIGN (code page table); B5 alone is
    # not valid UTF-8, so the file must fall back. Windows-1252 has no Ω (such files spell "ohm").
    data = b"part;value;note\r\nC3;4,7 \xb5F;105 \xb0C rated\r\nR2;47 ohm;\r\n"
    with pytest.raises(UnicodeDecodeError):
        data.decode("utf-8")
    table = _read(_csv(tmp_path, data))
    assert table.encoding == "cp1252"
    assert table.delimiter == ";"
    assert table.rows[0].cells == {"number": "C3", "value": "4,7 µF", "note": "105 °C rated"}
    assert table.rows[0].cells["value"] == data.split(b";")[3].decode("cp1252")


def test_utf16_unicode_text_export(tmp_path: Path) -> None:
    # Spreadsheets' "Unicode text" export: UTF-16 LE with BOM, tab-separated (common practice).
    path = _csv(tmp_path, "part\tvalue\r\nR1\t47Ω\r\n".encode("utf-16"), "in.txt")
    table = _read(path)
    assert (table.encoding, table.delimiter) == ("utf-16", "\t")
    assert table.rows[0].cells["value"] == "47Ω"


def test_bytes_neither_utf8_nor_cp1252(tmp_path: Path) -> None:
    # 0x81 is one of the five bytes Windows-1252 leaves undefined (code page table).
    path = _csv(tmp_path, b"part,note\nR1,bad \x81 byte\n")
    with pytest.raises(ImportFileError, match="neither UTF-8 nor Windows-1252"):
        _read(path)


@pytest.mark.parametrize("delimiter", [",", ";", "\t"])
def test_delimiter_sniffed(tmp_path: Path, delimiter: str) -> None:
    lines = [["part", "qty", "note"], ["R1", "5", "carbon film, 1/4 W"], ["R2", "7", "x; y"]]
    import csv
    import io

    buffer = io.StringIO()
    csv.writer(buffer, delimiter=delimiter).writerows(lines)
    table = _read(_csv(tmp_path, buffer.getvalue().encode()))
    assert table.delimiter == delimiter
    assert [list(r.cells.values()) for r in table.rows] == lines[1:]


def test_delimiter_sniffed_past_quoted_cells_full_of_another_delimiter(tmp_path: Path) -> None:
    # found by the write/read round trip (Hypothesis): quoted cells holding ';' and line
    # breaks split more lines on ';' than the real ',' does; the header decides
    path = _csv(tmp_path, b'part,note\n,";\n;"\n"a\na",";\n;"\n')
    table = read_table(path, columns={"part": [], "note": []})
    assert table.delimiter == ","
    assert [(r.cells["part"], r.cells["note"]) for r in table.rows] == \
        [("", ";\n;"), ("a\na", ";\n;")]


def test_agrees_with_pandas_on_quoted_cells(tmp_path: Path) -> None:
    # pandas' C parser is an independent reader of RFC 4180 quoting (PyPI reference library).
    import pandas as pd

    text = 'part,note,qty\r\nR1,"two\r\nlines",1\r\nR2,"say ""hi"", ok",2\r\n"R,3",,3\r\n'
    path = _csv(tmp_path, text.encode())
    ours = [list(r.cells.values()) for r in _read(path).rows]
    frame = pd.read_csv(path, dtype=str, keep_default_na=False)
    assert ours == frame.values.tolist()


# --- header detection and column mapping ---------------------------------------------------------


def test_header_found_below_title_rows(tmp_path: Path) -> None:
    text = (
        "Club build night: parts on hand,,\r\n"
        ",,\r\n"
        "exported,2026,\r\n"
        "Part No.,QTY ,Drawer\r\n"
        "R1,5,A3\r\n"
        ",,\r\n"
        "C2,10,B1\r\n"
    )
    table = _read(_csv(tmp_path, text.encode()), required=["number", "qty"])
    assert table.header_row == 4
    assert table.columns == ["number", "qty", "drawer"]
    # row numbers are the file's; the blank row 6 is skipped
    assert [(r.number, r.cells["number"]) for r in table.rows] == [(5, "R1"), (7, "C2")]


def test_header_beyond_row_20_is_not_found(tmp_path: Path) -> None:
    text = "title\r\n" * 20 + "part,qty\r\nR1,1\r\n"
    with pytest.raises(ImportFileError, match="no header row in the first 20 rows"):
        _read(_csv(tmp_path, text.encode()))


def test_without_required_the_row_with_most_known_columns_wins(tmp_path: Path) -> None:
    text = "note\r\ntitle only\r\npart,qty,note\r\nR1,1,x\r\n"
    table = _read(_csv(tmp_path, text.encode()))
    assert table.header_row == 3


def test_mapping_override(tmp_path: Path) -> None:
    text = "Bauteil,Anzahl,Count\r\nR1,5,99\r\n"
    table = _read(
        _csv(tmp_path, text.encode()),
        required=["number", "qty"],
        mapping={"number": "Bauteil", "qty": "anzahl"},  # matched like headers: case-insensitive
    )
    # "Count" would be qty, but the override takes qty from "Anzahl" only
    assert table.rows[0].cells == {"number": "R1", "qty": "5"}
    assert table.ignored == ["Count"]


def test_mapping_to_missing_header(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty\r\nR1,5\r\n")
    with pytest.raises(ImportFileError, match=r"--map qty='Menge': no such header") as err:
        _read(path, mapping={"qty": "Menge"})
    assert err.value.row == 1


def test_mapping_to_unknown_column(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty\r\nR1,5\r\n")
    with pytest.raises(ImportFileError, match=r"unknown column 'qtty'.*did you mean qty"):
        _read(path, mapping={"qtty": "qty"})


def test_unknown_columns_are_ignored_and_listed(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,colour,qty,\r\nR1,brown,5,\r\n")
    table = _read(path)
    assert table.columns == ["number", "qty"]
    assert table.ignored == ["colour"]
    assert table.rows[0].cells == {"number": "R1", "qty": "5"}


def test_missing_required_column_suggests(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,Qnty\r\nR1,5\r\n")
    with pytest.raises(ImportFileError) as err:
        _read(path, required=["number", "qty"])
    message = str(err.value)
    assert "no qty column" in message and "did you mean Qnty" in message
    assert (err.value.file, err.value.row) == (str(path), 1)


def test_two_headers_for_one_column(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty,quantity\r\nR1,5,6\r\n")
    with pytest.raises(ImportFileError, match="two columns are read as qty"):
        _read(path)


# --- text columns: spreadsheet mangling ----------------------------------------------------------


@pytest.mark.parametrize("case", _cases("sheet_text_cells.toml"), ids=lambda c: c["cell"])
def test_csv_text_cell(tmp_path: Path, case: dict) -> None:
    import csv
    import io

    buffer = io.StringIO()
    csv.writer(buffer).writerows([["qty", "part"], ["1", "ok"], ["2", case["cell"]]])
    path = _csv(tmp_path, buffer.getvalue().encode())
    if case["verdict"] == "ok":
        table = _read(path, text_columns=["number"])
        assert table.rows[1].cells["number"] == case["expect"]
        return
    with pytest.raises(ImportFileError) as err:
        _read(path, text_columns=["number"])
    assert (err.value.row, err.value.column) == (3, "part")
    message = str(err.value)
    assert case["says"] in message
    assert "format the column as Text" in message and "\n" not in message
    # without the text-column check the cell is read as it stands
    assert _read(path).rows[1].cells["number"] == case["cell"]


def test_xlsx_date_cell_in_text_column(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "qty"])
        sheet.write_row(1, 0, ["R1", 3])
        date = workbook.add_format({"num_format": "d-mmm"})
        sheet.write_datetime(2, 0, dt.datetime(2026, 10, 1), date)  # what typing 1-10 makes
        sheet.write_number(2, 1, 4)

    path = _xlsx(tmp_path, build)
    with pytest.raises(ImportFileError, match="holds a date") as err:
        _read(path, text_columns=["number"])
    assert (err.value.sheet, err.value.row, err.value.column) == ("parts", 3, "part")
    assert "sheet parts, row 3, column part" in str(err.value)


def test_xlsx_date_serial_with_date_format(tmp_path: Path) -> None:
    # 45566 is 2024-10-01 in the 1900 date system (ECMA-376 Part 1, 18.17.4.1): a plain number
    # cell given a date number format is a date to every spreadsheet.
    assert dt.date(1899, 12, 30) + dt.timedelta(days=45566) == dt.date(2024, 10, 1)

    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "value"])
        sheet.write_number(1, 1, 45566, workbook.add_format({"num_format": "dd/mm/yyyy"}))
        sheet.write_string(1, 0, "C1")

    path = _xlsx(tmp_path, build)
    with pytest.raises(ImportFileError, match=r"holds a date \(2024-10-01\)") as err:
        _read(path, text_columns=["value"])
    assert err.value.column == "value"
    # the same serial as a General number is not a date
    path2 = _xlsx(tmp_path, lambda wb, ws: ws.write_row(0, 0, ["value"]) or ws.write(1, 0, 45566))
    assert _read(path2, text_columns=["value"]).rows[0].cells["value"] == "45566"


def test_xlsx_scientific_format_in_text_column(tmp_path: Path) -> None:
    # Built-in number format 11 is 0.00E+00 (ECMA-376 Part 1, 18.8.30); typing 1E3 gives this.
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "value"])
        sheet.write_row(1, 0, ["R1", "4k7"])
        sheet.write_string(2, 0, "R2")
        sheet.write_number(2, 1, 1000, workbook.add_format({"num_format": "0.00E+00"}))

    path = _xlsx(tmp_path, build)
    with pytest.raises(ImportFileError, match="shown in scientific notation") as err:
        _read(path, text_columns=["value"])
    assert (err.value.row, err.value.column) == (3, "value")
    # openpyxl, read independently, sees the same number format on that cell
    import openpyxl

    cell = openpyxl.load_workbook(path)["parts"]["B3"]
    assert (cell.value, cell.number_format) == (1000, "0.00E+00")


@pytest.mark.parametrize(
    ("number", "says", "source"),
    [
        (1.5e20, "longer than 15 digits", "15 significant digits (spreadsheet precision)"),
        (123456789012345678, "longer than 15 digits", "IEEE 754 double keeps 15-17 digits"),
        (1e-7, "scientific notation", "General format shows 1E-07 (common practice)"),
    ],
)
def test_xlsx_float_cell_in_text_column(tmp_path: Path, number: float, says: str, source) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part"])
        sheet.write_number(1, 0, number)

    with pytest.raises(ImportFileError, match=says):
        _read(_xlsx(tmp_path, build), text_columns=["number"])


def test_xlsx_plain_numbers_in_text_column_are_kept(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "value"])
        sheet.write_row(1, 0, [7805, 4.7])
        sheet.write_row(2, 0, ["1-10", "1E3"])  # string cells hold what was typed

    table = _read(_xlsx(tmp_path, build), text_columns=["number", "value"])
    assert [r.cells for r in table.rows] == [
        {"number": "7805", "value": "4.7"},
        {"number": "1-10", "value": "1E3"},
    ]


# --- numeric columns -----------------------------------------------------------------------------


@pytest.mark.parametrize("case", _cases("sheet_number_cells.toml"), ids=lambda c: c["cell"])
def test_csv_number_cell(tmp_path: Path, case: dict) -> None:
    path = _csv(tmp_path, f"part;qty\r\nR1;{case['cell']}\r\n".encode())
    if "expect" in case:
        cells = _read(path, numeric_columns=["qty"]).rows[0].cells
        assert cells["qty"] == case["expect"]
        assert float(cells["qty"]) == float(case["cell"].lstrip("'").replace(",", "."))
        return
    with pytest.raises(ImportFileError, match=case["says"]) as err:
        _read(path, numeric_columns=["qty"])
    assert (err.value.row, err.value.column) == (2, "qty")


def test_decimal_commas_mixed_with_points_names_both_rows(tmp_path: Path) -> None:
    text = "part;qty;price\r\nR1;5;0,12\r\nR2;3;0,10\r\nC1;2;1\r\nC2;1;0.25\r\n"
    with pytest.raises(ImportFileError) as err:
        _read(_csv(tmp_path, text.encode()), numeric_columns=["qty", "price"])
    message = str(err.value)
    assert "row 2: '0,12'" in message and "row 5: '0.25'" in message
    assert (err.value.row, err.value.column) == (5, "price")


def test_consistent_decimal_commas_accepted(tmp_path: Path) -> None:
    text = "part;qty;price\r\nR1;5;0,12\r\nR2;3;1\r\nC2;1;12,5\r\n"
    table = _read(_csv(tmp_path, text.encode()), numeric_columns=["qty", "price"])
    assert [r.cells["price"] for r in table.rows] == ["0.12", "1", "12.5"]


def test_thousands_separator_in_comma_file_is_ambiguous(tmp_path: Path) -> None:
    path = _csv(tmp_path, b'part,qty\r\nR1,"1,000"\r\n')
    with pytest.raises(ImportFileError, match="ambiguous"):
        _read(path, numeric_columns=["qty"])


def test_xlsx_numbers_and_text_numbers(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "qty", "price"])
        sheet.write_row(1, 0, ["R1", 5, 0.1])
        sheet.write_row(2, 0, ["R2", "7", "0,25"])  # numbers typed as text, decimal comma

    table = _read(_xlsx(tmp_path, build), numeric_columns=["qty", "price"])
    assert [(r.cells["qty"], r.cells["price"]) for r in table.rows] == [("5", "0.1"), ("7", "0.25")]


def test_xlsx_date_in_numeric_column(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "qty"])
        sheet.write_string(1, 0, "R1")
        sheet.write_datetime(1, 1, dt.date(2026, 3, 4), workbook.add_format({"num_format": "d/m"}))

    with pytest.raises(ImportFileError, match="not a number") as err:
        _read(_xlsx(tmp_path, build), numeric_columns=["qty"])
    assert err.value.column == "qty"


def test_bad_row_near_the_end_of_50000(tmp_path: Path) -> None:
    # The 49,999th data row of 50,000 is row 50,000 of the file (row 1 is the header).
    lines = ["part,qty,drawer,value,price,note"]
    lines += [f"P{i},{i % 90 + 1},A{i % 9},{i % 97}k,{i % 13}.25,n" for i in range(1, 50001)]
    lines[49999] = lines[49999].replace(f",{49999 % 90 + 1},", ",12 pcs,")
    path = _csv(tmp_path, ("\n".join(lines) + "\n").encode())
    with pytest.raises(ImportFileError) as err:
        _read(path, numeric_columns=["qty", "price"], text_columns=["number", "value"])
    assert (err.value.row, err.value.column) == (50000, "qty")
    assert "row 50000, column qty: '12 pcs' is not a number" in str(err.value)


def test_bad_row_near_the_end_xlsx(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "qty"])
        for i in range(1, 5001):
            sheet.write_row(i, 0, [f"P{i}", i])
        sheet.write_string(4999, 1, "lots")

    with pytest.raises(ImportFileError) as err:
        _read(_xlsx(tmp_path, build), numeric_columns=["qty"])
    assert (err.value.sheet, err.value.row, err.value.column) == ("parts", 5000, "qty")


# --- duplicates, progress, streaming -------------------------------------------------------------


def test_duplicate_rows_reported(tmp_path: Path) -> None:
    text = "part,qty\r\nR1,5\r\nR2,5\r\nR1,5\r\n R1 , 5\r\nR1,6\r\n"
    table = _read(_csv(tmp_path, text.encode()))
    assert table.duplicates == [(4, 2), (5, 2)]  # cells are compared after stripping
    assert len(table.rows) == 5  # the caller decides what a duplicate means


def test_progress_callback(tmp_path: Path) -> None:
    lines = ["part,qty"] + [f"P{i},{i}" for i in range(5000)]
    path = _csv(tmp_path, "\n".join(lines).encode())
    calls: list[tuple[int, int]] = []
    table = _read(path, progress=lambda done, total: calls.append((done, total)))
    assert len(calls) >= 2
    assert calls[-1] == (5001, 5001)
    assert [done for done, _ in calls] == sorted(done for done, _ in calls)
    assert all(total == 5001 for _, total in calls)
    assert len(table.rows) == 5000


def test_iter_rows_matches_read_table(tmp_path: Path) -> None:
    text = "title\r\npart;qty;price\r\nR1;5;0,5\r\n;;\r\nR2;3;1,25\r\n"
    path = _csv(tmp_path, text.encode())
    kw = {"columns": COLUMNS, "numeric_columns": ["price"]}
    assert list(iter_rows(path, **kw)) == read_table(path, **kw).rows


# --- limits and hostile files --------------------------------------------------------------------


def _zip_bomb(path: Path, unpacked_mib: int) -> None:
    """A zip laid out like a workbook whose one sheet is `unpacked_mib` MiB of zeros."""
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=9) as archive:
        archive.writestr("[Content_Types].xml", "<Types/>")
        archive.writestr("xl/workbook.xml", "<workbook/>")
        block = b"\0" * 2**20
        with archive.open("xl/worksheets/sheet1.xml", "w") as member:
            for _ in range(unpacked_mib):
                member.write(block)


def test_zip_bomb_refused_before_unpacking(tmp_path: Path, monkeypatch) -> None:
    path = tmp_path / "bomb.xlsx"
    _zip_bomb(path, 16)
    info = {i.filename: i for i in zipfile.ZipFile(path).infolist()}["xl/worksheets/sheet1.xml"]
    assert info.file_size == 16 * 2**20 and info.file_size / info.compress_size > 200
    assert path.stat().st_size < 100_000

    def no_unpacking(*args, **kw):
        raise AssertionError("a zip member was opened")

    monkeypatch.setattr(zipfile.ZipFile, "open", no_unpacking)
    with pytest.raises(ImportFileError, match="zip bomb") as err:
        _read(path)
    assert err.value.file == str(path)


def test_oversize_workbook_refused(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "note"])
        for i in range(1, 2000):
            sheet.write_row(i, 0, [f"P{i}", "some words " * 5])

    path = _xlsx(tmp_path, build)
    unpacked = sum(i.file_size for i in zipfile.ZipFile(path).infolist())
    with pytest.raises(ImportFileError, match="unpacks to"):
        _read(path, limits=Limits(max_xlsx_uncompressed=unpacked - 1))
    assert len(_read(path, limits=Limits(max_xlsx_uncompressed=unpacked)).rows) == 1999


def test_file_over_max_bytes(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty\r\n" + b"R1,1\r\n" * 100)
    with pytest.raises(ImportFileError, match="over the limit"):
        _read(path, limits=Limits(max_file_bytes=path.stat().st_size - 1))


def test_not_a_zip_named_xlsx(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty\r\nR1,1\r\n", "fake.xlsx")
    with pytest.raises(ImportFileError, match="not an XLSX workbook"):
        _read(path)


def test_zip_that_is_not_a_workbook(tmp_path: Path) -> None:
    path = tmp_path / "other.xlsx"
    with zipfile.ZipFile(path, "w") as archive:
        archive.writestr("readme.txt", "hello")
    with pytest.raises(ImportFileError, match="not an XLSX workbook"):
        _read(path)


def test_workbook_named_csv(tmp_path: Path) -> None:
    path = _xlsx(tmp_path, lambda wb, ws: ws.write(0, 0, "part"))
    renamed = path.rename(tmp_path / "wrong.csv")
    with pytest.raises(ImportFileError, match="name it .xlsx"):
        _read(renamed)


def test_unsupported_suffix_and_missing_file(tmp_path: Path) -> None:
    with pytest.raises(ImportFileError, match="save the sheet as .csv or .xlsx"):
        _read(_csv(tmp_path, b"x", "in.ods"))
    with pytest.raises(ImportFileError, match="no such file"):
        _read(tmp_path / "absent.csv")


def test_row_column_and_cell_limits(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,qty\r\n" + b"R1,1\r\n" * 10)
    with pytest.raises(ImportFileError, match="11 rows, over the limit of 10"):
        _read(path, limits=Limits(max_rows=10))
    wide = _csv(tmp_path, b"part,a,b,c\r\nR1,1,2,3\r\n", "wide.csv")
    with pytest.raises(ImportFileError, match="over the limit of 3 columns"):
        _read(wide, limits=Limits(max_columns=3))
    long = _csv(tmp_path, b"part,note\r\nR1," + b"x" * 101 + b"\r\n", "long.csv")
    with pytest.raises(ImportFileError, match="101 characters") as err:
        _read(long, limits=Limits(max_cell_chars=100))
    assert (err.value.row, err.value.column) == (2, "note")


def test_xlsx_row_limit(tmp_path: Path) -> None:
    def build(workbook, sheet) -> None:
        for i in range(12):
            sheet.write_row(i, 0, ["part" if i == 0 else f"P{i}"])

    with pytest.raises(ImportFileError, match="12 rows, over the limit of 11"):
        _read(_xlsx(tmp_path, build), limits=Limits(max_rows=11))


def test_default_limits() -> None:
    assert DEFAULT_LIMITS == Limits()
    assert DEFAULT_LIMITS.max_file_bytes == 50 * 2**20
    assert DEFAULT_LIMITS.max_xlsx_ratio == 200.0


def test_malformed_quotes(tmp_path: Path) -> None:
    path = _csv(tmp_path, b'part,qty\r\nR1,1\r\n"R2,2\r\n')
    # Python's csv module in non-strict mode reads an unclosed quote to the end of the file,
    # so the damaged row comes back as one odd cell; the header still maps.
    table = _read(path)
    assert table.rows[0].cells == {"number": "R1", "qty": "1"}


# --- sheets --------------------------------------------------------------------------------------


def test_sheet_by_name_and_unknown_sheet(tmp_path: Path) -> None:
    import xlsxwriter

    path = tmp_path / "two.xlsx"
    workbook = xlsxwriter.Workbook(str(path))
    workbook.add_worksheet("cover").write(0, 0, "Parts list")
    stock_sheet = workbook.add_worksheet("drawers")
    stock_sheet.write_row(2, 1, ["part", "qty"])  # header at B3
    stock_sheet.write_row(3, 1, ["R1", 4])
    workbook.close()
    table = _read(path, sheet="drawers")
    assert (table.sheet, table.header_row) == ("drawers", 3)
    assert table.rows == [type(table.rows[0])(4, {"number": "R1", "qty": "4"})]
    with pytest.raises(ImportFileError, match="no worksheet named 'drawer'.*did you mean drawers"):
        _read(path, sheet="drawer")
    with pytest.raises(ImportFileError, match="no header row"):
        _read(path)  # the first sheet is the cover


# --- the fast path of large CSV files agrees with the row-by-row reading -------------------------


@pytest.mark.parametrize(("comma_row", "point_row"), [(10, 9000), (9000, 12000), (12000, 9000)])
def test_mixed_decimals_far_apart(tmp_path: Path, comma_row: int, point_row: int) -> None:
    # Rows beyond the first few are checked a block at a time; the error must still name both.
    lines = ["part;price"] + [f"P{n};{n % 50}" for n in range(2, 15001)]
    lines[comma_row - 1] = f"P{comma_row};0,5"
    lines[point_row - 1] = f"P{point_row};0.5"
    path = _csv(tmp_path, ("\r\n".join(lines) + "\r\n").encode())
    with pytest.raises(ImportFileError) as err:
        _read(path, numeric_columns=["price"])
    message = str(err.value)
    assert f"row {comma_row}: '0,5'" in message and f"row {point_row}: '0.5'" in message
    assert err.value.row == max(comma_row, point_row)


_PLAIN_CELLS = ["R1", "4k7", "100n", "1-10", "", " x ", "MAR-6"]
_ODD_CELLS = ["1-Oct", "1E3", "'1E3", "'", "2024-10-01"]
_PLAIN_NUMBERS = ["", "1", "12", "0.5", "-3", "1e3", ".5", "5."]
_ODD_NUMBERS = ["x", "'7", "."]


@settings(
    max_examples=80, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture]
)
@given(
    rows=st.lists(
        st.tuples(*(st.sampled_from(v) for v in (_PLAIN_CELLS, _PLAIN_NUMBERS, _PLAIN_CELLS))),
        min_size=25,
        max_size=80,
    ),
    odd=st.one_of(
        st.tuples(st.sampled_from([0, 2]), st.sampled_from(_ODD_CELLS)),
        st.tuples(st.just(1), st.sampled_from(_ODD_NUMBERS)),
        st.none(),
    ),
    data=st.data(),
)
def test_block_reading_agrees_with_row_reading(tmp_path: Path, rows, odd, data) -> None:
    _compare_with_row_reading(tmp_path, rows, odd, data)


@pytest.mark.parametrize(
    "odd", [(c, cell) for cell in _ODD_CELLS for c in (0, 2)] + [(1, n) for n in _ODD_NUMBERS]
)
def test_each_odd_cell_in_a_block(tmp_path: Path, odd: tuple[int, str]) -> None:
    rows = [(f"R{i}", str(i), "4k7") for i in range(60)]
    _compare_with_row_reading(tmp_path, rows, odd, None)


def _compare_with_row_reading(tmp_path: Path, rows, odd, data) -> None:
    # The first 20 rows of a file are read one by one while the header is looked for; later rows
    # a block at a time. Oracle: each row alone in a file of its own (read row by row). One odd
    # cell (or none) is put among the rows that are read a block at a time.
    if odd is not None:
        at = data.draw(st.integers(min_value=20, max_value=len(rows) - 1)) if data else 45
        column, cell = odd
        rows[at] = tuple(cell if i == column else v for i, v in enumerate(rows[at]))
    import csv
    import io

    def as_csv(body) -> bytes:
        buffer = io.StringIO()
        csv.writer(buffer).writerows([("part", "qty", "value"), *body])
        return buffer.getvalue().encode()

    kw = {"text_columns": ["number", "value"], "numeric_columns": ["qty"]}
    expected: list = []
    first_error = None
    for number, row in enumerate(rows, 2):
        try:
            alone = _read(_csv(tmp_path, as_csv([row]), "one.csv"), **kw).rows
        except ImportFileError as exc:
            first_error = (number, exc.column)
            break
        expected += [(number, r.cells) for r in alone]
    path = _csv(tmp_path, as_csv(rows), "all.csv")
    if first_error is None:
        assert [(r.number, r.cells) for r in _read(path, **kw).rows] == expected
    else:
        with pytest.raises(ImportFileError) as err:
            _read(path, **kw)
        assert (err.value.row, err.value.column) == first_error


@pytest.mark.parametrize("data", [b"", b"\xef\xbb\xbf", b"\r\n\r\n"])
def test_empty_file(tmp_path: Path, data: bytes) -> None:
    with pytest.raises(ImportFileError, match="no header row"):
        _read(_csv(tmp_path, data))


def test_header_only(tmp_path: Path) -> None:
    table = _read(_csv(tmp_path, b"part,qty\r\n"), required=["number"])
    assert (table.header_row, table.columns, table.rows) == (1, ["number", "qty"], [])


# --- XML entity expansion ("billion laughs") ----------------------------------------------------

_LAUGHS = (
    '<!DOCTYPE lolz [<!ENTITY lol "lol">'
    + "".join(
        f'<!ENTITY lol{i} "{("&lol" + (str(i - 1) if i > 1 else "") + ";") * 10}">'
        for i in range(1, 10)
    )
    + "]>"
)


def _with_entities(tmp_path: Path, member: str) -> Path:
    """A real workbook whose `member` part declares nested entities (1e9 'lol's if expanded)."""

    def build(workbook, sheet) -> None:
        sheet.write_row(0, 0, ["part", "value"])
        sheet.write_row(1, 0, ["R1", "x"])
        sheet.write_row(2, 0, ["R2", 1000])  # a number in a text column: styles get read

    plain = _xlsx(tmp_path, build, "plain.xlsx")
    path = tmp_path / "laughs.xlsx"
    with zipfile.ZipFile(plain) as source, zipfile.ZipFile(path, "w") as target:
        for info in source.infolist():
            data = source.read(info.filename)
            if info.filename == member:
                head, rest = data.decode().split("?>", 1)
                rest = rest.replace("<t>x</t>", "<t>&lol9;</t>")
                data = (head + "?>" + _LAUGHS + rest).encode()
            target.writestr(info, data)
    return path


@pytest.mark.parametrize("member", ["xl/sharedStrings.xml", "xl/styles.xml"])
def test_entity_expansion_refused(tmp_path: Path, member: str) -> None:
    path = _with_entities(tmp_path, member)
    with pytest.raises(ImportFileError, match="save it again from a spreadsheet") as err:
        _read(path, text_columns=["value"])
    assert err.value.file == str(path)


def test_openpyxl_guarded_by_defusedxml() -> None:
    # openpyxl parses XML through defusedxml only when it is installed (openpyxl docs, security).
    from openpyxl.xml import DEFUSEDXML

    assert DEFUSEDXML is True


@pytest.mark.parametrize("enabled", [True, False])
def test_garbage_collector_state_restored(tmp_path: Path, enabled: bool) -> None:
    # read_table pauses the cycle collector while it reads; it must leave it as it found it,
    # also when the file is refused.
    import gc

    good = _csv(tmp_path, b"part,qty\r\nR1,1\r\n", "good.csv")
    bad = _csv(tmp_path, b"part,qty\r\nR1,one\r\n", "bad.csv")
    was = gc.isenabled()
    try:
        gc.enable() if enabled else gc.disable()
        _read(good)
        assert gc.isenabled() is enabled
        with pytest.raises(ImportFileError):
            _read(bad, numeric_columns=["qty"])
        assert gc.isenabled() is enabled
    finally:
        gc.enable() if was else gc.disable()


def test_unescape_off_keeps_the_apostrophe(tmp_path: Path) -> None:
    path = _csv(tmp_path, b"part,note\r\n'=1+1,'1E3\r\n")
    assert _read(path).rows[0].cells == {"number": "=1+1", "note": "1E3"}
    assert _read(path, unescape=False).rows[0].cells == {"number": "'=1+1", "note": "'1E3"}
