"""Shared fixtures: stores on SQLite (in memory and in a file) and, when STOCK_TEST_PG
holds a server URL, on PostgreSQL — each test gets a fresh database of its own."""

from __future__ import annotations

import os
import uuid
from collections.abc import Iterator

import pytest

PG_URL = os.environ.get("STOCK_TEST_PG")


def _pg_admin():  # type: ignore[no-untyped-def]
    from sqlalchemy import create_engine

    from stock.config import db_url

    return create_engine(db_url(PG_URL), isolation_level="AUTOCOMMIT")


def _with_db(url: str, name: str) -> str:
    from sqlalchemy.engine import make_url

    from stock.config import db_url

    return make_url(db_url(url)).set(database=name).render_as_string(hide_password=False)


@pytest.fixture(scope="session")
def pg_template() -> Iterator[str | None]:
    """A PostgreSQL database migrated to head once, cloned for each test."""
    if not PG_URL:
        yield None
        return
    from sqlalchemy import text

    from stock.store.db import ensure_schema, make_engine

    name = f"stock_tmpl_{uuid.uuid4().hex[:10]}"
    admin = _pg_admin()
    with admin.connect() as c:
        c.execute(text(f'CREATE DATABASE "{name}"'))
    eng = make_engine(_with_db(PG_URL, name))
    ensure_schema(eng)
    eng.dispose()
    yield name
    with admin.connect() as c:
        c.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    admin.dispose()


def fresh_pg_url(template: str | None = None) -> tuple[str, str]:
    """Create an empty (or template-cloned) database; returns (url, name)."""
    from sqlalchemy import text

    name = f"stock_test_{uuid.uuid4().hex[:12]}"
    admin = _pg_admin()
    with admin.connect() as c:
        c.execute(text(f'CREATE DATABASE "{name}"' + (f' TEMPLATE "{template}"' if template
                                                      else "")))
    admin.dispose()
    return _with_db(PG_URL or "", name), name


def drop_pg(name: str) -> None:
    from sqlalchemy import text

    admin = _pg_admin()
    with admin.connect() as c:
        c.execute(text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    admin.dispose()


BACKENDS = ["sqlite-file", "sqlite-memory", pytest.param("pg", marks=pytest.mark.pg)]


@pytest.fixture(params=BACKENDS)
def store(request, tmp_path, pg_template):  # type: ignore[no-untyped-def]
    """An empty, migrated store on each backend."""
    from stock.store.api import Store

    if request.param == "sqlite-file":
        s = Store(f"sqlite:///{tmp_path / 'stock.db'}")
        yield s
        s.close()
    elif request.param == "sqlite-memory":
        s = Store("sqlite://")
        yield s
        s.close()
    else:
        if not PG_URL:
            pytest.skip("set STOCK_TEST_PG to a PostgreSQL URL to run this on PostgreSQL")
        url, name = fresh_pg_url(pg_template)
        s = Store(url)
        yield s
        s.close()
        drop_pg(name)


@pytest.fixture
def file_store(tmp_path):  # type: ignore[no-untyped-def]
    """A store in an SQLite file, with its path (for CLI tests)."""
    from stock.store.api import Store

    path = tmp_path / "stock.db"
    s = Store(f"sqlite:///{path}")
    yield s, path
    s.close()


@pytest.fixture(autouse=True)
def _isolated_home(tmp_path_factory, monkeypatch):  # type: ignore[no-untyped-def]
    """Never touch the real user's data or config folders."""
    home = tmp_path_factory.mktemp("home")
    monkeypatch.setenv("STOCK_HOME", str(home))
    monkeypatch.delenv("STOCK_DB", raising=False)
    monkeypatch.delenv("STOCK_CONFIG", raising=False)
