"""Commands that move whole files: import a stock list, export and restore the store."""

from pathlib import Path
from typing import Annotated

import typer

from stock.cli import app
from stock.cli.common import DbOpt, DryRunOpt, JsonOpt, emit_json, open_db, say


def parse_mapping(items: list[str] | None) -> dict[str, str] | None:
    """``--map number="Part No."`` options to {canonical column: header in the file}."""
    if not items:
        return None
    from stock.errors import StockError

    out = {}
    for item in items:
        name, sep, header = item.partition("=")
        if not sep or not name.strip() or not header.strip():
            raise StockError(f"cannot read --map {item!r}; write it as column=Header, "
                             "e.g. --map number='Part No.'")
        out[name.strip().lower()] = header.strip()
    return out


MapOpt = Annotated[list[str] | None, typer.Option(
    "--map", help="Which file column holds which of ours: number='Part No.' (repeat).")]
SheetOpt = Annotated[str | None, typer.Option(help="XLSX sheet name (default: the first).")]


@app.command("import")
def import_(
    file: Annotated[Path, typer.Argument(help="CSV or XLSX stock list.", exists=True,
                                         dir_okay=False)],
    map_: MapOpt = None,
    sheet: SheetOpt = None,
    keep_duplicates: Annotated[bool, typer.Option(
        "--keep-duplicates", help="Count rows that repeat another row exactly.")] = False,
    dry_run: DryRunOpt = False,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Import a stock list (part, qty, drawer per row) all-or-nothing.

    Columns are found by their headers (part/number/MPN, qty/quantity, drawer/location,
    kind, family, package, pins, description, params). A bad cell anywhere writes nothing
    and the error names the file, sheet, row and column.

    Examples:
      stock import drawers.csv --dry-run
      stock import parts.xlsx --sheet Stock --map number='Part No.' --map drawer=Box
    """
    from stock.transfer import import_stock

    store = open_db(db)
    with _progress(file) as tick:
        res = import_stock(store, file, mapping=parse_mapping(map_), sheet=sheet,
                           dry_run=dry_run, keep_duplicates=keep_duplicates, progress=tick)
    if json_out:
        emit_json({"file": res.file, "rows": res.rows, "parts_created": res.parts_created,
                   "parts_known": res.parts_known, "drawers_created": res.drawers_created,
                   "units": res.units, "duplicates": res.duplicates, "dry_run": res.dry_run})
        return
    verb = "would import" if dry_run else "imported"
    say(f"{verb} {res.rows} rows: {res.units} parts, {res.parts_created} new part types, "
        f"{res.parts_known} known, {res.drawers_created} new drawers")
    for row, first in res.duplicates:
        say(f"row {row} repeats row {first}; both counted")


class _progress:
    """A progress bar on stderr for files of more than a few thousand rows."""

    def __init__(self, file: Path) -> None:
        self.big = file.stat().st_size > 256 * 1024
        self.bar = None

    def __enter__(self):  # type: ignore[no-untyped-def]
        if not self.big:
            return None
        from rich.progress import Progress

        self.bar = Progress(transient=True, console=_stderr())
        self.bar.start()
        self.task = self.bar.add_task("reading", total=None)
        return self.tick

    def tick(self, done: int, total: int) -> None:
        assert self.bar is not None
        self.bar.update(self.task, completed=done, total=total or None)

    def __exit__(self, *exc: object) -> None:
        if self.bar is not None:
            self.bar.stop()


def _stderr():  # type: ignore[no-untyped-def]
    from stock.cli.common import console

    return console(stderr=True)


@app.command()
def export(
    target: Annotated[Path, typer.Argument(help="A .xlsx file, or a folder for CSV files.")],
    db: DbOpt = None,
) -> None:
    """Write the whole store (parts, parameters, drawers, builds, ledger) to XLSX or CSV.

    Examples:
      stock export backup.xlsx
      stock export backup-2026-12/      (a folder of CSV files)
    """
    from stock.transfer import export_store

    counts = export_store(open_db(db), target)
    say(f"exported to {target}: {_counted(counts)}")


@app.command()
def restore(
    source: Annotated[Path, typer.Argument(help="An export: .xlsx file or CSV folder.",
                                           exists=True)],
    db: DbOpt = None,
) -> None:
    """Read an export back into an empty store (all-or-nothing).

    Example: stock restore backup.xlsx --db restored.db
    """
    from stock.transfer import restore_store

    counts = restore_store(open_db(db), source)
    say(f"restored from {source}: {_counted(counts)}")


def _counted(counts: dict[str, int]) -> str:
    """'12 parts, 1 drawer, ...' (the table names are plural)."""
    return ", ".join(f"{n} {name if n != 1 else name.removesuffix('s')}"
                     for name, n in counts.items())
