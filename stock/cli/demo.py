"""The demo: a short tour of stock on an invented club's drawers and kits.

The Saltmarsh Amateur Radio Circle (invented) keeps its parts in a cabinet of drawers
and runs build nights. The tour imports their stock list into a fresh SQLite store,
searches it, asks for stand-ins, checks three kits, and reserves, picks and builds one.
Every step is an ordinary command, printed before it runs.
"""

import shlex
from pathlib import Path
from typing import Annotated

import typer

from stock.cli import app
from stock.cli.common import say

#: The demo scenario: seeds_demo/ at the project root (an invented club and its kits),
#: reached through the package's ``stock/seeds_demo`` link so a wheel carries it too.
SEEDS = Path(__file__).resolve().parents[1] / "seeds_demo"


def steps(db: str) -> list[tuple[str, list[str]]]:
    kits = SEEDS / "kits"
    return [
        ("The club's stock list goes into a fresh store, all or nothing.",
         ["import", str(SEEDS / "stock.csv")]),
        ("What NPN transistors are there for a 30 V, 200 MHz job? (guaranteed limits only)",
         ["find", "bjt", "--family", "npn", "vceo>=30V", "ft>=200MHz"]),
        ("The transmitter's keying switch calls for a 2N3906, and the drawer has none.",
         ["fit", "2N3906", "--role", "switch", "--supply", "13.8V", "--current", "150mA"]),
        ("The receiver's tank wants 68 pF C0G: nothing single fits, two parts might.",
         ["fit", "68p C0G 50V 5%", "--kind", "capacitor", "--role", "tuned", "--combine"]),
        ("Build night: two transmitters, one receiver, one audio amplifier. What is short?",
         ["check", f"{kits / 'marsh-tx40.toml'}:2", str(kits / "marsh-dcrx40.toml"),
          str(kits / "marsh-audio.toml")]),
        ("The audio amplifier is fully stocked: reserve its parts ...",
         ["reserve", str(kits / "marsh-audio.toml"), "--name", "audio-night-1"]),
        ("... walk the drawers once with the pick list ...", ["pick", "audio-night-1"]),
        ("... and record the build (the ledger consumes the reserved parts).",
         ["build", "audio-night-1"]),
        ("Every balance still equals the sum of its ledger rows.", ["verify"]),
    ]


@app.command()
def demo(
    db: Annotated[Path | None, typer.Option(
        "--db", metavar="PATH", help="Where to put the demo store (replaced if it exists). "
        "Default: demo.db in your data folder.")] = None,
) -> None:
    """A guided tour on an invented club's drawers and kits, in a fresh SQLite store.

    Example: stock demo
    """
    from stock.config import data_dir

    path = db or data_dir() / "demo.db"
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    say("The Saltmarsh Amateur Radio Circle (an invented club) keeps its parts in drawers "
        "A1–X1.\nSafety: the transmitter kit needs a licence to use and its harmonic filter "
        "fitted; datasheets and local regulations rule.\n")
    for why, args in steps(str(path)):
        argv = [*args, "--db", str(path)]
        say(f"# {why}")
        say("$ stock " + " ".join(shlex.quote(_short(a)) for a in args))
        try:
            app(argv, standalone_mode=False)
        except SystemExit as exc:  # a step that reports a problem still lets the tour go on
            if exc.code:
                say(f"(exit code {exc.code})")
        except typer.Exit as exc:
            if exc.exit_code:
                say(f"(exit code {exc.exit_code})")
        say("")
    say(f"The demo store is {path}; explore it with --db, e.g.  stock drawers --db {path}")


def _short(arg: str) -> str:
    """Show seed paths relative to the project, as a builder would type them."""
    try:
        return str(Path(arg.split(":")[0]).relative_to(SEEDS.parent)) + (
            ":" + arg.split(":")[1] if ":" in arg else "")
    except ValueError:
        return arg
