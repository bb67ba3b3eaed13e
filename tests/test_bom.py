"""Tests of stock.kits.bom and stock.kits.designators: plain BOM spreadsheets in."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import ImportFileError, NotationError
from stock.kinds import Kind
from stock.kits import BOM_COLUMNS, compress, expand, load_any, load_bom
from stock.kits.bom import guess_kind
from stock.kits.designators import sort_key
from stock.slots import Role

DATA = Path(__file__).parent / "data" / "boms"
FILES = tomllib.loads((DATA / "expect.toml").read_text(encoding="utf-8"))["file"]
DESIGNATORS = tomllib.loads((DATA / "designators.toml").read_text(encoding="utf-8"))["case"]


# --- designators --------------------------------------------------------------------------


@pytest.mark.parametrize("case", DESIGNATORS, ids=[c["text"] for c in DESIGNATORS])
def test_designators(case):
    # Source: tests/data/boms/designators.toml (IEEE 315 designations, common practice).
    if "error" in case:
        with pytest.raises(NotationError, match=case["error"]):
            expand(case["text"])
        return
    assert expand(case["text"]) == case["refs"]
    assert compress(case["refs"]) == case["short"]


def test_empty_designator_list():
    assert expand("") == [] and expand("  ") == [] and compress([]) == ""


_refs = st.lists(st.tuples(st.sampled_from(["R", "C", "Q", "TP"]), st.integers(1, 60),
                           st.sampled_from(["", "", "", "A"])),
                 unique=True, max_size=25)


@settings(max_examples=200, deadline=None)
@given(_refs)
def test_compress_then_expand_round_trips(items):
    refs = [f"{p}{n}{s}" for p, n, s in items]
    short = compress(refs)
    assert expand(short) == sorted(refs, key=sort_key)
    assert compress(expand(short)) == short  # the short form is a fixed point


# --- BOM files -------------------------------------------------------------------------------


@pytest.mark.parametrize("spec", FILES, ids=[f["name"] for f in FILES])
def test_bom_fixtures(spec):
    kit, warnings = load_bom(DATA / spec["name"], mapping=spec.get("mapping"))
    got = [[s.kind.value, s.calls_for, compress(s.refs), s.qty] for s in kit.slots]
    assert got == spec["slots"]
    assert len(warnings) == len(spec["warnings"]), warnings
    for w, pattern in zip(warnings, spec["warnings"], strict=True):
        assert re.search(pattern, w), (w, pattern)
    # a plain BOM gives no roles; the kit says the part's own ratings are the requirements
    assert kit.source == "bom"
    assert all(s.role is Role.GENERAL and not s.requirements for s in kit.slots)
    assert "own ratings" in kit.notes


def test_bom_values_become_called_for_parts():
    kit, _ = load_bom(DATA / "editor-export.csv")
    by = {s.calls_for: s for s in kit.slots}
    assert by["10k"].part.nominal("r") == 10e3
    assert by["100n"].part.nominal("c") == pytest.approx(100e-9, rel=1e-12)
    assert by["7.030MHz"].part.nominal("f") == 7.030e6
    assert by["J310"].part is None  # numbered parts are resolved later, in the store
    assert by["PN2222A"].package == "TO-92"
    assert kit.name == "editor-export"
    assert kit.units() == 3 + 4 + 4 + 1 + 2 + 1 + 2 + 1 + 1


def test_load_any_dispatches_on_the_suffix():
    kit, warnings = load_any(DATA / "no-refs.csv")
    assert kit.source == "bom" and warnings == []
    kit2, _ = load_any(Path(__file__).parent / "data" / "kits" / "small.toml")
    assert kit2.source == "kit"


def test_xlsx_bom(tmp_path):
    # A real XLSX written by xlsxwriter (another library than the reader's calamine).
    import xlsxwriter

    path = tmp_path / "kit.xlsx"
    wb = xlsxwriter.Workbook(str(path))
    ws = wb.add_worksheet("BOM")
    rows = [["Designator", "Quantity", "Value", "Package"],
            ["R1-R3", 3, "2k2", "0207"],
            [],
            ["C1, C2", 2, "47p C0G", "disc"],
            ["Q1", 1, "MPSH10", "TO-92"]]
    for r, row in enumerate(rows):
        for c, value in enumerate(row):
            ws.write(r, c, value)
    wb.close()
    kit, warnings = load_bom(path, name="xl")
    assert [[s.kind.value, s.calls_for, compress(s.refs), s.qty] for s in kit.slots] == [
        ["resistor", "2k2", "R1-R3", 3], ["capacitor", "47p C0G", "C1, C2", 2],
        ["bjt", "MPSH10", "Q1", 1]]
    assert warnings == [] and kit.name == "xl"


def _write(tmp_path, text, name="b.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def test_bom_errors_name_row_and_column(tmp_path):
    p = _write(tmp_path, "Ref,Qty,Value\nR1,1,1k\nR6-R3,4,10k\n")
    with pytest.raises(ImportFileError, match=r"row 3, column refs: .*runs backwards"):
        load_bom(p)
    p = _write(tmp_path, "Ref,Qty,Value\nR1,1,1k\nR1,1,10k\n")
    with pytest.raises(ImportFileError, match=r"row 3, column refs: R1 is also on row 2"):
        load_bom(p)
    p = _write(tmp_path, "Ref,Qty,Value\nR1,one,1k\n")
    with pytest.raises(ImportFileError, match=r"row 2, column qty: quantity 'one' is not"):
        load_bom(p)
    p = _write(tmp_path, "Ref,Qty,Value\nR1,1.5,1k\n")
    with pytest.raises(ImportFileError, match="not a whole number of parts"):
        load_bom(p)
    p = _write(tmp_path, "Colour,Weight\nred,3\n")
    with pytest.raises(ImportFileError, match="no header row"):
        load_bom(p)
    p = _write(tmp_path, "Description,Package\nresistor,axial\n")
    with pytest.raises(ImportFileError, match="no BOM header found"):
        load_bom(p)
    p = _write(tmp_path, "Ref,Qty,Value,Part number\nR1,1,,\n")
    with pytest.raises(ImportFileError, match="neither a value nor a part number"):
        load_bom(p)
    p = _write(tmp_path, "Qty,Value\n,1k\n")
    with pytest.raises(ImportFileError, match="neither designators nor a quantity"):
        load_bom(p)


def test_unreadable_value_is_kept_as_text_with_a_warning(tmp_path):
    p = _write(tmp_path, "Ref,Value\nC1,100nF/50V\nR1,0R\n")
    kit, warnings = load_bom(p)
    c1 = kit.slots[0]
    assert c1.calls_for == "100nF/50V" and c1.part is None
    assert len(warnings) == 1 and warnings[0].startswith("row 2: ")
    assert kit.slots[1].part.nominal("r") == 0.0  # 0R: a zero-ohm link (IEC 60062 RKM)


def test_column_mapping_overrides_spellings(tmp_path):
    p = _write(tmp_path, "Bauteil,Anzahl,Wert\nR1,1,1k\n")
    kit, _ = load_bom(p, mapping={"refs": "Bauteil", "qty": "Anzahl", "value": "Wert"})
    assert kit.slots[0].refs == ["R1"]
    with pytest.raises(ImportFileError, match="unknown column 'designator'"):
        load_bom(p, mapping={"designator": "Bauteil"})


def test_kind_guess():
    # IEEE 315 class letters, refined by the description (common practice)
    assert guess_kind(["Q1"], "", "N-channel MOSFET", "") is Kind.FET
    assert guess_kind(["Q1"], "", "", "2N2222A") is Kind.BJT
    assert guess_kind(["CR1"], "", "", "") is Kind.DIODE
    assert guess_kind(["X1"], "", "", "") is Kind.CRYSTAL
    assert guess_kind(["R1", "C1"], "", "", "") is Kind.OTHER  # mixed letters: unknown
    assert guess_kind([], "", "Schottky diode", "") is Kind.DIODE
    assert guess_kind(["Q1"], "fet", "", "") is Kind.FET  # a kind column wins
    with pytest.raises(ValueError, match="unknown kind"):
        guess_kind(["Q1"], "transistorish", "", "")


def test_bom_columns_have_distinct_spellings():
    from stock.sheets import normalize_header

    seen: dict[str, str] = {}
    for canonical, spellings in BOM_COLUMNS.items():
        for s in (canonical, *spellings):
            key = normalize_header(s)
            assert seen.setdefault(key, canonical) == canonical, s
