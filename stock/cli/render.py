"""Turning part records into table rows and JSON (the documented shapes)."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # the start-up of every command pays for what is imported here
    from stock.parts import Param, PartSpec, Stocked


def _fmt(value: float, name: str) -> str:
    from stock.params import PARAMS
    from stock.quantities import render

    pdef = PARAMS.get(name)
    if name == "tol":
        return f"{value * 100:+g} %"
    return render(value, (pdef.unit or None) if pdef else None)


def _at(p: Param) -> str:
    from stock.params import CONDITIONS

    return ", ".join(f"{k}={_fmt_cond(v, CONDITIONS.get(k))}" for k, v in p.at.items())


def _fmt_cond(value: float, unit: str | None) -> str:
    from stock.quantities import render

    return render(value, unit or None)


def param_rows(spec: PartSpec) -> list[list[Any]]:
    return [[p.name, _fmt(p.value, p.name), p.bound.value, _at(p), p.origin.value]
            for p in spec.params]


def param_json(p: Param) -> dict[str, Any]:
    return {"name": p.name, "bound": p.bound.value, "value": p.value, "at": dict(p.at),
            "origin": p.origin.value}


def part_json(spec: PartSpec) -> dict[str, Any]:
    """The documented JSON shape of a part (values in SI units)."""
    return {"number": spec.number, "kind": spec.kind.value, "family": spec.family,
            "package": spec.package, "pinout": spec.pinout, "description": spec.description,
            "attrs": spec.attrs, "source": spec.source,
            "params": [param_json(p) for p in spec.params]}


def holding_json(h: Any) -> dict[str, Any]:
    return {"drawer": h.drawer, "on_hand": h.on_hand, "reserved": h.reserved, "free": h.free}


def stocked_row(s: Stocked, names: list[str]) -> list[Any]:
    """A table row: part, kind, family, package, the named parameters, free, drawers."""
    vals = []
    for n in names:
        g = s.part.low(n) or s.part.high(n)
        vals.append("" if g is None else _fmt(g.value, n) + ("" if g.guaranteed else " typ"))
    where = ", ".join(f"{d} ({q})" for d, q in s.drawers[:4]) + (" …" if len(s.drawers) > 4 else "")
    return [s.part.number, s.part.kind.value, s.part.family or "", s.part.package or "", *vals,
            s.free, where]
