"""The ``catalog`` command: search the reference catalog, or show one row with its source."""

from typing import Annotated

import typer

from stock.cli import app
from stock.cli.common import JsonOpt, emit_json, say, table
from stock.cli.render import param_rows, part_json


def _is_criterion(text: str) -> bool:
    return any(op in text for op in (">=", "<=", "="))


@app.command()
def catalog(
    words: Annotated[list[str] | None, typer.Argument(
        metavar="[KIND|NUMBER] [CRITERIA]...",
        help="A kind (bjt, fet, diode, capacitor, resistor, crystal, ic) and bounds such as "
             "'vceo>=30V' 'ft>=100MHz'; or one part number to show its row.")] = None,
    family: Annotated[str | None, typer.Option(help="npn, pnp, n-jfet, schottky, c0g, "
                                               "x7r, metal-film ...")] = None,
    typical: Annotated[bool, typer.Option("--typical", help="Let typical values meet a "
                                          "bound (not guaranteed).")] = False,
    templates: Annotated[bool, typer.Option("--templates", help="List the passive family "
                                            "templates (C0G-50V, CF-0.25W ...) too.")] = False,
    csv_out: Annotated[bool, typer.Option("--csv", help="Print the rows in catalog-file "
                                          "format, to start your own catalog.csv.")] = False,
    json_out: JsonOpt = False,
) -> None:
    """Search the reference catalog of common parts, or show one row with its source.

    Bounds are held against guaranteed datasheet limits, as in 'stock find'. Rows marked
    from-memory have not been checked against a datasheet: check before you rely on them.
    Your own rows go in catalog.csv in the config folder (same format; yours win).

    \b
    Examples:
      stock catalog bjt 'vceo>=30V' 'ft>=100MHz' --family npn
      stock catalog P2N2222A
      stock catalog capacitor --templates
      stock catalog diode --family schottky --csv > my-rows.csv
    """
    from stock.catalog import format_rows, load_catalog, user_catalog_path
    from stock.errors import UnknownPart, suggest
    from stock.kinds import normalise_family, parse_kind
    from stock.paramtext import parse_criterion

    cat = load_catalog()
    args = list(words or [])
    kind = None
    if args and not _is_criterion(args[0]):
        try:
            kind = parse_kind(args[0])
        except ValueError:
            if len(args) > 1:
                raise typer.BadParameter(f"{args[0]!r} is neither a kind nor a part number "
                                         "to show; write a kind first, then the bounds") from None
            spec = cat.get(args[0])
            if spec is None:
                raise UnknownPart(f"{args[0]!r} is not in the catalog"
                                  f"{suggest(args[0].upper(), [s.number for s in cat])}; "
                                  f"add it to {user_catalog_path()}") from None
            _show(spec, cat.variants(spec.number), json_out, csv_out, format_rows)
            return
        args = args[1:]
    fam = normalise_family(kind, family) if (kind and family) else family
    crit = [parse_criterion(c, kind) for c in args]
    found = cat.search(kind, fam, crit, typical=typical, templates=templates)
    if csv_out:
        typer.echo(format_rows(found), nl=False)
        return
    if json_out:
        emit_json([part_json(s) for s in found])
        return
    shown = [c for c in crit if isinstance(c.value, float)]
    names = [c.param for c in shown]
    rows = [[s.number, s.kind.value, s.family or "", s.package or "", s.pinout or "",
             *(_cell(s, c) for c in shown), s.attrs.get("confidence", "")] for s in found]
    table("catalog", ["part", "kind", "family", "package", "pins", *names, "checked"], rows)
    say(f"{len(found)} of {len(cat)} catalog rows; 'stock catalog NUMBER' shows a row's source")


def _cell(spec, crit) -> str:  # type: ignore[no-untyped-def]
    """The value a bound was held against: guaranteed min for >=, max for <=, else nominal."""
    from stock.cli.common import fmt
    from stock.params import PARAMS

    unit = PARAMS[crit.param].unit if crit.param in PARAMS else None
    if crit.param == "tol":
        unit = "%"
    g = spec.low(crit.param) if crit.op == ">=" else spec.high(crit.param) \
        if crit.op == "<=" else None
    if g is None:
        nom = spec.nominal(crit.param)
        return "" if nom is None else fmt(nom * (100 if unit == "%" else 1), unit)
    text = fmt(g.value * (100 if unit == "%" else 1), unit)
    return text if g.guaranteed else f"{text} typ"


def _show(spec, variants, json_out, csv_out, format_rows) -> None:  # type: ignore[no-untyped-def]
    if csv_out:
        typer.echo(format_rows([spec]), nl=False)
        return
    if json_out:
        emit_json(part_json(spec))
        return
    head = " · ".join(x for x in (spec.kind.value, spec.family, spec.package,
                                  spec.pinout and f"pins {spec.pinout}") if x)
    typer.echo(f"{spec.number}  ({head})")
    if spec.description:
        typer.echo(spec.description)
    if variants:
        typer.echo(f"other pin orders seen under this number: {', '.join(variants)} "
                   "(check the part in hand)")
    typer.echo(f"source: {spec.source} [{spec.attrs.get('confidence', '')}]")
    table("parameters", ["param", "value", "bound", "at", "origin"], param_rows(spec))
