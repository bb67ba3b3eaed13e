"""Builders' value notation: parse and render against tests/data/notation_cases.csv,
notation_errors.csv and render_cases.csv (each row names its source), cross-checked with
the `quantiphy` PyPI package (test-only) and with Hypothesis round trips."""

from __future__ import annotations

import math
from dataclasses import FrozenInstanceError

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from quantiphy import Quantity  # test-only independent reader of SI notation

from stock.errors import NotationError
from stock.kinds import Kind
from stock.quantities import (
    STYLES,
    Value,
    parse_quantity,
    parse_tol,
    parse_value,
    render,
    render_tol,
)
from tests.reference import rows

CASES = rows("notation_cases.csv")


@pytest.mark.parametrize("row", CASES, ids=[f"{r['text']}|{r['unit']}|{r['kind']}" for r in CASES])
def test_notation_cases(row: dict[str, str]) -> None:
    kind = Kind(row["kind"]) if row["kind"] else None
    v = parse_value(row["text"], row["unit"] or None, kind=kind, code=row["code"] == "1")
    # the table's decimal and the notation must give the very same float
    assert v.value == float(row["value"]), row["source"]
    assert v.unit == (row["found_unit"] or None) or (row["unit"] == "" and v.unit is None)
    if row["tol_pct"]:
        t = float(row["tol_pct"]) / 100
        assert v.tol == pytest.approx((-t, t), rel=1e-12), row["source"]
    else:
        assert v.tol is None, row["source"]
    assert v.text == row["text"]


ERRORS = rows("notation_errors.csv")


@pytest.mark.parametrize("row", ERRORS, ids=[f"{r['text']!r}|{r['unit']}" for r in ERRORS])
def test_notation_errors(row: dict[str, str]) -> None:
    kind = Kind(row["kind"]) if row["kind"] else None
    with pytest.raises(NotationError) as e:
        parse_value(row["text"], row["unit"] or None, kind=kind)
    msg = str(e.value)
    assert "\n" not in msg
    assert repr(row["text"]) in msg, row["source"]  # the message names the text
    assert "write it like" in msg or "tolerance" in msg  # and shows accepted forms


def test_error_message_matches_the_brief() -> None:
    with pytest.raises(NotationError) as e:
        parse_value("4k7k", "Ω")
    assert str(e.value).startswith("cannot read '4k7k' as a resistance")
    assert str(e.value).endswith("write it like 4k7, 4.7k, 4.7 kΩ or 4K7J")


RENDERS = rows("render_cases.csv")


@pytest.mark.parametrize("row", RENDERS,
                         ids=[f"{r['value']}{r['unit']}-{r['style']}" for r in RENDERS])
def test_render_cases(row: dict[str, str]) -> None:
    got = render(float(row["value"]), row["unit"] or None, style=row["style"],
                 digits=int(row["digits"]))
    assert got == row["expected"], row["source"]


@pytest.mark.parametrize(
    "tol,text",
    [((-0.05, 0.05), "±5 %"), ((-0.2, 0.8), "+80/−20 %"), ((-0.0005, 0.0005), "±0.05 %"),
     ((0.0, 1.0), "+100/−0 %"), (None, "")],
)
def test_render_tol(tol: tuple[float, float] | None, text: str) -> None:
    # J ±5 %, Z +80/−20 %, A ±0.05 %, P +100/−0 % (facts.md §2.2)
    assert render_tol(tol) == text
    if tol is not None:
        assert parse_tol(text) == tol


def test_value_is_frozen_and_shortcut_matches() -> None:
    v = parse_value("4k7", "Ω")
    with pytest.raises(FrozenInstanceError):
        v.value = 1.0  # type: ignore[misc]
    assert parse_quantity("4k7", "Ω") == v.value == 4700.0
    assert isinstance(v, Value)


def test_code_needs_a_kind_or_the_flag() -> None:
    # brief: a bare 104 with no kind and code=False is the number 104
    assert parse_quantity("104") == 104.0
    assert parse_quantity("104", kind=Kind.CAPACITOR) == 100e-9
    assert parse_quantity("104", "F", code=True) == 100e-9
    # a kind's codes apply only to the kind's own unit: a capacitor's rated voltage is not
    # a capacitor code
    assert parse_quantity("104", "V", kind=Kind.CAPACITOR) == 104.0


def test_decimal_comma_only_alone() -> None:
    assert parse_quantity("4,7k") == parse_quantity("4.7k")
    for bad in ("4,7.1k", "1,000", "1,2,3"):
        with pytest.raises(NotationError):
            parse_value(bad)


def test_m_is_milli_and_big_m_is_mega() -> None:
    # SI Brochure prefixes (from memory): m = 10^-3, M = 10^6
    assert parse_quantity("10m", "Ω") == 10e-3
    assert parse_quantity("10M", "Ω") == 10e6
    assert parse_quantity("10mF") == 10e-3


# --- independent check: quantiphy reads the same SI forms ---------------------------------

SI_FORMS = ["4.7k", "4.7 kΩ", "100nF", "0.1uF", "0.1 µF", "22uH", "10.106 MHz", "2.5 mA",
            "12V", "625 mW", "-55 °C", "1e3", "2.2E-6", "1000", "0.5", "10fF", "3 dB",
            "470 pF", "1.5 GHz", "33 kHz", "8.3 nC"]


@pytest.mark.parametrize("text", SI_FORMS)
def test_si_forms_agree_with_quantiphy(text: str) -> None:
    q = Quantity(text)
    v = parse_value(text)
    assert math.isclose(v.value, float(q), rel_tol=1e-12)
    assert (v.unit or "") == q.units


_mantissas = st.decimals(min_value="0.001", max_value="999999", places=3, allow_nan=False,
                         allow_infinity=False)
_prefixes = st.sampled_from(["", "f", "p", "n", "u", "µ", "m", "k", "M", "G", "T"])
_units = st.sampled_from(["", "Ω", "F", "H", "Hz", "V", "A", "W", "s"])


@settings(deadline=None)  # no wall-clock limits in tests
@given(_mantissas, _prefixes, _units, st.booleans())
def test_generated_si_forms_agree_with_quantiphy(m, prefix: str, unit: str,
                                                 space: bool) -> None:
    text = f"{m}{' ' if space else ''}{prefix}{unit}"
    if not prefix and not unit:
        text = str(m)
    v = parse_value(text)
    assert math.isclose(v.value, float(Quantity(text)), rel_tol=1e-12)


# --- Hypothesis round trips ---------------------------------------------------------------

UNITS = ["Ω", "F", "H", "Hz", "V", "A", "W", "°C", "s", "S", "C", "dB", "°C/W", "ppm/°C",
         "V/s", "", None]
finite = st.floats(allow_nan=False, allow_infinity=False)


@settings(deadline=None)  # no wall-clock limits in tests
@given(finite, st.sampled_from(UNITS), st.sampled_from(STYLES), st.integers(1, 9))
def test_render_then_parse_within_the_rendered_precision(x: float, unit: str | None,
                                                         style: str, digits: int) -> None:
    text = render(x, unit, style=style, digits=digits)
    back = parse_value(text, unit).value
    # rounding to `digits` significant digits moves a value by at most half a unit in the
    # last place: 0.5·10^(1−digits) relative (values with ≤ 7 exact digits come back exact)
    assert abs(back - x) <= 0.5 * 10 ** (1 - digits) * abs(x) * (1 + 1e-9)


@settings(deadline=None)  # no wall-clock limits in tests
@given(finite, st.sampled_from(UNITS), st.sampled_from(STYLES))
def test_render_with_all_digits_is_exact(x: float, unit: str | None, style: str) -> None:
    assert parse_value(render(x, unit, style=style, digits=17), unit).value == x


@settings(deadline=None)  # no wall-clock limits in tests
@given(st.floats(min_value=1e-15, max_value=1e12), st.sampled_from(["Ω", "F", "H"]))
def test_builder_values_read_back_with_the_kind(x: float, unit: str) -> None:
    # what we print for a part must read back even where the kind turns on marking codes
    kind = {"Ω": Kind.RESISTOR, "F": Kind.CAPACITOR, "H": Kind.INDUCTOR}[unit]
    text = render(x, unit, digits=17)
    assert parse_value(text, unit, kind=kind).value == x


def test_render_refuses_non_finite() -> None:
    for bad in (math.inf, math.nan):
        with pytest.raises(NotationError):
            render(bad, "Ω")
    with pytest.raises(NotationError):
        render(1.0, "Ω", style="fancy")
