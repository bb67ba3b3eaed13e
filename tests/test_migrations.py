"""Migrations: upgrade from empty to head, models match the schema (no autogenerate
diff), and downgrade then upgrade with data in place — on SQLite and PostgreSQL."""

from __future__ import annotations

import pytest
from sqlalchemy import text

from stock.store.db import (
    SCHEMA_HEAD,
    alembic_config,
    current_revision,
    downgrade,
    make_engine,
    migrate,
)
from stock.store.models import Base
from tests.conftest import PG_URL, drop_pg, fresh_pg_url


@pytest.fixture(params=["sqlite", pytest.param("pg", marks=pytest.mark.pg)])
def empty_engine(request, tmp_path):  # type: ignore[no-untyped-def]
    if request.param == "sqlite":
        eng = make_engine(f"sqlite:///{tmp_path / 'm.db'}")
        yield eng
        eng.dispose()
        return
    if not PG_URL:
        pytest.skip("set STOCK_TEST_PG to a PostgreSQL URL to run this on PostgreSQL")
    url, name = fresh_pg_url()
    eng = make_engine(url)
    yield eng
    eng.dispose()
    drop_pg(name)


def test_schema_head_constant_matches_alembic_head():
    from alembic.script import ScriptDirectory

    assert ScriptDirectory.from_config(alembic_config()).get_current_head() == SCHEMA_HEAD


def test_upgrade_from_empty_and_models_match_schema(empty_engine):
    from alembic.autogenerate import compare_metadata
    from alembic.migration import MigrationContext

    assert current_revision(empty_engine) is None
    migrate(empty_engine)
    assert current_revision(empty_engine) == SCHEMA_HEAD
    with empty_engine.connect() as conn:
        diff = compare_metadata(MigrationContext.configure(conn), Base.metadata)
    assert diff == []


def test_downgrade_then_upgrade_keeps_data(empty_engine):
    from stock.store.api import Store

    migrate(empty_engine)
    store = Store("unused://", engine=empty_engine)
    from stock.kinds import Bound, Kind
    from stock.parts import Param, PartSpec

    store.save_part(PartSpec("1N4148", Kind.DIODE, "signal", "DO-35", "AK",
                             params=[Param("vrrm", Bound.MAX, 100.0)]))
    store.receive("1N4148", "D1", 100)
    store.take("1N4148", "D1", 7)
    downgrade(empty_engine, "0001")  # drops builds and movements.build_id (batch on SQLite)
    assert current_revision(empty_engine) == "0001"
    with empty_engine.connect() as conn:
        assert conn.execute(text("SELECT SUM(qty) FROM movements")).scalar() == 93
        assert conn.execute(text("SELECT on_hand FROM balances")).scalar() == 93
    migrate(empty_engine)
    assert current_revision(empty_engine) == SCHEMA_HEAD
    assert store.level("1N4148", "D1").on_hand == 93
    assert store.verify() == []
    downgrade(empty_engine, "base")
    with empty_engine.connect() as conn:
        names = set(conn.dialect.get_table_names(conn))
    assert names <= {"alembic_version"}


def test_store_migrates_itself_on_open(tmp_path):
    from stock.store.api import Store

    eng = make_engine(f"sqlite:///{tmp_path / 'old.db'}")
    migrate(eng, "0001")  # a store left at the first schema
    eng.dispose()
    store = Store(f"sqlite:///{tmp_path / 'old.db'}")
    assert current_revision(store.engine) == SCHEMA_HEAD


def test_sqlite_connection_settings(tmp_path):
    eng = make_engine(f"sqlite:///{tmp_path / 's.db'}")
    with eng.connect() as conn:
        assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
        assert conn.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
        assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() == 10_000
    eng.dispose()


def test_write_transactions_begin_immediate(tmp_path):
    """A write session takes SQLite's write lock at BEGIN, so a second writer waits
    instead of failing half-way (BEGIN IMMEDIATE; SQLite docs, 'Transaction')."""
    import sqlite3

    from stock.store.db import session_scope

    path = tmp_path / "lock.db"
    eng = make_engine(f"sqlite:///{path}")
    migrate(eng)
    other = sqlite3.connect(path, timeout=0, isolation_level=None)
    with session_scope(eng, write=True) as s:
        s.execute(text("SELECT 1"))  # nothing written yet, but the lock is held
        with pytest.raises(sqlite3.OperationalError, match="locked"):
            other.execute("BEGIN IMMEDIATE")
    other.execute("BEGIN IMMEDIATE")  # free again after commit
    other.execute("ROLLBACK")
    other.close()
    eng.dispose()
