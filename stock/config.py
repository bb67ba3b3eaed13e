"""Where stock keeps its files, and how the store location is chosen.

Order: ``--db`` on the command line, then the ``STOCK_DB`` environment variable, then
an SQLite file in the user's data folder. The config file (TOML) lives in the user's
config folder, or where ``STOCK_CONFIG`` points.
"""

from __future__ import annotations

import os
import tomllib
from pathlib import Path
from typing import Any

APP = "stock"


def data_dir() -> Path:
    """The user's data folder for stock (created on demand by the caller)."""
    override = os.environ.get("STOCK_HOME")
    if override:
        return Path(override)
    import platformdirs

    return Path(platformdirs.user_data_dir(APP, appauthor=False))


def config_dir() -> Path:
    """The user's config folder for stock (config.toml, catalog.csv overrides)."""
    override = os.environ.get("STOCK_HOME")
    if override:
        return Path(override)
    import platformdirs

    return Path(platformdirs.user_config_dir(APP, appauthor=False))


def config_path() -> Path:
    return Path(os.environ.get("STOCK_CONFIG") or config_dir() / "config.toml")


def default_db_path() -> Path:
    return data_dir() / "stock.db"


def db_url(db: str | None = None) -> str:
    """An SQLAlchemy URL from ``--db PATH|URL``, ``STOCK_DB`` or the default file."""
    target = db or os.environ.get("STOCK_DB") or str(default_db_path())
    if "://" in target:
        if target.startswith("postgres://"):  # the short spelling some tools print
            target = "postgresql://" + target[len("postgres://"):]
        if target.startswith("postgresql://"):
            target = "postgresql+psycopg://" + target[len("postgresql://"):]
        return target
    return f"sqlite:///{Path(target).expanduser()}"


def load_config(path: Path | None = None) -> dict[str, Any]:
    """The user's config file as a dict ({} when there is none)."""
    from stock.errors import ConfigError

    p = path or config_path()
    if not p.exists():
        return {}
    try:
        with p.open("rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{p}: {exc}; fix the TOML syntax there") from None
