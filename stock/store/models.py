"""Tables of the store (SQLAlchemy 2.x declarative models).

Every schema change is an Alembic migration in ``migrations/versions``; a test checks
that these models and the migrated schema agree.
"""

from __future__ import annotations

from datetime import UTC, datetime

from sqlalchemy import (
    CheckConstraint,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    MetaData,
    String,
    Text,
    UniqueConstraint,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column

# A naming convention from the first migration on, so batch migrations on SQLite can
# find constraints by name (Alembic's advice for SQLite).
NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


def utcnow() -> datetime:
    return datetime.now(UTC)


class Base(DeclarativeBase):
    metadata = MetaData(naming_convention=NAMING)


class Part(Base):
    """A part type. ``key`` is the folded number used for lookups."""

    __tablename__ = "parts"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    number: Mapped[str] = mapped_column(String(120))
    key: Mapped[str] = mapped_column(String(120), unique=True)
    kind: Mapped[str] = mapped_column(String(16))
    family: Mapped[str | None] = mapped_column(String(32))
    package: Mapped[str | None] = mapped_column(String(40))
    pinout: Mapped[str | None] = mapped_column(String(16))
    description: Mapped[str] = mapped_column(Text, default="")
    attrs: Mapped[str] = mapped_column(Text, default="{}")  # JSON object of text attributes
    source: Mapped[str | None] = mapped_column(Text)  # catalog row source, when filled from it
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True), default=utcnow)
    # the part's parameters as one document (stock.store.paramdoc), kept with the rows of
    # ``params`` by the store's writers: the candidate loader reads this, not the rows
    params_doc: Mapped[str] = mapped_column(Text, default="{}", server_default="{}")

    __table_args__ = (Index("ix_parts_kind_family", "kind", "family"),)


class ParamRow(Base):
    """One parameter value of a part: name, bound, SI value, test conditions, origin."""

    __tablename__ = "params"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    part_id: Mapped[int] = mapped_column(ForeignKey("parts.id", ondelete="CASCADE"))
    name: Mapped[str] = mapped_column(String(16))
    bound: Mapped[str] = mapped_column(String(3))
    value: Mapped[float] = mapped_column(Float)
    at: Mapped[str] = mapped_column(Text, default="")  # JSON test conditions, '' when none
    origin: Mapped[str] = mapped_column(String(8), default="user")

    __table_args__ = (
        UniqueConstraint("part_id", "name", "bound", "at", name="uq_params_part_name_bound_at"),
        # parametric search: equality columns first, the compared value next, and the
        # part id last so a range read needs nothing but the index (migration 0003)
        Index("ix_params_name_bound_value", "name", "bound", "value", "part_id"),
        CheckConstraint("bound IN ('min', 'typ', 'max', 'nom')", name="bound"),
    )


class Drawer(Base):
    """A place where parts are kept; a drawer may sit inside another (a cabinet)."""

    __tablename__ = "drawers"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    label: Mapped[str] = mapped_column(String(64), unique=True)
    parent_id: Mapped[int | None] = mapped_column(ForeignKey("drawers.id"))
    note: Mapped[str] = mapped_column(Text, default="")


class Build(Base):
    """N copies of a kit with parts reserved from drawers; later built or released."""

    __tablename__ = "builds"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    name: Mapped[str] = mapped_column(String(80), unique=True)
    kit: Mapped[str] = mapped_column(String(200))
    copies: Mapped[int] = mapped_column(Integer)
    built: Mapped[int] = mapped_column(Integer, default=0)  # copies built so far
    status: Mapped[str] = mapped_column(String(10), default="reserved")
    plan: Mapped[str] = mapped_column(Text, default="{}")  # JSON: the allocation reserved
    created_at: Mapped[datetime] = mapped_column(DateTime(timezone=True), default=utcnow)

    __table_args__ = (
        CheckConstraint("status IN ('reserved', 'built', 'released')", name="status"),
        CheckConstraint("copies > 0", name="copies_positive"),
    )


class Movement(Base):
    """One ledger row: a signed quantity of one part in one drawer, in one account.

    ``account`` is ``on_hand`` (parts physically there) or ``reserved`` (held for a
    build). Rows are only ever added; the balance table is their running sum.
    """

    __tablename__ = "movements"

    id: Mapped[int] = mapped_column(Integer, primary_key=True)
    part_id: Mapped[int] = mapped_column(ForeignKey("parts.id"))
    drawer_id: Mapped[int] = mapped_column(ForeignKey("drawers.id"))
    account: Mapped[str] = mapped_column(String(8))
    qty: Mapped[int] = mapped_column(Integer)
    reason: Mapped[str] = mapped_column(String(12))
    ref: Mapped[str] = mapped_column(String(200), default="")
    note: Mapped[str] = mapped_column(Text, default="")
    at: Mapped[datetime] = mapped_column(DateTime(timezone=True), default=utcnow)
    key: Mapped[str | None] = mapped_column(String(120), unique=True)  # idempotency key
    build_id: Mapped[int | None] = mapped_column(ForeignKey("builds.id"))

    __table_args__ = (
        CheckConstraint("qty <> 0", name="qty_nonzero"),
        CheckConstraint("account IN ('on_hand', 'reserved')", name="account"),
        Index("ix_movements_part_drawer", "part_id", "drawer_id"),
        Index("ix_movements_at", "at"),
    )


class Balance(Base):
    """Per part and drawer: the ledger sums, kept in the same transaction as each movement."""

    __tablename__ = "balances"

    part_id: Mapped[int] = mapped_column(ForeignKey("parts.id"), primary_key=True)
    drawer_id: Mapped[int] = mapped_column(ForeignKey("drawers.id"), primary_key=True)
    on_hand: Mapped[int] = mapped_column(Integer, default=0)
    reserved: Mapped[int] = mapped_column(Integer, default=0)

    __table_args__ = (
        CheckConstraint("on_hand >= 0", name="on_hand_not_negative"),
        CheckConstraint("reserved >= 0", name="reserved_not_negative"),
        CheckConstraint("reserved <= on_hand", name="reserved_within_on_hand"),
        Index("ix_balances_drawer", "drawer_id"),
    )
