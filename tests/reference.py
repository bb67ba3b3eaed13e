"""Reading the reference tables in tests/data (each row carries its source)."""

from __future__ import annotations

import csv
from pathlib import Path

DATA = Path(__file__).parent / "data"


def rows(name: str) -> list[dict[str, str]]:
    """The rows of ``tests/data/NAME`` (a CSV file with a header) as dicts."""
    with open(DATA / name, newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))
