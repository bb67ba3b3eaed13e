"""Stock lists in, the whole store out and back.

* :func:`import_stock` reads a CSV/XLSX stock list (one row: a part, a quantity, a
  drawer) and receives every row in ONE transaction: a bad cell anywhere writes nothing
  and the error names file, sheet, row and column.
* :func:`export_store` writes parts, parameters, drawers, builds and the whole ledger to
  an XLSX workbook (one sheet each) or a folder of CSV files; :func:`restore_store`
  reads that back into an empty store, after which an export is identical.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from datetime import datetime
from functools import lru_cache
from pathlib import Path

from stock.errors import ImportFileError, StockError
from stock.gcpause import cycle_collector_paused
from stock.parts import PartSpec, part_key

#: Canonical stock-list columns and the header spellings accepted for each.
STOCK_COLUMNS: dict[str, list[str]] = {
    "number": ["number", "part", "part number", "part no", "part #", "mpn", "pn", "value", "name",
               "item"],
    "qty": ["qty", "quantity", "count", "pcs", "pieces", "on hand", "amount"],
    "drawer": ["drawer", "location", "bin", "box", "place", "storage"],
    "kind": ["kind", "type", "category"],
    "family": ["family", "polarity", "dielectric", "technology", "subtype"],
    "package": ["package", "case", "footprint"],
    "pinout": ["pins", "pinout", "pin order"],
    "description": ["description", "desc", "comment", "notes"],
    "params": ["params", "parameters", "specs"],
    "ref": ["ref", "reference", "order", "supplier ref"],
}
REQUIRED = ("number", "qty", "drawer")


@lru_cache(maxsize=64)
def _named_by_number(kind: str) -> bool:
    """True for kinds called by part number; False for value kinds ("4k7", "100n C0G"),
    whose name is read for a value, and for a kind that is not one (build_spec says so)."""
    from stock.kinds import parse_kind
    from stock.params import VALUE_PARAMS

    try:
        return parse_kind(kind) not in VALUE_PARAMS
    except ValueError:
        return False


@dataclass
class ImportResult:
    file: str
    rows: int = 0
    parts_created: int = 0
    parts_known: int = 0
    drawers_created: int = 0
    units: int = 0
    duplicates: list[tuple[int, int]] = field(default_factory=list)
    warnings: list[str] = field(default_factory=list)
    dry_run: bool = False


def _qty(text: str) -> int:
    v = float(text)
    if v != int(v) or v <= 0:
        raise ValueError
    return int(v)


def import_stock(store, path: str | Path, *, mapping: Mapping[str, str] | None = None,  # type: ignore[no-untyped-def]
                 sheet: str | None = None, dry_run: bool = False,
                 keep_duplicates: bool = False,
                 progress: Callable[[int, int], None] | None = None) -> ImportResult:
    """Import a stock list into ``store`` all-or-nothing (see the module docstring)."""
    # A stock list makes hundreds of thousands of small objects that live to the end of
    # the import; the cycle collector would walk them again and again for nothing.
    with cycle_collector_paused():
        return _import_stock(store, path, mapping=mapping, sheet=sheet, dry_run=dry_run,
                             keep_duplicates=keep_duplicates, progress=progress)


def _import_stock(store, path: str | Path, *, mapping: Mapping[str, str] | None,  # type: ignore[no-untyped-def]
                  sheet: str | None, dry_run: bool, keep_duplicates: bool,
                  progress: Callable[[int, int], None] | None) -> ImportResult:
    from stock.catalog import load_catalog
    from stock.inventory import build_spec
    from stock.sheets import read_table
    from stock.store import ledger, repo
    from stock.store.ledger import Reason

    table = read_table(path, columns=STOCK_COLUMNS, required=REQUIRED, mapping=mapping,
                       sheet=sheet, text_columns=("number", "params", "package", "pinout"),
                       numeric_columns=("qty",), progress=progress)
    res = ImportResult(str(path), rows=len(table.rows), dry_run=dry_run)

    def fail(msg: str, row: int, column: str) -> ImportFileError:
        return ImportFileError(msg, file=table.file, sheet=table.sheet, row=row, column=column)

    dups = list(getattr(table, "duplicates", []) or [])
    if dups and not keep_duplicates:
        row, first = dups[0]
        more = f" (and {len(dups) - 1} more)" if len(dups) > 1 else ""
        raise fail(f"repeats row {first} exactly{more}; remove the copy, or pass "
                   "--keep-duplicates to count both", row, "")
    res.duplicates = dups

    with store.read() as s:
        known = repo.ids_by_key(s, sorted({part_key(r.cells.get("number", "")) for r in table.rows
                                           if r.cells.get("number")}))
    catalog = load_catalog()
    shapes: dict[tuple[str, ...], PartSpec] = {}
    specs: dict[str, tuple[PartSpec | None, int, tuple[str, ...]]] = {}
    updates: dict[str, PartSpec] = {}
    entries: list[tuple[str, str, int]] = []
    for r in table.rows:
        c = r.cells
        number = c.get("number", "").strip()
        if not number:
            raise fail("no part number or value; fill the cell or delete the row", r.number,
                       "number")
        drawer = c.get("drawer", "").strip()
        if not drawer:
            raise fail("no drawer; write the drawer label (e.g. A3)", r.number, "drawer")
        try:
            qty = _qty(c.get("qty", ""))
        except ValueError:
            raise fail(f"quantity {c.get('qty', '')!r} is not a whole number above zero",
                       r.number, "qty") from None
        key = part_key(number)
        entries.append((key, drawer, qty))
        described = tuple(c.get(k, "").strip() for k in ("kind", "family", "package", "pinout",
                                                         "description", "params"))
        if key in specs:
            _, first_row, first_desc = specs[key]
            if any(d and fd and d != fd for d, fd in zip(described, first_desc, strict=True)):
                raise fail(f"describes {number} differently from row {first_row}; make the "
                           "rows agree or give the parts different numbers", r.number, "number")
            continue
        if key in known and not any(described):
            specs[key] = (None, r.number, described)
            continue
        kind, family, package, pinout, desc, params = described
        # Rows that describe a part the same way give the same record but for its number,
        # unless the number itself carries meaning (a catalog entry, a passive's value).
        alike = described if kind and _named_by_number(kind) and \
            catalog.get(number) is None else None
        try:
            if alike is not None and alike in shapes:
                t = shapes[alike]
                spec = PartSpec(number, t.kind, t.family, t.package, t.pinout, t.description,
                                dict(t.attrs), list(t.params), t.source)
            else:
                spec, _ = build_spec(
                    number, kind=kind or None, family=family or None, package=package or None,
                    pinout=pinout or None, description=desc,
                    params=[p for p in params.split(";") if p.strip()] if params else [],
                    existing=None, catalog=catalog,
                )
                if alike is not None:
                    shapes[alike] = spec
        except StockError as exc:
            column = "params" if params and "param" in str(exc).lower() else (
                "kind" if "kind" in str(exc) else "family" if "family" in str(exc) else "params"
                if params else "number")
            raise fail(str(exc), r.number, column) from None
        specs[key] = (spec, r.number, described)
        if key in known:
            updates[key] = spec
    new_specs = [s for k, (s, _, _) in specs.items() if k not in known and s is not None]
    res.parts_created = len(new_specs)
    res.parts_known = len(specs) - len(new_specs)
    res.units = sum(q for _, _, q in entries)
    if dry_run:
        labels = sorted({d for _, d, _ in entries})
        with store.read() as s:
            res.drawers_created = len(labels) - len(_existing_drawers(s, labels))
        return res
    with store.write() as s:
        ids = dict(known)
        new_ids = repo.insert_parts_bulk(s, new_specs)
        ids.update(new_ids)
        for key, spec in updates.items():
            repo.update_part(s, ids[key], spec)
        drawer_ids, created = _drawers(s, sorted({d for _, d, _ in entries}))
        res.drawers_created = created
        ledger.post_many(s, [(ids[k], drawer_ids[d], q) for k, d, q in entries],
                         reason=Reason.IMPORT, ref=f"import {Path(path).name}",
                         new_parts=set(new_ids.values()))
    return res


def _existing_drawers(s, labels: list[str]) -> dict[str, int]:  # type: ignore[no-untyped-def]
    """{label: id} of the drawers among ``labels`` that exist."""
    from sqlalchemy import select

    from stock.store.models import Drawer

    have: dict[str, int] = {}
    for i in range(0, len(labels), 500):
        have.update((a, int(b)) for a, b in s.execute(
            select(Drawer.label, Drawer.id).where(Drawer.label.in_(labels[i : i + 500]))))
    return have


def _drawers(s, labels: list[str]) -> tuple[dict[str, int], int]:  # type: ignore[no-untyped-def]
    from sqlalchemy import insert, select

    from stock.store.models import Drawer

    have = _existing_drawers(s, labels)
    missing = [lab for lab in labels if lab not in have]
    if missing:
        s.execute(insert(Drawer), [dict(label=lab, parent_id=None, note="") for lab in missing])
        for i in range(0, len(missing), 500):
            have.update((a, int(b)) for a, b in s.execute(
                select(Drawer.label, Drawer.id).where(Drawer.label.in_(missing[i : i + 500]))))
    return have, len(missing)


# --- export / restore -------------------------------------------------------------------

SHEETS: dict[str, list[str]] = {
    "parts": ["number", "kind", "family", "package", "pinout", "description", "attrs", "source",
              "created_at"],
    "params": ["number", "name", "bound", "value", "at", "origin"],
    "drawers": ["label", "cabinet", "note"],
    "builds": ["name", "kit", "copies", "built", "status", "plan", "created_at"],
    "movements": ["seq", "at", "number", "drawer", "account", "qty", "reason", "ref", "note",
                  "key", "build"],
}


def _iso(d: datetime) -> str:
    return d.isoformat()


def snapshot(store) -> dict[str, list[list[object]]]:  # type: ignore[no-untyped-def]
    """Every table of the store as rows of plain values (the export's content)."""
    from sqlalchemy import select
    from sqlalchemy.orm import aliased

    from stock.store.models import Build, Drawer, Movement, ParamRow, Part

    out: dict[str, list[list[object]]] = {}
    with store.read() as s:
        out["parts"] = [[p.number, p.kind, p.family or "", p.package or "", p.pinout or "",
                         p.description, p.attrs, p.source or "", _iso(p.created_at)]
                        for p in s.scalars(select(Part).order_by(Part.id))]
        out["params"] = [list(r) for r in s.execute(
            select(Part.number, ParamRow.name, ParamRow.bound, ParamRow.value, ParamRow.at,
                   ParamRow.origin).join(Part, Part.id == ParamRow.part_id)
            .order_by(ParamRow.id))]
        parent = aliased(Drawer)
        out["drawers"] = [[a, b or "", c] for a, b, c in s.execute(
            select(Drawer.label, parent.label, Drawer.note)
            .outerjoin(parent, parent.id == Drawer.parent_id).order_by(Drawer.id))]
        out["builds"] = [[b.name, b.kit, b.copies, b.built, b.status, b.plan,
                          _iso(b.created_at)] for b in s.scalars(select(Build).order_by(Build.id))]
        build_names = dict(s.execute(select(Build.id, Build.name)).all())
        out["movements"] = [
            [i, _iso(at), num, lab, acc, qty, reason, ref, note, key or "",
             build_names.get(bid, "") if bid else ""]
            for i, (at, num, lab, acc, qty, reason, ref, note, key, bid) in enumerate(s.execute(
                select(Movement.at, Part.number, Drawer.label, Movement.account, Movement.qty,
                       Movement.reason, Movement.ref, Movement.note, Movement.key,
                       Movement.build_id)
                .join(Part, Part.id == Movement.part_id)
                .join(Drawer, Drawer.id == Movement.drawer_id).order_by(Movement.id)), 1)
        ]
    return out


def export_store(store, path: str | Path) -> dict[str, int]:  # type: ignore[no-untyped-def]
    """Write the whole store to ``path``: ``.xlsx`` (one sheet per table) or a folder of CSV."""
    from stock.sheets import write_table

    data = snapshot(store)
    p = Path(path)
    if p.suffix.lower() == ".xlsx":
        first, *rest = SHEETS
        write_table(p, SHEETS[first], data[first], sheet=first,
                    sheets={name: (SHEETS[name], data[name]) for name in rest})
    elif p.suffix:
        raise StockError(f"cannot export to {p.name}: give a .xlsx file or a folder name for CSV")
    else:
        p.mkdir(parents=True, exist_ok=True)
        for name, cols in SHEETS.items():
            write_table(p / f"{name}.csv", cols, data[name])
    return {k: len(v) for k, v in data.items()}


#: Export columns read as they are: numbers, and timestamps we wrote ourselves (the
#: mangled-date check of text columns would take an ISO timestamp for a spreadsheet's doing).
_PLAIN = frozenset({"value", "qty", "copies", "built", "seq", "at", "created_at"})


def _read_export(path: Path) -> dict[str, list[dict[str, str]]]:
    from stock.sheets import read_table

    out: dict[str, list[dict[str, str]]] = {}
    for name, cols in SHEETS.items():
        if path.suffix.lower() == ".xlsx":
            src, sheet = path, name
        else:
            src, sheet = path / f"{name}.csv", None
            if not src.exists():
                raise StockError(f"{src} is missing; a CSV export is a folder with "
                                 + ", ".join(f"{n}.csv" for n in SHEETS))
        table = read_table(src, columns={c: [c] for c in cols}, required=cols, sheet=sheet,
                           text_columns=[c for c in cols if c not in _PLAIN])
        out[name] = [r.cells for r in table.rows]
    return out


def restore_store(store, path: str | Path) -> dict[str, int]:  # type: ignore[no-untyped-def]
    """Read an export back into an EMPTY store, all-or-nothing; balances are recomputed."""
    from sqlalchemy import func, insert, select

    from stock.store.models import Balance, Build, Drawer, Movement, ParamRow, Part
    from stock.store.repo import refresh_docs

    p = Path(path)
    data = _read_export(p)
    with store.write() as s:
        if s.execute(select(func.count(Part.id))).scalar_one() or \
                s.execute(select(func.count(Drawer.id))).scalar_one():
            raise StockError("restore needs an empty store; give a new one with --db NEW.db")
        s.execute(insert(Part), [dict(number=r["number"], key=part_key(r["number"]),
                                      kind=r["kind"], family=r["family"] or None,
                                      package=r["package"] or None, pinout=r["pinout"] or None,
                                      description=r["description"], attrs=r["attrs"] or "{}",
                                      source=r["source"] or None,
                                      created_at=datetime.fromisoformat(r["created_at"]))
                                 for r in data["parts"]] or [])
        part_ids = dict(s.execute(select(Part.number, Part.id)).all())
        if data["params"]:
            s.execute(insert(ParamRow), [dict(part_id=part_ids[r["number"]], name=r["name"],
                                              bound=r["bound"], value=float(r["value"]),
                                              at=r["at"], origin=r["origin"])
                                         for r in data["params"]])
            refresh_docs(s, sorted(part_ids.values()))
        for r in data["drawers"]:  # in export order, so a cabinet exists before its drawers
            parent = None
            if r["cabinet"]:
                parent = s.execute(select(Drawer.id).where(Drawer.label == r["cabinet"])).scalar()
            s.execute(insert(Drawer).values(label=r["label"], parent_id=parent, note=r["note"]))
        drawer_ids = dict(s.execute(select(Drawer.label, Drawer.id)).all())
        for r in data["builds"]:
            s.execute(insert(Build).values(name=r["name"], kit=r["kit"], copies=int(r["copies"]),
                                           built=int(r["built"]), status=r["status"],
                                           plan=r["plan"],
                                           created_at=datetime.fromisoformat(r["created_at"])))
        build_ids = dict(s.execute(select(Build.name, Build.id)).all())
        moves = [dict(part_id=part_ids[r["number"]], drawer_id=drawer_ids[r["drawer"]],
                      account=r["account"], qty=int(float(r["qty"])), reason=r["reason"],
                      ref=r["ref"], note=r["note"], key=r["key"] or None,
                      build_id=build_ids[r["build"]] if r["build"] else None,
                      at=datetime.fromisoformat(r["at"]))
                 for r in sorted(data["movements"], key=lambda r: int(float(r["seq"])))]
        if moves:
            s.execute(insert(Movement), moves)
        totals: dict[tuple[int, int], list[int]] = {}
        for m in moves:
            t = totals.setdefault((m["part_id"], m["drawer_id"]), [0, 0])
            t[0 if m["account"] == "on_hand" else 1] += m["qty"]
        if totals:
            s.execute(insert(Balance), [dict(part_id=k[0], drawer_id=k[1], on_hand=v[0],
                                             reserved=v[1]) for k, v in totals.items()])
    return {k: len(v) for k, v in data.items()}


__all__ = ["STOCK_COLUMNS", "ImportResult", "export_store", "import_stock", "restore_store",
           "snapshot"]
