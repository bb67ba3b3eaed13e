"""Alembic environment for the stock store.

stock runs migrations itself when it opens a store (stock.store.db.migrate), handing
over its connection in ``config.attributes["connection"]``. Developers may also run
``alembic -c alembic.ini ...`` with ``STOCK_DB`` pointing at a store.
"""

from __future__ import annotations

from alembic import context

from stock.config import db_url
from stock.store.db import make_engine
from stock.store.models import Base

config = context.config
target_metadata = Base.metadata


def _configure(connection) -> None:  # type: ignore[no-untyped-def]
    # render_as_batch: SQLite cannot ALTER most constraints; batch mode rebuilds the
    # table instead (Alembic's documented approach). Harmless on PostgreSQL.
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=True,
        compare_type=True,
    )


def run_offline() -> None:
    context.configure(
        url=config.get_main_option("sqlalchemy.url") or db_url(),
        target_metadata=target_metadata,
        render_as_batch=True,
        literal_binds=True,
    )
    with context.begin_transaction():
        context.run_migrations()


def run_online() -> None:
    connection = config.attributes.get("connection")
    if connection is not None:
        _configure(connection)
        with context.begin_transaction():
            context.run_migrations()
        return
    engine = make_engine(config.get_main_option("sqlalchemy.url") or db_url())
    with engine.begin() as conn:
        _configure(conn)
        with context.begin_transaction():
            context.run_migrations()


if context.is_offline_mode():
    run_offline()
else:
    run_online()
