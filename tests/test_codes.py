"""Marking codes (IEC 60062 RKM, capacitor code, SMD, EIA-96, tolerance letters) against
published tables: tests/data/marking_codes.csv, eia96_codes.csv, tolerance_letters.csv
(each row names its source in facts.md)."""

from __future__ import annotations

import math

import pytest

from stock.errors import NotationError
from stock.kinds import Kind
from stock.quantities import (
    TOLERANCE_LETTERS,
    parse_cap_code,
    parse_eia96,
    parse_rkm,
    parse_smd_resistor,
    parse_value,
)
from stock.quantities.codes import tolerance_letter
from tests.reference import rows

PARSERS = {
    "rkm_ohm": (lambda t: parse_rkm(t, "Ω"), "Ω", Kind.RESISTOR),
    "rkm_farad": (lambda t: parse_rkm(t, "F"), "F", Kind.CAPACITOR),
    "rkm_henry": (lambda t: parse_rkm(t, "H"), "H", Kind.INDUCTOR),
    "cap": (parse_cap_code, "F", Kind.CAPACITOR),
    "smd": (parse_smd_resistor, "Ω", Kind.RESISTOR),
    "eia96": (parse_eia96, "Ω", Kind.RESISTOR),
}
MARKINGS = rows("marking_codes.csv")


@pytest.mark.parametrize("row", MARKINGS, ids=[f"{r['scheme']}:{r['code']}" for r in MARKINGS])
def test_marking_code_table(row: dict[str, str]) -> None:
    parse, unit, kind = PARSERS[row["scheme"]]
    # the decimal in the table and the marking must give the very same float
    want = float(row["value"])
    for v in (parse(row["code"]), parse_value(row["code"], kind=kind)):
        assert v.value == want, row["source"]
        assert v.unit == unit
        if row["tol_pct"]:
            t = float(row["tol_pct"]) / 100
            assert v.tol == pytest.approx((-t, t), rel=1e-12), row["source"]
        else:
            assert v.tol is None


@pytest.mark.parametrize("row", rows("eia96_codes.csv"), ids=lambda r: r["code"])
def test_every_eia96_code_indexes_the_e96_table(row: dict[str, str]) -> None:
    # facts.md §2.5: code NN with multiplier A (×1) is the NNth E96 value in ohms;
    # with C (×100) it is that value in hundreds of ohms
    assert parse_eia96(row["code"] + "A").value == float(row["value"])
    assert parse_eia96(row["code"] + "C").value == float(row["value"] + "e2")
    assert parse_value(row["code"] + "Z", kind=Kind.RESISTOR).value == float(row["value"] + "e-3")


TOLS = rows("tolerance_letters.csv")


@pytest.mark.parametrize("row", TOLS, ids=[f"{r['letter']}{r['unit']}{r['nominal']}" for r in TOLS])
def test_tolerance_letters(row: dict[str, str]) -> None:
    unit = row["unit"] or None
    nominal = float(row["nominal"]) if row["nominal"] else 1.0
    minus, plus = tolerance_letter(row["letter"], unit, nominal)
    assert (minus, plus) == pytest.approx(
        (-float(row["minus_pct"]) / 100, float(row["plus_pct"]) / 100), rel=1e-12, abs=1e-15
    ), row["source"]


def test_tolerance_letter_table_is_symmetric_except_z() -> None:
    # facts.md §2.2: every letter but Z (+80/−20 %) is a ± tolerance
    for letter, (minus, plus) in TOLERANCE_LETTERS.items():
        if letter != "Z":
            assert minus == -plus, letter


@pytest.mark.parametrize("text", ["477", "1234", "abc", "", "10.4", "104Q"])
def test_cap_code_refuses(text: str) -> None:
    # 477: third digit 7 is not used (facts.md §2.4); four digits is no capacitor code
    with pytest.raises(NotationError):
        parse_cap_code(text)


@pytest.mark.parametrize("text", ["00A", "97C", "01Q", "1C", "001C"])
def test_eia96_refuses(text: str) -> None:
    # codes run 01..96 and the letters are Z Y R X S A B H C D E F (facts.md §2.5)
    with pytest.raises(NotationError):
        parse_eia96(text)


@pytest.mark.parametrize("text", ["47", "47123", "4k7", "R", "x12"])
def test_smd_refuses(text: str) -> None:
    with pytest.raises(NotationError):
        parse_smd_resistor(text)


@pytest.mark.parametrize("text,unit", [("4k7k", "Ω"), ("47", "Ω"), ("2R2", "F"), ("4K7Q", "Ω")])
def test_rkm_refuses(text: str, unit: str) -> None:
    with pytest.raises(NotationError) as e:
        parse_rkm(text, unit)
    assert "\n" not in str(e.value)


def test_pf_letters_only_below_10_pf() -> None:
    # facts.md §2.2 test trap: "F" on 4.7 pF is ±1 pF, on 47 pF it is ±1 %
    small = parse_cap_code("479F")
    assert small.tol is not None
    assert small.tol[1] == pytest.approx(1e-12 / 4.7e-12)
    big = parse_cap_code("470F")
    assert big.tol == (-0.01, 0.01)


def test_eia96_values_differ_from_a_naive_multiply() -> None:
    # facts.md §2.5 test trap: 01Y is 100 × 0.01 = 1.00 Ω, never 01 × 0.01
    assert not math.isclose(parse_eia96("01Y").value, 0.01)
