"""The store as one object: open it, then read and change parts, drawers and quantities.

Every method that changes anything runs in one write transaction and goes through
:mod:`stock.store.ledger`; a failure leaves the store unchanged.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from datetime import datetime
from typing import Any

from sqlalchemy import func, insert, select, text
from sqlalchemy.engine import Engine
from sqlalchemy.orm import Session

from stock.errors import QuantityError, UnknownDrawer, UnknownPart, suggest
from stock.kinds import Kind
from stock.parts import PartSpec, Stocked, part_key
from stock.store import ledger, repo
from stock.store.db import ensure_schema, make_engine, session_scope
from stock.store.ledger import Account, Level, Reason, positive
from stock.store.models import Balance, Drawer, Movement, Part


@dataclass(frozen=True)
class Holding:
    """One part in one drawer."""

    number: str
    drawer: str
    on_hand: int
    reserved: int

    @property
    def free(self) -> int:
        return self.on_hand - self.reserved


@dataclass(frozen=True)
class LogEntry:
    id: int
    at: datetime
    number: str
    drawer: str
    account: str
    qty: int
    reason: str
    ref: str
    note: str


class Store:
    """An open store (SQLite file or PostgreSQL database), migrated to the current schema."""

    def __init__(self, url: str, engine: Engine | None = None) -> None:
        self.url = url
        self.engine = engine or make_engine(url)
        ensure_schema(self.engine)

    # --- transactions ------------------------------------------------------------
    @contextmanager
    def write(self) -> Iterator[Session]:
        with session_scope(self.engine, write=True) as s:
            yield s

    @contextmanager
    def read(self) -> Iterator[Session]:
        with session_scope(self.engine) as s:
            yield s

    def close(self) -> None:
        self.engine.dispose()

    # --- parts -------------------------------------------------------------------
    def find_part(self, number: str) -> PartSpec | None:
        with self.read() as s:
            pid = repo.part_id(s, number)
            return None if pid is None else repo.load_spec(s, pid)

    def part(self, number: str) -> PartSpec:
        spec = self.find_part(number)
        if spec is None:
            raise self._unknown_part(number)
        return spec

    def _unknown_part(self, number: str, s: Session | None = None) -> UnknownPart:
        if s is None:
            with self.read() as s2:
                return self._unknown_part(number, s2)
        numbers = list(s.execute(select(Part.number)).scalars())
        return UnknownPart(
            f"no part {number!r} in the store{suggest(number, numbers)}; "
            "add it with 'stock add' or list parts with 'stock find'"
        )

    def save_part(self, spec: PartSpec, *, update: bool = True) -> PartSpec:
        """Create the part, or (``update``) overwrite the fields and parameters it sets."""
        with self.write() as s:
            return repo.load_spec(s, repo.upsert_part(s, spec, update=update))

    def save_and_receive(self, spec: PartSpec, drawer: str, qty: int, *, ref: str = "",
                         note: str = "", key: str | None = None, update: bool = True
                         ) -> tuple[PartSpec, bool]:
        """Create or update ``spec`` and receive ``qty`` into ``drawer``, in one transaction."""
        positive(qty)
        with self.write() as s:
            pid = repo.upsert_part(s, spec, update=update)
            did = self._drawer_id(s, drawer, create=True)
            done = ledger.post(s, part_id=pid, drawer_id=did, deltas={Account.ON_HAND: qty},
                               reason=Reason.RECEIVE, ref=ref, note=note, key=key,
                               names=(spec.number, drawer))
            return repo.load_spec(s, pid), done

    def part_count(self) -> int:
        with self.read() as s:
            return s.execute(select(func.count(Part.id))).scalar_one()

    # --- drawers -----------------------------------------------------------------
    def _drawer_id(self, s: Session, label: str, *, create: bool = False,
                   parent: str | None = None) -> int:
        label = label.strip()
        if not label:
            raise UnknownDrawer("a drawer label cannot be empty; give one like A3 or CAB1/A3")
        did = s.execute(select(Drawer.id).where(Drawer.label == label)).scalar()
        if did is not None:
            return did
        if not create:
            labels = list(s.execute(select(Drawer.label)).scalars())
            raise UnknownDrawer(
                f"no drawer {label!r}{suggest(label, labels)}; list drawers with 'stock drawers'"
            )
        parent_id = self._drawer_id(s, parent, create=True) if parent else None
        return s.execute(
            insert(Drawer).values(label=label, parent_id=parent_id, note="").returning(Drawer.id)
        ).scalar_one()

    def add_drawer(self, label: str, *, parent: str | None = None, note: str = "") -> None:
        with self.write() as s:
            did = self._drawer_id(s, label, create=True, parent=parent)
            if note:
                s.get_one(Drawer, did).note = note

    def _part_id(self, s: Session, number: str) -> int:
        pid = repo.part_id(s, number)
        if pid is None:
            raise self._unknown_part(number, s)
        return pid

    # --- quantities --------------------------------------------------------------
    def receive(self, number: str, drawer: str, qty: int, *, ref: str = "", note: str = "",
                key: str | None = None, reason: Reason = Reason.RECEIVE) -> bool:
        """Put ``qty`` of an existing part into ``drawer`` (created if new)."""
        positive(qty)
        with self.write() as s:
            pid = self._part_id(s, number)
            did = self._drawer_id(s, drawer, create=True)
            return ledger.post(s, part_id=pid, drawer_id=did, deltas={Account.ON_HAND: qty},
                               reason=reason, ref=ref, note=note, key=key,
                               names=(number, drawer))

    def take(self, number: str, drawer: str, qty: int, *, ref: str = "", note: str = "",
             key: str | None = None) -> bool:
        """Take ``qty`` free parts out of ``drawer`` (used, lost, given away)."""
        positive(qty)
        with self.write() as s:
            pid, did = self._part_id(s, number), self._drawer_id(s, drawer)
            return ledger.post(s, part_id=pid, drawer_id=did, deltas={Account.ON_HAND: -qty},
                               reason=Reason.TAKE, ref=ref, note=note, key=key,
                               names=(number, drawer))

    def move(self, number: str, src: str, dst: str, qty: int, *, ref: str = "",
             key: str | None = None) -> bool:
        """Move ``qty`` free parts from drawer ``src`` to ``dst`` (created if new)."""
        positive(qty)
        if src.strip() == dst.strip():
            raise QuantityError(f"{src} is both source and destination; name another drawer")
        with self.write() as s:
            pid = self._part_id(s, number)
            a, b = self._drawer_id(s, src), self._drawer_id(s, dst, create=True)
            done = ledger.post(s, part_id=pid, drawer_id=a, deltas={Account.ON_HAND: -qty},
                               reason=Reason.MOVE, ref=ref or f"to {dst}", key=key,
                               names=(number, src))
            if done:
                ledger.post(s, part_id=pid, drawer_id=b, deltas={Account.ON_HAND: qty},
                            reason=Reason.MOVE, ref=ref or f"from {src}",
                            key=f"{key}:in" if key else None, names=(number, dst))
            return done

    def count(self, number: str, drawer: str, counted: int, *, note: str = "",
              key: str | None = None) -> int:
        """Record a stocktake: the ledger stores counted − recorded. Returns the difference."""
        if not isinstance(counted, int) or counted < 0:
            raise QuantityError(f"a counted quantity must be a whole number ≥ 0, not {counted!r}")
        with self.write() as s:
            pid = self._part_id(s, number)
            did = self._drawer_id(s, drawer, create=True)
            cur = ledger.level(s, pid, did, lock=True)
            diff = counted - cur.on_hand
            if diff and counted < cur.reserved:
                raise QuantityError(
                    f"{cur.reserved} of {number} in {drawer} are reserved for builds; release "
                    f"them first or count at least {cur.reserved}"
                )
            ledger.post(s, part_id=pid, drawer_id=did, deltas={Account.ON_HAND: diff},
                        reason=Reason.COUNT, note=note or f"counted {counted}", key=key,
                        names=(number, drawer))
            return diff

    def level(self, number: str, drawer: str) -> Level:
        with self.read() as s:
            return ledger.level(s, self._part_id(s, number), self._drawer_id(s, drawer))

    # --- reads -------------------------------------------------------------------
    def holdings(self, number: str | None = None, drawer: str | None = None) -> list[Holding]:
        """What is where: per part and drawer, on hand and reserved (non-empty only)."""
        with self.read() as s:
            stmt = (
                select(Part.number, Drawer.label, Balance.on_hand, Balance.reserved)
                .join(Part, Part.id == Balance.part_id)
                .join(Drawer, Drawer.id == Balance.drawer_id)
                .where(Balance.on_hand > 0)
                .order_by(Drawer.label, Part.key)
            )
            if number is not None:
                stmt = stmt.where(Part.id == self._part_id(s, number))
            if drawer is not None:
                stmt = stmt.where(Drawer.id == self._drawer_id(s, drawer))
            return [Holding(*row) for row in s.execute(stmt)]

    def drawers(self) -> list[tuple[str, str | None, str, int, int]]:
        """Every drawer: (label, cabinet label, note, part types held, parts on hand)."""
        with self.read() as s:
            parent = select(Drawer.id, Drawer.label).subquery()
            stmt = (
                select(Drawer.label, parent.c.label, Drawer.note,
                       func.count(Balance.part_id).filter(Balance.on_hand > 0),
                       func.coalesce(func.sum(Balance.on_hand), 0))
                .outerjoin(parent, parent.c.id == Drawer.parent_id)
                .outerjoin(Balance, Balance.drawer_id == Drawer.id)
                .group_by(Drawer.id, Drawer.label, parent.c.label, Drawer.note)
                .order_by(Drawer.label)
            )
            return [tuple(r) for r in s.execute(stmt)]  # type: ignore[misc]

    def log(self, *, number: str | None = None, drawer: str | None = None,
            reason: str | None = None, since: datetime | None = None,
            limit: int | None = 50) -> list[LogEntry]:
        """Movements, newest first, optionally filtered."""
        with self.read() as s:
            stmt = (
                select(Movement.id, Movement.at, Part.number, Drawer.label, Movement.account,
                       Movement.qty, Movement.reason, Movement.ref, Movement.note)
                .join(Part, Part.id == Movement.part_id)
                .join(Drawer, Drawer.id == Movement.drawer_id)
                .order_by(Movement.id.desc())
            )
            if number is not None:
                stmt = stmt.where(Movement.part_id == self._part_id(s, number))
            if drawer is not None:
                stmt = stmt.where(Movement.drawer_id == self._drawer_id(s, drawer))
            if reason is not None:
                stmt = stmt.where(Movement.reason == reason)
            if since is not None:
                stmt = stmt.where(Movement.at >= since)
            if limit:
                stmt = stmt.limit(limit)
            return [LogEntry(*row) for row in s.execute(stmt)]

    def stocked(self, pids_free: Sequence[tuple[int, int]], s: Session) -> list[Stocked]:
        """Stocked records (spec, free, drawers) for (part id, free) pairs, order kept."""
        ids = [pid for pid, _ in pids_free]
        specs = repo.load_specs(s, ids)
        where: dict[int, list[tuple[str, int]]] = {pid: [] for pid in ids}
        for i in range(0, len(ids), 500):
            chunk = ids[i : i + 500]
            for pid, label, free in s.execute(
                select(Balance.part_id, Drawer.label, Balance.on_hand - Balance.reserved)
                .join(Drawer, Drawer.id == Balance.drawer_id)
                .where(Balance.part_id.in_(chunk), Balance.on_hand > Balance.reserved)
                .order_by(Drawer.label)
            ):
                where[pid].append((label, free))
        return [Stocked(specs[pid], free, where[pid]) for pid, free in pids_free]

    def candidates(self, kind: Kind, family: str | None = None,
                   screen: Sequence[Any] = ()) -> list[Stocked]:
        """Every part of ``kind`` (and ``family``) with free stock, with its parameters.

        ``screen``: rating bounds (``stock.fit.screen``) that drop parts which surely fail;
        parts that lack the parameter are kept.
        """
        from stock.store.search import load_candidates

        with self.read() as s:
            return load_candidates(s, kind, family, screen)

    def kind_index(self, kind: Kind, names: Sequence[str] = ()) -> tuple[list[Any], list[Any]]:
        """A light index of the free parts of ``kind``; see
        :func:`stock.store.search.kind_columns` (the kit check picks candidates from it)."""
        from stock.store.search import kind_columns

        with self.read() as s:
            return kind_columns(s, kind, names)

    def stocked_by_id(self, ids: Sequence[int]) -> dict[int, Stocked]:
        """Full candidate records for part ids (from :meth:`kind_index`), by id."""
        from stock.store.search import load_stocked

        with self.read() as s:
            return load_stocked(s, ids)

    def find(self, kind: Kind | None = None, family: str | None = None,
             criteria: Sequence[object] = (), *, typical: bool = False,
             include_empty: bool = False, limit: int | None = 50) -> list[Stocked]:
        """Parametric search over the store; see :func:`stock.store.search.search`."""
        from stock.store.search import search

        with self.read() as s:
            rows = search(s, kind, family, criteria, typical=typical,
                          include_empty=include_empty, limit=limit)
            return self.stocked(rows, s)

    def verify(self) -> list[str]:
        """Problems found: balances that differ from their ledger sums, database damage."""
        problems: list[str] = []
        with self.read() as s:
            sums = (
                select(Movement.part_id, Movement.drawer_id,
                       func.sum(Movement.qty).filter(Movement.account == "on_hand").label("oh"),
                       func.sum(Movement.qty).filter(Movement.account == "reserved").label("rs"))
                .group_by(Movement.part_id, Movement.drawer_id)
                .subquery()
            )
            ledger_sums = {(r[0], r[1]): (r[2] or 0, r[3] or 0) for r in s.execute(select(sums))}
            balances = {(r[0], r[1]): (r[2], r[3]) for r in s.execute(
                select(Balance.part_id, Balance.drawer_id, Balance.on_hand, Balance.reserved))}
            names = dict(s.execute(select(Part.id, Part.number)).all())
            labels = dict(s.execute(select(Drawer.id, Drawer.label)).all())
            for k in sorted(set(ledger_sums) | set(balances)):
                want, have = ledger_sums.get(k, (0, 0)), balances.get(k, (0, 0))
                if want != have:
                    problems.append(
                        f"{names.get(k[0], k[0])} in {labels.get(k[1], k[1])}: balance "
                        f"{have[0]} on hand / {have[1]} reserved, ledger says "
                        f"{want[0]} / {want[1]}"
                    )
            problems.extend(f"{n}: its parameter document differs from its parameter rows "
                            "(stock verify --repair rewrites it from the rows)"
                            for _, n in repo.stale_docs(s))
            if self.engine.dialect.name == "sqlite":
                result = s.execute(text("PRAGMA integrity_check")).scalars().all()
                if result != ["ok"]:
                    problems.extend(f"sqlite integrity_check: {r}" for r in result)
        return problems

    def repair_param_docs(self) -> list[str]:
        """Rewrite the parameter documents that differ from their parameter rows; return
        the part numbers. The rows are the record and the document a copy of them, so
        nothing is lost (quantities are never rewritten: a balance that differs from its
        ledger needs a person to look)."""
        with self.write() as s:
            stale = repo.stale_docs(s)
            repo.refresh_docs(s, [pid for pid, _ in stale])
        return [n for _, n in stale]

    def movement_count(self) -> int:
        with self.read() as s:
            return s.execute(select(func.count(Movement.id))).scalar_one()


def open_store(db: str | None = None) -> Store:
    """Open (and migrate) the store at ``--db PATH|URL``, ``STOCK_DB`` or the default file."""
    from stock.config import db_url

    return Store(db_url(db))


__all__ = ["Holding", "LogEntry", "Store", "open_store", "part_key"]
