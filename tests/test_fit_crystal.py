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
    load_group,
    load_offset,
    pierce_load,
    pull,
    reachable,
    sensitivity,
)
from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec, Stocked
from stock.slots import Role, Slot


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


# --- a crystal's load group -------------------------------------------------------------------

@pytest.mark.parametrize("case", CASES["pierce_load"], ids=lambda c: c["source"][:50])
def test_pierce_load(case: dict) -> None:
    got = pierce_load(case["c_a"], case["c_b"], case["c_stray"])
    assert got == approx(case["cl"], rel=case["rel"])


def _load_slots(c5: float, c6: PartSpec | float, xtal: PartSpec | None = None) -> list[Slot]:
    def cap(n: str, v: float) -> PartSpec:
        return PartSpec(n, Kind.CAPACITOR, "c0g", params=[Param("c", Bound.NOM, v)])

    part6 = c6 if isinstance(c6, PartSpec) else cap("C-6", c6)
    return [Slot(["Y1"], 1, "10 MHz", Kind.CRYSTAL, xtal or crystal(), Role.CRYSTAL, tie="x"),
            Slot(["C5"], 1, "33p", Kind.CAPACITOR, cap("C-5", c5), Role.CRYSTAL_LOAD, tie="x"),
            Slot(["C6"], 1, "33p", Kind.CAPACITOR, part6, Role.CRYSTAL_LOAD, tie="x")]


def _pull_ppm(cl_from: float, cl_to: float) -> float:
    # facts.md §5.2 (Petermann): Δf/f ≈ (C1/2)(1/(C0+CL2) − 1/(C0+CL1)), C1 20 fF, C0 5 pF
    return 0.5 * 20e-15 * (1 / (5e-12 + cl_to) - 1 / (5e-12 + cl_from)) * 1e6


def test_load_group_fixed_capacitors() -> None:
    # 33 p + 33 p with 3.5 p stray is the crystal's specified 20 pF: exactly on 10 MHz
    slots = _load_slots(33e-12, 33e-12)
    same = load_group(slots, {}, c_stray=3.5e-12)
    assert same.reachable and same.f_low == approx(10e6, rel=1e-12)
    # a 36 p stand-in for C6: CL = 33·36/69 + 3.5 = 20.72 pF, about −11 ppm: on frequency
    near = load_group(slots, {"C6": 36e-12}, 10e6, c_stray=3.5e-12)
    shift = (near.f_low / 10e6 - 1) * 1e6
    assert shift == approx(_pull_ppm(20e-12, 33 * 36 / 69 * 1e-12 + 3.5e-12), rel=1e-3)
    assert -12 < shift < -11 and near.reachable and "on frequency" in near.text
    # a 39 p stand-in: CL = 21.375 pF, about −20.9 ppm: beyond the 20 ppm rule ...
    far = load_group(slots, {"C6": 39e-12}, 10e6, c_stray=3.5e-12,
                     policy={"xtal_load_ppm_tol": 20.0})
    assert (far.f_low / 10e6 - 1) * 1e6 == approx(_pull_ppm(20e-12, 21.375e-12), rel=1e-3)
    assert not far.reachable
    # ... but inside a crystal whose own tolerance is ±30 ppm
    tol30 = crystal().with_params([Param("tol", Bound.MAX, 30e-6)])
    slots30 = _load_slots(33e-12, 33e-12, tol30)
    assert load_group(slots30, {"C6": 39e-12}, 10e6, c_stray=3.5e-12).reachable


def test_load_group_with_trimmer_and_a_crystal_stand_in() -> None:
    trim = PartSpec("VC-6", Kind.CAPACITOR, "trimmer",
                    params=[Param("c", Bound.MIN, 10e-12), Param("c", Bound.MAX, 60e-12)])
    slots = _load_slots(33e-12, trim)
    # as designed: trimmer at mid (35 p), CL = 33·35/68 + 3.5 pF = 20.49 pF
    designed = load_group(slots, {}, c_stray=3.5e-12)
    cl_mid = 33 * 35 / 68 * 1e-12 + 3.5e-12
    assert (designed.f_wanted / 10e6 - 1) * 1e6 == approx(_pull_ppm(20e-12, cl_mid), rel=1e-3)
    # a stand-in crystal marked 10 ppm high: the trimmer (CL 11.2–24.8 pF) takes it back
    high = crystal("X-high", f=10e6 * (1 + 10e-6))
    r = load_group(slots, {"Y1": high}, c_stray=3.5e-12)
    assert r.reachable and r.f_wanted == designed.f_wanted
    assert r.cl_needed is not None and 11.1e-12 < r.cl_needed < 24.8e-12
    # one marked 500 ppm high is beyond the whole trimmer range
    assert not load_group(slots, {"Y1": crystal("X-far", f=10.005e6)},
                          c_stray=3.5e-12).reachable


def test_load_group_errors() -> None:
    slots = _load_slots(33e-12, 33e-12)
    with pytest.raises(FitError):
        load_group(slots[1:], {})
    coil = Slot(["L1"], 1, "10u", Kind.INDUCTOR, None, Role.TUNED, tie="x")
    with pytest.raises(FitError):
        load_group([*slots, coil], {})
    with pytest.raises(FitError):
        pierce_load(-1e-12, 10e-12)
