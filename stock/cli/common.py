"""What every command shares: options, the error boundary, output helpers.

Kept free of heavy imports: ``stock --help`` must not pay for SQLAlchemy or pandas.
"""

import json
import sys
from typing import TYPE_CHECKING, Annotated, Any

import typer
from typer.core import TyperGroup

if TYPE_CHECKING:
    from stock.store.api import Store

# --- shared options (one meaning on every command) --------------------------------
DbOpt = Annotated[
    str | None,
    typer.Option("--db", envvar="STOCK_DB", show_envvar=True, metavar="PATH|URL",
                 help="Store to use: an SQLite file path or a postgresql:// URL. "
                      "Default: stock.db in your data folder."),
]
JsonOpt = Annotated[bool, typer.Option("--json",
                                       help="Print JSON (stable shape) instead of a table.")]
KeyOpt = Annotated[str | None, typer.Option(
    "--key", help="Idempotency key: a second call with the same key records nothing.")]
DryRunOpt = Annotated[bool, typer.Option("--dry-run", help="Check everything, write nothing.")]
CopiesOpt = Annotated[int, typer.Option("--copies", "-n", min=1,
                                        help="How many copies of the kit.")]


class StockGroup(TyperGroup):
    """Turns our errors into one line on stderr and exit code 1 (usage errors stay 2)."""

    def invoke(self, ctx: typer.Context) -> Any:  # type: ignore[override]
        from stock.errors import StockError

        try:
            return super().invoke(ctx)
        except StockError as exc:
            typer.echo(f"stock: {exc}", err=True)
            raise typer.Exit(exc.exit_code) from None
        except Exception as exc:  # database trouble: say what, not a traceback
            name = type(exc).__name__
            if name in ("OperationalError", "InterfaceError", "ProgrammingError", "IntegrityError"):
                first = str(exc).splitlines()[0]
                typer.echo(f"stock: the store refused the request: {first}", err=True)
                raise typer.Exit(1) from None
            raise


def open_db(db: str | None) -> "Store":
    from stock.store import open_store

    return open_store(db)


# --- output ---------------------------------------------------------------------------
def emit_json(data: Any) -> None:
    """JSON to stdout: UTF-8, keys in the order given, floats as they are (SI units)."""
    sys.stdout.write(json.dumps(data, ensure_ascii=False, indent=2, default=str) + "\n")


def console(stderr: bool = False):  # type: ignore[no-untyped-def]
    from rich.console import Console

    return Console(stderr=stderr, highlight=False, soft_wrap=False)


def table(title: str | None, columns: list[str], rows: list[list[Any]],
          *, justify: dict[str, str] | None = None, caption: str | None = None) -> None:
    """A rich table on stdout (a plain message when there are no rows)."""
    from rich.table import Table

    if not rows:
        console().print((f"{title}: nothing to show" if title else "nothing to show")
                        + (f" ({caption})" if caption else ""))
        return
    t = Table(title=title, caption=caption, title_justify="left", header_style="bold")
    for c in columns:
        t.add_column(c, justify=(justify or {}).get(c, "left"))  # type: ignore[arg-type]
    for r in rows:
        t.add_row(*["" if v is None else str(v) for v in r])
    console().print(t)


def say(message: str) -> None:
    """A message for the person at the terminal (stderr, so stdout stays data)."""
    typer.echo(message, err=True)


def fmt(value: float | None, unit: str | None) -> str:
    """A value in builders' notation for tables."""
    if value is None:
        return ""
    from stock.quantities import render

    return render(value, unit or None)
