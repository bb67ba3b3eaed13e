"""Running the CLI in tests: exit code, stdout and stderr kept apart."""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from typer.testing import CliRunner


@dataclass
class Run:
    code: int
    out: str
    err: str

    def json(self):  # type: ignore[no-untyped-def]
        return json.loads(self.out)


def run(db: Path | str | None, *args: str) -> Run:
    from stock.cli import app

    argv = [*args] + (["--db", str(db)] if db is not None else [])
    res = CliRunner().invoke(app, argv, catch_exceptions=False)
    return Run(res.exit_code, res.stdout, res.stderr)
