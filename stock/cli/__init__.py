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

# Command modules register themselves on import, in the order `stock --help` lists them;
# keep these imports light.
# isort: off
from stock.cli import inventory as _inventory  # noqa: E402,F401
from stock.cli import transfer as _transfer  # noqa: E402,F401
from stock.cli import catalog as _catalog  # noqa: E402,F401
from stock.cli import fit as _fit  # noqa: E402,F401
from stock.cli import kits as _kits  # noqa: E402,F401
from stock.cli import demo as _demo  # noqa: E402,F401
# isort: on


def main() -> None:
    app()
