"""The kit file: a circuit's bill of materials in TOML, of our own design.

A kit file names the circuit, gives its operating conditions, then lists slots (see
``docs/kits.md`` and the JSON Schema ``stock/data/kit.schema.json``)::

    name = "marsh-tx40"
    title = "40 m crystal-controlled QRP transmitter"

    [conditions]
    supply = "13.8V"
    freq = "7.030MHz"

    [[slot]]
    refs = "Q2"
    calls_for = "2N2222A"
    kind = "bjt"
    role = "pa-c"
    need = ["vceo>=40V"]

Every error names the file and the line: ``kit.toml:14: slot 2, role 'rf amp' is not
known (did you mean rf-amp?); use one of: ...``.
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from stock.errors import KitFileError, NotationError
from stock.kinds import Kind
from stock.kits.designators import compress, expand
from stock.kits.schema import validate
from stock.kits.tomllines import Path as KeyPath
from stock.kits.tomllines import line_index, line_of
from stock.parts import PartSpec, part_key
from stock.slots import Conditions, Op, Requirement, Role, Slot, Source
from stock.valuetext import SAFETY_CLASSES as SAFETY_CLASSES  # re-exported
from stock.valuetext import VALUE_KINDS as VALUE_KINDS  # re-exported
from stock.valuetext import value_part

#: Units of the condition keys (stock.slots.Conditions fields).
CONDITION_UNITS: dict[str, str] = {
    "supply": "V", "freq": "Hz", "current": "A", "dissipation": "W", "ambient": "°C",
    "v_peak": "V", "v_rms": "V", "v_dc": "V", "i_peak": "A", "impedance": "Ω",
}

#: Amateur bands → (lower, upper) edge in Hz: the widest allocation over the three ITU
#: regions (ITU Radio Regulations, Article 5, table of frequency allocations — from
#: memory; check your own licence conditions). A kit that gives a band but no
#: frequency is checked at the upper edge, the worst case for gain-bandwidth rules.
BANDS: dict[str, tuple[float, float]] = {
    "160m": (1.800e6, 2.000e6),
    "80m": (3.500e6, 4.000e6),
    "60m": (5.3515e6, 5.3665e6),
    "40m": (7.000e6, 7.300e6),
    "30m": (10.100e6, 10.150e6),
    "20m": (14.000e6, 14.350e6),
    "17m": (18.068e6, 18.168e6),
    "15m": (21.000e6, 21.450e6),
    "12m": (24.890e6, 24.990e6),
    "10m": (28.000e6, 29.700e6),
    "6m": (50.0e6, 54.0e6),
    "2m": (144.0e6, 148.0e6),
}


@dataclass
class Tie:
    """Slots that work together: an L and a C forming a tank, a crystal and its load."""

    name: str
    what: str = "other"  # tank, crystal-load, filter, other
    note: str = ""
    refs: list[str] = field(default_factory=list)


@dataclass
class Kit:
    """A circuit's bill of materials: conditions and slots.

    ``source`` is ``"kit"`` for our TOML kit file (roles known) or ``"bom"`` for a plain
    spreadsheet, which gives no roles: there the called-for part's own ratings become
    the requirements. A slot's ``conditions`` are the circuit's with its own on top.
    """

    name: str
    file: str | None
    conditions: Conditions
    slots: list[Slot]
    notes: str = ""
    source: str = "kit"
    title: str = ""
    band: str | None = None
    ties: dict[str, Tie] = field(default_factory=dict)

    def slot_id(self, slot: Slot) -> str:
        """A slot's key across kits: ``"marsh-tx40:R3-R6"``; without designators the part
        called for (and its package): ``"kit:100n X7R 50V"``."""
        if slot.refs:
            return f"{self.name}:{compress(slot.refs)}"
        pkg = f" [{slot.package}]" if slot.package else ""
        return f"{self.name}:{slot.calls_for}{pkg}"

    def units(self) -> int:
        """Parts per copy of the kit."""
        return sum(s.qty for s in self.slots)


# --- values ----------------------------------------------------------------------------


def quantity(value: Any, unit: str) -> float:
    """A condition or bound: a bare number (already SI) or text in builders' notation."""
    if isinstance(value, bool):
        raise NotationError(f"{value!r} is not a value in {unit}; write e.g. '12V'")
    if isinstance(value, int | float):
        return float(value)
    from stock.quantities import parse_quantity

    return float(parse_quantity(str(value), unit))


def band_edges(band: str) -> tuple[float, float]:
    """(lower, upper) edge of an amateur band in Hz; NotationError naming the choices."""
    key = band.strip().lower().replace(" ", "")
    if key in BANDS:
        return BANDS[key]
    raise NotationError(f"unknown band {band!r}; use one of: {', '.join(BANDS)} (or give freq)")


def conditions_from(table: Mapping[str, Any]) -> tuple[Conditions, str | None]:
    """Conditions from a ``[conditions]`` table, and the band named there (if any)."""
    values: dict[str, float] = {}
    for key, unit in CONDITION_UNITS.items():
        if key in table:
            values[key] = quantity(table[key], unit)
    band = table.get("band")
    if band is not None and "freq" not in values:
        values["freq"] = band_edges(band)[1]
    elif band is not None:
        band_edges(band)  # still check the name
    return Conditions(**values), band


def called_part(kind: Kind, text: str, *, package: str | None = None,
                pinout: str | None = None) -> PartSpec | None:
    """The part a value slot calls for (``"100n C0G 50V"``), or None for kinds called for
    by part number; :func:`stock.valuetext.value_part` reads it, marked as from a kit."""
    return value_part(kind, text, package=package, pinout=pinout, source="kit")


def requirement_from(text: str, kind: Kind | None = None) -> Requirement:
    """A ``need`` entry (``"vceo>=60V"``) as a user requirement (checked against ``kind``)."""
    from stock.paramtext import parse_criterion

    crit = parse_criterion(text, kind)
    op = Op(crit.op)
    return Requirement(param=crit.param, op=op, value=crit.value, source=Source.USER,
                       why=f"written in the kit: {text.strip()}")


# --- the loader ---------------------------------------------------------------------


class _Where:
    """Turns a key path into ``file:line: `` for messages."""

    def __init__(self, file: str, index: dict[KeyPath, int]) -> None:
        self.file = file
        self.index = index

    def error(self, path: KeyPath, message: str) -> KitFileError:
        line = line_of(self.index, path)
        at = f"{self.file}:{line}" if line else self.file
        return KitFileError(f"{at}: {message}")


def load_kit(path: str | Path) -> Kit:
    """Read a kit file; raise KitFileError naming ``file:line`` and how to fix it."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise KitFileError(f"{p}: cannot read the kit file ({exc.strerror}); check the path"
                           ) from None
    try:
        text = raw.decode("utf-8-sig")  # a UTF-8 BOM from a Windows editor is harmless
    except UnicodeDecodeError as exc:
        raise KitFileError(f"{p}: byte {exc.start} is not UTF-8; save the kit file as UTF-8"
                           ) from None
    return parse_kit(text, file=str(p))


def parse_kit(text: str, file: str = "<kit>") -> Kit:
    """Read kit-file text (see the module docstring); KitFileError names the line."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        line = getattr(exc, "lineno", None)
        if line is None and "(at line " in msg:
            line = int(msg.split("(at line ")[1].split(",")[0].rstrip(")"))
        msg = msg.split(" (at line")[0]
        place = f"{file}:{line}" if line else file
        raise KitFileError(f"{place}: {msg}; fix the TOML syntax there") from None
    at = _Where(file, line_index(text))
    problems = validate(doc)
    if problems:
        first = problems[0]
        more = f" (and {len(problems) - 1} more problem{'s' * (len(problems) > 2)})" \
            if len(problems) > 1 else ""
        raise at.error(first.path, first.message + more)

    try:
        conditions, band = conditions_from(doc.get("conditions", {}))
    except NotationError as exc:
        raise at.error(_bad_condition(doc.get("conditions", {}), ("conditions",)),
                       f"conditions: {exc}") from None

    slots: list[Slot] = []
    owner: dict[str, int] = {}  # designator → slot number (1-based) that has it
    ties: dict[str, Tie] = {}
    tie_first: dict[str, int] = {}
    for i, raw_slot in enumerate(doc["slot"]):
        slot = _slot(raw_slot, i, conditions, at)
        for ref in slot.refs:
            if ref in owner:
                raise at.error(("slot", i, "refs"),
                               f"slot {i + 1}: {ref} is already in slot {owner[ref]}; list "
                               "each designator in one slot only")
            owner[ref] = i + 1
        if not slot.refs:
            same = next((j for j, o in enumerate(slots) if not o.refs
                         and part_key(o.calls_for) == part_key(slot.calls_for)
                         and o.package == slot.package), None)
            if same is not None:
                raise at.error(("slot", i), f"slot {i + 1} has no refs and calls for the same "
                                            f"part as slot {same + 1}; merge their qty or "
                                            "give refs")
        if slot.tie:
            ties.setdefault(slot.tie, Tie(slot.tie)).refs.extend(slot.refs or [slot.calls_for])
            tie_first.setdefault(slot.tie, i)
        slots.append(slot)

    described = doc.get("tie", {})
    for name, table in described.items():
        if name not in ties:
            raise at.error(("tie", name), f"tie {name!r} is described but no slot names it; "
                                          f"add tie = \"{name}\" to its slots or drop the table")
        ties[name].what = table.get("what", "other")
        ties[name].note = table.get("note", "")
    for name, tie in ties.items():
        members = [s for s in slots if s.tie == name]
        if len(members) < 2:
            raise at.error(("slot", tie_first[name], "tie"),
                           f"tie {name!r} has only one slot; a tie joins two or more slots "
                           "(give the same tie name to the others, or drop it)")
        kinds = {s.kind for s in members}
        needed = {"tank": {Kind.INDUCTOR, Kind.CAPACITOR},
                  "crystal-load": {Kind.CRYSTAL, Kind.CAPACITOR}}.get(tie.what, set())
        if not needed <= kinds:
            lacking = ", ".join(sorted(k.value for k in needed - kinds))
            raise at.error(("tie", name, "what"),
                           f"tie {name!r} is a {tie.what} but has no {lacking} slot; add one "
                           "or change what")

    return Kit(name=doc["name"], file=None if file == "<kit>" else file,
               conditions=conditions, slots=slots, notes=doc.get("notes", ""), source="kit",
               title=doc.get("title", ""), band=band, ties=ties)


def _bad_condition(table: Mapping[str, Any], base: KeyPath) -> KeyPath:
    """The path of the first condition that does not read (for the line number)."""
    for key, unit in CONDITION_UNITS.items():
        if key in table:
            try:
                quantity(table[key], unit)
            except NotationError:
                return (*base, key)
    if "band" in table:
        return (*base, "band")
    return base


def _slot(raw: Mapping[str, Any], i: int, circuit: Conditions, at: _Where) -> Slot:
    here: KeyPath = ("slot", i)
    kind = Kind(raw["kind"])
    role = Role(raw.get("role", "general"))
    calls_for = raw["calls_for"].strip()
    name = f"slot {i + 1}"

    refs: list[str] = []
    refs_raw = raw.get("refs", [])
    pieces = [refs_raw] if isinstance(refs_raw, str) else list(refs_raw)
    for j, piece in enumerate(pieces):
        try:
            refs.extend(expand(piece))
        except NotationError as exc:
            path = (*here, "refs") if isinstance(refs_raw, str) else (*here, "refs", j)
            raise at.error(path, f"{name}: {exc}") from None
    if len(set(refs)) != len(refs):
        dup = next(r for r in refs if refs.count(r) > 1)
        raise at.error((*here, "refs"), f"{name}: {dup} is listed twice; list it once")
    if refs:
        name = f"slot {i + 1} ({compress(refs)})"

    if "qty" in raw:
        qty = raw["qty"]
        if refs and qty != len(refs):
            raise at.error((*here, "qty"),
                           f"{name}: qty {qty} but {len(refs)} designator"
                           f"{'s' * (len(refs) != 1)}; make them agree (or drop qty)")
    elif refs:
        qty = len(refs)
    else:
        raise at.error(here, f"{name} has neither refs nor qty; give one of them")

    own_table = raw.get("conditions", {})
    try:
        own, _ = conditions_from(own_table)
    except NotationError as exc:
        raise at.error(_bad_condition(own_table, (*here, "conditions")),
                       f"{name}, conditions: {exc}") from None

    try:
        part = called_part(kind, calls_for, package=raw.get("package"),
                           pinout=raw.get("pinout"))
    except NotationError as exc:
        raise at.error((*here, "calls_for"), f"{name}: {exc}") from None

    reqs: list[Requirement] = []
    for j, text in enumerate(raw.get("need", [])):
        try:
            reqs.append(requirement_from(text, kind))
        except (NotationError, ValueError) as exc:
            raise at.error((*here, "need", j), f"{name}, need: {exc}") from None

    return Slot(refs=refs, qty=qty, calls_for=calls_for, kind=kind, part=part, role=role,
                conditions=circuit.merged(own), requirements=reqs, tie=raw.get("tie"),
                note=raw.get("note", ""), package=raw.get("package"),
                pinout=raw.get("pinout"))


def kit_from_slots(name: str, slots: Sequence[Slot], *, file: str | None = None,
                   conditions: Conditions | None = None, source: str = "bom",
                   notes: str = "") -> Kit:
    """A kit built in code (the BOM reader uses this)."""
    return Kit(name=name, file=file, conditions=conditions or Conditions(), slots=list(slots),
               notes=notes, source=source)

