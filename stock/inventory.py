"""Receiving parts: build the record of a part from what the builder typed, the store
and the reference catalog, then put the quantity in a drawer through the ledger.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from functools import lru_cache
from typing import TYPE_CHECKING

from stock.errors import StockError
from stock.kinds import Kind, normalise_family, parse_kind
from stock.parts import Origin, Param, PartSpec
from stock.valuetext import VALUE_KINDS, VALUE_PARAMS, value_part

if TYPE_CHECKING:
    from stock.catalog import Catalog

#: The parameter that holds a passive part's value and its unit, by kind (from
#: stock.valuetext, which reads value text).
VALUE_PARAM: dict[Kind, tuple[str, str]] = {k: (VALUE_PARAMS[k], u) for k, u in VALUE_KINDS.items()}


@dataclass
class Received:
    """What :func:`add` did."""

    part: PartSpec
    created: bool
    from_catalog: list[str] = field(default_factory=list)  # parameter names filled from it
    recorded: bool = True  # False: the idempotency key had been used before


def _catalog_spec(number: str, kind: Kind | None, family: str | None,
                  cat: Catalog | None = None) -> PartSpec | None:
    if cat is None:
        from stock.catalog import load_catalog

        cat = load_catalog()
    spec = cat.get(number)
    if spec is None and kind is not None and family:
        spec = cat.template(kind, family, number)
    return spec


def build_spec(number: str, *, kind: str | Kind | None = None, family: str | None = None,
               package: str | None = None, pinout: str | None = None,
               description: str = "", params: Sequence[str] = (),
               existing: PartSpec | None = None, use_catalog: bool = True,
               catalog: Catalog | None = None) -> tuple[PartSpec, list[str]]:
    """The record for ``number``: existing or catalog values, then what the user typed.

    Returns the spec and the names of parameters that came from the catalog. A passive
    part named by its value (``4k7``, ``100n``) gets its value parameter from the name.
    """
    k = parse_kind(kind) if isinstance(kind, str) else kind
    base = existing
    filled: list[str] = []
    if base is None and use_catalog:
        fam = normalise_family(k, family) if (k and family) else None
        base = _catalog_spec(number, k, fam, catalog)
        if base is not None:
            from stock.catalog import is_template

            # a template's own text ("add a value of this family ...") is not this part's
            desc = (f"{base.family} {base.kind.value}; figures from catalog template "
                    f"{base.number}") if is_template(base) else base.description
            base = PartSpec(number, base.kind, base.family, base.package, base.pinout,
                            desc, dict(base.attrs),
                            [Param(p.name, p.bound, p.value, p.at, Origin.CATALOG)
                             for p in base.params], base.source)
            filled = sorted({p.name for p in base.params})
    if base is None:
        if k is None:
            raise StockError(
                f"{number!r} is not in the store or the catalog; say what it is with "
                "--kind (bjt, fet, diode, capacitor, resistor, inductor, crystal, ic, other)"
            )
        base = PartSpec(number, k)
    if k is not None and k != base.kind:
        raise StockError(f"{number} is a {base.kind.value}, not a {k.value}; drop --kind "
                         "or use another number")
    user = list(_parse_params(tuple(params), base.kind)) if params else []
    if base.kind in VALUE_PARAM and base.get(VALUE_PARAM[base.kind][0]) is None:
        # a passive named by its value ("4k7", "100n C0G 50V"): read the name with the one
        # value reader, as a kit slot is, so "470" is 470 Ω here too (not an SMD code)
        try:
            named = value_part(base.kind, number)
        except StockError:
            named = None
        if named is not None:
            typed = {(p.name, p.bound) for p in user}
            user = [p for p in named.params if (p.name, p.bound) not in typed] + user
            base.family = base.family or named.family
            base.attrs = {**named.attrs, **base.attrs}
    spec = base.with_params(user)
    if family:
        spec.family = normalise_family(spec.kind, family)
    spec.package = package or spec.package
    spec.pinout = pinout.upper() if pinout else spec.pinout
    spec.description = description or spec.description
    overridden = {p.name for p in user}
    return spec, [n for n in filled if n not in overridden]


@lru_cache(maxsize=4096)
def _parse_params(texts: tuple[str, ...], kind: Kind) -> tuple[Param, ...]:
    """Parameter texts parsed once: stock lists repeat the same few strings many times."""
    from stock.paramtext import parse_params

    return tuple(parse_params(list(texts), kind))


def add(store, number: str, qty: int, drawer: str, *, ref: str = "", note: str = "",
        key: str | None = None, **fields) -> Received:  # type: ignore[no-untyped-def]
    """Receive ``qty`` of ``number`` into ``drawer``, creating or updating the part."""
    from stock.store.ledger import positive

    positive(qty)
    existing = store.find_part(number)
    spec, filled = build_spec(number, existing=existing, **fields)
    spec, recorded = store.save_and_receive(spec, drawer, qty, ref=ref, note=note, key=key,
                                            update=existing is None or spec != existing)
    return Received(spec, existing is None, filled if existing is None else [], recorded)

