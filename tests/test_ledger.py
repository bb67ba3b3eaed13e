"""Property tests of the ledger (Hypothesis): any sequence of movements, legal or not,
keeps every balance equal to its ledger sum and never negative; refused movements
write nothing."""

from __future__ import annotations

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stock.errors import QuantityError
from stock.kinds import Kind
from stock.parts import PartSpec
from stock.store import ledger
from stock.store.api import Store
from stock.store.ledger import Account, Reason

PARTS = ["P1", "P2"]
DRAWERS = ["A", "B", "C"]

op = st.one_of(
    st.tuples(st.just("receive"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(-2, 30)),
    st.tuples(st.just("take"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(-2, 30)),
    st.tuples(st.just("move"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(-2, 30), st.sampled_from(DRAWERS)),
    st.tuples(st.just("count"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(-1, 40)),
    st.tuples(st.just("reserve"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(-10, 20)),
    st.tuples(st.just("build"), st.sampled_from(PARTS), st.sampled_from(DRAWERS),
              st.integers(1, 20)),
)


def _fresh() -> Store:
    s = Store("sqlite://")
    for p in PARTS:
        s.save_part(PartSpec(p, Kind.OTHER))
    return s


def _apply(store: Store, model: dict, step: tuple) -> None:
    kind, part, drawer, qty = step[:4]
    oh, rs = model.get((part, drawer), (0, 0))
    try:
        if kind == "receive":
            store.receive(part, drawer, qty)
            assert qty > 0
            model[(part, drawer)] = (oh + qty, rs)
        elif kind == "take":
            store.take(part, drawer, qty)
            assert 0 < qty <= oh - rs
            model[(part, drawer)] = (oh - qty, rs)
        elif kind == "move":
            dst = step[4]
            store.move(part, drawer, dst, qty)
            assert 0 < qty <= oh - rs and dst != drawer
            model[(part, drawer)] = (oh - qty, rs)
            d_oh, d_rs = model.get((part, dst), (0, 0))
            model[(part, dst)] = (d_oh + qty, d_rs)
        elif kind == "count":
            store.count(part, drawer, qty)
            assert qty >= 0 and (qty >= rs or qty == oh)
            model[(part, drawer)] = (qty, rs)
        else:  # reserve (qty < 0 releases) or build (consume reserved)
            with store.write() as s:
                pid = store._part_id(s, part)
                did = store._drawer_id(s, drawer, create=True)
                deltas = ({Account.RESERVED: qty} if kind == "reserve"
                          else {Account.ON_HAND: -qty, Account.RESERVED: -qty})
                ledger.post(s, part_id=pid, drawer_id=did, deltas=deltas,
                            reason=Reason.RESERVE if kind == "reserve" else Reason.BUILD)
            if kind == "reserve":
                assert 0 <= rs + qty <= oh
                model[(part, drawer)] = (oh, rs + qty)
            else:
                assert qty <= rs
                model[(part, drawer)] = (oh - qty, rs - qty)
    except QuantityError:
        pass  # refused: the model stays as it was (checked below)
    except Exception as exc:  # an unknown drawer on take/move/count of a new drawer
        assert type(exc).__name__ == "UnknownDrawer", exc


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(op, min_size=1, max_size=25))
def test_random_movements_keep_balances_equal_to_ledger(steps):
    store = _fresh()
    model: dict = {}
    for step in steps:
        _apply(store, model, step)
    assert store.verify() == []
    with store.read() as s:
        from sqlalchemy import select

        from stock.store.models import Balance, Drawer, Part

        rows = s.execute(select(Part.number, Drawer.label, Balance.on_hand, Balance.reserved)
                         .join(Part, Part.id == Balance.part_id)
                         .join(Drawer, Drawer.id == Balance.drawer_id)).all()
    got = {(p, d): (oh, rs) for p, d, oh, rs in rows if oh or rs}
    want = {k: v for k, v in model.items() if v != (0, 0)}
    assert got == want
    assert all(oh >= 0 and 0 <= rs <= oh for oh, rs in got.values())
    store.close()
