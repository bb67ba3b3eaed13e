"""A part's parameters as one document, stored beside the ``params`` table.

The ``params`` table is the parametric index: one row per value, searched by range. The
fit engine, though, reads *every* parameter of thousands of candidates at once, and
fetching ~70,000 rows costs more than all the engineering done on them. So each part
also carries its parameters as one text (``parts.params_doc``), written by the store's
writers in the same transaction as the rows (:mod:`stock.store.repo`), checked against
the rows by ``stock verify``, and read by the candidate loader.

The document is a JSON object, parameter name → the *group* text of that name's values,
names in the order their first value was written::

    {"vceo":"max 40.0","hfe":"min 100.0 ic=0.15 vce=10.0;max 300.0 ic=0.15 vce=10.0",
     "pd":"max 0.625 ta=25.0 catalog"}

A group text is rows joined by ``;``; a row is ``bound value`` then, space-separated,
its test conditions as ``name=value`` (sorted by name; a name that is not an identifier
is %-escaped) and its origin when it is not ``user``. Numbers are written as Python's
shortest round-trip ``repr``, so they read back bit for bit (but -0.0 as 0.0, as SQLite
keeps it). The group texts are also the fit engine's memo keys: two parts with the same
text for a name hold the same values of it (:meth:`StoredPart.param_groups`).
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterable, Mapping
from functools import lru_cache
from types import MappingProxyType
from typing import Any
from urllib.parse import quote, unquote

from stock.errors import StockError
from stock.kinds import Bound, Kind
from stock.parts import NO_CONDITIONS, Origin, Param, PartSpec, Stocked

_BOUNDS = {b.value: b for b in Bound}
_ORIGINS = {o.value: o for o in Origin}
_PLAIN = re.compile(r"[a-z][a-z0-9_]*\Z")  # every condition name of stock.params is one
# the C scanner itself: json.loads would also match leading and trailing whitespace
# with a regular expression, twice per part, which the documents (written here) never have
_scan_json = json.JSONDecoder().scan_once  # type: ignore[attr-defined]
_new_param = tuple.__new__  # a Param from a complete tuple, without its keyword parsing

#: The document of a part without parameters.
EMPTY = "{}"


_plain_names: set[str] = set()  # condition names already seen to need no escaping


def _cond_name(name: str) -> str:
    """A condition name as written in a group text: as it is when it is an identifier,
    else %-escaped (a space, '=' or ';' would break the row; a store written through the
    library may hold any name)."""
    if name in _plain_names:
        return name
    if _PLAIN.match(name):
        _plain_names.add(name)
        return name
    return quote(name, safe="")


def _row(p: Param) -> str:
    # Bound and Origin are string enums: formatted, they are their values (the table's)
    bound, origin = f"{p.bound}", f"{p.origin}"
    if bound not in _BOUNDS or origin not in _ORIGINS:
        raise StockError(f"{p.name}: bound {bound!r} or origin {origin!r} is not one of "
                         f"{', '.join(_BOUNDS)} / {', '.join(_ORIGINS)}")
    # + 0.0 turns -0.0 into 0.0: SQLite stores a REAL -0.0 as 0.0, and the document
    # must read the same as the row the database keeps
    text = f"{bound} {float(p.value) + 0.0!r}"
    if p.at:
        for k in sorted(p.at):
            text += f" {_cond_name(k)}={float(p.at[k]) + 0.0!r}"
    if origin != "user":
        text += f" {origin}"
    return text


def encode(params: Iterable[Param]) -> str:
    """The document of ``params`` (in their order; a name's values grouped together)."""
    groups: dict[str, str] = {}
    for p in params:
        row = _row(p)
        name = p.name  # a key of the JSON object: any text will do
        groups[name] = f"{groups[name]};{row}" if name in groups else row
    return json.dumps(groups, separators=(",", ":"))


def groups_of(doc: str) -> dict[str, str]:
    """Parameter name → group text."""
    return _scan_json(doc, 0)[0] if doc != EMPTY else {}  # type: ignore[no-any-return]


@lru_cache(maxsize=4096)
def _conditions(tokens: tuple[str, ...]) -> Mapping[str, float]:
    # one shared, read-only mapping per distinct set of conditions ("ta=25.0")
    return MappingProxyType({unquote(k) if "%" in k else k: float(v)
                             for k, v in (t.rsplit("=", 1) for t in tokens)})


def decode_group(name: str, text: str) -> list[Param]:
    """The values of parameter ``name`` from its group text."""
    bits = text.split(" ")
    if len(bits) == 2:  # the usual case: one value, no conditions, typed in by the user
        return [_new_param(Param, (name, _BOUNDS[bits[0]], float(bits[1]), NO_CONDITIONS,
                                   Origin.USER))]
    out = []
    for row in text.split(";"):
        bits = row.split(" ")
        at: Mapping[str, float] = NO_CONDITIONS
        origin = Origin.USER
        if len(bits) > 2:
            rest = bits[2:]
            if "=" not in rest[-1]:
                origin = _ORIGINS[rest.pop()]
            if rest:
                at = _conditions(tuple(rest))
        out.append(Param(name, _BOUNDS[bits[0]], float(bits[1]), at, origin))
    return out


def decode(doc: str) -> list[Param]:
    """Every parameter in the document, grouped by name in the document's order."""
    out: list[Param] = []
    for name, text in groups_of(doc).items():
        out.extend(decode_group(name, text))
    return out


class StoredPart(PartSpec):
    """A part record from the store whose parameters are decoded from its document on
    first use; :meth:`param_groups` gives the undecoded group texts (the fit engine's
    memo keys) and :meth:`partial` a record of a few names, decoding only those.

    Equal to a :class:`PartSpec` with the same fields; its parameters come grouped by
    name (the order among names carries no meaning; within a name it is kept). Built
    from a document (``doc=``) or, like a :class:`PartSpec`, from ``params`` (so
    ``dataclasses.replace`` works). Give it new parameters by assigning ``params``; a
    list changed in place would leave the memo keys stale.
    """

    __slots__ = ("_doc", "_groups", "_params")

    def __init__(self, number: str, kind: Kind, family: str | None = None,
                 package: str | None = None, pinout: str | None = None,
                 description: str = "", attrs: dict[str, str] | None = None,
                 params: list[Param] | None = None, source: str | None = None, *,
                 doc: str | None = None) -> None:
        # no dataclass __init__: the loader builds thousands of these
        self.number = number
        self.kind = kind
        self.family = family
        self.package = package
        self.pinout = pinout
        self.description = description
        self.attrs = {} if attrs is None else attrs
        self.source = source
        self._doc = doc if params is None else None  # None: encoded from params when asked
        self._groups: dict[str, str] | None = None
        self._params: list[Param] | None = None if params is None else list(params)

    @property  # type: ignore[override]
    def params(self) -> list[Param]:
        if self._params is None:
            self._params = [p for name, text in self.param_groups().items()
                            for p in decode_group(name, text)]
        return self._params

    @params.setter
    def params(self, value: list[Param]) -> None:
        self._params = value
        self._groups = None
        self._doc = None

    def param_groups(self) -> Mapping[str, str]:
        if self._groups is None:
            if self._doc is None:
                self._doc = encode(self._params or ())
            self._groups = groups_of(self._doc)
        return self._groups

    def partial(self, names: Iterable[str]) -> PartSpec:
        groups = self.param_groups()
        params: list[Param] = []
        for n in names:
            text = groups.get(n)
            if text is not None:
                params += decode_group(n, text)
        return PartSpec(self.number, self.kind, self.family, self.package, self.pinout,
                        self.description, self.attrs, params, self.source)

    def __eq__(self, other: Any) -> bool:
        if not isinstance(other, PartSpec):
            return NotImplemented
        return _fields(self) == _fields(other)

    __hash__ = None  # type: ignore[assignment]


class StoredStock(Stocked):
    """A candidate from the store whose drawers are read from the loader's folded text
    (``"drawer id:free,…"``, empty for none) on first use: ranking needs only the total,
    which the query sums; the drawers of the few candidates shown are all that is ever
    spelled out."""

    __slots__ = ("_held", "_labels", "_drawers")

    def __init__(self, part: PartSpec, free: int = 0,
                 drawers: list[tuple[str, int]] | None = None, to_buy: bool = False, *,
                 held: str = "", labels: Mapping[int, tuple[int, str]] | None = None
                 ) -> None:
        # like a Stocked (so dataclasses.replace works), or from the loader's text
        self.part = part
        self.free = free
        self.to_buy = to_buy
        self._held = held
        self._labels = labels or {}
        self._drawers: list[tuple[str, int]] | None = drawers

    @property  # type: ignore[override]
    def drawers(self) -> list[tuple[str, int]]:
        if self._drawers is None:
            labels = self._labels  # id → (place in the store's order of labels, label)
            held = sorted((labels[int(d)], int(q)) for d, q in
                          (item.split(":") for item in self._held.split(","))
                          ) if self._held else []
            self._drawers = [(label, q) for (_, label), q in held]
        return self._drawers

    @drawers.setter
    def drawers(self, value: list[tuple[str, int]]) -> None:
        self._drawers = value

    def __eq__(self, other: Any) -> bool:
        if not isinstance(other, Stocked):
            return NotImplemented
        return (self.part, self.free, self.drawers, self.to_buy) == \
            (other.part, other.free, other.drawers, other.to_buy)

    __hash__ = None  # type: ignore[assignment]


def _fields(p: PartSpec) -> tuple:
    first: dict[str, int] = {}
    for i, q in enumerate(p.params):
        first.setdefault(q.name, i)
    grouped = sorted(p.params, key=lambda q: first[q.name])  # stable within a name
    return (p.number, p.kind, p.family, p.package, p.pinout, p.description, p.attrs,
            grouped, p.source)
