"""Tests of stock.kits.check: kits against a store — exact parts, stand-ins, the plan,
combinations for short value slots, and how many copies can be built."""

from __future__ import annotations

import json

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import QuantityError
from stock.kinds import Kind
from stock.kits import load_kit, parse_kit
from stock.kits.check import check, check_json
from stock.kits.kitfile import called_part
from stock.parts import PartSpec, Stocked, part_key
from stock.rules import load_policy

POLICY = load_policy({})


class FakeStore:
    """The two store methods check() uses, over a fixed list of parts and drawers."""

    def __init__(self, items: list[tuple[PartSpec, list[tuple[str, int]]]]) -> None:
        self.items = items

    def find_part(self, number: str) -> PartSpec | None:
        for p, _ in self.items:
            if part_key(p.number) == part_key(number):
                return p
        return None

    def candidates(self, kind: Kind, family: str | None = None) -> list[Stocked]:
        out = []
        for p, drawers in self.items:
            free = sum(f for _, f in drawers)
            if p.kind is kind and free > 0 and (family is None or p.family == family):
                out.append(Stocked(p, free, list(drawers)))
        return out


def _catalog():
    from stock.catalog import load_catalog

    return load_catalog()


KIT = '''
name = "t"
[conditions]
supply = "12V"
ambient = 25
[[slot]]
refs = "R1-R4"
calls_for = "10k 5% 1/4W"
kind = "resistor"
role = "bias"
[[slot]]
refs = "Q1"
calls_for = "GP-NPN"
kind = "bjt"
role = "switch"
need = ["family=npn", "vceo>=20V"]
conditions = { current = "10mA" }
[[slot]]
refs = "Q2"
calls_for = "MPSH10"
kind = "bjt"
role = "rf-amp"
conditions = { current = "4mA", freq = "50MHz" }
[[slot]]
refs = "C1"
calls_for = "100n X7R 50V"
kind = "capacitor"
role = "decoupling"
'''


@pytest.fixture
def shelf():
    cat = _catalog()
    return FakeStore([
        (called_part(Kind.RESISTOR, "10k 5% 1/4W"), [("R-A", 10)]),
        (cat.get("2N4401"), [("A1", 5)]),
        (cat.get("MPSH10"), [("B2", 2)]),
        (called_part(Kind.CAPACITOR, "100n X7R 50V"), [("C1", 1)]),
        (called_part(Kind.CAPACITOR, "47n X7R 50V 2%"), [("C2", 4)]),
    ])


def test_check_three_copies(shelf):
    kit = parse_kit(KIT)
    rep = check([(kit, 3)], shelf, POLICY, catalog=_catalog().get)
    by = {sc.slot.refs[0]: sc for sc in rep.slots}
    # R1-R4: 12 wanted, 10 exact in stock → 2 short
    r = by["R1"]
    assert r.need == 12 and [s.part.number for s in r.exact] == ["10k 5% 1/4W"]
    assert [(a.part, a.drawer, a.qty) for a in r.allocations] == [("10k 5% 1/4W", "R-A", 10)]
    assert r.short == 2
    # Q2 calls for MPSH10 (2 free): the plan gives both, and one 2N4401 stands in
    # (fT >= 250 MHz = 5 × 50 MHz; facts.md §5.5 rule of thumb, §4.1 2N4401 fT).
    q2 = by["Q2"]
    assert [(a.part, a.qty, a.exact) for a in q2.allocations] == [
        ("MPSH10", 2, True), ("2N4401", 1, False)]
    # Q1 is a generic NPN (not in store or catalog) with a family bound: 2N4401 stands in;
    # MPSH10 is kept for Q2, where it is exact.
    q1 = by["Q1"]
    assert not q1.exact and q1.short == 0
    assert {a.part for a in q1.allocations} == {"2N4401"}
    assert any("judged by the role and the kit's bounds" in n for n in q1.notes)
    # never more than free: 2N4401 has 5, Q1 + Q2 take 4
    assert rep.plan.taken()[("2N4401", "A1")] == 4
    # C1: one exact, two short; the rest of the capacitors make 100 nF as 47n ∥ 47n
    # (94 nF ±2 % lies inside 100 nF ±10 %, the E12 default; facts.md §5.4 parallel sum)
    c1 = by["C1"]
    assert c1.short == 2 and c1.combinations
    best = c1.combinations[0]
    assert [s.part.number for s in best.parts] == ["47n X7R 50V 2%"] * 2
    assert best.nominal == pytest.approx(94e-9)
    # copies: R allows 2 (10 // 4), C1 only 1 → one complete copy, C1 limits it
    (summary,) = rep.summaries
    assert (summary.wanted, summary.buildable) == (3, 1)
    # the limit names the combination that could make the missing unit
    assert summary.limits == ["C1 (100n X7R 50V): 1 per copy, 1 short for copy 2; "
                              "or make it: 47n X7R 50V 2% ∥ 47n X7R 50V 2%"]
    assert not rep.complete
    doc = check_json(rep)
    json.dumps(doc)  # plain JSON
    assert doc["version"] == 1 and doc["kits"][0]["buildable"] == 1
    assert [s["short"] for s in doc["slots"]] == [2, 0, 0, 2]


def test_one_copy_is_complete(shelf):
    rep = check([(parse_kit(KIT), 1)], shelf, POLICY, catalog=_catalog().get)
    assert rep.complete and rep.summaries[0].buildable == 1 and rep.summaries[0].limits == []
    # with plenty of stock every slot gets its exact part where there is one
    assert all(a.exact for sc in rep.slots if sc.exact for a in sc.allocations)


def test_unknown_part_without_family_gets_exact_only(shelf):
    kit = parse_kit('name = "u"\n[[slot]]\nrefs = "Q1"\ncalls_for = "XYZ123"\nkind = "bjt"\n')
    rep = check([(kit, 1)], shelf, POLICY, catalog=_catalog().get)
    (sc,) = rep.slots
    assert sc.stand_ins == [] and sc.short == 1
    assert "only the exact part counts" in sc.notes[0]


def test_plain_bom_says_requirements_are_the_parts_own(shelf, tmp_path):
    from stock.kits import load_bom

    p = tmp_path / "b.csv"
    p.write_text("Ref,Value\nQ1,MPSH10\nR1-R2,10k 5% 1/4W\n", encoding="utf-8")
    kit, _ = load_bom(p)
    rep = check([(kit, 1)], shelf, POLICY, catalog=_catalog().get)
    assert any("plain BOM" in n for n in rep.notes)
    assert all("own ratings" in sc.requirements_from for sc in rep.slots)
    assert rep.complete


def test_copies_must_be_positive(shelf):
    with pytest.raises(QuantityError, match="ask for 1 or more"):
        check([(parse_kit(KIT), 0)], shelf, POLICY)


def test_check_against_a_real_store(tmp_path):
    # The same call against stock.store's Store on an SQLite file: the interface matches.
    from pathlib import Path

    from stock.store.api import open_store

    st = open_store(str(tmp_path / "s.db"))
    try:
        cat = _catalog()
        st.save_and_receive(cat.get("2N2222A"), "A1", 3)
        st.save_and_receive(cat.get("PN2222A"), "A2", 4)
        kit = load_kit(Path(__file__).parent.parent / "seeds_demo" / "kits" / "marsh-audio.toml")
        rep = check([(kit, 2)], st, POLICY, catalog=cat.get)
        q2 = next(sc for sc in rep.slots if sc.slot.refs == ["Q2"])
        assert [s.part.number for s in q2.exact] == ["2N2222A"]
        assert sum(a.qty for a in q2.allocations) == 2
        # nothing was reserved or taken: checking changes no quantity
        assert sum(h.free for h in st.holdings()) == 7
        assert rep.summaries[0].buildable == 0  # no resistors or capacitors in the store
    finally:
        st.close()


def test_demo_kits_call_for_parts_that_meet_their_own_slots():
    # Each Saltmarsh demo slot's called-for part (kit value or reference catalog) must not
    # fail the slot it is written for: the demo kits are consistent with the fit rules.
    from dataclasses import replace
    from pathlib import Path

    from stock.fit.engine import assess

    cat = _catalog()
    for path in sorted((Path(__file__).parent.parent / "seeds_demo" / "kits").glob("*.toml")):
        kit = load_kit(path)
        for slot in kit.slots:
            part = slot.part or cat.get(slot.calls_for)
            assert part is not None, (kit.name, slot.calls_for)
            (a,) = assess(replace(slot, part=part), [Stocked(part, 9, [("X", 9)])], POLICY,
                          include_failing=True)
            assert a.fitness.value != "fails", (kit.name, slot.label,
                                                [c.why for c in a.failures])


_E12 = ["1k", "1k2", "1k5", "1k8", "2k2", "2k7", "3k3", "3k9", "4k7", "5k6", "6k8", "8k2"]


@settings(max_examples=25, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(_E12), st.integers(1, 4)), min_size=1, max_size=5,
                unique_by=lambda t: t[0]),
       st.lists(st.tuples(st.sampled_from(_E12), st.sampled_from(["A1", "A2"]),
                          st.integers(0, 9)), max_size=8, unique_by=lambda t: (t[0], t[1])),
       st.integers(1, 3))
def test_random_kits_and_stores_never_overspend(slots, stock, copies):
    # Random resistor kits (IEC 60063 E12 values) against random drawers: the check's plan
    # never takes more than is free, and every unit is allocated or reported short.
    lines = ['name = "r"']
    n = 1
    for value, qty in slots:
        lines += ["[[slot]]", f'refs = "R{n}-R{n + qty - 1}"' if qty > 1 else f'refs = "R{n}"',
                  f'calls_for = "{value} 5%"', 'kind = "resistor"']
        n += qty
    kit = parse_kit("\n".join(lines))
    by_value: dict[str, list[tuple[str, int]]] = {}
    for value, drawer, free in stock:
        by_value.setdefault(value, []).append((drawer, free))
    shelf = FakeStore([(called_part(Kind.RESISTOR, f"{v} 5%"), d) for v, d in by_value.items()])
    rep = check([(kit, copies)], shelf, POLICY, catalog=lambda _: None, combinations=False)
    free = {(f"{v} 5%", d): f for v, ds in by_value.items() for d, f in ds}
    for (part, drawer), taken in rep.plan.taken().items():
        assert taken <= free[(part, drawer)]
    for sc in rep.slots:
        assert sum(a.qty for a in sc.allocations) + sc.short == sc.slot.qty * copies
        # a 5 % E12 value never stands in for another (their spacing is wider than ±5 %)
        assert all(a.exact for a in sc.allocations)
    assert 0 <= rep.summaries[0].buildable <= copies
    assert (rep.summaries[0].buildable == copies) == rep.complete


def test_same_kit_twice_is_refused(shelf):
    kit = parse_kit(KIT)
    with pytest.raises(QuantityError, match="kit t is given twice"):
        check([(kit, 1), (kit, 2)], shelf, POLICY)


def test_two_kits_share_the_drawers(shelf):
    # Two kits in one check compete for the same MPSH10 drawer: 2 free, each kit's Q2
    # wants 1 per copy → both served; slot keys and labels carry the kit names.
    a = parse_kit(KIT)
    b = parse_kit(KIT.replace('name = "t"', 'name = "u"'))
    rep = check([(a, 1), (b, 1)], shelf, POLICY, catalog=_catalog().get)
    q2 = [sc for sc in rep.slots if sc.slot.refs == ["Q2"]]
    assert [sc.key for sc in q2] == ["t:Q2", "u:Q2"]
    assert [[(x.part, x.qty) for x in sc.allocations] for sc in q2] == [[("MPSH10", 1)],
                                                                        [("MPSH10", 1)]]
    # R1-R4 in both: 8 of 10 resistors; C1 in both: 1 exact + 1 short → one kit short
    assert sum(sc.short for sc in rep.slots if sc.slot.refs == ["C1"]) == 1
    assert [s.buildable for s in rep.summaries] == [1, 0]  # later kit goes short first
