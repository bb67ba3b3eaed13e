"""Drop-in judgement: package and pin order (facts.md §4 pinout traps)."""

from __future__ import annotations

import itertools

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stock.fit import DropInVerdict, dropin, pin_mapping
from stock.kinds import Kind
from stock.parts import PartSpec


def _t(number: str, pins: str | None, package: str | None = "TO-92",
       kind: Kind = Kind.BJT) -> PartSpec:
    return PartSpec(number, kind, None, package, pins)


@pytest.mark.parametrize(("board", "cand", "verdict", "source"), [
    # facts.md §4.1: PN2222A E-B-C vs onsemi P2N2222A C-B-E
    ("EBC", "CBE", DropInVerdict.REVERSED, "facts.md §4.1 TO-92 2222A trap"),
    # facts.md §4.2: 2N7000 S-G-D vs BS170 D-G-S are mirror images
    ("SGD", "DGS", DropInVerdict.REVERSED, "facts.md §4.2 2N7000/BS170"),
    # facts.md §4.2: 2N3819 S-G-D vs J310 D-S-G, the gate moves
    ("DSG", "SGD", DropInVerdict.CROSS_LEADS, "facts.md §4.2 2N3819/J310"),
    # facts.md §4.1: 2SC1815 E-C-B vs BC547B C-B-E
    ("CBE", "ECB", DropInVerdict.CROSS_LEADS, "facts.md §4.1 2SC1815"),
    ("EBC", "EBC", DropInVerdict.DROP_IN, "same order"),
])
def test_pin_orders(board: str, cand: str, verdict: DropInVerdict, source: str) -> None:
    d = dropin(_t("called", board), _t("cand", cand))
    assert d.verdict is verdict, source


def test_cross_leads_spells_out_the_mapping() -> None:
    # MPSH10 B-E-C (facts.md §4.1) into a board laid out E-B-C
    d = dropin(_t("called", "EBC"), _t("MPSH10", "BEC"))
    assert d.verdict is DropInVerdict.CROSS_LEADS
    assert d.mapping == [(1, 2), (2, 1), (3, 3)]
    assert "candidate pin 1 (B) → board pad 2 (B)" in d.text
    assert "candidate pin 2 (E) → board pad 1 (E)" in d.text
    assert "not drop-in: cross the leads" in d.text


def test_reversed_says_mount_reversed() -> None:
    d = dropin(_t("called", "EBC"), _t("cand", "CBE"))
    assert d.text.startswith("mount reversed")


def test_other_package_and_unknown() -> None:
    # 2N3866 TO-39 (facts.md §4.1) for a TO-92 board position
    d = dropin(_t("called", "EBC"), _t("2N3866", "EBC", "TO-39"))
    assert d.verdict is DropInVerdict.OTHER_PACKAGE
    assert "TO-39" in d.text and "TO-92" in d.text
    # BF199: pin order unknown (facts.md §4.1, from memory)
    d = dropin(_t("called", "EBC"), _t("BF199", None))
    assert d.verdict is DropInVerdict.UNKNOWN and "unknown" in d.text
    assert dropin(None, _t("cand", "EBC")).verdict is DropInVerdict.UNKNOWN


def test_two_lead_parts_by_package() -> None:
    a = PartSpec("1N4148", Kind.DIODE, "signal", "DO-35", "AK")
    b = PartSpec("1N914", Kind.DIODE, "signal", "DO-35", "AK")
    c = PartSpec("BAT85", Kind.DIODE, "schottky", "DO-34", "AK")
    r = PartSpec("4k7", Kind.RESISTOR)
    assert dropin(a, b).verdict is DropInVerdict.DROP_IN
    assert dropin(a, c).verdict is DropInVerdict.OTHER_PACKAGE
    assert dropin(r, r).verdict is DropInVerdict.UNKNOWN


@given(st.permutations("EBC"), st.permutations("EBC"))
def test_mapping_puts_every_lead_on_its_pad(board: list[str], cand: list[str]) -> None:
    b, c = "".join(board), "".join(cand)
    mapping = pin_mapping(b, c)
    assert mapping is not None
    for cand_pin, pad in mapping:
        assert c[cand_pin - 1] == b[pad - 1]
    verdict = dropin(_t("x", b), _t("y", c)).verdict
    expected = (DropInVerdict.DROP_IN if b == c else DropInVerdict.REVERSED if b == c[::-1]
                else DropInVerdict.CROSS_LEADS)
    assert verdict is expected


def test_every_three_lead_permutation_is_classified() -> None:
    kinds = {dropin(_t("x", "EBC"), _t("y", "".join(p))).verdict
             for p in itertools.permutations("EBC")}
    assert kinds == {DropInVerdict.DROP_IN, DropInVerdict.REVERSED, DropInVerdict.CROSS_LEADS}
