"""The ``fit`` command: what in the drawers will do for a slot, and why."""

from typing import TYPE_CHECKING, Annotated, Any

import typer

from stock.cli import app
from stock.cli.common import DbOpt, JsonOpt, console, emit_json, open_db, table

if TYPE_CHECKING:
    from stock.fit import Assessment
    from stock.slots import Slot

_UNIT = {"resistor": "Ω", "capacitor": "F", "inductor": "H"}
_COND_UNITS = {"supply": "V", "freq": "Hz", "current": "A", "dissipation": "W",
               "ambient": "°C", "v_peak": "V", "v_rms": "V", "v_dc": "V", "i_peak": "A",
               "impedance": "Ω"}


def _value(text: str | None, name: str) -> float | None:
    if text is None:
        return None
    from stock.quantities import parse_value

    return parse_value(text, _COND_UNITS[name]).value


def _slot_json(slot: "Slot", reqs: list[Any]) -> dict[str, Any]:
    cond = {k: v for k, v in vars(slot.conditions).items() if v is not None}
    return {
        "calls_for": slot.calls_for,
        "kind": slot.kind.value,
        "part": slot.part.number if slot.part else None,
        "role": slot.role.value,
        "conditions": cond,
        "requirements": [
            {"param": r.param, "op": r.op.value, "value": r.value, "prefer": r.prefer,
             "at": dict(r.at), "source": r.source.value, "rule": r.rule, "why": r.why,
             "warn_only": r.warn_only}
            for r in reqs
        ],
    }


def _margin(m: float | None) -> str:
    return "" if m is None else f"{m * 100:+.0f} %"


def _deciding(a: "Assessment") -> str:
    c = a.deciding
    if c is None:
        return ""
    return f"{c.param}: {c.why}"


def _explain(a: "Assessment", cautions: list[str]) -> None:
    out = console()
    p = a.stocked.part
    out.print(f"[bold]{p.number}[/bold] — {a.fitness.value}; {a.dropin.verdict.value}: "
              f"{a.dropin.text}")
    where = ", ".join(f"{d} ({q})" for d, q in a.stocked.drawers) or "none"
    out.print(f"free {a.stocked.free} in drawers: {where}")
    rows = [[c.param, c.source.value, c.required, c.actual_text, _margin(c.margin),
             c.verdict.value, c.why, c.rule or ""] for c in a.checks]
    table(None, ["param", "source", "required", "actual", "margin", "verdict", "why", "rule"],
          rows, justify={"margin": "right"})
    for text in cautions:
        out.print(f"caution: {text}")


@app.command()
def fit(
    calls_for: Annotated[str, typer.Argument(
        metavar="PART|VALUE",
        help="The part called for (PN2222A), a value (4k7, '100n C0G 50V') or a bare family "
             "with --kind (npn).")],
    kind: Annotated[str | None, typer.Option(help="bjt, fet, diode, capacitor, resistor, "
                                             "inductor, crystal (needed for a bare family "
                                             "or an unclear value).")] = None,
    role: Annotated[str | None, typer.Option(help="What the slot does: audio-amp, rf-amp, "
                                             "oscillator, pa-c, pa-e, switch, detector, "
                                             "rectifier-half, tuned, bypass, rf-choke ... "
                                             "(see docs/fit.md).")] = None,
    supply: Annotated[str | None, typer.Option(help="Supply voltage of the stage, e.g. "
                                               "12V.")] = None,
    freq: Annotated[str | None, typer.Option(help="Operating frequency, e.g. 14MHz.")] = None,
    current: Annotated[str | None, typer.Option(help="Collector/drain/forward/load current, "
                                                "e.g. 20mA.")] = None,
    dissipation: Annotated[str | None, typer.Option(help="Power the part dissipates, e.g. "
                                                    "300mW.")] = None,
    ambient: Annotated[str | None, typer.Option(help="Ambient temperature, e.g. "
                                                "50°C.")] = None,
    v_peak: Annotated[str | None, typer.Option("--v-peak", help="Peak voltage across the "
                                               "part.")] = None,
    v_rms: Annotated[str | None, typer.Option("--v-rms", help="RMS (AC) voltage across the "
                                              "part, e.g. 230V for mains.")] = None,
    v_dc: Annotated[str | None, typer.Option("--v-dc", help="DC working voltage across "
                                             "the part.")] = None,
    i_peak: Annotated[str | None, typer.Option("--i-peak", help="Peak current.")] = None,
    impedance: Annotated[str | None, typer.Option(help="Impedance an RF choke isolates, "
                                                  "e.g. 50Ω.")] = None,
    need: Annotated[list[str] | None, typer.Option(
        "--need", help="An explicit bound that wins over every rule, e.g. 'vceo>=60V' "
                       "(repeat).")] = None,
    qty: Annotated[int, typer.Option("--qty", "-q", min=1, help="How many the slot "
                                     "needs (candidates with fewer free rank lower).")] = 1,
    package: Annotated[str | None, typer.Option(help="Package the board is laid out for, "
                                                "if not the called-for part's.")] = None,
    pins: Annotated[str | None, typer.Option("--pins", help="Pin order the board expects, "
                                             "pin 1 first (EBC), if not the part's.")] = None,
    show_all: Annotated[bool, typer.Option("--all", help="Show failing candidates too, "
                                           "with the check that fails them.")] = False,
    combine: Annotated[bool, typer.Option("--combine", help="For a resistor, capacitor or "
                                          "inductor value: also list two- and three-part "
                                          "combinations (listed anyway when no single "
                                          "part fits).")] = False,
    explain: Annotated[str | None, typer.Option("--explain", metavar="PART",
                                                help="Show every check for one "
                                                "candidate.")] = None,
    buy: Annotated[bool, typer.Option("--buy", help="Also rank reference-catalog parts you "
                                      "do not have, marked 'to buy'.")] = False,
    limit: Annotated[int, typer.Option(help="How many candidates to list.")] = 20,
    db: DbOpt = None,
    json_out: JsonOpt = False,
) -> None:
    """Find stand-ins from your drawers for a part or value, and show why they fit.

    Requirements come from the called-for part's ratings, from rules for the role and
    conditions (docs/rules.md), and from --need bounds, which win. Each candidate is
    checked against guaranteed datasheet limits: a typical-only or missing value warns.
    Drop-in (package and pin order) is shown beside the electrical verdict.

    \b
    Examples:
      stock fit PN2222A --role pa-c --supply 12V --freq 14MHz --current 100mA
      stock fit 2N7000 --role switch --supply 12V --current 150mA --explain BS170
      stock fit "100p C0G 5%" --role tuned
      stock fit 2N3906 --role switch --current 150mA --buy
      stock fit npn --kind bjt --role rf-amp --freq 100MHz --need "vceo>=20V" --json
    """
    from stock.catalog import load_catalog
    from stock.config import load_config
    from stock.errors import StockError, UnknownPart
    from stock.fit import (
        JSON_VERSION,
        assessment_json,
        cautions,
        combination_json,
        combination_pool,
        combinations_for,
        render_requirement,
        requirements_for,
        slot_from_args,
        stand_ins,
    )
    from stock.fit.text import si
    from stock.parts import part_key
    from stock.rules import load_policy
    from stock.slots import Conditions

    store = open_db(db)
    policy = load_policy(load_config())

    def resolve(number: str) -> Any:
        # the store first (the builder's own record), then the reference catalog
        return store.find_part(number) or load_catalog().get(number)

    cond = Conditions(**{name: _value(text, name) for name, text in (
        ("supply", supply), ("freq", freq), ("current", current),
        ("dissipation", dissipation), ("ambient", ambient), ("v_peak", v_peak),
        ("v_rms", v_rms), ("v_dc", v_dc), ("i_peak", i_peak), ("impedance", impedance))})
    try:
        slot = slot_from_args(calls_for, kind=kind, role=role, conditions=cond,
                              needs=need or (), resolve=resolve, package=package, pinout=pins)
    except StockError:
        raise
    except ValueError as exc:  # an unknown role or kind: a usage error
        raise typer.BadParameter(str(exc)) from None
    reqs = requirements_for(slot, policy)
    ranked, _ = stand_ins(store, slot, policy, need=qty,
                             include_failing=show_all or bool(explain),
                             buy_from=load_catalog() if buy else None)
    if explain:
        key = part_key(explain)
        ranked = [a for a in ranked if part_key(a.part) == key]
        if not ranked:
            raise UnknownPart(f"{explain!r} is not among the candidates in stock for "
                              f"{calls_for}; check the number with 'stock find'")
    shown = ranked if explain else ranked[:limit]
    combos: list[Any] = []
    if not explain and (combine or not any(a.fitness.value != "fails" for a in ranked)):
        combos = combinations_for(slot, combination_pool(store, slot), policy, need=qty)
    slot_cautions = cautions(slot, policy=policy)
    if json_out:
        emit_json({
            "version": JSON_VERSION,
            "slot": _slot_json(slot, reqs),
            "candidates": [
                {**assessment_json(a),
                 "cautions": [c for c in cautions(slot, a.stocked.part, policy=policy)
                              if c not in slot_cautions]}
                for a in shown
            ],
            "combinations": [combination_json(c) for c in combos],
            "cautions": slot_cautions,
        })
        return
    if explain:
        _explain(shown[0], cautions(slot, shown[0].stocked.part, policy=policy))
        return
    what = slot.part.number if slot.part else calls_for
    cond_text = ", ".join(f"{k.replace('_', ' ')} {si(getattr(cond, k), u)}"
                          for k, u in _COND_UNITS.items() if getattr(cond, k) is not None)
    console().print(f"[bold]{what}[/bold] ({slot.kind.value}), role {slot.role.value}"
                    + (f"; {cond_text}" if cond_text else ""))
    req_rows = [[r.param, render_requirement(r), r.source.value, r.rule or "", r.why]
                for r in reqs]
    table("requirements", ["param", "bound", "source", "rule", "why"], req_rows)
    rows = [[a.rank, a.part, a.fitness.value, a.dropin.verdict.value, a.stocked.free,
             "to buy" if a.stocked.to_buy else ", ".join(d for d, _ in a.stocked.drawers[:3]),
             _margin(a.smallest_margin),
             _deciding(a)] for a in shown]
    more = len(ranked) - len(shown)
    caption = (f"{more} more: raise --limit" if more > 0 else None)
    if not show_all:
        caption = ((caption + "; ") if caption else "") + "failing parts hidden: --all"
    table("candidates", ["#", "part", "verdict", "drop-in", "free", "drawers",
                         "min margin", "deciding check"], rows,
          justify={"#": "right", "free": "right", "min margin": "right"}, caption=caption)
    if combos:
        table("combinations", ["parts", "value", "worst case", "error", "ratings"],
              [[c.describe(), si(c.nominal, _UNIT[slot.kind.value]),
                f"{si(c.low, _UNIT[slot.kind.value])} … {si(c.high, _UNIT[slot.kind.value])}",
                f"{c.error * 100:+.2f} %", "ok" if c.ok else "; ".join(c.checks)]
               for c in combos])
    for text in slot_cautions:
        console().print(f"caution: {text}")
