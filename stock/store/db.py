"""Engine, sessions and self-migration of the store.

SQLite (the embedded default) runs with WAL, foreign keys on, a busy timeout, and
``BEGIN IMMEDIATE`` for write transactions, so two writers queue instead of failing
half-way. PostgreSQL is reached through psycopg 3 by URL.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager
from operator import itemgetter
from pathlib import Path
from typing import TYPE_CHECKING, Any

from sqlalchemy import FromClause, Table, create_engine, event, text
from sqlalchemy.engine import Engine
from sqlalchemy.orm import Session

from stock.errors import StoreError

if TYPE_CHECKING:
    from alembic.config import Config

#: The newest migration. A test checks it against Alembic's head, so that opening an
#: up-to-date store costs one query and never imports Alembic (~0.9 s here).
SCHEMA_HEAD = "0004"

#: Where the migration scripts live: ``migrations/`` at the project root, reached through
#: the package's ``stock/migrations`` link, so a wheel (which copies the scripts into the
#: package) finds them as well as a checkout does.
MIGRATIONS_DIR = Path(__file__).resolve().parents[1] / "migrations"

BUSY_TIMEOUT_MS = 10_000  # wait this long for another writer before "database is locked"


def make_engine(url: str) -> Engine:
    """An engine for ``url`` with the store's connection settings applied."""
    if url.startswith("sqlite"):
        path = url.split("///", 1)[-1] if "///" in url else ""
        if path and path != ":memory:":
            Path(path).parent.mkdir(parents=True, exist_ok=True)
            engine = create_engine(url, connect_args={"timeout": BUSY_TIMEOUT_MS / 1000})
        else:  # one in-memory database shared by every session of this engine
            from sqlalchemy.pool import StaticPool

            engine = create_engine("sqlite://", poolclass=StaticPool,
                                   connect_args={"check_same_thread": False})
        _sqlite_settings(engine)
        return engine
    try:
        return create_engine(url, pool_pre_ping=True)
    except ModuleNotFoundError as exc:  # psycopg missing
        raise StoreError(
            f"cannot open {url.split('@')[-1]}: {exc.name} is not installed; "
            "install the PostgreSQL extra: pip install 'stock[pg]'"
        ) from None


def _sqlite_settings(engine: Engine) -> None:
    @event.listens_for(engine, "connect")
    def _connect(dbapi_conn, _record):  # type: ignore[no-untyped-def]
        # Let SQLAlchemy's "begin" event issue BEGIN itself (pysqlite's own implicit
        # transactions would defeat BEGIN IMMEDIATE).
        dbapi_conn.isolation_level = None
        cur = dbapi_conn.cursor()
        cur.execute("PRAGMA journal_mode=WAL")
        cur.execute("PRAGMA foreign_keys=ON")
        cur.execute(f"PRAGMA busy_timeout={BUSY_TIMEOUT_MS}")
        cur.execute("PRAGMA synchronous=NORMAL")
        # 64 MiB of page cache (SQLite's default is 2 MiB): bulk imports update several
        # indexes per row, and a 100,000-part store's indexes then stay in memory
        cur.execute("PRAGMA cache_size=-65536")
        cur.close()

    @event.listens_for(engine, "begin")
    def _begin(conn):  # type: ignore[no-untyped-def]
        write = conn.get_execution_options().get("stock_write", False)
        conn.exec_driver_sql("BEGIN IMMEDIATE" if write else "BEGIN")


def alembic_config(url: str | None = None) -> Config:
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(MIGRATIONS_DIR))
    if url:
        cfg.set_main_option("sqlalchemy.url", url.replace("%", "%%"))
    return cfg


def current_revision(engine: Engine) -> str | None:
    """The store's migration revision, or None for an empty database."""
    with engine.connect() as conn:
        try:
            return conn.execute(text("SELECT version_num FROM alembic_version")).scalar()
        except Exception:  # no such table: an empty store
            conn.rollback()
            return None


def migrate(engine: Engine, revision: str = "head") -> None:
    """Upgrade the store to ``revision`` (Alembic), in one transaction where possible."""
    if not MIGRATIONS_DIR.is_dir():
        raise StoreError(
            f"migration scripts not found at {MIGRATIONS_DIR}; install stock from its source "
            "folder with: pip install -e ."
        )
    from alembic import command

    cfg = alembic_config()
    with engine.begin() as conn:
        cfg.attributes["connection"] = conn
        command.upgrade(cfg, revision)


def downgrade(engine: Engine, revision: str) -> None:
    from alembic import command

    cfg = alembic_config()
    with engine.begin() as conn:
        cfg.attributes["connection"] = conn
        command.downgrade(cfg, revision)


def ensure_schema(engine: Engine) -> None:
    """Migrate the store on open when it is behind; a newer store is an error."""
    rev = current_revision(engine)
    if rev == SCHEMA_HEAD:
        return
    if rev is not None and rev > SCHEMA_HEAD:
        raise StoreError(
            f"the store is at schema {rev}, newer than this stock ({SCHEMA_HEAD}); upgrade stock"
        )
    migrate(engine)


@contextmanager
def session_scope(engine: Engine, *, write: bool = False) -> Iterator[Session]:
    """A session in one transaction: committed on success, rolled back on any error."""
    bind = engine.execution_options(stock_write=True) if write else engine
    with Session(bind=bind, expire_on_commit=False) as session:
        with session.begin():
            yield session


def bulk_insert(session: Session, table: FromClause, rows: list[dict[str, Any]]) -> None:
    """Insert many rows with one DBAPI ``executemany``, skipping per-row Core overhead.

    The bulk paths (imports, restores) use this: measured here, Core inserts cost 3–4×
    a raw executemany (design notes). Every column must be given (no Python-side
    defaults run); values still pass through each column type's bind processor.
    """
    if not rows:
        return
    conn = session.connection()
    dialect = conn.dialect
    cols = list(rows[0])
    quote = dialect.identifier_preparer.quote
    assert isinstance(table, Table)  # a mapped class's __table__
    mark = "?" if dialect.paramstyle == "qmark" else "%s"
    sql = (f"INSERT INTO {quote(table.name)} ({', '.join(quote(c) for c in cols)}) "
           f"VALUES ({', '.join([mark] * len(cols))})")
    get = itemgetter(*cols)
    data = [get(r) for r in rows] if len(cols) > 1 else [(get(r),) for r in rows]
    procs = [(i, p) for i, c in enumerate(cols)
             if (p := table.c[c].type._cached_bind_processor(dialect)) is not None]
    if procs:
        # bulk rows repeat values (one timestamp for a whole import): convert each once
        seen: list[dict[Any, Any]] = [{} for _ in procs]
        fixed = []
        for row in data:
            vals = list(row)
            for (i, p), memo in zip(procs, seen, strict=True):
                v = vals[i]
                try:
                    vals[i] = memo[v]
                except KeyError:
                    vals[i] = memo[v] = p(v)
                except TypeError:  # unhashable
                    vals[i] = p(v)
            fixed.append(tuple(vals))
        data = fixed
    conn.exec_driver_sql(sql, data)
