"""The store: parts, drawers and the movement ledger (SQLAlchemy 2.x, SQLite or PostgreSQL).

Import :func:`open_store` from here; it loads SQLAlchemy only when called, so that
commands which never touch the store start fast.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from stock.store.api import Store


def open_store(db: str | None = None) -> Store:
    from stock.store.api import open_store as _open

    return _open(db)


__all__ = ["open_store"]
