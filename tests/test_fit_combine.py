"""Combinations of R, C and L from stock: worked examples, searches, ratings, properties.

Reference cases live in tests/data/formula_cases.toml, each with its source (facts.md §5.4
for the series/parallel worst-case formulas).
"""

from __future__ import annotations

import itertools
import math
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import FitError
from stock.fit.combine import (
    Combination,
    Stacking,
    Topology,
    combine_value,
    find_combinations,
    part_tolerance,
)
from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec, Stocked


def approx(expected, rel: float = 1e-6, abs: float = 0.0):
    """pytest.approx without its default absolute slack of 1e-12, which would swallow pF."""
    return pytest.approx(expected, rel=rel, abs=abs)


CASES = tomllib.loads(
    (Path(__file__).parent / "data" / "formula_cases.toml").read_text(encoding="utf-8")
)
VALUE = {Kind.RESISTOR: "r", Kind.CAPACITOR: "c", Kind.INDUCTOR: "l"}


def make(number: str, kind: Kind, value: float, tol: float | None, free: int,
         family: str | None = None, **ratings: float) -> Stocked:
    params = [Param(VALUE[kind], Bound.NOM, value)]
    if tol is not None:
        params += [Param("tol", Bound.MIN, -tol), Param("tol", Bound.MAX, tol)]
    params += [Param(name, Bound.MAX, v) for name, v in ratings.items()]
    return Stocked(PartSpec(number, kind, family, params=params), free=free)


# --- worked examples (facts.md §5.4) ------------------------------------------------------------

@pytest.mark.parametrize("case", CASES["combination"], ids=lambda c: c["source"][:60])
def test_combine_value_worked_examples(case: dict) -> None:
    nom, low, high = combine_value([tuple(p) for p in case["parts"]], case["topology"],
                                   Kind(case["kind"]),
                                   stacking=case.get("stacking", "worst-case"))
    rel = case["rel"]
    assert nom == approx(case["nominal"], rel=rel)
    assert low == approx(case["low"], rel=rel)
    assert high == approx(case["high"], rel=rel)


def test_worked_relative_tolerances() -> None:
    # facts.md §5.4: 4.7 k ±5 % + 1.0 k ±1 % → ±4.30 %; in parallel −1.73 % / +1.68 %;
    # 100 n ±10 % ∥ 47 n ±5 % → ±8.40 %
    nom, low, high = combine_value([(4.7e3, -0.05, 0.05), (1e3, -0.01, 0.01)], "series",
                                   Kind.RESISTOR)
    assert (high - nom) / nom == approx(0.0430, abs=5e-5)
    nom, low, high = combine_value([(4.7e3, -0.05, 0.05), (1e3, -0.01, 0.01)], "parallel",
                                   Kind.RESISTOR)
    assert (low - nom) / nom == approx(-0.0173, abs=5e-5)
    assert (high - nom) / nom == approx(0.0168, abs=5e-5)
    nom, low, high = combine_value([(100e-9, -0.1, 0.1), (47e-9, -0.05, 0.05)], "parallel",
                                   Kind.CAPACITOR)
    assert (high - nom) / nom == approx(0.0840, abs=5e-5)


def test_combine_value_rejects_nonsense() -> None:
    with pytest.raises(FitError):
        combine_value([(-1.0, -0.05, 0.05)], "series", Kind.RESISTOR)
    with pytest.raises(FitError):
        combine_value([(1.0, 0.05, 0.05)], "series", Kind.RESISTOR)  # tol_minus must be ≤ 0
    with pytest.raises(FitError):
        combine_value([(1.0, -0.05, 0.05)] * 2, "series-parallel", Kind.RESISTOR)
    with pytest.raises(FitError):
        combine_value([(1.0, -0.05, 0.05)] * 2, "series", Kind.CRYSTAL)


# --- substitution cases from the data file --------------------------------------------------------

def _stock(case: dict) -> list[Stocked]:
    kind = Kind(case["kind"])
    out = []
    for row in case["stock"]:
        ratings = {k: row[k] for k in ("v_rated", "p_rated") if k in row}
        out.append(make(row["number"], kind, row["value"], row.get("tol"), row["free"],
                        row.get("family"), **ratings))
    return out


@pytest.mark.parametrize("case", CASES["substitution"], ids=lambda c: c["name"])
def test_substitution_cases(case: dict) -> None:
    found = find_combinations(case["target"], tuple(case["tol"]), Kind(case["kind"]),
                              _stock(case), family=case.get("family"),
                              v_working=case.get("v_working"), power=case.get("power"),
                              policy=case.get("policy"))
    if not case["best"]:
        assert found == []
        return
    assert found, "expected a combination"
    best = found[0]
    assert sorted(s.part.number for s in best.parts) == sorted(case["best"])
    assert best.topology == Topology(case["topology"])
    lo = case["target"] * (1 + case["tol"][0])
    hi = case["target"] * (1 + case["tol"][1])
    assert lo * (1 - 1e-9) <= best.low <= best.nominal <= best.high <= hi * (1 + 1e-9)
    assert best.error == approx((best.nominal - case["target"]) / case["target"])
    if "ok" in case:
        assert best.ok is case["ok"]
        assert any(("OVER" if not case["ok"] else ": ok") in note for note in best.checks)


def test_series_capacitor_voltage_share_is_worst_case() -> None:
    # facts.md §5.4: DC divides inversely to C; the smaller (low-limit) part takes the most:
    # 80 V × 110/(90 + 110) = 44 V
    part = make("C-100n", Kind.CAPACITOR, 100e-9, 0.10, 2, "c0g", v_rated=50.0)
    (best, *_rest) = find_combinations(50e-9, (-0.1, 0.1), Kind.CAPACITOR, [part],
                                       v_working=80.0, policy={"cap_v_fraction_other": 1.0})
    assert any("44 V" in note for note in best.checks)


def test_parallel_resistor_power_share() -> None:
    # facts.md §5.4: in parallel Pi = P·R/Ri, so the 1 k of 1 k ∥ 4.7 k takes most of it;
    # worst case (1 k at −1 %, 4.7 k at +5 %): P·(R∥)/Ri computed here by hand
    p1 = make("R-1k0", Kind.RESISTOR, 1e3, 0.01, 1, p_rated=1.0)
    p2 = make("R-4k7", Kind.RESISTOR, 4.7e3, 0.05, 1, p_rated=1.0)
    (best, *_rest) = find_combinations(825.0, (-0.02, 0.02), Kind.RESISTOR, [p1, p2],
                                       power=0.5, policy={"r_p_fraction_max": 0.6})
    r1, r2 = 990.0, 4935.0
    share = 0.5 * (r1 * r2 / (r1 + r2)) / r1  # P·R_total/R_i = P·R2/(R1+R2)
    assert share == approx(0.4165, abs=1e-4)
    assert any("416 mW" in note and "R-1k0" in note for note in best.checks)
    assert best.ok  # 0.42 W ≤ 0.6 × 1 W


def test_notes_unknown_tolerance_mixed_dielectric_polarised_and_coupling() -> None:
    # IEC 60062 (facts.md §2.3): no tolerance band means ±20 %
    r = make("R-10k-untol", Kind.RESISTOR, 10e3, None, 2)
    assert part_tolerance(r.part) == (-0.2, 0.2, False)
    (best, *_rest) = find_combinations(20e3, (-0.2, 0.2), Kind.RESISTOR, [r])
    assert best.low == approx(16e3) and best.high == approx(24e3)
    assert any("±20 %" in n for n in best.checks)
    # mixed dielectrics and polarised parts in series (facts.md §3.3, §5.4)
    e1 = make("C-10u-elko", Kind.CAPACITOR, 10e-6, 0.2, 1, "electrolytic", v_rated=25.0)
    e2 = make("C-10u-x7r", Kind.CAPACITOR, 10e-6, 0.1, 1, "x7r", v_rated=25.0)
    (best, *_rest) = find_combinations(5e-6, (-0.2, 0.2), Kind.CAPACITOR, [e1, e2],
                                       max_parts=2)
    assert best.topology is Topology.SERIES
    assert any("mixes dielectrics" in n for n in best.checks)
    assert any("balancing resistors" in n for n in best.checks)
    # inductors: no mutual coupling assumed, and said so
    coil = make("L-10u", Kind.INDUCTOR, 10e-6, 0.1, 2)
    (best, *_rest) = find_combinations(20e-6, (-0.1, 0.1), Kind.INDUCTOR, [coil])
    assert any("mutual coupling" in n for n in best.checks)


def test_family_filter_and_adjustables_excluded() -> None:
    c0g = make("C-47p-c0g", Kind.CAPACITOR, 47e-12, 0.05, 2, "c0g")
    x7r = make("C-47p-x7r", Kind.CAPACITOR, 47e-12, 0.05, 2, "x7r")
    trim = make("C-trim", Kind.CAPACITOR, 47e-12, 0.05, 2, "trimmer")
    found = find_combinations(94e-12, (-0.05, 0.05), Kind.CAPACITOR, [c0g, x7r, trim],
                              family="NP0", limit=50)
    assert found and all(s.part.family == "c0g" for c in found for s in c.parts)
    found = find_combinations(94e-12, (-0.05, 0.05), Kind.CAPACITOR, [trim])
    assert found == []


def test_need_counts_every_use() -> None:
    # three copies of a kit need three combinations: a part used twice needs 2 × 3 free
    r = make("R-10k", Kind.RESISTOR, 10e3, 0.05, 5)
    assert find_combinations(20e3, (-0.05, 0.05), Kind.RESISTOR, [r], need=3) == []
    r = make("R-10k", Kind.RESISTOR, 10e3, 0.05, 6)
    (best, *_rest) = find_combinations(20e3, (-0.05, 0.05), Kind.RESISTOR, [r], need=3)
    assert len(best.parts) == 2
    # to_buy parts are not free stock
    r = make("R-10k", Kind.RESISTOR, 10e3, 0.05, 6)
    r.to_buy = True
    assert find_combinations(20e3, (-0.05, 0.05), Kind.RESISTOR, [r]) == []


def test_bad_arguments_raise_fit_error() -> None:
    with pytest.raises(FitError):
        find_combinations(1e3, (-0.05, 0.05), Kind.BJT, [])
    with pytest.raises(FitError):
        find_combinations(-1.0, (-0.05, 0.05), Kind.RESISTOR, [])
    with pytest.raises(FitError):
        find_combinations(1e3, (0.05, 0.05), Kind.RESISTOR, [])


# --- search against brute force (independent formulas written out here) -------------------------

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063 (facts.md §1.1)


def _brute_pairs(kind: Kind, stock: list[Stocked], target: float, tol: tuple[float, float]
                 ) -> set[tuple[str, tuple[str, ...]]]:
    """Every fitting pair, from the textbook formulas (facts.md §5.4), by exhaustion."""
    out = set()
    lo_w, hi_w = target * (1 + tol[0]), target * (1 + tol[1])
    for i, j in itertools.combinations_with_replacement(range(len(stock)), 2):
        a, b = stock[i], stock[j]
        if i == j and a.free < 2:
            continue
        ta = part_tolerance(a.part)[1]
        tb = part_tolerance(b.part)[1]
        va, vb = a.part.nominal(VALUE[kind]), b.part.nominal(VALUE[kind])
        assert va is not None and vb is not None
        for top in (Topology.SERIES, Topology.PARALLEL):
            summing = (top is Topology.SERIES) == (kind is not Kind.CAPACITOR)

            def value(x: float, y: float, summing: bool = summing) -> float:
                return x + y if summing else 1.0 / (1.0 / x + 1.0 / y)

            low = value(va * (1 - ta), vb * (1 - tb))
            high = value(va * (1 + ta), vb * (1 + tb))
            if low >= lo_w * (1 - 1e-9) and high <= hi_w * (1 + 1e-9):
                out.add((top.value, tuple(sorted((a.part.number, b.part.number)))))
    return out


stock_rows = st.lists(
    st.tuples(st.sampled_from(E12), st.integers(0, 3), st.sampled_from((0.01, 0.02, 0.05, 0.1)),
              st.integers(1, 3)),
    min_size=1, max_size=10,
)


@settings(max_examples=80, deadline=None)
@given(rows=stock_rows, kind=st.sampled_from((Kind.RESISTOR, Kind.CAPACITOR)),
       pick=st.tuples(st.integers(0, 9), st.integers(0, 9), st.booleans(),
                      st.floats(-0.08, 0.08)),
       tol=st.sampled_from((0.02, 0.05, 0.1, 0.2)))
def test_pair_search_finds_exactly_the_brute_force_pairs(rows, kind, pick, tol) -> None:
    stock = [make(f"P{n}", kind, m * 10**e, t, f) for n, (m, e, t, f) in enumerate(rows)]
    # aim near a value two stocked parts make, so that many draws have pairs that fit
    i, j, add, shift = pick
    a, b = rows[i % len(rows)], rows[j % len(rows)]
    va, vb = a[0] * 10 ** a[1], b[0] * 10 ** b[1]
    target = (va + vb if add else va * vb / (va + vb)) * (1 + shift)
    found = find_combinations(target, (-tol, tol), kind, stock, max_parts=2, limit=10_000)
    got = {(c.topology.value, tuple(sorted(s.part.number for s in c.parts))) for c in found}
    assert got == _brute_pairs(kind, stock, target, (-tol, tol))


@settings(max_examples=40, deadline=None)
@given(rows=stock_rows, target=st.floats(0.5, 20000.0), tol=st.sampled_from((0.05, 0.1)))
def test_every_result_is_sound_and_ranked(rows, target, tol) -> None:
    kind = Kind.RESISTOR
    stock = [make(f"P{n}", kind, m * 10**e, t, f) for n, (m, e, t, f) in enumerate(rows)]
    found = find_combinations(target, (-tol, tol), kind, stock, max_parts=3, limit=20)
    for c in found:
        # recompute with combine_value and hold against the window and the free stock
        parts = []
        for s in c.parts:
            tm, tp, _ = part_tolerance(s.part)
            parts.append((s.part.nominal("r"), tm, tp))
        nom, low, high = combine_value(parts, c.topology, kind)
        assert (nom, low, high) == approx((c.nominal, c.low, c.high))
        assert target * (1 - tol) * (1 - 1e-9) <= low <= nom <= high
        assert high <= target * (1 + tol) * (1 + 1e-9)
        for s in set(map(id, c.parts)):
            uses = sum(1 for p in c.parts if id(p) == s)
            stocked = next(p for p in c.parts if id(p) == s)
            assert stocked.free >= uses
    keys = [(not c.ok, len(c.parts), round(c.excursion, 12)) for c in found]
    assert keys == sorted(keys)
    assert len({(c.topology, tuple(id(p) for p in c.parts)) for c in found}) == len(found)


# --- properties (facts.md §5.4) -----------------------------------------------------------------

part_st = st.tuples(st.floats(1e-3, 1e7), st.floats(-0.5, 0.0), st.floats(0.0, 1.0))


@given(parts=st.lists(part_st, min_size=3, max_size=3),
       topology=st.sampled_from(list(Topology)),
       kind=st.sampled_from((Kind.RESISTOR, Kind.CAPACITOR, Kind.INDUCTOR)),
       stacking=st.sampled_from(list(Stacking)))
def test_low_le_nominal_le_high(parts, topology, kind, stacking) -> None:
    nom, low, high = combine_value(parts, topology, kind, stacking=stacking)
    assert low <= nom * (1 + 1e-12) and nom <= high * (1 + 1e-12)


@given(values=st.lists(st.floats(1e-3, 1e7), min_size=2, max_size=3), t=st.floats(0.0, 0.5),
       topology=st.sampled_from(list(Topology)),
       kind=st.sampled_from((Kind.RESISTOR, Kind.CAPACITOR, Kind.INDUCTOR)))
def test_equal_tolerances_keep_the_relative_tolerance(values, t, topology, kind) -> None:
    # facts.md §5.4: equal tolerances give the same relative tolerance, series or parallel
    if len(values) != 3 and topology in (Topology.SERIES_PARALLEL, Topology.PARALLEL_SERIES):
        values = [*values, values[0]]
    nom, low, high = combine_value([(v, -t, t) for v in values], topology, kind)
    assert low == approx(nom * (1 - t), rel=1e-9)
    assert high == approx(nom * (1 + t), rel=1e-9)


@given(a=st.floats(1e-3, 1e7), b=st.floats(1e-3, 1e7))
def test_series_and_parallel_formulas(a, b) -> None:
    # facts.md §5.4: R in series add, R in parallel add as reciprocals; C the other way round
    assert combine_value([(a, 0, 0), (b, 0, 0)], "series", Kind.RESISTOR)[0] == \
        approx(a + b)
    assert combine_value([(a, 0, 0), (b, 0, 0)], "parallel", Kind.RESISTOR)[0] == \
        approx(1 / (1 / a + 1 / b))
    assert combine_value([(a, 0, 0), (b, 0, 0)], "parallel", Kind.CAPACITOR)[0] == \
        approx(a + b)
    assert combine_value([(a, 0, 0), (b, 0, 0)], "series", Kind.CAPACITOR)[0] == \
        approx(1 / (1 / a + 1 / b))


def test_rss_is_narrower_than_worst_case() -> None:
    # facts.md §5.4 [CP]: RSS ΔX = √Σ(Xi·ti)²; for n equal parts that is worst case / √n
    wc = combine_value([(1e3, -0.05, 0.05)] * 3, "series", Kind.RESISTOR)
    rss = combine_value([(1e3, -0.05, 0.05)] * 3, "series", Kind.RESISTOR, stacking="rss")
    assert (rss[2] - rss[0]) == approx((wc[2] - wc[0]) / math.sqrt(3))


def test_describe_and_excursion() -> None:
    r = make("R-1k0", Kind.RESISTOR, 1e3, 0.01, 3)
    combo = Combination(Topology.SERIES_PARALLEL, (r, r, r), 1500.0, 1485.0, 1515.0, 0.0)
    assert combo.describe() == "R-1k0 in series with (R-1k0 ∥ R-1k0)"
    assert combo.excursion == approx(0.01)
