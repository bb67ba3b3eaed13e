"""IEC 60063 E series: our tables against facts.md (tests/data/eseries_iec60063.csv) and,
independently, against the `eseries` PyPI package; lookups against
tests/data/eseries_lookups.csv."""

from __future__ import annotations

import math

import eseries as ref  # test-only independent check (PyPI "eseries")
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import NotationError
from stock.quantities import (
    SERIES,
    decade,
    nearest,
    next_down,
    next_up,
    series_of,
    values_between,
)
from tests.reference import rows


@pytest.mark.parametrize("row", rows("eseries_iec60063.csv"), ids=lambda r: r["series"])
def test_decades_match_published_lists(row: dict[str, str]) -> None:
    published = tuple(float(v) for v in row["decade_values"].split())
    assert decade(row["series"]) == published, row["source"]


@pytest.mark.parametrize("name", ["E3", "E6", "E12", "E24", "E48", "E96", "E192"])
def test_every_series_matches_the_eseries_package(name: str) -> None:
    # the package stores decade values as integers ×10 (E3–E24) or ×100 (E48–E192)
    theirs = ref.series(getattr(ref, name))
    scale = 10 if name in ("E3", "E6", "E12", "E24") else 100
    assert tuple(float(f"{v}e-{len(str(scale)) - 1}") for v in theirs) == SERIES[name]


@pytest.mark.parametrize("name", ["E12", "E24", "E48", "E96", "E192"])
def test_each_series_is_every_other_member_of_the_next(name: str) -> None:
    # facts.md §1.1: E6 ⊂ E12 ⊂ E24; E48 ⊂ E96 ⊂ E192
    coarser = {"E12": "E6", "E24": "E12", "E96": "E48", "E192": "E96"}.get(name)
    if coarser:
        assert SERIES[name][::2] == SERIES[coarser]


def test_three_figure_series_follow_the_formula_except_e192_920() -> None:
    # facts.md §1.2: round(100·10^(i/n)), one exception: E192 index 185 is 9.20 not 9.19
    for name in ("E48", "E96", "E192"):
        n = int(name[1:])
        formula = [round(100 * 10 ** (i / n)) / 100 for i in range(n)]
        diffs = [(i, f, v) for i, (f, v) in enumerate(zip(formula, SERIES[name], strict=True))
                 if f != v]
        assert diffs == ([(185, 9.19, 9.2)] if name == "E192" else []), name


LOOKUPS = rows("eseries_lookups.csv")


def _floats(text: str) -> list[float]:
    return [float(v) for v in text.split()]


@pytest.mark.parametrize("row", LOOKUPS,
                         ids=[f"{r['function']}-{r['series']}-{r['input']}" for r in LOOKUPS])
def test_lookup_table(row: dict[str, str]) -> None:
    fn, series, expected = row["function"], row["series"], row["expected"]
    if fn == "nearest":
        assert nearest(float(row["input"]), series) == float(expected), row["source"]
    elif fn == "next_up":
        assert next_up(float(row["input"]), series) == float(expected), row["source"]
    elif fn == "next_down":
        assert next_down(float(row["input"]), series) == float(expected), row["source"]
    elif fn == "series_of":
        assert series_of(float(row["input"])) == expected.split(), row["source"]
    elif fn == "values_between":
        lo, hi = _floats(row["input"])
        assert values_between(lo, hi, series) == _floats(expected), row["source"]
    elif fn == "member":
        assert (float(row["input"]) in decade(series)) == (expected == "true"), row["source"]
    else:  # pragma: no cover - a typo in the data file
        raise AssertionError(f"unknown function {fn!r} in eseries_lookups.csv")


positive = st.floats(min_value=1e-13, max_value=1e13, allow_nan=False, allow_infinity=False)
series_names = st.sampled_from(list(SERIES))


@settings(deadline=None)  # no wall-clock limits in tests
@given(positive, series_names)
def test_nearest_agrees_with_the_eseries_package(x: float, name: str) -> None:
    # eseries.find_nearest works on a linear scale; ours on a log scale. Both must pick
    # one of the two members around x, and where the two members are clearly apart on
    # both scales the picks must agree.
    ours = nearest(x, name)
    lo, hi = next_down(x * (1 + 1e-9), name), next_up(x * (1 - 1e-9), name)
    assert ours in (lo, hi) or ours == x
    theirs = ref.find_nearest(getattr(ref, name), x)
    lin_tie = abs((x - lo) - (hi - x)) < 0.2 * (hi - lo)
    if not lin_tie:
        assert math.isclose(ours, theirs, rel_tol=1e-9)


@settings(deadline=None)  # no wall-clock limits in tests
@given(positive, series_names)
def test_next_up_and_down_bracket_the_value(x: float, name: str) -> None:
    up, down = next_up(x, name), next_down(x, name)
    assert down < x < up
    assert next_up(down, name) >= x or math.isclose(next_up(down, name), x, rel_tol=1e-9)
    ratio = math.log10(up / down)
    assert ratio <= 2.5 / int(name[1:]) + 1e-9  # at most two steps of the series apart


@settings(deadline=None)  # no wall-clock limits in tests
@given(positive, series_names)
def test_series_of_reports_the_nearest_members(x: float, name: str) -> None:
    assert name in series_of(nearest(x, name))


@pytest.mark.parametrize("bad", [0.0, -1.0, math.inf, math.nan])
def test_lookups_refuse_non_positive_values(bad: float) -> None:
    with pytest.raises(NotationError):
        nearest(bad, "E12")
    assert series_of(bad) == []


def test_unknown_series_suggests() -> None:
    with pytest.raises(NotationError, match="E24"):
        decade("E25")
    assert decade("e12") == SERIES["E12"]
