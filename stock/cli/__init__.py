"""The ``stock`` command line: parse, call the library, render.

Each command module registers its commands on :data:`app`. Heavy libraries are
imported inside the commands that use them.
"""

import typer

from stock.cli.common import StockGroup

app = typer.Typer(
    name="stock",
    cls=StockGroup,
    help=(
        "Parts inventory and build-substitution manager for electronics builders.\n\n"
        "Keep your drawers in a store, check a kit's bill of materials against them, find "
        "stand-ins with their margins, and plan builds.\n\n"
        "Example: stock add PN2222A --qty 10 --drawer A1"
    ),
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
    context_settings={"help_option_names": ["-h", "--help"]},
)

# Command modules register themselves on import; keep these imports light.
from stock.cli import inventory as _inventory  # noqa: E402,F401
from stock.cli import transfer as _transfer  # noqa: E402,F401

for _optional in ("catalog", "fit", "kits", "demo"):
    try:
        __import__(f"stock.cli.{_optional}")
    except ModuleNotFoundError as _exc:  # a command group not written yet
        if _exc.name != f"stock.cli.{_optional}":
            raise


def main() -> None:
    app()
