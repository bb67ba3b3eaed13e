"""Crystal pulling: load offset, pull, sensitivity, C0 from fa, reachability from stock.

Reference cases: tests/data/formula_cases.toml (facts.md §5.2: Petermann-Technik pull
calculator, Circuit Cellar "Test Your EQ", the Fox/Abracon HC-49U cross-check).
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stock.errors import FitError
from stock.fit.crystal import (
    C0_ASSUMED,
    c0_from_fa,
    cl_for_offset,
    find_pullable,
    load_offset,
    pull,
    reachable,
    sensitivity,
)
from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec, Stocked


def approx(expected, rel: float = 1e-6, abs: float = 0.0):
    """pytest.approx without its default absolute slack of 1e-12, which would swallow pF."""
    return pytest.approx(expected, rel=rel, abs=abs)


CASES = tomllib.loads(
    (Path(__file__).parent / "data" / "formula_cases.toml").read_text(encoding="utf-8")
)


def crystal(number: str = "XTAL", *, f: float = 10e6, cl: float | None = 20e-12,
            c1: float | None = 20e-15, c0: float | None = 5e-12, overtone: int | None = None,
            family: str = "fundamental", c1_bound: Bound = Bound.TYP) -> PartSpec:
    params = [Param("f", Bound.NOM, f)]
    if cl is not None:
        params.append(Param("cl", Bound.NOM, cl))
    if c1 is not None:
        params.append(Param("c1", c1_bound, c1))
    if c0 is not None:
        params.append(Param("c0", Bound.TYP, c0))
    if overtone is not None:
        params.append(Param("overtone", Bound.NOM, overtone))
    return PartSpec(number, Kind.CRYSTAL, family, params=params)


# --- formulas (facts.md §5.2) -------------------------------------------------------------------

@pytest.mark.parametrize("case", CASES["offset"], ids=lambda c: c["source"][:50])
def test_load_offset(case: dict) -> None:
    got = load_offset(case["c1"], case["c0"], case["cl"]) * 1e6
    assert got == approx(case["ppm"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["sensitivity"], ids=lambda c: c["source"][:50])
def test_sensitivity(case: dict) -> None:
    # per farad; × 1e-6 (ppm) × 1e-12 (per pF) gives ppm/pF: factor 1e6 × 1e-12
    got = sensitivity(case["c1"], case["c0"], case["cl"]) * 1e6 * 1e-12
    assert got == approx(case["ppm_per_pf"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["pull"], ids=lambda c: c["source"][:50])
def test_pull(case: dict) -> None:
    got = pull(case["c1"], case["c0"], case["cl_from"], case["cl_to"]) * 1e6
    assert got == approx(case["ppm"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["c0_from_fa"], ids=lambda c: c["source"][:50])
def test_c0_from_fa(case: dict) -> None:
    got = c0_from_fa(case["fs"], case["fa"], case["c1"])
    assert got == approx(case["c0"], rel=case["rel"])


def test_ten_megahertz_offset_in_hertz() -> None:
    # facts.md §5.2 [D]: 400 ppm ≈ 4.0 kHz and −29.6 ppm ≈ −296 Hz at 10 MHz
    assert 10e6 * load_offset(20e-15, 5e-12, 20e-12) == approx(4000.0)
    assert 10e6 * pull(20e-15, 5e-12, 20e-12, 22e-12) == approx(-296.0, abs=0.5)


# --- reachability of a crystal in stock ----------------------------------------------------------

@pytest.mark.parametrize("case", CASES["crystal"], ids=lambda c: c["source"][:50])
def test_reachable_cases(case: dict) -> None:
    x = crystal(f=case["f"], cl=case["cl_spec"], c1=case["c1"], c0=case["c0"],
                overtone=case["overtone"], family="overtone" if case["overtone"] > 1 else
                "fundamental")
    want = case["f"] * (1 + case["want_ppm"] * 1e-6)
    p = reachable(x, want, (case["cl_min"], case["cl_max"]))
    assert p.known
    assert p.reachable is case["reachable"]
    if "cl_needed" in case:
        assert p.cl_needed == approx(case["cl_needed"], rel=case["rel"])
    else:
        assert p.cl_needed is None
    assert p.f_low < p.f_high
    assert (p.f_low <= want <= p.f_high) is case["reachable"]
    assert ("can be pulled on" in p.text) is case["reachable"]


def test_overtone_argument_overrides_the_record_and_divides_the_pull_by_n_squared() -> None:
    # facts.md §5.2: overtone pullability ≈ 1/n²
    x = crystal(cl=0.0)
    fund = reachable(x, 10e6, (10e-12, 30e-12))
    third = reachable(x, 10e6, (10e-12, 30e-12), overtone=3)
    assert (third.f_high - third.f_low) == approx((fund.f_high - fund.f_low) / 9)
    assert any("1/9" in n for n in third.notes)


def test_assumptions_are_said() -> None:
    p = reachable(crystal(c0=None), 10e6, (10e-12, 30e-12))
    assert any("assumed" in n for n in p.notes)
    # with C0 assumed the range is what the formula gives for C0_ASSUMED
    fs = 10e6 / (1 + load_offset(20e-15, C0_ASSUMED, 20e-12))
    assert p.f_high == approx(fs * (1 + load_offset(20e-15, C0_ASSUMED, 10e-12)))
    assert any("typical" in n for n in p.notes)  # c1 recorded as typ
    p = reachable(crystal(c1=20e-15, c1_bound=Bound.MAX), 10e6, (10e-12, 30e-12))
    assert not any(n.startswith("c1 is a typical") for n in p.notes)
    p = reachable(crystal(family="overtone", f=30e6), 30e6, (10e-12, 30e-12))
    assert any("assumed 3" in n for n in p.notes)


def test_unknown_c1_claims_nothing() -> None:
    p = reachable(crystal(c1=None), 10e6, (10e-12, 30e-12))
    assert not p.known and not p.reachable and "c1" in p.text


def test_bad_inputs_raise() -> None:
    with pytest.raises(FitError):
        reachable(crystal(), 10e6, (-1e-12, 30e-12))
    with pytest.raises(FitError):
        reachable(PartSpec("X", Kind.CRYSTAL), 10e6, (10e-12, 30e-12))
    with pytest.raises(FitError):
        c0_from_fa(10e6, 9e6, 20e-15)
    with pytest.raises(FitError):
        load_offset(-1e-15, 5e-12, 20e-12)


def test_find_pullable_ranks_by_trim_left() -> None:
    # two 10 MHz crystals and a 12 MHz one; want +100 ppm with a 10–30 pF trimmer
    near = crystal("X-A", cl=20e-12)
    far = crystal("X-B", cl=30e-12)  # specified at 30 pF: its 10 MHz sits lower above fs
    other = crystal("X-C", f=12e6)
    stock = [Stocked(far, free=5), Stocked(near, free=1), Stocked(other, free=9),
             Stocked(crystal("X-D", c1=None), free=9)]
    want = 10e6 * (1 + 100e-6)
    got = find_pullable(want, (10e-12, 30e-12), stock)
    assert [s.part.number for s, _ in got] == ["X-B", "X-A"] or \
        [s.part.number for s, _ in got] == ["X-A", "X-B"]
    mid = 20e-12
    dists = [abs((p.cl_needed or 0) - mid) for _, p in got]
    assert dists == sorted(dists)
    assert all(p.reachable for _, p in got)


# --- properties ---------------------------------------------------------------------------------

c1s = st.floats(1e-15, 100e-15)
c0s = st.floats(1e-12, 10e-12)
cls = st.floats(0.0, 100e-12)


@given(c1=c1s, c0=c0s, a=cls, b=cls, c=cls)
def test_pull_adds_up(c1, c0, a, b, c) -> None:
    # facts.md §5.2: Δf/f between loads is a difference of offsets, so pulls chain
    assert pull(c1, c0, a, b) + pull(c1, c0, b, c) == approx(pull(c1, c0, a, c),
                                                                      abs=1e-15)


@given(c1=c1s, c0=c0s, a=cls, d=st.floats(1e-13, 50e-12))
def test_raising_the_load_lowers_the_frequency(c1, c0, a, d) -> None:
    # facts.md §5.2: raising CL lowers the frequency
    assert pull(c1, c0, a, a + d) < 0


@given(c1=c1s, c0=c0s, cl=cls)
def test_sensitivity_is_the_slope_of_the_offset(c1, c0, cl) -> None:
    h = 1e-16
    slope = (load_offset(c1, c0, cl + h) - load_offset(c1, c0, cl)) / h
    assert sensitivity(c1, c0, cl) == approx(slope, rel=1e-3)
    assert sensitivity(c1, c0, cl) < 0


@given(c1=c1s, c0=c0s, fs=st.floats(1e5, 2e8))
def test_c0_from_fa_inverts_the_antiresonance(c1, c0, fs) -> None:
    # facts.md §5.2: fa ≈ fs·√(1 + C1/C0)
    fa = fs * math.sqrt(1 + c1 / c0)
    assert c0_from_fa(fs, fa, c1) == approx(c0, rel=1e-6)


@given(c1=c1s, c0=c0s, cl=st.floats(1e-13, 100e-12))
def test_cl_for_offset_inverts_load_offset(c1, c0, cl) -> None:
    assert cl_for_offset(c1, c0, load_offset(c1, c0, cl)) == approx(cl, rel=1e-9)
