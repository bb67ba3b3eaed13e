"""CLI: import (all-or-nothing, with every kind of bad file the issue lists), export and
restore (identical after a round trip)."""

from __future__ import annotations

import zipfile

import pytest

from tests.clihelp import run

HEADER = "part,qty,drawer,kind,family,params\n"


@pytest.fixture
def db(tmp_path):  # type: ignore[no-untyped-def]
    return tmp_path / "stock.db"


def nothing_written(db) -> bool:  # type: ignore[no-untyped-def]
    return run(db, "log", "--json").json() == []


def write(path, text: str, encoding: str = "utf-8") -> str:  # type: ignore[no-untyped-def]
    path.write_bytes(text.encode(encoding))
    return str(path)


def test_import_a_stock_list(db, tmp_path):
    f = write(tmp_path / "drawers.csv", HEADER +
              "PN2222A,25,A1,,,\n"
              "100n X7R,200,C1,capacitor,x7r,c=100n; v_rated=50V; tol=±10%\n"
              "1N4148,100,D1,,,\n"
              "PN2222A,5,A2,,,\n")
    r = run(db, "import", f, "--json")
    assert r.code == 0, r.err
    assert r.json() | {"file": None} == {"file": None, "rows": 4, "parts_created": 3,
                                         "parts_known": 0, "drawers_created": 4, "units": 330,
                                         "duplicates": [], "dry_run": False}
    held = run(db, "show", "PN2222A", "--json").json()["drawers"]
    assert [(h["drawer"], h["on_hand"]) for h in held] == [("A1", 25), ("A2", 5)]
    cap = run(db, "show", "100n X7R", "--json").json()["part"]
    assert {(p["name"], p["bound"]): p["value"] for p in cap["params"]}[("c", "nom")] == \
        pytest.approx(100e-9)
    assert run(db, "verify").code == 0
    # a second import of parts now known only adds quantities
    r = run(db, "import", write(tmp_path / "more.csv", HEADER + "pn2222a,10,A1,,,\n"), "--json")
    assert r.json()["parts_known"] == 1 and r.json()["parts_created"] == 0
    assert run(db, "show", "PN2222A", "--json").json()["drawers"][0]["on_hand"] == 35


def test_dry_run_writes_nothing(db, tmp_path):
    f = write(tmp_path / "a.csv", HEADER + "PN2222A,25,A1,,,\n")
    r = run(db, "import", f, "--dry-run", "--json")
    assert r.code == 0 and r.json()["dry_run"] is True and r.json()["units"] == 25
    assert nothing_written(db)


def test_column_mapping_option(db, tmp_path):
    f = write(tmp_path / "odd.csv", "Thing,How many,Where\nPN2222A,3,A9\n")
    r = run(db, "import", f)
    assert r.code == 1 and "odd.csv" in r.err
    r = run(db, "import", f, "--map", "number=Thing", "--map", "qty=How many",
            "--map", "drawer=Where", "--json")
    assert r.code == 0, r.err and r.json()["units"] == 3


@pytest.mark.parametrize("qty", ["0", "-2", "2.5", "many"])
def test_bad_quantity_names_row_and_column(db, tmp_path, qty):
    f = write(tmp_path / "q.csv", HEADER + "PN2222A,4,A1,,,\n" + f"1N4148,{qty},D1,,,\n")
    r = run(db, "import", f)
    assert r.code == 1
    assert "q.csv" in r.err and "row 3" in r.err and "column qty" in r.err
    assert nothing_written(db)


def test_value_mangled_into_a_date_is_refused(db, tmp_path):
    # a spreadsheet turned the value "1-10" into a date on its way to CSV
    f = write(tmp_path / "m.csv", HEADER + "2001-10-01,4,A1,other,,\n")
    r = run(db, "import", f)
    assert r.code == 1 and "row 2" in r.err and "column part" in r.err
    assert nothing_written(db)


def test_xlsx_date_cell_and_date_serial_in_text_column_are_refused(db, tmp_path):
    import datetime

    import xlsxwriter

    path = tmp_path / "dates.xlsx"
    wb = xlsxwriter.Workbook(str(path))
    ws = wb.add_worksheet("Stock")
    date_fmt = wb.add_format({"num_format": "d-mmm"})
    ws.write_row(0, 0, ["part", "qty", "drawer"])
    ws.write_datetime(1, 0, datetime.datetime(2026, 1, 10), date_fmt)  # "1-10" mangled
    ws.write_number(1, 1, 4)
    ws.write_string(1, 2, "A1")
    wb.close()
    r = run(db, "import", str(path))
    assert r.code == 1 and "sheet Stock" in r.err and "row 2" in r.err and "column part" in r.err
    assert nothing_written(db)


def test_scientific_number_in_text_column_is_refused(db, tmp_path):
    import xlsxwriter

    path = tmp_path / "sci.xlsx"
    wb = xlsxwriter.Workbook(str(path))
    ws = wb.add_worksheet()
    ws.write_row(0, 0, ["part", "qty", "drawer"])
    # a part typed as "1E3": the spreadsheet stores the number 1000 shown as 1.00E+03
    ws.write_number(1, 0, 1000.0, wb.add_format({"num_format": "0.00E+00"}))
    ws.write_number(1, 1, 2)
    ws.write_string(1, 2, "A1")
    wb.close()
    r = run(db, "import", str(path))
    assert r.code == 1 and "row 2" in r.err and "column part" in r.err
    assert nothing_written(db)
    f = write(tmp_path / "sci.csv", HEADER + "1.00E+03,2,A1,other,,\n")  # the same, saved as CSV
    r = run(db, "import", f)
    assert r.code == 1 and "row 2" in r.err and "column part" in r.err
    assert nothing_written(db)


def test_decimal_commas_mixed_with_points_are_refused(db, tmp_path):
    f = write(tmp_path / "mix.csv", "part;qty;drawer\nPN2222A;2,0;A1\n1N4148;3.0;D1\n")
    r = run(db, "import", f)
    assert r.code == 1 and "mix.csv" in r.err and "column qty" in r.err
    assert nothing_written(db)


def test_utf8_bom_and_cp1252_files_read_correctly(db, tmp_path):
    # the BOM must not stick to the first header; cp1252 bytes B5 (µ) and no Ω in cp1252:
    # "µF" must come through as micro.
    f = tmp_path / "bom.csv"
    f.write_bytes(b"\xef\xbb\xbf" + (HEADER + "PN2222A,2,A1,,,\n").encode())
    assert run(db, "import", str(f)).code == 0
    g = tmp_path / "cp.csv"
    g.write_bytes((HEADER + "10\xb5F 25V,7,C2,capacitor,electrolytic,c=10\xb5F; v_rated=25V\n")
                  .encode("cp1252"))
    r = run(db, "import", str(g))
    assert r.code == 0, r.err
    part = run(db, "show", "10µF 25V", "--json").json()["part"]
    assert {(p["name"]): p["value"] for p in part["params"]}["c"] == pytest.approx(10e-6)


def test_duplicate_rows_are_reported(db, tmp_path):
    f = write(tmp_path / "dup.csv", HEADER + "PN2222A,2,A1,,,\n1N4148,5,D1,,,\nPN2222A,2,A1,,,\n")
    r = run(db, "import", f)
    assert r.code == 1 and "row 4" in r.err and "repeats row 2" in r.err
    assert nothing_written(db)
    r = run(db, "import", f, "--keep-duplicates", "--json")
    assert r.code == 0 and r.json()["duplicates"] == [[4, 2]] and r.json()["units"] == 9


def test_zip_bomb_is_rejected_before_unpacking(db, tmp_path):
    path = tmp_path / "bomb.xlsx"
    with zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED) as z:
        z.writestr("[Content_Types].xml", "<Types/>")
        z.writestr("xl/worksheets/sheet1.xml", b"\0" * (30 * 2**20))  # 30 MiB of zeros
    assert path.stat().st_size < 200_000
    r = run(db, "import", str(path))
    assert r.code == 1 and "bomb.xlsx" in r.err
    assert nothing_written(db)


def test_not_an_xlsx_file_is_refused(db, tmp_path):
    path = tmp_path / "fake.xlsx"
    path.write_text("part,qty,drawer\n")
    r = run(db, "import", str(path))
    assert r.code == 1 and "fake.xlsx" in r.err


def test_bad_row_49999_of_50000_writes_nothing(db, tmp_path):
    lines = [f"GEN-{i:05d},{1 + i % 9},D{i % 40},other,," for i in range(50_000)]
    lines[49_997] = "GEN-49997,lots,D1,other,,"  # file row 49,999 (the header is row 1)
    f = write(tmp_path / "big.csv", HEADER + "\n".join(lines) + "\n")
    r = run(db, "import", f)
    assert r.code == 1
    assert "row 49999" in r.err and "column qty" in r.err
    assert nothing_written(db)


def test_conflicting_descriptions_of_one_part_are_refused(db, tmp_path):
    f = write(tmp_path / "c.csv", HEADER + "X1,2,A1,bjt,npn,\nX1,3,A2,bjt,pnp,\n")
    r = run(db, "import", f)
    assert r.code == 1 and "row 3" in r.err and "row 2" in r.err
    assert nothing_written(db)


@pytest.mark.parametrize("target", ["backup.xlsx", "backup"])
def test_export_restore_round_trip_is_identical(db, tmp_path, target):
    run(db, "add", "PN2222A", "--qty", "20", "-d", "A1", "--key", "k-1")
    run(db, "add", "4k7", "--kind", "resistor", "--family", "metal-film", "-p", "tol=1%",
        "--qty", "100", "-d", "R1")
    run(db, "drawer", "R1", "--in", "CAB2")
    run(db, "move", "PN2222A", "5", "A1", "B1")
    run(db, "count", "4k7", "98", "-d", "R1", "--note", "stocktake, µ and Ω survive")
    out = tmp_path / target
    assert run(db, "export", str(out)).code == 0
    db2 = tmp_path / "restored.db"
    r = run(db2, "restore", str(out))
    assert r.code == 0, r.err
    out2 = tmp_path / ("again.xlsx" if target.endswith(".xlsx") else "again")
    assert run(db2, "export", str(out2)).code == 0
    from stock.store.api import Store
    from stock.transfer import snapshot

    a = snapshot(Store(f"sqlite:///{db}"))
    b = snapshot(Store(f"sqlite:///{db2}"))
    assert a == b
    assert run(db2, "verify").code == 0
    # restoring into a store that already holds parts is refused
    r = run(db2, "restore", str(out))
    assert r.code == 1 and "empty store" in r.err


def test_rows_described_alike_make_separate_parts(db, tmp_path):
    f = write(tmp_path / "alike.csv", HEADER + "GEN-1,3,A1,bjt,npn,vceo=30V; ft>=100MHz\n"
              "GEN-2,4,A1,bjt,npn,vceo=30V; ft>=100MHz\nGEN-3,5,A2,bjt,pnp,vceo=30V\n")
    assert run(db, "import", f).code == 0
    one = run(db, "show", "GEN-1", "--json").json()["part"]
    two = run(db, "show", "GEN-2", "--json").json()["part"]
    three = run(db, "show", "GEN-3", "--json").json()["part"]
    assert (one["number"], two["number"]) == ("GEN-1", "GEN-2")
    assert one["params"] == two["params"] and len(one["params"]) == 2
    assert three["family"] == "pnp" and len(three["params"]) == 1
    # a later change to one part's record leaves the other alone
    assert run(db, "add", "GEN-1", "--qty", "1", "-d", "A1", "-p", "vceo=45V").code == 0
    two = run(db, "show", "GEN-2", "--json").json()["part"]
    assert {p["name"]: p["value"] for p in two["params"]}["vceo"] == 30.0


def test_dry_run_counts_the_drawers_it_would_make(db, tmp_path):
    run(db, "drawer", "A1")
    f = write(tmp_path / "d.csv", HEADER + "PN2222A,2,A1,,,\n1N4148,5,D9,,,\n")
    r = run(db, "import", f, "--dry-run", "--json")
    assert r.json()["drawers_created"] == 1
    assert run(db, "import", f, "--json").json()["drawers_created"] == 1
