"""Plain BOM spreadsheets (CSV or XLSX, as schematic editors and kit sellers export them).

A plain BOM gives designators, a quantity, a value or part number, a package and a
description — but no roles and no operating conditions. Its slots therefore have the
role ``general``: the called-for part's own ratings become the requirements, and the
check says so (``Kit.source == "bom"``).

What the reader does, in order:

* finds the header row and the columns by their usual spellings (:data:`BOM_COLUMNS`;
  ``mapping`` overrides them: ``{"refs": "Bauteil"}``), via :func:`stock.sheets.read_table`;
* expands designator lists and ranges (``R3-R6, R9``) and counts them; a quantity that
  disagrees with the designators is reported and the designators win;
* skips blank rows and rows marked not fitted (``DNP``, ``DNF``, ``NF``), with a warning;
* tells the kind from the designator letters (IEEE 315 class letters: R, C, L, Q, D, Y,
  U ...), refined by a ``kind`` column or words of the description (``MOSFET``);
* merges lines that call for the same part (same kind, part or value, and package).
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from stock.errors import ImportFileError, KitFileError, NotationError
from stock.kinds import Kind, parse_kind
from stock.kits.designators import compress, expand, prefix, sort_key
from stock.kits.kitfile import VALUE_KINDS, Kit, called_part, load_kit
from stock.parts import part_key
from stock.slots import Conditions, Role, Slot

#: Canonical BOM column → header spellings accepted for it (matched ignoring case,
#: spaces and punctuation). Common spellings of schematic-editor and kit-seller exports.
BOM_COLUMNS: dict[str, list[str]] = {
    "refs": ["designator", "designators", "reference", "references", "ref", "ref des",
             "refdes", "reference designator", "reference designators", "part reference",
             "position", "positions", "pos", "parts", "refs"],
    "qty": ["quantity", "qty", "qty.", "count", "amount", "pcs", "pieces",
            "quantity per pcb", "qty per board"],
    "value": ["value", "val", "values"],
    "part": ["part number", "part no", "part no.", "part #", "pn", "p/n", "mpn",
             "manufacturer part number", "mfr part number", "mfr. part no", "mfr part",
             "part", "device", "order code"],
    "package": ["package", "footprint", "case", "case/package", "pattern", "pcb footprint"],
    "description": ["description", "desc", "comment", "comments", "notes", "remark"],
    "kind": ["kind", "category", "component type"],
}

#: Designator class letters → kind (IEEE 315-1975 / ASME Y14.44 reference designations;
#: ``Y``/``X`` for crystals and ``U``/``IC`` for integrated circuits are common practice).
PREFIX_KINDS: dict[str, Kind] = {
    "R": Kind.RESISTOR, "RV": Kind.RESISTOR, "VR": Kind.RESISTOR, "P": Kind.RESISTOR,
    "C": Kind.CAPACITOR, "VC": Kind.CAPACITOR, "CV": Kind.CAPACITOR,
    "L": Kind.INDUCTOR, "RFC": Kind.INDUCTOR,
    "Q": Kind.BJT, "TR": Kind.BJT, "T": Kind.OTHER,
    "D": Kind.DIODE, "CR": Kind.DIODE, "LED": Kind.DIODE, "ZD": Kind.DIODE,
    "Y": Kind.CRYSTAL, "X": Kind.CRYSTAL, "XTAL": Kind.CRYSTAL,
    "U": Kind.IC, "IC": Kind.IC,
}

#: Words of a description or part text that tell a transistor's kind (common practice).
_FET_WORDS = re.compile(r"\b(?:fet|mosfet|jfet|n-?channel|p-?channel|nmos|pmos)\b", re.I)
_BJT_WORDS = re.compile(r"\b(?:npn|pnp|bipolar|bjt)\b", re.I)

#: Words of a description that tell the kind when the designator letters cannot
#: (common practice; checked in order, so "schottky diode" is a diode).
_KIND_WORDS: tuple[tuple[re.Pattern[str], Kind], ...] = tuple(
    (re.compile(rf"\b(?:{words})\b", re.I), kind) for words, kind in (
        (r"resistors?|potentiometer|trimpot", Kind.RESISTOR),
        (r"capacitors?|cap|electrolytic|trimmer capacitor", Kind.CAPACITOR),
        (r"inductors?|choke|coil|rfc", Kind.INDUCTOR),
        (r"crystal|xtal|resonator", Kind.CRYSTAL),
        (r"diodes?|schottky|zener|rectifier|led|varicap", Kind.DIODE),
        (r"regulator|op-?amp|ic|amplifier ic|timer", Kind.IC),
        (r"transistor|npn|pnp", Kind.BJT),
    ))

#: Cell texts that mark a position as not fitted (common practice of BOM exports).
NOT_FITTED = frozenset({"dnp", "dnf", "nf", "nofit", "notfitted", "donotplace", "donotfit",
                        "nopop", "np"})


@dataclass
class _Line:
    rows: list[int]
    refs: list[str]
    qty: int
    kind: Kind
    calls_for: str
    package: str | None
    description: str
    mpn: str | None
    notes: list[str] = field(default_factory=list)


def _fold(text: str) -> str:
    return re.sub(r"[^a-z0-9]", "", text.lower())


def guess_kind(refs: list[str], kind_cell: str, description: str, part: str) -> Kind:
    """The kind of a BOM line: ``kind`` column, else designator letters and words."""
    if kind_cell:
        return parse_kind(kind_cell)
    letters = {prefix(r) for r in refs}
    kind = Kind.OTHER
    if len(letters) == 1:
        kind = PREFIX_KINDS.get(letters.pop(), Kind.OTHER)
    words = f"{description} {part}"
    if kind in (Kind.BJT, Kind.OTHER) and _FET_WORDS.search(words):
        return Kind.FET
    if kind is Kind.OTHER and _BJT_WORDS.search(words):
        return Kind.BJT
    if kind is Kind.OTHER:
        for pattern, k in _KIND_WORDS:
            if pattern.search(description):
                return k
    return kind


def _name_from(path: Path) -> str:
    name = re.sub(r"[^A-Za-z0-9._-]+", "-", path.stem).strip("-._")
    return name or "bom"


def load_bom(path: str | Path, *, mapping: Mapping[str, str] | None = None,
             name: str | None = None, sheet: str | None = None) -> tuple[Kit, list[str]]:
    """Read a plain BOM spreadsheet into a kit (roles unknown) and a list of warnings.

    Warnings name the rows: a quantity that disagrees with the designators (the
    designators are taken), lines merged because they call for the same part, rows
    marked not fitted, values that could not be read (kept as text). Raises
    :class:`ImportFileError` naming file, row and column for what cannot be used.
    """
    from stock.sheets import read_table

    p = Path(path)
    table = read_table(p, columns=BOM_COLUMNS, mapping=mapping, sheet=sheet,
                       text_columns=("refs", "value", "part"))
    file = table.file
    cols = set(table.columns)
    if not cols & {"refs", "qty"} or not cols & {"value", "part"}:
        raise ImportFileError(
            "no BOM header found: need a designator or quantity column and a value or part "
            "number column; name them in the first rows or map them (e.g. refs=Bauteil)",
            file=file, sheet=table.sheet)
    warnings: list[str] = []
    lines: list[_Line] = []
    owner: dict[str, int] = {}
    for row in table.rows:
        c = row.cells
        refs_text = c.get("refs", "")
        value = c.get("value", "")
        part = c.get("part", "")
        if _fold(value) in NOT_FITTED or _fold(part) in NOT_FITTED \
                or _fold(c.get("description", "")) in NOT_FITTED:
            warnings.append(f"row {row.number}: {refs_text or value or part} marked not "
                            "fitted; skipped")
            continue
        try:
            refs = expand(refs_text)
        except NotationError as exc:
            raise ImportFileError(f"{exc}", file=file, sheet=table.sheet, row=row.number,
                                  column="refs") from None
        for ref in refs:
            if ref in owner:
                raise ImportFileError(
                    f"{ref} is also on row {owner[ref]}; list each designator on one row",
                    file=file, sheet=table.sheet, row=row.number, column="refs")
            owner[ref] = row.number
        qty = _qty(c.get("qty", ""), refs, row.number, file, table.sheet, warnings)
        if qty == 0:
            warnings.append(f"row {row.number}: quantity 0; skipped")
            continue
        if not value and not part:
            raise ImportFileError(
                "neither a value nor a part number; fill one in or delete the row",
                file=file, sheet=table.sheet, row=row.number, column="value")
        description = c.get("description", "")
        try:
            kind = guess_kind(refs, c.get("kind", ""), description, part or value)
        except ValueError as exc:
            raise ImportFileError(str(exc), file=file, sheet=table.sheet, row=row.number,
                                  column="kind") from None
        # Value kinds are called for by value (any part of that value fits); other kinds
        # by part number, falling back to the value column, where many editors put it.
        if kind in VALUE_KINDS and value:
            calls_for, mpn = value, part or None
        else:
            calls_for, mpn = part or value, None
        lines.append(_Line([row.number], refs, qty, kind, calls_for.strip(),
                           c.get("package") or None, description, mpn))

    merged = _merge(lines, warnings)
    slots = [_slot(line, warnings) for line in merged]
    kit = Kit(name=name or _name_from(p), file=file, conditions=Conditions(), slots=slots,
              notes="plain BOM: no roles or operating conditions; each slot is held to the "
                    "called-for part's own ratings", source="bom")
    return kit, warnings


def _qty(text: str, refs: list[str], number: int, file: str, sheet: str | None,
         warnings: list[str]) -> int:
    if not text:
        if not refs:
            raise ImportFileError("neither designators nor a quantity; give one of them",
                                  file=file, sheet=sheet, row=number, column="qty")
        return len(refs)
    try:
        q = float(text.replace(",", "."))
    except ValueError:
        raise ImportFileError(f"quantity {text!r} is not a number; write a whole number",
                              file=file, sheet=sheet, row=number, column="qty") from None
    if q != int(q) or q < 0:
        raise ImportFileError(f"quantity {text!r} is not a whole number of parts; correct it",
                              file=file, sheet=sheet, row=number, column="qty")
    qty = int(q)
    if refs and qty != len(refs):
        warnings.append(f"row {number}: quantity {qty} but {len(refs)} designator"
                        f"{'s' * (len(refs) != 1)} ({compress(refs)}); using {len(refs)}, "
                        "the designators")
        return len(refs)
    return qty


def _merge(lines: list[_Line], warnings: list[str]) -> list[_Line]:
    """Lines calling for the same part (kind, part or value, package) become one."""
    out: dict[tuple[Any, ...], _Line] = {}
    for line in lines:
        key = (line.kind, part_key(line.calls_for), _fold(line.package or ""))
        if key not in out:
            out[key] = line
            continue
        first = out[key]
        first.rows += line.rows
        first.refs += line.refs
        first.qty += line.qty
        if line.mpn and not first.mpn:
            first.mpn = line.mpn
        if line.description and not first.description:
            first.description = line.description
    for line in out.values():
        if len(line.rows) > 1:
            rows = ", ".join(str(r) for r in line.rows)
            warnings.append(f"rows {rows}: same part {line.calls_for}; merged into one slot "
                            f"({compress(line.refs) or line.qty})")
            line.refs.sort(key=sort_key)
    return list(out.values())


def _slot(line: _Line, warnings: list[str]) -> Slot:
    part = None
    try:
        part = called_part(line.kind, line.calls_for, package=line.package)
    except NotationError as exc:
        warnings.append(f"row {line.rows[0]}: {exc}; kept as text, matched by name only")
    notes = [line.description] if line.description else []
    if line.mpn:
        notes.append(f"MPN {line.mpn}")
    return Slot(refs=line.refs, qty=line.qty, calls_for=line.calls_for, kind=line.kind,
                part=part, role=Role.GENERAL, conditions=Conditions(), note="; ".join(notes),
                package=line.package)


def load_any(path: str | Path, **kw: Any) -> tuple[Kit, list[str]]:
    """A kit file (``.toml``) or a plain BOM (``.csv``, ``.tsv``, ``.txt``, ``.xlsx``)."""
    p = Path(path)
    suffix = p.suffix.lower()
    if suffix == ".toml":
        return load_kit(p), []
    if suffix in {".csv", ".tsv", ".txt", ".xlsx", ".xlsm"}:
        return load_bom(p, **kw)
    raise KitFileError(f"{p}: unknown kit file type {suffix or '(none)'!r}; use a .toml kit "
                       "file or a .csv/.xlsx BOM")
