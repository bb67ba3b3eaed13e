"""The one reader of value text (stock.valuetext): published codes, our word order, errors,
the three entry points agreeing, and round trips against independent libraries.

Reference cases live in tests/data/value_text.toml, each with its source (IEC 60062 RKM,
tolerance letters and capacitor codes from the team's reference sheet §2; IEC 60384-14
safety classes §3.4); add a case there without writing Python.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stock.errors import NotationError
from stock.fit import resolve_value_slot, slot_from_args
from stock.inventory import build_spec
from stock.kinds import Kind
from stock.kits.kitfile import called_part, parse_kit
from stock.params import PARAMS, Sense
from stock.parts import PartSpec
from stock.quantities import render, render_tol
from stock.quantities.units import KIND_UNITS
from stock.valuetext import VALUE_KINDS, VALUE_PARAMS, value_kind, value_part

DATA = Path(__file__).parent / "data" / "value_text.toml"
CASES: list[dict[str, Any]] = tomllib.loads(DATA.read_text(encoding="utf-8"))["case"]
GOOD = [c for c in CASES if "error" not in c]
BAD = [c for c in CASES if "error" in c]


def _ids(cases: list[dict[str, Any]]) -> list[str]:
    return [f"{c['kind']} {c['text']!r}" for c in cases]


def _params(part: PartSpec) -> dict[str, float]:
    """name -> value, with tol split into tol.min / tol.max (as the data file writes it)."""
    got: dict[str, float] = {}
    for p in part.params:
        key = f"{p.name}.{p.bound.value}" if p.name == "tol" else p.name
        assert key not in got, f"{key} given twice"
        got[key] = p.value
    return got


def test_data_file_has_sources_and_both_outcomes() -> None:
    assert all(c.get("source", "").strip() for c in CASES), "every case needs a source"
    assert GOOD and BAD
    assert {c["kind"] for c in GOOD} == {k.value for k in VALUE_KINDS}


@pytest.mark.parametrize("case", GOOD, ids=_ids(GOOD))
def test_reference_values(case: dict[str, Any]) -> None:
    # Source: the "source" column of tests/data/value_text.toml.
    kind = Kind(case["kind"])
    part = value_part(kind, case["text"])
    assert part is not None and part.kind is kind and part.number == case["text"].strip()
    got = _params(part)
    assert set(got) == set(case["params"]), case["source"]
    for name, want in case["params"].items():
        assert math.isclose(got[name], want, rel_tol=1e-9), (name, got[name], want)
    assert part.family == case.get("family")
    assert part.attrs.get("safety") == case.get("safety")


@pytest.mark.parametrize("case", BAD, ids=_ids(BAD))
def test_unplaceable_words_raise_naming_them(case: dict[str, Any]) -> None:
    # Source: the "source" column of tests/data/value_text.toml.
    with pytest.raises(NotationError, match=case["error"]) as info:
        value_part(Kind(case["kind"]), case["text"])
    assert "\n" not in str(info.value)  # errors are one line (docs/design: what and how)


@pytest.mark.parametrize("case", GOOD, ids=_ids(GOOD))
def test_every_entry_point_reads_the_same(case: dict[str, Any]) -> None:
    # The kit file, the command line and 'stock add' all read value text with one reader:
    # the same text gives the same parameters, whichever door it came in by.
    kind = Kind(case["kind"])
    want = _params(value_part(kind, case["text"]))  # type: ignore[arg-type]
    from_kit = called_part(kind, case["text"])
    from_cli = resolve_value_slot(case["text"], kind)
    added, _ = build_spec(case["text"], kind=kind, use_catalog=False)
    assert from_kit is not None and _params(from_kit) == want
    assert _params(from_cli) == want
    assert _params(added) == want
    assert from_kit.family == from_cli.family == added.family
    assert from_kit.attrs == from_cli.attrs == added.attrs


@pytest.mark.parametrize("case", BAD, ids=_ids(BAD))
def test_every_entry_point_refuses_the_same(case: dict[str, Any]) -> None:
    kind = Kind(case["kind"])
    with pytest.raises(NotationError, match=case["error"]):
        called_part(kind, case["text"])
    with pytest.raises(NotationError, match=case["error"]):
        resolve_value_slot(case["text"], kind)


def test_470_on_a_resistor_is_470_ohm_everywhere() -> None:
    # The trap this module removes: the SMD code reading would make "470" 47 Ω. Common
    # practice: a bare number on a resistor slot is ohms.
    kit = parse_kit('name = "t"\n[[slot]]\nrefs = "R1"\ncalls_for = "470"\nkind = "resistor"\n')
    assert kit.slots[0].part is not None and kit.slots[0].part.nominal("r") == 470.0
    cli = slot_from_args("470", kind="resistor")
    assert cli.part is not None and cli.part.nominal("r") == 470.0
    added, _ = build_spec("470", kind="resistor", use_catalog=False)
    assert added.nominal("r") == 470.0
    # ...while "104" on a capacitor is the IEC 60062 code for 100 nF (facts.md §2.4)
    cap = slot_from_args("104", kind="capacitor")
    assert cap.part is not None and math.isclose(cap.part.nominal("c"), 100e-9)  # type: ignore[arg-type]


@pytest.mark.parametrize("kind", [k for k in Kind if k not in VALUE_KINDS])
def test_kinds_called_for_by_number_have_no_value_part(kind: Kind) -> None:
    assert value_part(kind, "4k7") is None
    assert called_part(kind, "4k7") is None
    with pytest.raises(NotationError, match="give a part number"):
        resolve_value_slot("4k7", kind)


def test_value_tables_agree_with_the_parameter_vocabulary() -> None:
    # stock.params is the vocabulary: each value parameter is a nominal one in its kind's unit
    assert VALUE_KINDS == KIND_UNITS
    assert set(VALUE_PARAMS) == set(VALUE_KINDS)
    for kind, name in VALUE_PARAMS.items():
        pdef = PARAMS[name]
        assert pdef.sense is Sense.NOMINAL and pdef.applies_to(kind)
        assert pdef.unit == VALUE_KINDS[kind]


def test_package_pinout_description_and_source_are_kept() -> None:
    part = value_part(Kind.RESISTOR, " 4k7 ", package="0805", pinout=None,
                      description="pull-up", source="kit")
    assert part is not None
    assert (part.number, part.package, part.description, part.source) == \
        ("4k7", "0805", "pull-up", "kit")
    assert called_part(Kind.RESISTOR, "4k7").source == "kit"  # type: ignore[union-attr]


@pytest.mark.parametrize(("text", "kind"), [
    ("4.7kΩ", Kind.RESISTOR), ("22uF", Kind.CAPACITOR), ("10uH", Kind.INDUCTOR),
    ("10MHz", Kind.CRYSTAL),                     # by unit
    ("4k7", Kind.RESISTOR), ("2R2", Kind.RESISTOR), ("1M0", Kind.RESISTOR),
    ("100n", Kind.CAPACITOR), ("4p7", Kind.CAPACITOR), ("2u2", Kind.CAPACITOR),  # RKM letter
    ("100", None), ("", None), ("abc", None),
])
def test_value_kind(text: str, kind: Kind | None) -> None:
    # IEC 60062 RKM letters (facts.md §2.1): R, K, M, G are resistance; p, n, µ capacitance
    assert value_kind(text) is kind


# --- round trips ------------------------------------------------------------------------

_E24 = [float(v) for v in __import__("eseries").erange(__import__("eseries").E24, 1.0, 9.99)]
_TOLS = (0.01, 0.02, 0.05, 0.1, 0.2)  # IEC 60062 letters F, G, J, K, M (facts.md §2.2)


@given(m=st.sampled_from(_E24), exp=st.integers(-1, 6),
       style=st.sampled_from(["builder", "rkm", "si"]), tol=st.sampled_from(_TOLS))
def test_resistor_render_then_read(m: float, exp: int, style: str, tol: float) -> None:
    # E24 mantissas from the eseries package (IEC 60063), rendered by stock.quantities in
    # each style with a tolerance word, read back to the same value and tolerance.
    value = float(f"{m}e{exp}")
    text = f"{render(value, KIND_UNITS[Kind.RESISTOR], style=style)} {render_tol((-tol, tol))}"
    part = value_part(Kind.RESISTOR, text)
    assert part is not None
    assert math.isclose(part.nominal("r"), value, rel_tol=1e-12), text  # type: ignore[arg-type]
    got = _params(part)
    assert math.isclose(got["tol.max"], tol) and math.isclose(got["tol.min"], -tol), text


@given(m=st.sampled_from(_E24), exp=st.integers(-12, -4),
       style=st.sampled_from(["builder", "rkm", "si"]),
       family=st.sampled_from(["C0G", "X7R", "film"]), volts=st.sampled_from([16, 50, 630]))
def test_capacitor_render_then_read(m: float, exp: int, style: str, family: str,
                                    volts: int) -> None:
    value = float(f"{m}e{exp}")
    text = f"{render(value, 'F', style=style)} {family} {volts}V"
    part = value_part(Kind.CAPACITOR, text)
    assert part is not None
    assert math.isclose(part.nominal("c"), value, rel_tol=1e-12), text  # type: ignore[arg-type]
    assert part.family == family.lower() and part.nominal("v_rated") == volts


@given(digits=st.integers(1, 999), places=st.integers(0, 2),
       prefix=st.sampled_from(["p", "n", "u", "m", "", "k", "M"]),
       kind=st.sampled_from([Kind.RESISTOR, Kind.CAPACITOR, Kind.INDUCTOR]))
def test_si_values_agree_with_quantiphy(digits: int, places: int, prefix: str,
                                        kind: Kind) -> None:
    # quantiphy (PyPI) reads SI notation independently of us (docs/design: use it as a check)
    from quantiphy import Quantity

    number = f"{digits / 10 ** places:.{places}f}"
    unit = {Kind.RESISTOR: "Ω", Kind.CAPACITOR: "F", Kind.INDUCTOR: "H"}[kind]
    # On a capacitor "1F" or "473F" without a space is an IEC 60062 code with the tolerance
    # letter F (facts.md §2.4, docs/notation.md); farads without a prefix take a space.
    gap = " " if kind is Kind.CAPACITOR and not prefix else ""
    text = f"{number}{gap}{prefix}{unit}"
    part = value_part(kind, text)
    assert part is not None
    want = Quantity(f"{number}{prefix}").real
    assert math.isclose(part.nominal(VALUE_PARAMS[kind]), want, rel_tol=1e-12), text  # type: ignore[arg-type]
