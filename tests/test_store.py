"""The store: parts with parameters, drawers, receiving, moving, taking, counting,
search, log and verify — on every backend (SQLite file, SQLite memory, PostgreSQL)."""

from __future__ import annotations

from dataclasses import dataclass

import pytest

from stock.errors import InsufficientStock, QuantityError, UnknownDrawer, UnknownPart
from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec
from stock.slots import Op


@dataclass(frozen=True)
class Crit:
    param: str
    op: Op
    value: float | str


def pn2222a() -> PartSpec:
    # PN2222A limits: NTE PN2222A datasheet via facts.md §4.1 (VCEO 40 V, IC 1.0 A (NTE) —
    # 600 mA used here, the conservative figure of other vendors; PD 625 mW; fT >= 300 MHz;
    # hFE 100-300 at 150 mA, 10 V; Tj 150 °C; RθJA 200 °C/W).
    return PartSpec("PN2222A", Kind.BJT, "npn", "TO-92", "EBC", params=[
        Param("vceo", Bound.MAX, 40.0), Param("ic", Bound.MAX, 0.6),
        Param("pd", Bound.MAX, 0.625, {"ta": 25.0}), Param("ft", Bound.MIN, 300e6),
        Param("hfe", Bound.MIN, 100, {"ic": 0.15, "vce": 10.0}),
        Param("hfe", Bound.MAX, 300, {"ic": 0.15, "vce": 10.0}),
        Param("tj", Bound.MAX, 150.0), Param("rth_ja", Bound.MAX, 200.0)])


def mpsh10() -> PartSpec:
    # MPSH10: Motorola MPSH10/D via facts.md §4.1 (VCEO 25 V, fT >= 650 MHz, B-E-C).
    return PartSpec("MPSH10", Kind.BJT, "npn", "TO-92", "BEC", params=[
        Param("vceo", Bound.MAX, 25.0), Param("ft", Bound.MIN, 650e6),
        Param("ic", Bound.MAX, 0.05)])


def bc547b_typ_only() -> PartSpec:
    # a record that only knows a typical fT (300 MHz typ, MCC BC546B sheet, facts.md §4.1)
    return PartSpec("BC547B", Kind.BJT, "npn", "TO-92", "CBE", params=[
        Param("vceo", Bound.MAX, 45.0), Param("ft", Bound.TYP, 300e6)])


def test_part_round_trips_with_parameters_and_conditions(store):
    saved = store.save_part(pn2222a())
    assert saved.number == "PN2222A"
    got = store.find_part("pn2222a")  # lookups fold case
    assert got is not None
    assert {(p.name, p.bound, p.value, tuple(sorted(p.at.items()))) for p in got.params} == {
        (p.name, p.bound, p.value, tuple(sorted(p.at.items()))) for p in pn2222a().params}
    assert got.pinout == "EBC" and got.family == "npn"


def test_receive_move_take_count_keep_balances_equal_to_ledger(store):
    store.save_part(pn2222a())
    store.receive("PN2222A", "A1", 25, ref="order 17")
    store.move("PN2222A", "A1", "B2", 10)
    store.take("PN2222A", "B2", 3, note="repair")
    diff = store.count("PN2222A", "A1", 14)  # 15 recorded, one missing
    assert diff == -1
    held = {h.drawer: h.on_hand for h in store.holdings("PN2222A")}
    assert held == {"A1": 14, "B2": 7}
    assert store.verify() == []
    reasons = [e.reason for e in store.log(number="PN2222A", limit=None)]
    assert reasons == ["count", "take", "move", "move", "receive"]


def test_idempotency_key_records_once(store):
    store.save_part(pn2222a())
    assert store.receive("PN2222A", "A1", 5, key="delivery-0042") is True
    assert store.receive("PN2222A", "A1", 5, key="delivery-0042") is False
    assert store.level("PN2222A", "A1").on_hand == 5
    assert store.movement_count() == 1


@pytest.mark.parametrize("qty", [0, -3])
def test_zero_or_negative_quantity_is_refused_and_writes_nothing(store, qty):
    store.save_part(pn2222a())
    with pytest.raises(QuantityError, match="above zero"):
        store.receive("PN2222A", "A1", qty)
    assert store.movement_count() == 0


def test_taking_more_than_free_fails_and_leaves_store_unchanged(store):
    store.save_part(pn2222a())
    store.receive("PN2222A", "A1", 4)
    with pytest.raises(InsufficientStock, match="holds 4"):
        store.take("PN2222A", "A1", 5)
    with pytest.raises(InsufficientStock):
        store.move("PN2222A", "A1", "B1", 9)
    assert store.level("PN2222A", "A1").on_hand == 4
    assert store.movement_count() == 1
    assert [d[0] for d in store.drawers()] == ["A1"]  # the failed move made no drawer


def test_unknown_part_and_drawer_suggest_close_names(store):
    store.save_part(pn2222a())
    store.receive("PN2222A", "A1", 1)
    with pytest.raises(UnknownPart, match="did you mean PN2222A"):
        store.receive("PN2222", "A1", 1)
    with pytest.raises(UnknownDrawer, match="did you mean A1"):
        store.take("PN2222A", "A11", 1)


def test_drawers_inside_a_cabinet(store):
    store.add_drawer("A3", parent="CAB1", note="TO-92")
    rows = {r[0]: r for r in store.drawers()}
    assert rows["A3"][1] == "CAB1" and rows["A3"][2] == "TO-92"
    assert rows["CAB1"][1] is None


def test_find_holds_bounds_against_guaranteed_limits(store):
    for spec, qty in ((pn2222a(), 10), (mpsh10(), 2), (bc547b_typ_only(), 50)):
        store.save_part(spec)
        store.receive(spec.number, "A1", qty)
    # VCEO >= 30 V and fT >= 100 MHz: PN2222A (40 V, 300 MHz min) qualifies; MPSH10 has
    # only 25 V; BC547B's fT is typical only, so it needs --typical.
    found = store.find(Kind.BJT, "npn", [Crit("vceo", Op.GE, 30), Crit("ft", Op.GE, 100e6)])
    assert [s.part.number for s in found] == ["PN2222A"]
    found = store.find(Kind.BJT, "npn", [Crit("vceo", Op.GE, 30), Crit("ft", Op.GE, 100e6)],
                       typical=True)
    assert {s.part.number for s in found} == {"PN2222A", "BC547B"}
    # sorted: the part meeting the first bound with least to spare first (40 V < 45 V)
    assert [s.part.number for s in found] == ["PN2222A", "BC547B"]
    found = store.find(Kind.BJT, None, [Crit("ft", Op.GE, 500e6)])
    assert [(s.part.number, s.free, s.drawers) for s in found] == [("MPSH10", 2, [("A1", 2)])]


def test_find_skips_parts_without_free_stock_unless_asked(store):
    store.save_part(pn2222a())
    store.receive("PN2222A", "A1", 3)
    store.take("PN2222A", "A1", 3)
    assert store.find(Kind.BJT) == []
    assert [s.part.number for s in store.find(Kind.BJT, include_empty=True)] == ["PN2222A"]


def test_find_on_capacitor_value_and_rating(store):
    # a 100 nF X7R 50 V ±10 % and a 100 nF X7R 16 V part
    for number, v in (("100n X7R 50V", 50.0), ("100n X7R 16V", 16.0)):
        store.save_part(PartSpec(number, Kind.CAPACITOR, "x7r", params=[
            Param("c", Bound.NOM, 100e-9), Param("v_rated", Bound.MAX, v),
            Param("tol", Bound.MIN, -0.1), Param("tol", Bound.MAX, 0.1)]))
        store.receive(number, "C1", 20)
    found = store.find(Kind.CAPACITOR, None, [Crit("c", Op.EQ, 100e-9),
                                              Crit("v_rated", Op.GE, 50.0),
                                              Crit("tol", Op.LE, 0.1)])
    assert [s.part.number for s in found] == ["100n X7R 50V"]
    found = store.find(Kind.CAPACITOR, None, [Crit("family", Op.EQ, "X7R")])
    assert len(found) == 2


def test_candidates_lists_free_parts_of_a_kind_with_drawers(store):
    store.save_part(pn2222a())
    store.save_part(mpsh10())
    store.receive("PN2222A", "A1", 5)
    store.receive("PN2222A", "A2", 2)
    store.receive("MPSH10", "A3", 1)
    got = {s.part.number: (s.free, s.drawers) for s in store.candidates(Kind.BJT)}
    assert got == {"PN2222A": (7, [("A1", 5), ("A2", 2)]), "MPSH10": (1, [("A3", 1)])}
    assert store.candidates(Kind.FET) == []


def test_count_cannot_go_below_reserved(store):
    from stock.store import ledger
    from stock.store.ledger import Account, Reason

    store.save_part(pn2222a())
    store.receive("PN2222A", "A1", 10)
    with store.write() as s:
        from stock.store.repo import part_id

        pid = part_id(s, "PN2222A")
        did = store._drawer_id(s, "A1")
        ledger.post(s, part_id=pid, drawer_id=did, deltas={Account.RESERVED: 6},
                    reason=Reason.RESERVE)
    with pytest.raises(QuantityError, match="reserved"):
        store.count("PN2222A", "A1", 4)
    with pytest.raises(InsufficientStock, match="only 4 of PN2222A are free"):
        store.take("PN2222A", "A1", 5)
    assert store.verify() == []


def test_candidates_screen_drops_sure_failures_and_keeps_unknowns(store):
    from stock.slots import Requirement, Source

    store.save_part(pn2222a())  # VCEO 40 V
    store.save_part(mpsh10())  # VCEO 25 V
    store.save_part(PartSpec("NO-RATING", Kind.BJT, "npn"))  # VCEO unknown
    for n in ("PN2222A", "MPSH10", "NO-RATING"):
        store.receive(n, "A1", 3)
    need = Requirement("vceo", Op.GE, 30.0, Source.ROLE)
    got = {s.part.number for s in store.candidates(Kind.BJT, "npn", [need])}
    assert got == {"PN2222A", "NO-RATING"}
    got = {s.part.number for s in store.candidates(Kind.BJT, None,
                                                   [Requirement("vceo", Op.LE, 30.0,
                                                                Source.USER)])}
    assert got == {"MPSH10", "NO-RATING"}
