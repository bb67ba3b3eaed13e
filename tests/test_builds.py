"""Tests of stock.builds: reserve a kit's plan, build k of N copies, release, pick lists.

Every check is on a real store (SQLite in memory or in a file; PostgreSQL when
STOCK_TEST_PG is set) and ends with ``store.verify()``: each balance equals its ledger.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stock.builds import (
    build,
    build_json,
    builds,
    drawer_order,
    get_build,
    pick_list,
    release,
    reserve,
    split_per_copy,
)
from stock.errors import BuildError, InsufficientStock, QuantityError
from stock.kinds import Kind
from stock.kits import parse_kit
from stock.kits.check import check
from stock.kits.kitfile import called_part
from stock.rules import load_policy

DATA = Path(__file__).parent / "data" / "builds"
POLICY = load_policy({})

# IEC 60063 E12 values (one decade); as 5 % parts no two of them can stand in for each
# other (the series' steps are wider than ±5 %), so every allocation is exact.
E12 = ["1k", "1k2", "1k5", "1k8", "2k2", "2k7", "3k3", "3k9", "4k7", "5k6", "6k8", "8k2"]


def _kit(slots: list[tuple[str, int]], name: str = "club") -> object:
    """A resistor kit: (value, units per copy) per slot, designators numbered in order."""
    lines = [f'name = "{name}"']
    n = 1
    for value, qty in slots:
        refs = f"R{n}-R{n + qty - 1}" if qty > 1 else f"R{n}"
        lines += ["[[slot]]", f'refs = "{refs}"', f'calls_for = "{value} 5%"',
                  'kind = "resistor"', 'role = "bias"']
        n += qty
    return parse_kit("\n".join(lines))


def _fill(store, stock: list[tuple[str, str, int]]) -> None:  # type: ignore[no-untyped-def]
    for value, drawer, qty in stock:
        store.save_and_receive(called_part(Kind.RESISTOR, f"{value} 5%"), drawer, qty)


def _levels(store) -> dict[tuple[str, str], tuple[int, int]]:  # type: ignore[no-untyped-def]
    return {(h.number, h.drawer): (h.on_hand, h.reserved) for h in store.holdings()}


def _reserve(store, kit, copies=1, **kw):  # type: ignore[no-untyped-def]
    return reserve(store, kit, copies, policy=POLICY, catalog=lambda _: None, **kw)


SHELF = [("10k", "A1", 1), ("10k", "A10", 2), ("10k", "A2", 3), ("4k7", "B1", 6),
         ("1k", "C3", 2)]
KIT2 = [("10k", 3), ("4k7", 2), ("1k", 1)]  # 6 units per copy


# --- the per-copy split (hand-worked cases in tests/data/builds/splits.toml) ---------------

def _split_cases() -> list[dict]:  # type: ignore[type-arg]
    with open(DATA / "splits.toml", "rb") as f:
        return tomllib.load(f)["case"]


@pytest.mark.parametrize("case", _split_cases(), ids=lambda c: c["name"])
def test_split_per_copy_matches_hand_worked_cases(case):  # type: ignore[no-untyped-def]
    allocs = [(p, d, q, True) for p, d, q in case["allocations"]]
    holds, short = split_per_copy(case["qty"], case["copies"], allocs)
    assert [h.per_copy for h in holds] == case["per_copy"], case["source"]
    assert short == case["short"], case["source"]


@given(st.integers(1, 5), st.integers(1, 6), st.lists(st.integers(1, 9), max_size=5))
def test_split_hands_out_every_unit_once(qty, copies, sizes):  # type: ignore[no-untyped-def]
    total = qty * copies
    kept, left = [], total
    for s in sizes:  # a plan never gives a slot more than it needs
        if left == 0:
            break
        kept.append(min(s, left))
        left -= kept[-1]
    holds, short = split_per_copy(qty, copies, [("p", f"D{i}", q, True)
                                               for i, q in enumerate(kept)])
    assert [h.qty for h in holds] == kept
    for c in range(copies):
        assert sum(h.per_copy[c] for h in holds) + short[c] == qty
    # the shortfall falls on the last copies: a copy is short only if all later ones are
    assert short == sorted(short)


def test_drawer_order_reads_numbers_as_numbers():
    # common practice: a builder walks A1, A2 … A10, not A1, A10, A2
    labels = ["A10", "B1", "A2", "CAB1/A3", "a1", "CAB1/A12"]
    assert sorted(labels, key=drawer_order) == ["a1", "A2", "A10", "B1", "CAB1/A3", "CAB1/A12"]


# --- reserve --------------------------------------------------------------------------------

def test_reserve_holds_the_plan_and_check_sees_less_free(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    kit = _kit(KIT2)
    before = check([(kit, 1)], store, POLICY, catalog=lambda _: None)
    done = _reserve(store, kit, 2, name="night-1")
    assert done.written and done.build.status == "reserved" and done.build.held == 12
    lv = _levels(store)
    assert sum(r for _, r in lv.values()) == 12
    assert lv[("4k7 5%", "B1")] == (6, 4)
    # free is on hand minus reserved: a new check sees 12 fewer free units
    after = check([(kit, 1)], store, POLICY, catalog=lambda _: None)
    free = {sc.slot.calls_for: sum(s.free for s in sc.exact) for sc in before.slots}
    free_after = {sc.slot.calls_for: sum(s.free for s in sc.exact) for sc in after.slots}
    assert free["10k 5%"] - free_after["10k 5%"] == 6
    assert free["4k7 5%"] - free_after["4k7 5%"] == 4
    # 1k: 2 on hand, both reserved: the next check is short there
    assert after.summaries[0].buildable == 0
    assert store.verify() == []
    moves = store.log(reason="reserve", limit=None)
    assert {m.ref for m in moves} == {"night-1"} and all(m.account == "reserved" for m in moves)


def test_reserve_refuses_a_short_plan_and_writes_nothing(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    n = store.movement_count()
    with pytest.raises(BuildError, match=r"units short for 3 copies.*builds 2.*--allow-short"):
        _reserve(store, _kit(KIT2), 3)
    assert store.movement_count() == n and builds(store) == []
    assert all(r == 0 for _, r in _levels(store).values())


def test_allow_short_holds_what_there_is(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    done = _reserve(store, _kit(KIT2), 3, allow_short=True)
    b = done.build
    one_k = next(s for s in b.slots if s.calls_for == "1k 5%")
    assert one_k.short == [0, 0, 1]  # 2 free for 3 copies: the last copy is short
    ten_k = next(s for s in b.slots if s.calls_for == "10k 5%")
    assert ten_k.short == [0, 0, 3]  # 6 free for 3 copies of 3
    assert b.short == 4 and b.held == 18 - 4
    assert get_build(store, b.name).short == 4
    assert store.verify() == []


def test_dry_run_writes_nothing(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    n = store.movement_count()
    done = _reserve(store, _kit(KIT2), 1, dry_run=True)
    assert not done.written and done.build.held == 6
    assert store.movement_count() == n and builds(store) == []


def test_a_build_name_used_twice_is_refused(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 1, name="bench")
    n = store.movement_count()
    with pytest.raises(BuildError, match="a build named 'bench' exists"):
        _reserve(store, _kit(KIT2), 1, name="bench")
    assert store.movement_count() == n


def test_default_names_count_up(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    names = [_reserve(store, _kit([("4k7", 1)]), 1).build.name for _ in range(3)]
    assert names == ["club", "club-2", "club-3"]


@pytest.mark.parametrize("bad", ["", "-x", "two words", "a/b", "x" * 81])
def test_unusable_build_names_are_refused(store, bad):  # type: ignore[no-untyped-def]
    with pytest.raises(BuildError, match="not usable"):
        _reserve(store, _kit(KIT2), 1, name=bad)


def test_copies_must_be_positive(store):  # type: ignore[no-untyped-def]
    with pytest.raises(QuantityError):
        _reserve(store, _kit(KIT2), 0)


def test_stock_taken_between_check_and_reserve_writes_nothing(store, monkeypatch):
    # The check reads, the reservation writes: if a drawer empties in between, the ledger
    # refuses and the whole reservation rolls back (one transaction).
    import stock.kits.check as kc

    _fill(store, SHELF)
    real = kc.check

    def check_then_take(*a, **kw):  # type: ignore[no-untyped-def]
        rep = real(*a, **kw)
        store.take("4k7 5%", "B1", 5)
        return rep

    monkeypatch.setattr(kc, "check", check_then_take)
    with pytest.raises(InsufficientStock):
        _reserve(store, _kit(KIT2), 2, name="race")
    assert builds(store) == [] and all(r == 0 for _, r in _levels(store).values())
    assert store.verify() == []


# --- build and release ------------------------------------------------------------------------

def test_build_consumes_on_hand_and_reserved_together(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    before = _levels(store)
    _reserve(store, _kit(KIT2), 2, name="b")
    info = build(store, "b")
    assert info.status == "built" and info.built == 2 and info.held == 0
    after = _levels(store)
    on_before = sum(o for o, _ in before.values())
    assert on_before - sum(o for o, _ in after.values()) == 12
    assert all(r == 0 for _, r in after.values())
    assert store.verify() == []
    assert len(store.log(reason="build", limit=None)) == 2 * len(
        [h for s in info.slots for h in s.holds])  # on hand and reserved rows per holding


def test_partial_build_of_k_of_n_copies(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 2, name="p")
    info = build(store, "p", 1)
    assert (info.built, info.status, info.remaining, info.held) == (1, "reserved", 1, 6)
    lv = _levels(store)
    assert sum(r for _, r in lv.values()) == 6
    assert sum(o for o, _ in lv.values()) == sum(q for *_, q in SHELF) - 6
    with pytest.raises(BuildError, match="1 of 2 copies left"):
        build(store, "p", 2)
    info = build(store, "p", 1)
    assert info.status == "built" and sum(r for _, r in _levels(store).values()) == 0
    assert store.verify() == []


def test_release_returns_what_is_held(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    before = _levels(store)
    _reserve(store, _kit(KIT2), 2, name="r")
    info = release(store, "r")
    assert info.status == "released" and info.held == 0
    assert _levels(store) == before
    with pytest.raises(BuildError, match="already released"):
        release(store, "r")
    with pytest.raises(BuildError, match="is released"):
        build(store, "r")
    assert store.verify() == []


def test_release_after_a_partial_build_keeps_the_built_copy(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 2, name="r")
    build(store, "r", 1)
    info = release(store, "r")
    assert (info.built, info.status) == (1, "released")
    lv = _levels(store)
    assert all(r == 0 for _, r in lv.values())
    assert sum(o for o, _ in lv.values()) == sum(q for *_, q in SHELF) - 6
    assert store.verify() == []


def test_releasing_a_built_build_is_refused(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 1, name="done")
    build(store, "done")
    n = store.movement_count()
    with pytest.raises(BuildError, match="is built"):
        release(store, "done")
    assert store.movement_count() == n


def test_unknown_build_names_a_close_one(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 1, name="night-1")
    with pytest.raises(BuildError, match=r"no build 'night-2' \(did you mean night-1\?\)"):
        get_build(store, "night-2")


def test_reserved_parts_cannot_be_taken(store):  # type: ignore[no-untyped-def]
    _fill(store, [("1k", "C3", 2)])
    _reserve(store, _kit([("1k", 2)]), 1, name="hold")
    with pytest.raises(InsufficientStock, match="only 0 of 1k 5% are free"):
        store.take("1k 5%", "C3", 1)


# --- pick lists ---------------------------------------------------------------------------------

def test_pick_list_is_sorted_by_drawer_and_matches_what_is_held(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 2, name="pk")
    lines = pick_list(store, "pk")
    drawers = [x.drawer for x in lines]
    assert drawers == sorted(drawers, key=drawer_order)
    assert "A10" in drawers and drawers.index("A2") < drawers.index("A10")
    assert sum(x.qty for x in lines) == get_build(store, "pk").held == 12
    reserved = {k: r for k, (_, r) in _levels(store).items() if r}
    picked: dict[tuple[str, str], int] = {}
    for x in lines:
        picked[(x.part, x.drawer)] = picked.get((x.part, x.drawer), 0) + x.qty
    assert picked == reserved
    assert {x.refs for x in lines} == {"R1-R3", "R4, R5", "R6"}


def test_pick_list_for_the_next_copy_only(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    _reserve(store, _kit(KIT2), 2, name="pk")
    first = pick_list(store, "pk", 1)
    assert sum(x.qty for x in first) == 6
    build(store, "pk", 1)
    rest = pick_list(store, "pk")
    assert sum(x.qty for x in rest) == 6
    with pytest.raises(BuildError, match="1 copies left"):
        pick_list(store, "pk", 2)
    build(store, "pk")
    with pytest.raises(BuildError, match="nothing is left to pick"):
        pick_list(store, "pk")


def test_build_json_shape(store):  # type: ignore[no-untyped-def]
    _fill(store, SHELF)
    info = _reserve(store, _kit(KIT2), 1, name="js").build
    data = build_json(get_build(store, "js"))
    assert list(data) == ["version", "name", "kit", "copies", "built", "status", "remaining",
                          "held", "short", "created_at", "notes", "slots"]
    assert data["held"] == info.held == 6
    hold = data["slots"][0]["holds"][0]
    assert list(hold) == ["part", "drawer", "exact", "qty", "per_copy"]
    assert list(build_json(info, detail=False))[-1] == "created_at"


def test_stand_in_is_reserved_and_named(store):  # type: ignore[no-untyped-def]
    # The kit calls for 2N2222A (TO-18); only PN2222A (TO-92; reference catalog ratings,
    # the same or better) is in the drawers: the plan stands it in and the build holds it.
    from stock.catalog import load_catalog

    cat = load_catalog()
    store.save_and_receive(cat.get("PN2222A"), "Q1", 4)
    kit = parse_kit('name = "sw"\n[conditions]\nsupply = "12V"\n[[slot]]\nrefs = "Q1"\n'
                    'calls_for = "2N2222A"\nkind = "bjt"\nrole = "switch"\n'
                    'conditions = { current = "50mA" }\n')
    done = reserve(store, kit, 2, name="sw", policy=POLICY, catalog=cat.get)
    (sl,) = done.build.slots
    assert [(h.part, h.drawer, h.exact, h.per_copy) for h in sl.holds] == [
        ("PN2222A", "Q1", False, [1, 1])]
    assert store.level("PN2222A", "Q1").reserved == 2


# --- the property: reserve then release changes no balance ---------------------------------------

_STOCK = st.lists(st.tuples(st.sampled_from(E12), st.sampled_from(["A1", "A2", "B10"]),
                            st.integers(1, 6)), max_size=8, unique_by=lambda t: (t[0], t[1]))
_SLOTS = st.lists(st.tuples(st.sampled_from(E12), st.integers(1, 3)), min_size=1, max_size=4,
                  unique_by=lambda t: t[0])


@settings(max_examples=20, deadline=None,
          suppress_health_check=[HealthCheck.too_slow])
@given(_STOCK, _SLOTS, st.integers(1, 3), st.data())
def test_reserve_then_release_leaves_every_balance(stock, slots, copies, data):  # type: ignore[no-untyped-def]
    from stock.store.api import Store

    store = Store("sqlite://")
    try:
        _fill(store, stock)
        before = _levels(store)
        done = _reserve(store, _kit(slots), copies, name="prop", allow_short=True)
        held = done.build.held
        assert held + sum(sum(s.short) for s in done.build.slots) == \
            copies * sum(q for _, q in slots)
        assert sum(r for _, r in _levels(store).values()) == held
        # optionally build some copies first: what is built leaves, the rest comes back
        k = data.draw(st.integers(0, copies - 1))
        consumed = 0
        if k:
            consumed = sum(h.units(0, k) for s in done.build.slots for h in s.holds)
            build(store, "prop", k)
        release(store, "prop")
        after = _levels(store)
        assert all(r == 0 for _, r in after.values())
        if not k:
            assert after == before
        assert sum(o for o, _ in before.values()) - sum(o for o, _ in after.values()) == consumed
        assert store.verify() == []
    finally:
        store.close()
