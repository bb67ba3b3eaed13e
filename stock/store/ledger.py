"""The ledger: the only code that changes quantities.

Every change is a :class:`~stock.store.models.Movement` row, and the per-part-per-drawer
:class:`~stock.store.models.Balance` is updated in the same transaction. Two accounts:
``on_hand`` (parts in the drawer) and ``reserved`` (held for a build). Free = on hand −
reserved. Nothing here commits; the caller's transaction does, so a failure anywhere
leaves the store as it was.
"""

from __future__ import annotations

from collections.abc import Collection
from dataclasses import dataclass
from enum import StrEnum

from sqlalchemy import insert, select, update
from sqlalchemy.orm import Session

from stock.errors import InsufficientStock, QuantityError
from stock.store.db import bulk_insert
from stock.store.models import Balance, Movement, utcnow


class Account(StrEnum):
    ON_HAND = "on_hand"
    RESERVED = "reserved"


class Reason(StrEnum):
    """Why a movement happened; shown in the log."""

    RECEIVE = "receive"  # parts came in
    TAKE = "take"  # parts used outside a build, lost, given away
    MOVE = "move"  # to or from another drawer
    COUNT = "count"  # stocktake correction: counted minus recorded
    IMPORT = "import"  # a stock-list import
    RESTORE = "restore"  # a whole-store restore
    RESERVE = "reserve"  # held for a build
    RELEASE = "release"  # a reservation given back
    BUILD = "build"  # consumed by a build


@dataclass(frozen=True)
class Level:
    """On hand and reserved of one part in one drawer."""

    on_hand: int = 0
    reserved: int = 0

    @property
    def free(self) -> int:
        return self.on_hand - self.reserved


def level(session: Session, part_id: int, drawer_id: int, *, lock: bool = False) -> Level:
    stmt = select(Balance.on_hand, Balance.reserved).where(
        Balance.part_id == part_id, Balance.drawer_id == drawer_id
    )
    if lock and session.get_bind().dialect.name == "postgresql":
        stmt = stmt.with_for_update()  # SQLite already holds the write lock (BEGIN IMMEDIATE)
    row = session.execute(stmt).first()
    return Level(row[0], row[1]) if row else Level()


def key_used(session: Session, key: str | None) -> bool:
    """Whether a movement with this idempotency key was already recorded."""
    if key is None:
        return False
    return session.execute(select(Movement.id).where(Movement.key == key)).first() is not None


def post(
    session: Session,
    *,
    part_id: int,
    drawer_id: int,
    deltas: dict[Account, int],
    reason: Reason,
    ref: str = "",
    note: str = "",
    key: str | None = None,
    build_id: int | None = None,
    names: tuple[str, str] = ("part", "drawer"),
) -> bool:
    """Record signed changes to one part in one drawer; False if ``key`` was seen before.

    Raises :class:`InsufficientStock` (and writes nothing) if the change would take on
    hand or reserved below zero, or reserved above on hand.
    """
    deltas = {a: q for a, q in deltas.items() if q}
    if not deltas:
        return True
    if key_used(session, key):
        return False
    cur = level(session, part_id, drawer_id, lock=True)
    on_hand = cur.on_hand + deltas.get(Account.ON_HAND, 0)
    reserved = cur.reserved + deltas.get(Account.RESERVED, 0)
    part, drawer = names
    if on_hand < 0:
        raise InsufficientStock(
            f"{drawer} holds {cur.on_hand} of {part}; cannot take {-deltas[Account.ON_HAND]}"
            " (check 'stock show' for other drawers)"
        )
    if reserved < 0:
        raise InsufficientStock(
            f"only {cur.reserved} of {part} are reserved in {drawer}; "
            f"cannot release {-deltas[Account.RESERVED]}"
        )
    if reserved > on_hand:
        asked = deltas.get(Account.RESERVED, 0) or -deltas.get(Account.ON_HAND, 0)
        raise InsufficientStock(
            f"only {cur.free} of {part} are free in {drawer} ({cur.on_hand} on hand, "
            f"{cur.reserved} reserved); cannot take {asked}"
        )
    rows = []
    for i, (account, qty) in enumerate(sorted(deltas.items())):
        rows.append(
            dict(part_id=part_id, drawer_id=drawer_id, account=account.value, qty=qty,
                 reason=reason.value, ref=ref, note=note,
                 key=(key if i == 0 else f"{key}#{account.value}") if key else None,
                 build_id=build_id)
        )
    session.execute(insert(Movement), rows)
    if cur == Level() and not _exists(session, part_id, drawer_id):
        session.execute(insert(Balance).values(part_id=part_id, drawer_id=drawer_id,
                                               on_hand=on_hand, reserved=reserved))
    else:
        session.execute(
            update(Balance)
            .where(Balance.part_id == part_id, Balance.drawer_id == drawer_id)
            .values(on_hand=on_hand, reserved=reserved)
        )
    return True


def _exists(session: Session, part_id: int, drawer_id: int) -> bool:
    return session.execute(
        select(Balance.part_id).where(Balance.part_id == part_id, Balance.drawer_id == drawer_id)
    ).first() is not None


def positive(qty: int, what: str = "quantity") -> int:
    """``qty`` if it is a whole number above zero, else a QuantityError."""
    if not isinstance(qty, int) or isinstance(qty, bool) or qty <= 0:
        raise QuantityError(f"{what} must be a whole number above zero, not {qty!r}")
    return qty


def post_many(session: Session, entries: list[tuple[int, int, int]], *, reason: Reason,
              ref: str = "", new_parts: Collection[int] = ()) -> int:
    """Receive many (part id, drawer id, qty > 0) at once: one movement each, balances summed.

    The bulk path of imports: one INSERT of movements, one of new balances, one UPDATE
    per existing balance. Quantities must be positive (nothing can go below zero).
    """
    if any(q <= 0 for _, _, q in entries):
        raise QuantityError("bulk receipts take positive quantities only")
    if not entries:
        return 0
    now = utcnow()
    bulk_insert(session, Movement.__table__, [
        dict(part_id=p, drawer_id=d, account=Account.ON_HAND.value, qty=q, reason=reason.value,
             ref=ref, note="", at=now, key=None, build_id=None) for p, d, q in entries])
    totals: dict[tuple[int, int], int] = {}
    for p, d, q in entries:
        totals[(p, d)] = totals.get((p, d), 0) + q
    fresh = set(new_parts)  # parts created in this transaction hold no balances yet
    part_ids = sorted({p for p, _ in totals if p not in fresh})
    existing: set[tuple[int, int]] = set()
    for i in range(0, len(part_ids), 500):
        existing.update((int(a), int(b)) for a, b in session.execute(
            select(Balance.part_id, Balance.drawer_id)
            .where(Balance.part_id.in_(part_ids[i : i + 500]))))
    new = [dict(part_id=p, drawer_id=d, on_hand=q, reserved=0)
           for (p, d), q in totals.items() if (p, d) not in existing]
    bulk_insert(session, Balance.__table__, new)
    for (p, d), q in totals.items():
        if (p, d) in existing:
            session.execute(update(Balance)
                            .where(Balance.part_id == p, Balance.drawer_id == d)
                            .values(on_hand=Balance.on_hand + q))
    return len(entries)
