"""Part records as plain data: what the store, the catalog and the fit engine exchange.

A :class:`PartSpec` is a part type with its parameters; it knows nothing of drawers or
quantities. Values are SI floats (see :mod:`stock.params`).
"""

from __future__ import annotations

import copyreg
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from enum import StrEnum
from types import MappingProxyType
from typing import NamedTuple

from stock.kinds import Bound, Kind
from stock.params import PARAMS, Sense


class Origin(StrEnum):
    """Where a parameter value came from."""

    USER = "user"
    CATALOG = "catalog"
    IMPORT = "import"


#: No test conditions (shared and read-only).
NO_CONDITIONS: Mapping[str, float] = MappingProxyType({})


def read_only(d: Mapping[str, float]) -> Mapping[str, float]:
    """A read-only view of a copy of ``d`` (how shared test conditions are kept)."""
    return MappingProxyType(dict(d))


def _read_only_again(m: MappingProxyType) -> tuple:  # type: ignore[type-arg]
    return read_only, (dict(m),)


# Test conditions shared among records are read-only mappings, which Python can neither
# copy nor pickle by itself; taught here, records stay plain data (deepcopy, pickle,
# dataclasses.asdict work on them).
copyreg.pickle(MappingProxyType, _read_only_again)


class Param(NamedTuple):
    """One parameter value: ``hfe`` ``min`` 100 at IC = 0.15 A, VCE = 10 V.

    An immutable record (a named tuple: the store builds tens of thousands of these for
    one ranking, and a tuple is made several times faster than a frozen dataclass).
    """

    name: str
    bound: Bound
    value: float
    at: Mapping[str, float] = NO_CONDITIONS  # test conditions, SI
    origin: Origin = Origin.USER


@dataclass(frozen=True)
class Guaranteed:
    """A value to hold a requirement against, and whether a datasheet guarantees it."""

    value: float
    bound: Bound
    guaranteed: bool
    param: Param


@dataclass(slots=True)
class PartSpec:
    """A part type: number, kind, family, package, pin order, attributes, parameters."""

    number: str
    kind: Kind
    family: str | None = None
    package: str | None = None
    pinout: str | None = None  # pin letters, pin 1 first: "EBC", "SGD", "AK"
    description: str = ""
    attrs: dict[str, str] = field(default_factory=dict)  # e.g. {"safety": "X2"}
    params: list[Param] = field(default_factory=list)
    source: str | None = None  # where the record came from (catalog row source)

    def get(self, name: str, bound: Bound | None = None) -> Param | None:
        """The first value of ``name`` (with ``bound`` if given), or None."""
        for p in self.params:
            if p.name == name and (bound is None or p.bound == bound):
                return p
        return None

    def values(self, name: str) -> list[Param]:
        return [p for p in self.params if p.name == name]

    def nominal(self, name: str) -> float | None:
        """The nominal (or only) value of ``name``."""
        p = self.get(name, Bound.NOM) or self.get(name, Bound.TYP)
        if p is None:
            vals = self.values(name)
            p = vals[0] if len(vals) == 1 else None
        return None if p is None else p.value

    def low(self, name: str) -> Guaranteed | None:
        """The value to hold a ``>= x`` requirement against.

        A rating is its own guarantee; for a characteristic the guaranteed value is
        the ``min`` bound, and failing that the ``typ`` one (not guaranteed).
        """
        return self._pick(name, (Bound.MIN,), high=False)

    def high(self, name: str) -> Guaranteed | None:
        """The value to hold a ``<= x`` requirement against (``max``, else ``typ``)."""
        return self._pick(name, (Bound.MAX,), high=True)

    def _pick(self, name: str, wanted: tuple[Bound, ...], high: bool) -> Guaranteed | None:
        vals = self.values(name)
        if not vals:
            return None
        pdef = PARAMS.get(name)
        if pdef is not None and pdef.sense in (Sense.RATING, Sense.NOMINAL):
            p = vals[0]
            return Guaranteed(p.value, p.bound, p.bound != Bound.TYP, p)
        for b in (*wanted, Bound.NOM):
            cands = [p for p in vals if p.bound == b]
            if cands:
                # several values of one bound (different conditions): the worst case
                p = (max if high else min)(cands, key=lambda q: q.value)
                return Guaranteed(p.value, p.bound, True, p)
        typ = [p for p in vals if p.bound == Bound.TYP]
        if typ:
            return Guaranteed(typ[0].value, Bound.TYP, False, typ[0])
        return None

    def param_groups(self) -> Mapping[str, str] | None:
        """Parameter name → a text that is equal for two parts exactly when their values
        of that name are, or None when the record has no such cheap key (a record built
        in memory). The fit engine keys its memo of checks on these; records read from
        the store have them (:class:`stock.store.paramdoc.StoredPart`)."""
        return None

    def partial(self, names: Iterable[str]) -> PartSpec:
        """The same record with only the parameters named in ``names``."""
        keep = set(names)
        return PartSpec(self.number, self.kind, self.family, self.package, self.pinout,
                        self.description, self.attrs,
                        [p for p in self.params if p.name in keep], self.source)

    def with_params(self, params: Iterable[Param]) -> PartSpec:
        """A copy where ``params`` replace values of the same name and bound."""
        new = {(p.name, p.bound): p for p in params}
        kept = [p for p in self.params if (p.name, p.bound) not in new]
        return PartSpec(self.number, self.kind, self.family, self.package, self.pinout,
                        self.description, dict(self.attrs), kept + list(new.values()),
                        self.source)


def part_key(number: str) -> str:
    """The lookup key of a part number: case and spacing folded (``2n2222a`` = ``2N2222A``)."""
    return " ".join(number.split()).upper()


@dataclass(slots=True)
class Stocked:
    """A part as a candidate from the drawers (or the catalog): free quantity and where."""

    part: PartSpec
    free: int = 0  # on hand minus reserved, over all drawers
    drawers: list[tuple[str, int]] = field(default_factory=list)  # (drawer label, free there)
    to_buy: bool = False  # a catalog part not in stock: a stand-in that would have to be bought
