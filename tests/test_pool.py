"""Tests of stock.kits.pool: per-slot candidates for the kit check from a light index.

The pool must never drop a part the fit engine would accept only because of the screen
(every screened-out part surely fails), must keep the called-for part, must cover the
slot's need several times over, and must agree between a real store (SQL index) and a
candidate list (the test double's path).
"""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stock.fit import screen
from stock.kinds import Bound, Kind
from stock.kits import parse_kit
from stock.kits.check import check
from stock.kits.kitfile import called_part
from stock.kits.pool import COVER, LEAST, MOST, CandidatePool
from stock.parts import Param, PartSpec, Stocked
from stock.rules import load_policy

POLICY = load_policy({})
# IEC 60063 E12, one decade
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)


def _bjt(i: int, vceo: float, ic: float, fam: str = "npn") -> PartSpec:
    # invented generic parts; the ratings are arbitrary test values
    return PartSpec(f"T{i:04d}", Kind.BJT, fam, "TO-92", "EBC", params=[
        Param("vceo", Bound.MAX, vceo), Param("ic", Bound.MAX, ic),
        Param("pd", Bound.MAX, 0.625, {"ta": 25.0}), Param("ft", Bound.MIN, 250e6),
        Param("hfe", Bound.MIN, 100.0)])


class ListStore:
    """Only ``find_part`` and ``candidates``: the pool indexes the list in memory."""

    def __init__(self, items: list[Stocked]) -> None:
        self.items = items

    def find_part(self, number: str) -> PartSpec | None:
        return next((s.part for s in self.items if s.part.number == number), None)

    def candidates(self, kind: Kind, family: str | None = None) -> list[Stocked]:
        return [s for s in self.items if s.part.kind is kind and s.free > 0]


SWITCH = '''
name = "sw"
[conditions]
supply = "12V"
[[slot]]
refs = "Q1"
calls_for = "T0000"
kind = "bjt"
role = "switch"
conditions = { current = "20mA" }
'''


def _slot_reqs(kit_text: str, store):  # type: ignore[no-untyped-def]
    from dataclasses import replace

    from stock.fit.requirements import requirements_for

    slot = parse_kit(kit_text).slots[0]
    called = store.find_part(slot.calls_for) or slot.part
    work = replace(slot, part=called)
    return slot, called, requirements_for(work, POLICY)


def test_small_store_keeps_every_candidate(store):  # type: ignore[no-untyped-def]
    # fewer than LEAST parts of a kind: the pool is the whole kind, screened
    for i, (vceo, ic) in enumerate([(40, 0.6), (30, 0.2), (10, 0.1), (60, 0.05),
                                    (40, 0.01)]):
        store.save_and_receive(_bjt(i, vceo, ic), "A1", 5)
    store.save_and_receive(_bjt(5, 40, 0.6, "pnp"), "A2", 5)
    slot, called, reqs = _slot_reqs(SWITCH, store)
    got = CandidatePool(store).for_slot(Kind.BJT, slot.calls_for, called, reqs, 1)
    numbers = [s.part.number for s in got]
    assert numbers[0] == "T0000"  # the called-for part first
    # screened out, surely failing: T0002 (VCEO 10 V below the 12 V supply), T0004
    # (IC 10 mA below the 20 mA the switch carries), T0005 (PNP for an NPN slot)
    assert sorted(numbers) == ["T0000", "T0001", "T0003"]


def test_large_store_picks_nearest_and_covers_the_need(store):  # type: ignore[no-untyped-def]
    # 60 parts of VCEO 45 … 400 V: the pool keeps LEAST of them, least over-rated first,
    # and every kept part meets the hard bounds
    specs = [_bjt(0, 40, 0.6)] + [_bjt(i, 40 + 5 * i, 0.6) for i in range(1, 61)]
    for s in specs:
        store.save_and_receive(s, "A1", 1)
    slot, called, reqs = _slot_reqs(SWITCH, store)
    got = CandidatePool(store).for_slot(Kind.BJT, slot.calls_for, called, reqs, 1)
    assert len(got) == LEAST
    vceo = [s.part.low("vceo").value for s in got[1:]]  # type: ignore[union-attr]
    assert vceo == sorted(vceo) and vceo[0] == 45.0
    # a bigger need takes more parts, up to MOST
    many = CandidatePool(store).for_slot(Kind.BJT, slot.calls_for, called, reqs, 40)
    assert len(many) == min(MOST, 40 * COVER + 1)


def test_value_slot_window_and_exact_first(store):  # type: ignore[no-untyped-def]
    for k, m in enumerate(E12):
        for d in (2, 3, 4):
            p = called_part(Kind.RESISTOR, f"{m * 10 ** d:g} 5%")
            store.save_and_receive(p, f"R{k}", 3 + d)
    kit = 'name = "v"\n[[slot]]\nrefs = "R1"\ncalls_for = "4.7k 5%"\nkind = "resistor"\n'
    slot, called, reqs = _slot_reqs(kit, store)
    got = CandidatePool(store).for_slot(Kind.RESISTOR, slot.calls_for, called, reqs, 2)
    # the ±5 % window around 4.7 kΩ holds only 4.7 kΩ among E12 values
    assert [s.part.nominal("r") for s in got] == [4700.0]


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.tuples(st.sampled_from((15.0, 25.0, 40.0, 60.0, 100.0)),
                          st.sampled_from((0.05, 0.2, 0.6, 1.0)),
                          st.sampled_from(("npn", "pnp")), st.integers(0, 9)),
                min_size=1, max_size=40))
def test_store_index_and_list_index_agree(rows):  # type: ignore[no-untyped-def]
    # The same parts through the SQL index (Store) and the in-memory index (a list)
    # give the same candidates for the same slot.
    from stock.store.api import Store

    specs = [(_bjt(i, v, ic, fam), q) for i, (v, ic, fam, q) in enumerate(rows)]
    db = Store("sqlite://")
    try:
        for spec, q in specs:
            if q:
                db.save_and_receive(spec, f"D{spec.number[-1]}", q)
            else:
                db.save_part(spec)
        items = [s for s in db.candidates(Kind.BJT)]
        lst = ListStore(items)
        slot, called, reqs = _slot_reqs(SWITCH, db)
        for need in (1, 7):
            a = CandidatePool(db).for_slot(Kind.BJT, slot.calls_for, called, reqs, need)
            b = CandidatePool(lst).for_slot(Kind.BJT, slot.calls_for, called, reqs, need)
            assert [s.part.number for s in a] == [s.part.number for s in b]
            assert all(s.free > 0 for s in a)
    finally:
        db.close()


def test_screened_out_parts_surely_fail(store):  # type: ignore[no-untyped-def]
    # Every part the pool drops by its screen fails the fit engine too.
    from dataclasses import replace

    from stock.fit.engine import assess

    for i, (vceo, ic) in enumerate([(40, 0.6), (30, 0.6), (40, 0.01), (100, 1.0), (20, 2.0)]):
        store.save_and_receive(_bjt(i, vceo, ic), "A1", 5)
    slot, called, reqs = _slot_reqs(SWITCH, store)
    kept = {s.part.number for s in
            CandidatePool(store).for_slot(Kind.BJT, slot.calls_for, called, reqs, 1)}
    every = store.candidates(Kind.BJT)
    judged = assess(replace(slot, part=called), every, POLICY, include_failing=True)
    for a in judged:
        if a.part not in kept:
            assert a.fitness.value == "fails", a.part
    assert screen(reqs)  # the switch slot has hard ratings to screen on


def test_check_same_answer_through_store_and_list(store):  # type: ignore[no-untyped-def]
    for k, m in enumerate(E12[:6]):
        store.save_and_receive(called_part(Kind.RESISTOR, f"{m:g}k 5%"), f"R{k}", 6)
    store.save_and_receive(_bjt(0, 40, 0.6), "Q1", 3)
    store.save_and_receive(_bjt(1, 60, 0.8), "Q2", 3)
    kit = parse_kit(SWITCH + '[[slot]]\nrefs = "R1-R3"\ncalls_for = "1.5k 5%"\n'
                    'kind = "resistor"\n')
    a = check([(kit, 2)], store, POLICY, catalog=lambda _: None)
    b = check([(kit, 2)], ListStore(store.candidates(Kind.BJT)
                                    + store.candidates(Kind.RESISTOR)),
              POLICY, catalog=lambda _: None)
    key = [(x.demand, x.part, x.drawer, x.qty) for x in a.plan.allocations]
    assert key == [(x.demand, x.part, x.drawer, x.qty) for x in b.plan.allocations]
    assert a.summaries[0].buildable == b.summaries[0].buildable == 2


@pytest.mark.parametrize("kind", [Kind.BJT, Kind.RESISTOR])
def test_empty_store_gives_no_candidates(store, kind):  # type: ignore[no-untyped-def]
    pool = CandidatePool(store)
    assert pool.for_slot(kind, "X", None, [], 1) == []
    assert pool.around(Kind.RESISTOR, 1000.0) == []


def test_family_alternatives_and_unknown_family_stay(store):  # type: ignore[no-untyped-def]
    # A detector slot allows "signal|schottky|germanium|rectifier" diodes (stock.fit
    # rules): every one of those families, and a diode with no family recorded (unknown,
    # a warning), must pass the screen; a zener must not.
    from dataclasses import replace

    from stock.fit.engine import assess

    for i, fam in enumerate(["signal", "schottky", None, "zener"]):
        store.save_and_receive(PartSpec(f"DX{i}", Kind.DIODE, fam, "DO-35", "AK", params=[
            Param("vrrm", Bound.MAX, 40.0), Param("if_avg", Bound.MAX, 0.2)]), "D1", 9)
    kit = ('name = "d"\n[conditions]\nsupply = "12V"\n[[slot]]\nrefs = "D1"\n'
           'calls_for = "DX0"\nkind = "diode"\nrole = "detector"\n'
           'conditions = { current = "1mA", v_peak = "5V" }\n')
    slot, called, reqs = _slot_reqs(kit, store)
    fam = next(r for r in reqs if r.param == "family")
    assert "|" in str(fam.value)
    got = {s.part.number for s in
           CandidatePool(store).for_slot(Kind.DIODE, slot.calls_for, called, reqs, 1)}
    assert got == {"DX0", "DX1", "DX2"}
    # the same through the store's own screened query (stock fit's path)
    from stock.fit import screen

    via_store = {s.part.number for s in store.candidates(Kind.DIODE, None, screen(reqs))}
    assert via_store == {"DX0", "DX1", "DX2"}
    # and the fit engine agrees that the zener is the one that fails
    judged = assess(replace(slot, part=called), store.candidates(Kind.DIODE), POLICY,
                    include_failing=True)
    assert {a.part for a in judged if a.fitness.value == "fails"} == {"DX3"}
