"""Kit commands: check, reserve, build, release, builds, pick.

``check`` says what the drawers hold for one or more kits; the build commands hold a
plan for N copies (``reserve``), consume it (``build``), give it back (``release``),
list builds (``builds``) and print a pick list sorted by drawer (``pick``). Each command
calls one function of :mod:`stock.kits.check` or :mod:`stock.builds` and renders its
answer.
"""

import re
from pathlib import Path
from typing import TYPE_CHECKING, Annotated, Any

import typer

from stock.cli import app
from stock.cli.common import DbOpt, DryRunOpt, JsonOpt, console, emit_json, open_db, say, table

if TYPE_CHECKING:
    from stock.builds import BuildInfo
    from stock.kits.check import CheckReport, SlotCheck
    from stock.kits.kitfile import Kit

#: ``kit.toml:3`` — a kit path with its number of copies.
_WITH_COPIES = re.compile(r"^(?P<path>.+):(?P<copies>\d+)$")

NameArg = Annotated[str, typer.Argument(metavar="NAME", help="The build's name.")]


def split_copies(text: str) -> tuple[str, int | None]:
    """``"tx.toml:2"`` → ("tx.toml", 2); a path without ``:N`` (or one that exists as
    written) → (text, None)."""
    m = _WITH_COPIES.match(text)
    if m is None or Path(text).exists():
        return text, None
    return m["path"], int(m["copies"])


def kits_with_copies(items: list[str], copies: list[int] | None) -> list[tuple[str, int]]:
    """Pair each kit path with its copies: ``path:N`` wins; else the ``--copies`` given in
    the same position; a single ``--copies`` applies to every kit; the default is 1."""
    given = list(copies or [])
    if len(given) > 1 and len(given) != len(items):
        raise typer.BadParameter(f"{len(given)} --copies for {len(items)} kits; give one "
                                 "--copies for all, one per kit in order, or write KIT:N",
                                 param_hint="--copies")
    if any(n < 1 for n in given):
        raise typer.BadParameter("copies must be 1 or more", param_hint="--copies")
    out = []
    for i, item in enumerate(items):
        path, n = split_copies(item)
        if n is None:
            n = given[i] if len(given) > 1 else (given[0] if given else 1)
        if n < 1:
            raise typer.BadParameter(f"{item}: copies must be 1 or more", param_hint="KIT")
        out.append((path, n))
    return out


def _load(path: str) -> "Kit":
    from stock.kits import load_any

    kit, warnings = load_any(path)
    for w in warnings:
        say(f"{path}: {w}")
    return kit


def _policy() -> Any:
    from stock.config import load_config
    from stock.rules import load_policy

    return load_policy(load_config())


# --- check ------------------------------------------------------------------------------------


def _margin(m: float | None) -> str:
    return "margin ?" if m is None else f"min margin {m * 100:+.0f} %"


def _where(pairs: list[tuple[str, int]]) -> str:
    from stock.builds import drawer_order

    return ", ".join(f"{d} ×{q}" for d, q in sorted(pairs, key=lambda p: drawer_order(p[0])))


def slot_result(sc: "SlotCheck") -> tuple[str, list[str]]:
    """A slot's result word (in stock, stand-in, combination, short) and detail lines."""
    lines: list[str] = []
    exact = [(a.drawer, a.qty) for a in sc.allocations if a.exact]
    if exact:
        lines.append(f"in stock: {_where(exact)}")
    by_part: dict[str, list[tuple[str, int]]] = {}
    for a in sc.allocations:
        if not a.exact:
            by_part.setdefault(a.part, []).append((a.drawer, a.qty))
    assessed = {s.part: s for s in sc.stand_ins}
    for part, where in by_part.items():
        st = assessed.get(part)
        if st is None:
            lines.append(f"stand-in {part}: {_where(where)}")
            continue
        warn = f", {st.warnings} warning{'s' if st.warnings != 1 else ''}" if st.warnings else ""
        deciding = st.deciding
        why = f" ({deciding.param}: {deciding.why})" if st.warnings and deciding else ""
        lines.append(f"stand-in {part}: {_where(where)}; {st.fitness.value}, "
                     f"{_margin(st.smallest_margin)}{warn}; {st.dropin.verdict.value}{why}")
    word = "stand-in" if by_part else "in stock"
    if sc.short:
        if sc.combinations:
            word = "combination"
            c = sc.combinations[0]
            lines.append(f"combination ({c.topology.value}): {c.describe()}"
                         + ("" if c.ok else f" — {'; '.join(c.checks)}"))
        else:
            word = "short"
        lines.append(f"short {sc.short}")
    return word, lines


def kit_cautions(report: "CheckReport", kit: str, policy: Any) -> list[str]:
    """The fit engine's cautions for every slot of ``kit`` and the stand-ins chosen for
    it, each once, in slot order."""
    from dataclasses import replace

    from stock.fit import cautions

    out: list[str] = []
    for sc in report.slots:
        if sc.kit != kit:
            continue
        slot = sc.slot if sc.called is None or sc.slot.part is sc.called \
            else replace(sc.slot, part=sc.called)
        chosen = {a.part for a in sc.allocations if not a.exact}
        parts = [a.stocked.part for a in sc.stand_ins if a.part in chosen]
        for text in cautions(slot, policy=policy) + [
                c for p in parts for c in cautions(slot, p, policy=policy)]:
            if text not in out:
                out.append(text)
    return out


def render_check(report: "CheckReport", policy: Any, cautions: dict[str, list[str]]) -> None:
    out = console()
    several = len(report.summaries) > 1
    for summary in report.summaries:
        rows = []
        for sc in report.slots:
            if sc.kit != summary.kit:
                continue
            word, lines = slot_result(sc)
            role = "" if sc.slot.role.value == "general" else sc.slot.role.value
            rows.append([sc.refs or "—", sc.slot.calls_for, role, sc.need, word,
                         "\n".join(lines + sc.notes)])
        table(f"{summary.kit} × {summary.wanted}" if several or summary.wanted > 1
              else summary.kit, ["refs", "calls for", "role", "need", "result", "detail"], rows,
              justify={"need": "right"})
        out.print(f"[bold]{summary.kit}[/bold]: the free stock builds {summary.buildable} of "
                  f"{summary.wanted} cop{'y' if summary.wanted == 1 else 'ies'} now")
        for limit in summary.limits:
            out.print(f"  limited by {limit}")
        for text in cautions.get(summary.kit, []):
            out.print(f"caution: {text}")
    for note in report.notes + report.plan.notes:
        out.print(f"note: {note}")


@app.command()
def check(
    kits: Annotated[list[str], typer.Argument(
        metavar="KIT[:N]...", help="Kit files (.toml) or plain BOMs (.csv, .xlsx); append "
        ":N for N copies of that kit (tx.toml:3).")],
    copies: Annotated[list[int] | None, typer.Option(
        "--copies", "-n", help="Copies: once for every kit, or once per kit in order "
        "(KIT:N wins).")] = None,
    no_combine: Annotated[bool, typer.Option("--no-combine", help="Do not look for two- and "
                                             "three-part combinations for short R, C, L "
                                             "slots.")] = False,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Check kits against the free stock: per slot in stock, stand-in, combination or short.

    Free is on hand minus what builds have reserved. All kits share the drawers: the plan
    allocates free stock to every slot of every copy at once, keeping scarce parts for the
    slots that need them most, and says when it did. The summary gives how many complete
    copies of each kit can be built now and which slots limit that. Changes nothing.

    \b
    Examples:
      stock check marsh-tx40.toml
      stock check marsh-tx40.toml:3 marsh-audio.toml:2
      stock check kit.toml board.csv --copies 2 --copies 5 --json
    """
    from stock.kits.check import check as do_check
    from stock.kits.check import check_json

    pairs = kits_with_copies(kits, copies)
    loaded = [(_load(path), n) for path, n in pairs]
    store = open_db(db)
    policy = _policy()
    report = do_check(loaded, store, policy, combinations=not no_combine)
    cautions = {s.kit: kit_cautions(report, s.kit, policy) for s in report.summaries}
    if json_out:
        data = check_json(report)
        for k in data["kits"]:
            k["cautions"] = cautions[k["kit"]]
        emit_json(data)
        return
    render_check(report, policy, cautions)


# --- builds -----------------------------------------------------------------------------------


def _held_rows(info: "BuildInfo") -> list[list[Any]]:
    rows = []
    for s in info.slots:
        refs = ", ".join(s.refs) if len(s.refs) <= 3 else f"{s.refs[0]} … {s.refs[-1]}"
        held = "; ".join(f"{h.part} {h.drawer} ×{h.units(info.built, info.remaining)}"
                         for h in s.holds if h.units(info.built, info.remaining)
                         ) or "—"
        short = s.short_units(info.built, info.remaining)
        rows.append([refs or s.calls_for, s.calls_for, s.qty, held, short or ""])
    return rows


def _show(info: "BuildInfo") -> None:
    console().print(f"[bold]{info.name}[/bold]: {info.copies} × {info.kit}, {info.built} built, "
                    f"{info.status}; {info.held} units held"
                    + (f", {info.short} short" if info.short else ""))
    if info.remaining:
        table("held for the copies still to build", ["refs", "calls for", "per copy", "held",
                                                     "short"],
              _held_rows(info), justify={"per copy": "right", "short": "right"})
    for note in info.notes:
        console().print(f"note: {note}")


@app.command()
def reserve(
    kit: Annotated[str, typer.Argument(metavar="KIT[:N]", help="Kit file (.toml) or plain BOM "
                                       "(.csv, .xlsx); KIT:N for N copies.")],
    copies: Annotated[int | None, typer.Option("--copies", "-n", min=1,
                                               help="How many copies (default 1).")] = None,
    name: Annotated[str | None, typer.Option(help="Name of the build (default: the kit's "
                                             "name, numbered when taken).")] = None,
    allow_short: Annotated[bool, typer.Option("--allow-short", help="Hold what the drawers "
                                              "have even when some slots are short.")] = False,
    dry_run: DryRunOpt = False,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Reserve the parts for N copies of a kit: a build others' checks cannot spend.

    The kit is checked as 'stock check' does, and every allocation of the plan is held in
    its drawer (the ledger records one 'reserve' movement per slot, part and drawer). A
    plan with short slots is refused, and nothing written, unless --allow-short.

    \b
    Examples:
      stock reserve marsh-tx40.toml --copies 4 --name club-night
      stock reserve marsh-audio.toml:2 --allow-short --dry-run
    """
    from stock.builds import build_json
    from stock.builds import reserve as do_reserve

    (path, n), = kits_with_copies([kit], [copies] if copies else None)
    loaded = _load(path)
    store = open_db(db)
    policy = _policy()
    done = do_reserve(store, loaded, n, name=name, allow_short=allow_short, dry_run=dry_run,
                      policy=policy)
    cautions = kit_cautions(done.report, loaded.name, policy)
    if json_out:
        emit_json({**build_json(done.build), "written": done.written, "cautions": cautions})
        return
    info = done.build
    drawers = {h.drawer for s in info.slots for h in s.holds}
    verb = "would reserve" if not done.written else "reserved"
    say(f"{verb} {info.held} parts from {len(drawers)} drawer{'s' if len(drawers) != 1 else ''}"
        f" for build {info.name} ({info.copies} × {info.kit})"
        + (" — dry run, nothing written" if not done.written else ""))
    _show(info)
    for text in cautions:
        console().print(f"caution: {text}")
    if done.written:
        say(f"next: stock pick {info.name}; then stock build {info.name} (or stock release "
            f"{info.name})")


@app.command()
def build(
    name: NameArg,
    copies: Annotated[int | None, typer.Option("--copies", "-n", min=1, help="How many copies "
                                               "were built (default: all left).")] = None,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Record that copies of a build were built: their parts leave the drawers.

    On hand and reserved go down together for each held part. Build some copies now and
    the rest later with --copies.

    \b
    Examples:
      stock build club-night
      stock build club-night --copies 2
    """
    from stock.builds import build as do_build
    from stock.builds import build_json, get_build

    store = open_db(db)
    before = get_build(store, name)
    info = do_build(store, name, copies)
    if json_out:
        emit_json(build_json(info))
        return
    k = info.built - before.built
    short = sum(s.short_units(before.built, k) for s in before.slots)
    say(f"built {k} × {info.kit} for {info.name}: {info.built} of {info.copies} built"
        + (f"; {info.held} parts still held" if info.remaining else ""))
    if short:
        say(f"note: the plan was {short} parts short for these copies; they came from elsewhere")


@app.command()
def release(name: NameArg, db: DbOpt = None, json_out: JsonOpt = False) -> None:
    """Give back every part still held for a build (the copies not yet built).

    A fully built build cannot be released: its parts are in the circuits.

    Example: stock release club-night
    """
    from stock.builds import build_json, get_build
    from stock.builds import release as do_release

    store = open_db(db)
    held = get_build(store, name).held
    info = do_release(store, name)
    if json_out:
        emit_json(build_json(info))
        return
    say(f"released {held} parts held for {info.name}"
        + (f" ({info.built} of {info.copies} copies were built)" if info.built else ""))


@app.command()
def builds(
    name: Annotated[str | None, typer.Argument(metavar="[NAME]", help="Show this build in "
                                               "full.")] = None,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """List builds, newest first, or show one with what is held for it.

    \b
    Examples:
      stock builds
      stock builds club-night --json
    """
    from stock.builds import build_json, get_build
    from stock.builds import builds as all_builds

    store = open_db(db)
    if name is not None:
        info = get_build(store, name)
        if json_out:
            emit_json(build_json(info))
        else:
            _show(info)
        return
    found = all_builds(store)
    if json_out:
        emit_json([build_json(b, detail=False) for b in found])
        return
    table("builds", ["name", "kit", "copies", "built", "status", "held", "short", "reserved at"],
          [[b.name, b.kit, b.copies, b.built, b.status, b.held, b.short or "",
            f"{b.created_at:%Y-%m-%d %H:%M}" if b.created_at else ""] for b in found],
          justify={"copies": "right", "built": "right", "held": "right", "short": "right"})


@app.command()
def pick(
    name: NameArg,
    copies: Annotated[int | None, typer.Option("--copies", "-n", min=1, help="Pick for the "
                                               "next N copies (default: all left).")] = None,
    out: Annotated[Path | None, typer.Option("--out", "-o", metavar="FILE", help="Also write "
                                             "the list to FILE (.csv or .xlsx).")] = None,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """A pick list for a build, sorted by drawer: walk the drawers once.

    \b
    Examples:
      stock pick club-night
      stock pick club-night --copies 1 --out pick.xlsx
    """
    from stock.builds import get_build, pick_json, pick_list

    store = open_db(db)
    info = get_build(store, name)
    lines = pick_list(store, name, copies)
    k = info.remaining if copies is None else copies
    columns = ["drawer", "part", "qty", "refs", "slot", "exact"]
    rows = [[x.drawer, x.part, x.qty, x.refs, x.slot, "yes" if x.exact else "stand-in"]
            for x in lines]
    if out is not None:
        from stock.sheets import write_table

        write_table(out, columns, rows, sheet="pick")
        say(f"wrote {len(rows)} lines to {out}")
    if json_out:
        emit_json(pick_json(info, lines, k))
        return
    table(f"pick list: {info.name}, {k} × {info.kit}", columns[:-1] + ["exact"], rows,
          justify={"qty": "right"})
