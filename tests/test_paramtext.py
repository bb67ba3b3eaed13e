"""The parameter expression syntax: cases from tests/data/param_cases.toml (each with its
source) and a Hypothesis round trip ``parse_params(render_params(ps)) == ps``."""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import NotationError
from stock.kinds import Bound, Kind
from stock.params import CONDITIONS, PARAMS
from stock.paramtext import (
    Criterion,
    parse_criterion,
    parse_param,
    parse_params,
    render_param,
    render_params,
)
from stock.parts import Origin, Param
from stock.slots import Op

DATA = tomllib.loads((Path(__file__).parent / "data" / "param_cases.toml").read_text("utf-8"))


def _kind(case: dict[str, Any]) -> Kind | None:
    return Kind(case["kind"]) if "kind" in case else None


def _expected(case: dict[str, Any]) -> list[Param]:
    return [Param(p["name"], Bound(p["bound"]), float(p["value"]), dict(p.get("at", {})))
            for p in case["params"]]


@pytest.mark.parametrize("case", DATA["case"], ids=[c["text"] for c in DATA["case"]])
def test_param_cases(case: dict[str, Any]) -> None:
    got = parse_params(case["text"], _kind(case))
    assert got == _expected(case), case["source"]
    # and the text we write reads back to the same params
    assert parse_params(render_params(got), _kind(case)) == got


@pytest.mark.parametrize("case", DATA["error"], ids=[c["text"] or "empty" for c in DATA["error"]])
def test_param_errors(case: dict[str, Any]) -> None:
    with pytest.raises(NotationError) as e:
        parse_param(case["text"], _kind(case))
    msg = str(e.value)
    assert case["contains"] in msg, case["source"]
    assert "\n" not in msg


@pytest.mark.parametrize("case", DATA["criterion"], ids=[c["text"] for c in DATA["criterion"]])
def test_criteria(case: dict[str, Any]) -> None:
    got = parse_criterion(case["text"], _kind(case))
    assert got == Criterion(case["param"], Op(case["op"]), case["value"]), case["source"]


@pytest.mark.parametrize("text", ["vceo>30V", "family>=c0g", "vceo>=30V@ic=1mA", "", "zz=1"])
def test_criterion_errors(text: str) -> None:
    with pytest.raises(NotationError):
        parse_criterion(text)


@pytest.mark.parametrize(
    "text,rendered",
    [
        ("hfe=100..300@ic=150mA,vce=10V", "hfe=100..300@ic=150mA,vce=10V"),  # brief
        ("vceo=40V", "vceo=40V"),  # a rating's own bound is written with '='
        ("ft>=300MHz", "ft>=300MHz"),  # a characteristic shows its bound
        ("ft=300MHz", "ft>=300MHz"),  # ft's default bound is min (stock.params)
        ("vf<=1V@if=10mA", "vf<=1V@if=10mA"),
        ("ft~300MHz", "ft~300MHz"),
        ("tol=5%", "tol=±5%"),
        ("tol=+80/-20%", "tol=+80/-20%"),
        ("pd=625mW@ta=25°C", "pd=625mW@ta=25°C"),
        ("r=4k7", "r=4.7kΩ"),
        ("c=100n", "c=100nF"),
    ],
)
def test_render_is_the_documented_form(text: str, rendered: str) -> None:
    # the forms docs/notation.md shows
    assert render_params(parse_params(text)) == rendered


def test_render_param_splits_what_cannot_be_a_range() -> None:
    ps = [Param("vf", Bound.MAX, 1.0, {"if": 0.01}), Param("vf", Bound.MAX, 0.45, {"if": 1.0})]
    assert render_param(ps) == "vf<=1V@if=10mA; vf<=450mV@if=1A"


def test_params_order_is_kept() -> None:
    ps = parse_params(["hfe>=100", "vceo=40V", "hfe<=300"])
    assert [p.name for p in ps] == ["hfe", "vceo", "hfe"]
    assert parse_params(render_params(ps)) == ps


# --- Hypothesis round trip -------------------------------------------------------------------

finite = st.floats(allow_nan=False, allow_infinity=False)
conditions = st.dictionaries(st.sampled_from(list(CONDITIONS)), finite, max_size=3)
# origin is given: text carries no origin, so parsed values are the user's
params = st.builds(Param, st.sampled_from(list(PARAMS)), st.sampled_from(list(Bound)), finite,
                   conditions, st.just(Origin.USER))


@settings(deadline=None)  # no wall-clock limits in tests
@given(st.lists(params, max_size=6))
def test_render_params_round_trip(ps: list[Param]) -> None:
    assert parse_params(render_params(ps)) == ps


@settings(deadline=None)  # no wall-clock limits in tests
@given(st.lists(params, max_size=4))
def test_render_params_is_stable(ps: list[Param]) -> None:
    text = render_params(ps)
    assert render_params(parse_params(text)) == text
