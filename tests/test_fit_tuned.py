"""LC tanks: resonance formulas, retune after a stand-in, tie groups of slots.

Reference cases: tests/data/formula_cases.toml (facts.md §5.1: f0 = 1/(2π√(LC))).
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stock.errors import FitError
from stock.fit.tuned import (
    c_for,
    l_for,
    resonant_frequency,
    retune,
    retune_group,
    trimmer_range,
)
from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec
from stock.slots import Role, Slot


def approx(expected, rel: float = 1e-6, abs: float = 0.0):
    """pytest.approx without its default absolute slack of 1e-12, which would swallow pF."""
    return pytest.approx(expected, rel=rel, abs=abs)


CASES = tomllib.loads(
    (Path(__file__).parent / "data" / "formula_cases.toml").read_text(encoding="utf-8")
)


@pytest.mark.parametrize("case", CASES["resonance"], ids=lambda c: c["source"][:50])
def test_resonant_frequency(case: dict) -> None:
    assert resonant_frequency(case["l"], case["c"]) == approx(case["f"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["c_for"], ids=lambda c: c["source"][:50])
def test_c_for(case: dict) -> None:
    assert c_for(case["f"], case["l"]) == approx(case["c"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["l_for"], ids=lambda c: c["source"][:50])
def test_l_for(case: dict) -> None:
    assert l_for(case["f"], case["c"]) == approx(case["l"], rel=case["rel"])


@pytest.mark.parametrize("case", CASES["retune"], ids=lambda c: c["source"][:50])
def test_retune_cases(case: dict) -> None:
    trimmer = tuple(case["trimmer"]) if case["trimmer"] else None
    r = retune(l=case["l"], c_fixed=case["c_fixed"], f_target=case["f_target"],
               trimmer=trimmer, c_stray=case["c_stray"])
    assert r.can_retune is case["can_retune"]
    assert r.c_trimmer_needed == approx(case["c_trim"], rel=case["rel"])
    assert r.c_needed_total == approx(c_for(case["f_target"], case["l"]))
    if "f_new" in case:
        assert r.f_new == approx(case["f_new"], rel=case["rel"])
    assert ("can retune" in r.text) is (case["can_retune"] and trimmer is not None)
    if trimmer is not None:
        # f_new is the tank with the trimmer at mid-range (facts.md §5.1 formula)
        mid = case["c_fixed"] + case["c_stray"] + sum(trimmer) / 2
        assert r.f_new == approx(resonant_frequency(case["l"], mid))
        assert r.f_range is not None and r.f_range[0] < r.f_new < r.f_range[1]


def _cap(number: str, value: float, family: str = "c0g") -> PartSpec:
    return PartSpec(number, Kind.CAPACITOR, family, params=[Param("c", Bound.NOM, value)])


def _tank(case: dict) -> list[Slot]:
    coil = PartSpec("L-tank", Kind.INDUCTOR, "air", params=[Param("l", Bound.NOM, case["l"])])
    trim = PartSpec("VC-tank", Kind.CAPACITOR, "trimmer",
                    params=[Param("c", Bound.MIN, case["trimmer"][0]),
                            Param("c", Bound.MAX, case["trimmer"][1])])
    slots = [Slot(["L1"], 1, "L", Kind.INDUCTOR, coil, Role.TUNED, tie="tank1"),
             Slot(["VC1"], 1, "trimmer", Kind.CAPACITOR, trim, Role.TUNED, tie="tank1")]
    for n, c in enumerate(case["c_fixed"], start=2):
        slots.append(Slot([f"C{n}"], 1, "C", Kind.CAPACITOR, _cap(f"C-{n}", c), Role.TUNED,
                          tie="tank1"))
    return slots


@pytest.mark.parametrize("case", CASES["tank"], ids=lambda c: c["source"][:50])
def test_tank_group_retune_after_a_stand_in(case: dict) -> None:
    slots = _tank(case)
    # unchanged, the tank as designed must be tunable to its own frequency
    assert retune_group(slots, {}, case["f_target"]).can_retune
    r = retune_group(slots, case["changed"], case["f_target"])
    assert r.can_retune is case["can_retune"]
    # the answer must agree with the formula worked by hand: C_trim = C_needed − ΣC_fixed
    values = {f"C{n}": c for n, c in enumerate(case["c_fixed"], start=2)}
    values.update({k: v for k, v in case["changed"].items() if k.startswith("C")})
    coil = case["changed"].get("L1", case["l"])
    need = 1 / ((2 * math.pi * case["f_target"]) ** 2 * coil) - sum(values.values())
    assert r.c_trimmer_needed == approx(need)
    assert r.trimmer_range == tuple(case["trimmer"])


def test_group_reads_labels_and_trimmer_stand_ins() -> None:
    case = CASES["tank"][0]
    slots = _tank(case)
    # a stand-in trimmer given as its range; keys may be the slot label
    r = retune_group(slots, {"VC1": (10e-12, 60e-12), "C2": 82e-12}, case["f_target"])
    assert r.trimmer_range == (10e-12, 60e-12) and r.can_retune


def test_group_errors() -> None:
    case = CASES["tank"][0]
    slots = _tank(case)
    with pytest.raises(FitError):
        retune_group([s for s in slots if s.kind is Kind.CAPACITOR], {}, 10e6)
    xtal = Slot(["Y1"], 1, "10 MHz", Kind.CRYSTAL, None, Role.CRYSTAL, tie="tank1")
    with pytest.raises(FitError):
        retune_group([*slots, xtal], {}, 10e6)
    bare_trim = Slot(["VC2"], 1, "trimmer", Kind.CAPACITOR, _cap("VC-x", 20e-12, "trimmer"))
    with pytest.raises(FitError):
        retune_group([*slots[:1], bare_trim], {}, 10e6)


def test_trimmer_range_reads_min_and_max() -> None:
    trim = PartSpec("VC", Kind.CAPACITOR, "trimmer",
                    params=[Param("c", Bound.MIN, 4e-12), Param("c", Bound.MAX, 20e-12)])
    assert trimmer_range(trim) == (4e-12, 20e-12)
    assert trimmer_range(_cap("C", 10e-12)) is None


def test_bad_values_raise() -> None:
    with pytest.raises(FitError):
        resonant_frequency(0.0, 100e-12)
    with pytest.raises(FitError):
        c_for(-1.0, 1e-6)
    with pytest.raises(FitError):
        retune(l=1e-6, c_fixed=-1e-12, f_target=1e6)
    with pytest.raises(FitError):
        retune(l=1e-6, c_fixed=0.0, f_target=1e6)


# --- properties (facts.md §5.1: the formula and its inverses) ----------------------------------

ls = st.floats(1e-9, 1.0)
cs = st.floats(1e-13, 1e-3)


@given(l=ls, c=cs)
def test_round_trip_l(l: float, c: float) -> None:  # noqa: E741
    assert l_for(resonant_frequency(l, c), c) == approx(l, rel=1e-12)


@given(l=ls, c=cs)
def test_round_trip_c(l: float, c: float) -> None:  # noqa: E741
    assert c_for(resonant_frequency(l, c), l) == approx(c, rel=1e-12)


@given(l=ls, c=cs, k=st.floats(1.01, 100.0))
def test_more_capacitance_lowers_the_frequency(l: float, c: float, k: float) -> None:  # noqa: E741
    # f ∝ 1/√C: k times the capacitance divides f by √k
    assert resonant_frequency(l, c * k) == approx(resonant_frequency(l, c) / math.sqrt(k))


@given(l=st.floats(1e-7, 1e-4), c_fixed=st.floats(0.0, 500e-12),
       lo=st.floats(1e-12, 20e-12), span=st.floats(1e-12, 100e-12), f=st.floats(1e6, 30e6))
def test_retune_answer_matches_its_own_setting(l, c_fixed, lo, span, f) -> None:  # noqa: E741
    r = retune(l=l, c_fixed=c_fixed, f_target=f, trimmer=(lo, lo + span))
    if r.can_retune:
        # setting the trimmer where it says brings the tank onto f_target
        assert resonant_frequency(l, c_fixed + r.c_trimmer_needed) == approx(f)
    else:
        assert not (lo <= r.c_trimmer_needed <= lo + span)
