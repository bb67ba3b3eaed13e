"""Commands for the drawers: init, add, show, drawers, drawer, find, move, take, count,
log, verify, params."""

from typing import Annotated

import typer

from stock.cli import app
from stock.cli.common import DbOpt, JsonOpt, KeyOpt, emit_json, open_db, say, table
from stock.cli.render import holding_json, param_rows, part_json, stocked_row


@app.command()
def init(db: DbOpt = None) -> None:
    """Create the store (or bring an old one up to date) and say where it is.

    Example: stock init --db ~/radio/parts.db
    """
    store = open_db(db)
    say(f"store ready: {store.url.split('@')[-1]} ({store.part_count()} part types)")


@app.command()
def add(
    number: Annotated[str, typer.Argument(help="Part number (2N2222A) or value (4k7, 100n).")],
    qty: Annotated[int, typer.Option("--qty", "-q", help="How many to put in the drawer.")],
    drawer: Annotated[str, typer.Option("--drawer", "-d", help="Drawer label, e.g. A1.")],
    kind: Annotated[str | None, typer.Option(help="bjt, fet, diode, capacitor, resistor, "
                                             "inductor, crystal, ic or other.")] = None,
    family: Annotated[str | None, typer.Option(help="npn, pnp, n-jfet, schottky, c0g, "
                                               "x7r, metal-film ...")] = None,
    package: Annotated[str | None, typer.Option(help="Package, e.g. TO-92.")] = None,
    pins: Annotated[str | None, typer.Option("--pins", help="Pin order, pin 1 first: "
                                             "EBC, CBE, SGD ...")] = None,
    desc: Annotated[str, typer.Option("--desc", help="A description.")] = "",
    param: Annotated[list[str] | None, typer.Option(
        "--param", "-p", help="A parameter, e.g. vceo=40V, 'ft>=300MHz', "
        "'hfe=100..300@ic=150mA,vce=10V' (repeat).")] = None,
    ref: Annotated[str, typer.Option(help="Reference: order number, supplier note.")] = "",
    key: KeyOpt = None,
    no_catalog: Annotated[bool, typer.Option("--no-catalog", help="Do not fill parameters "
                                             "from the reference catalog.")] = False,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Receive parts into a drawer, creating the part if it is new.

    A part number found in the reference catalog gets its datasheet limits filled in;
    --param values override them.

    Examples:
      stock add PN2222A --qty 10 --drawer A1
      stock add 4k7 --kind resistor --family metal-film -p tol=1% --qty 100 -d R2
      stock add MYSTERY-NPN --kind bjt --family npn -p vceo=30V -p "ft>=150MHz" --qty 5 -d A2
    """
    from stock.inventory import add as do_add

    store = open_db(db)
    got = do_add(store, number, qty, drawer, ref=ref, key=key, kind=kind, family=family,
                 package=package, pinout=pins, description=desc, params=param or [],
                 use_catalog=not no_catalog)
    if json_out:
        emit_json({"part": part_json(got.part), "drawer": drawer, "qty": qty,
                   "created": got.created, "from_catalog": got.from_catalog,
                   "recorded": got.recorded})
        return
    if not got.recorded:
        say(f"already recorded (key {key!r}); nothing changed")
        return
    what = "new part " if got.created else ""
    say(f"received {qty} × {what}{got.part.number} into {drawer}")
    if got.from_catalog:
        say(f"filled from the catalog ({got.part.source or 'catalog'}): "
            + ", ".join(got.from_catalog))


@app.command()
def show(
    number: Annotated[str, typer.Argument(help="Part number or name as stored.")],
    moves: Annotated[int, typer.Option("--moves", help="How many recent movements.")] = 10,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Show a part: its parameters, where it is, and its recent movements.

    Example: stock show PN2222A
    """
    store = open_db(db)
    spec = store.part(number)
    holdings = store.holdings(number)
    log = store.log(number=number, limit=moves)
    if json_out:
        emit_json({"part": part_json(spec), "drawers": [holding_json(h) for h in holdings],
                   "movements": [_log_json(e) for e in log]})
        return
    head = " · ".join(x for x in (spec.kind.value, spec.family, spec.package,
                                  spec.pinout and f"pins {spec.pinout}") if x)
    say("")
    typer.echo(f"{spec.number}  ({head})")
    if spec.description:
        typer.echo(spec.description)
    if spec.source:
        typer.echo(f"source: {spec.source}")
    table("parameters", ["param", "value", "bound", "at", "origin"], param_rows(spec))
    table("where", ["drawer", "on hand", "reserved", "free"],
          [[h.drawer, h.on_hand, h.reserved, h.free] for h in holdings])
    table("recent movements", ["when", "drawer", "qty", "account", "reason", "ref"],
          [[f"{e.at:%Y-%m-%d %H:%M}", e.drawer, f"{e.qty:+d}", e.account, e.reason, e.ref]
           for e in log])


@app.command()
def drawers(db: DbOpt = None, json_out: JsonOpt = False) -> None:
    """List drawers: cabinet, how many part types and parts each holds.

    Example: stock drawers --json
    """
    rows = open_db(db).drawers()
    if json_out:
        emit_json([{"drawer": r[0], "cabinet": r[1], "note": r[2], "part_types": r[3],
                    "on_hand": r[4]} for r in rows])
        return
    table("drawers", ["drawer", "cabinet", "part types", "on hand", "note"],
          [[r[0], r[1] or "", r[3], r[4], r[2]] for r in rows])


@app.command()
def drawer(
    label: Annotated[str, typer.Argument(help="Drawer label, e.g. A3.")],
    cabinet: Annotated[str | None, typer.Option("--in", help="Cabinet (another drawer) "
                                                "it sits in.")] = None,
    note: Annotated[str, typer.Option(help="A note, e.g. 'SMD resistors 0805'.")] = "",
    db: DbOpt = None,
) -> None:
    """Create a drawer, optionally inside a cabinet.

    Example: stock drawer A3 --in CAB1 --note "TO-92 transistors"
    """
    open_db(db).add_drawer(label, parent=cabinet, note=note)
    say(f"drawer {label} ready" + (f" in {cabinet}" if cabinet else ""))


@app.command()
def find(
    kind: Annotated[str | None, typer.Argument(help="bjt, fet, diode, capacitor, resistor, "
                                               "inductor, crystal, ic, other.")] = None,
    criteria: Annotated[list[str] | None, typer.Argument(
        help="Bounds such as 'vceo>=30V' 'ft>=100MHz' 'c=100n' 'v_rated>=50V'.")] = None,
    family: Annotated[str | None, typer.Option(help="npn, pnp, c0g, x7r, schottky ...")] = None,
    typical: Annotated[bool, typer.Option("--typical", help="Let typical values meet a "
                                          "bound (not guaranteed).")] = False,
    empty: Annotated[bool, typer.Option("--empty", help="Include parts with no free "
                                        "stock.")] = False,
    limit: Annotated[int, typer.Option(help="At most this many rows (0 = all).")] = 50,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Parametric search over what is in your drawers.

    Bounds are held against guaranteed datasheet limits (min/max); the part that meets
    the first bound with the least to spare comes first.

    Examples:
      stock find bjt --family npn 'vceo>=30V' 'ft>=100MHz'
      stock find capacitor 'c=100n' 'v_rated>=50V' 'tol<=10%'
    """
    from stock.kinds import normalise_family, parse_kind
    from stock.paramtext import parse_criterion

    if kind and any(ch in kind for ch in "<>=~"):  # a bound given without a kind
        criteria, kind = [kind, *(criteria or [])], None
    k = parse_kind(kind) if kind else None
    fam = normalise_family(k, family) if (k and family) else family
    crit = [parse_criterion(c, k) for c in criteria or []]
    found = open_db(db).find(k, fam, crit, typical=typical, include_empty=empty,
                             limit=limit or None)
    if json_out:
        emit_json([{"part": part_json(s.part), "free": s.free,
                    "drawers": [{"drawer": d, "free": q} for d, q in s.drawers]} for s in found])
        return
    names = [c.param for c in crit if c.param not in ("family", "package", "pinout")]
    table("found", ["part", "kind", "family", "package", *names, "free", "drawers"],
          [stocked_row(s, names) for s in found])


def _log_json(e) -> dict:  # type: ignore[no-untyped-def]
    return {"id": e.id, "at": e.at.isoformat(), "part": e.number, "drawer": e.drawer,
            "account": e.account, "qty": e.qty, "reason": e.reason, "ref": e.ref, "note": e.note}


@app.command()
def move(
    number: Annotated[str, typer.Argument(help="Part number.")],
    qty: Annotated[int, typer.Argument(help="How many.")],
    src: Annotated[str, typer.Argument(metavar="FROM", help="Drawer to take them from.")],
    dst: Annotated[str, typer.Argument(metavar="TO", help="Drawer to put them in.")],
    key: KeyOpt = None,
    db: DbOpt = None,
) -> None:
    """Move free parts from one drawer to another.

    Example: stock move PN2222A 5 A1 B2
    """
    done = open_db(db).move(number, src, dst, qty, key=key)
    say(f"moved {qty} × {number} from {src} to {dst}" if done else "already recorded")


@app.command()
def take(
    number: Annotated[str, typer.Argument(help="Part number.")],
    qty: Annotated[int, typer.Argument(help="How many.")],
    drawer: Annotated[str, typer.Option("--drawer", "-d", help="Drawer to take them from.")],
    note: Annotated[str, typer.Option(help="Why: repair job, lost, given away.")] = "",
    key: KeyOpt = None,
    db: DbOpt = None,
) -> None:
    """Take free parts out of a drawer (used outside a build, lost, given away).

    Example: stock take 1N4148 4 -d D1 --note "repair: club power supply"
    """
    done = open_db(db).take(number, drawer, qty, note=note, key=key)
    say(f"took {qty} × {number} from {drawer}" if done else "already recorded")


@app.command()
def count(
    number: Annotated[str, typer.Argument(help="Part number.")],
    counted: Annotated[int, typer.Argument(help="How many you counted in the drawer.")],
    drawer: Annotated[str, typer.Option("--drawer", "-d", help="The drawer you counted.")],
    note: Annotated[str, typer.Option(help="A note for the ledger.")] = "",
    db: DbOpt = None,
) -> None:
    """Record a stocktake: the ledger stores the difference to what was recorded.

    Example: stock count PN2222A 37 -d A1
    """
    diff = open_db(db).count(number, drawer, counted, note=note)
    say(f"{number} in {drawer}: counted {counted}, "
        + (f"recorded {diff:+d}" if diff else "matches the records"))


@app.command()
def log(
    part: Annotated[str | None, typer.Option("--part", help="Only this part.")] = None,
    drawer: Annotated[str | None, typer.Option("--drawer", "-d", help="Only this drawer.")] = None,
    reason: Annotated[str | None, typer.Option(help="Only this reason: receive, take, move, "
                                               "count, import, reserve, release, build.")] = None,
    since: Annotated[str | None, typer.Option(help="Only since this date (YYYY-MM-DD).")] = None,
    limit: Annotated[int, typer.Option(help="At most this many rows (0 = all).")] = 50,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Movement history, newest first.

    Example: stock log --part PN2222A --since 2026-11-01
    """
    from datetime import datetime

    from stock.errors import StockError

    when = None
    if since:
        try:
            when = datetime.fromisoformat(since)
        except ValueError:
            raise StockError(f"cannot read --since {since!r}; write a date like 2026-11-01") \
                from None
    entries = open_db(db).log(number=part, drawer=drawer, reason=reason, since=when,
                              limit=limit or None)
    if json_out:
        emit_json([_log_json(e) for e in entries])
        return
    table("movements", ["#", "when", "part", "drawer", "qty", "account", "reason", "ref", "note"],
          [[e.id, f"{e.at:%Y-%m-%d %H:%M}", e.number, e.drawer, f"{e.qty:+d}", e.account,
            e.reason, e.ref, e.note] for e in entries])


@app.command()
def verify(
    db: DbOpt = None,
    repair: Annotated[bool, typer.Option(
        "--repair", help="Rewrite parameter documents that differ from their parameter rows "
        "(the rows are the record). Quantities are never rewritten.")] = False,
    json_out: JsonOpt = False,
) -> None:
    """Prove every balance equals the sum of its ledger rows, every part's parameter
    document equals its parameter rows, and check the database file.

    Examples: stock verify;  stock verify --repair
    """
    store = open_db(db)
    repaired = store.repair_param_docs() if repair else []
    if repaired and not json_out:
        say(f"rewrote the parameter documents of {len(repaired)} part(s) from their rows: "
            + ", ".join(repaired))
    problems = store.verify()
    if json_out:
        emit_json({"ok": not problems, "problems": problems, "repaired": repaired,
                   "movements": store.movement_count()})
    elif problems:
        for p in problems:
            typer.echo(p)
    else:
        say(f"ok: every balance equals its ledger and every parameter document its rows "
            f"({store.movement_count()} movements)")
    if problems:
        raise typer.Exit(1)


@app.command()
def params(
    kind: Annotated[str | None, typer.Argument(help="Only parameters of this kind.")] = None,
    json_out: JsonOpt = False,
) -> None:
    """List the parameter names a part can carry, with units and meaning.

    Example: stock params bjt
    """
    from stock.kinds import parse_kind
    from stock.params import PARAMS

    k = parse_kind(kind) if kind else None
    rows = [p for p in PARAMS.values() if k is None or p.applies_to(k)]
    if json_out:
        emit_json([{"name": p.name, "unit": p.unit, "sense": p.sense.value, "label": p.label,
                    "kinds": [x.value for x in p.kinds], "default_bound": p.bound.value}
                   for p in rows])
        return
    table("parameters", ["name", "unit", "sense", "meaning", "kinds"],
          [[p.name, p.unit, p.sense.value, p.label, ",".join(x.value for x in p.kinds) or "any"]
           for p in rows])
