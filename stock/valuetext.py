"""Value text: the one reader of a passive's value as builders write it.

A resistor, capacitor, inductor or crystal is often called for (on a kit slot, a BOM line,
the command line) or named (``stock add 4k7``) by its value rather than a part number::

    4k7            470 1% 1/4W        104 X7R 50V        100n film X2 275VAC
    22uH 1A        4R7 1A             10.106 MHz 20pF    2p2 C0G ±0.25pF

:func:`value_part` turns such text into a :class:`~stock.parts.PartSpec`. The first word
is the value (builders' notation or, on a capacitor or inductor, an IEC 60062 marking
code; a tolerance letter may follow it, ``4K7J``). ``4.7 kΩ`` with a space before the unit
is one value. Each later word is one of: a family (``C0G``, ``film``, ``metal-film``), a
tolerance (``5%``, ``+80/-20%``, ``±0.25pF``), a safety class on a capacitor (``X2``,
``X1/Y2``) or a rating in the kind's units (``50V`` on a capacitor, ``0.25W``/``1/4W`` on a
resistor, ``1A`` on an inductor, ``20pF`` load on a crystal). A word that fits nowhere,
or a second word for something already given, raises :class:`NotationError` naming it.

On a resistor a bare number is ohms: ``470`` is 470 Ω, never the SMD code 47 Ω. Builders
write resistor values as plain numbers on schematics and BOMs; the three-digit SMD code is
printed on the part, not written in a BOM (common practice). On a capacitor ``104`` is the
IEC 60062 code for 100 nF, and on an inductor ``4R7`` is 4.7 µH.
"""

from __future__ import annotations

import re
from typing import Any

from stock.errors import NotationError
from stock.kinds import FAMILIES, Bound, Kind, normalise_family
from stock.params import PARAMS, VALUE_PARAMS
from stock.parts import Param, PartSpec

__all__ = [
    "CODE_KINDS", "EXTRA_PARAMS", "SAFETY_CLASSES", "VALUE_KINDS", "VALUE_PARAMS",
    "value_kind", "value_part",
]

#: Kinds called for by a value rather than a part number, and the SI unit of that value
#: (the same units as stock.quantities.units.KIND_UNITS; a test keeps them equal).
VALUE_KINDS: dict[Kind, str] = {
    Kind.RESISTOR: "\u03a9", Kind.CAPACITOR: "F", Kind.INDUCTOR: "H", Kind.CRYSTAL: "Hz",
}

#: The parameter (stock.params) that holds a value kind's nominal value.

#: Kinds whose value word may be an IEC 60062 marking code: the three-digit capacitor code
#: (``104`` = 100 nF) and the inductor code (``101`` = 100 µH). Not resistors: a bare
#: ``470`` there is 470 Ω as builders write it, not the SMD code for 47 Ω.
CODE_KINDS = frozenset({Kind.CAPACITOR, Kind.INDUCTOR})

#: What a unit-bearing word after the value means, per kind (``100n C0G 50V``). The first
#: unit a word reads in wins.
EXTRA_PARAMS: dict[Kind, dict[str, str]] = {
    Kind.RESISTOR: {"W": "p_rated", "V": "v_limit"},
    Kind.CAPACITOR: {"V": "v_rated"},
    Kind.INDUCTOR: {"A": "irms", "Hz": "srf"},
    Kind.CRYSTAL: {"F": "cl", "W": "drive"},
}

#: IEC 60384-14 safety subclasses a capacitor's text may name; a dual-rated part is
#: written with a slash (``X1/Y2``).
SAFETY_CLASSES = ("X1", "X2", "X3", "Y1", "Y2", "Y3", "Y4")

# A voltage marked AC ("275VAC", "300V~", "250Vac") or DC ("63VDC"): IEC 60384-14 safety
# capacitors are rated in V AC; other capacitors in V DC unless marked otherwise.
_AC_RE = re.compile(r"(?P<v>.+V)\s*(?:AC|ac|Ac|~|rms|RMS)")
_DC_RE = re.compile(r"(?P<v>.+V)\s*(?:DC|dc|Dc)")
# A plain number: "4.7" in "4.7 kΩ", "10.106" in "10.106 MHz" (a decimal comma too).
_NUMBER_RE = re.compile(r"[+-]?(?:\d+(?:[.,]\d*)?|\.\d+)")
# Words are split on spaces and on commas that are not a decimal comma ("100n, 50V" but
# not "4,7k").
_SPLIT_RE = re.compile(r"\s+|,(?!\d)|(?<!\d),")


def _words(text: str) -> list[str]:
    # "± 5 %" and "+/- 0.25pF" are one tolerance word (stock.quantities.render_tol
    # writes "±5 %", with the space the SI brochure puts before %)
    t = re.sub(r"(±|\+/-|\+-)\s+", r"\1", text.strip())
    t = re.sub(r"\s+%", "%", t)
    return [w for w in _SPLIT_RE.split(t) if w]


def _read_value(words: list[str], unit: str, kind: Kind) -> tuple[Any, list[str]]:
    """The value (a stock.quantities Value) and the words after it."""
    from stock.quantities import parse_value

    code_kind = kind if kind in CODE_KINDS else None
    if len(words) > 1 and _NUMBER_RE.fullmatch(words[0]) and (
            words[1][0].isalpha() or words[1][0] in "µμΩ"):
        # "4.7 kΩ", "10.106 MHz": the unit after a space belongs to the value
        try:
            return parse_value(f"{words[0]} {words[1]}", unit, kind=code_kind), words[2:]
        except NotationError:
            pass
    return parse_value(words[0], unit, kind=code_kind), words[1:]


def _fraction(word: str, unit: str) -> float | None:
    """``1/4W`` as builders write resistor power: 0.25 (W); None for any other text."""
    m = re.fullmatch(r"(\d+)/(\d+)\s*" + re.escape(unit), word.strip())
    if not m or int(m[2]) == 0:
        return None
    return int(m[1]) / int(m[2])


def _tolerance(word: str, nominal: float, unit: str, text: str) -> tuple[float, float] | None:
    """A tolerance word as signed fractions, or None if the word is not one.

    ``5%``, ``±5%``, ``+80/-20%`` (stock.quantities.parse_tol), or an absolute tolerance
    ``±0.25pF`` as capacitors below 10 pF are specified (IEC 60062 letters B, C, D, F, G
    in pF), taken as a fraction of the nominal value.
    """
    from stock.quantities import parse_tol, parse_value

    w = word.replace("+/-", "±").replace("+-", "±")
    if w.endswith("%"):
        return parse_tol(w)
    if w.startswith("±") and len(w) > 1:
        if not re.search(r"[A-Za-zµμΩ]", w[1:]):
            raise NotationError(f"cannot read {word!r} in {text!r} as a tolerance; write it "
                                "in per cent (±5%) or with its unit (±0.25pF)")
        if nominal == 0:
            raise NotationError(f"{word!r} in {text!r}: an absolute tolerance needs a "
                                "non-zero value; write it in % or drop it")
        frac = abs(parse_value(w[1:], unit).value / nominal)
        return (-frac, frac)
    return None


def _rating(word: str, kind: Kind) -> tuple[str, float, bool] | None:
    """(parameter, SI value, written as plain volts) for a rating word, or None."""
    from stock.quantities import parse_quantity

    if kind is Kind.CAPACITOR:
        ac = _AC_RE.fullmatch(word)
        if ac:
            return "v_ac", parse_quantity(ac["v"], "V"), False
    dc = _DC_RE.fullmatch(word)
    plain = dc is None
    w = dc["v"] if dc else word
    for unit, pname in EXTRA_PARAMS.get(kind, {}).items():
        try:
            v = _fraction(w, unit)
            if v is None:
                v = parse_quantity(w, unit)
        except NotationError:
            continue
        return pname, v, plain and unit == "V"
    return None


def value_part(kind: Kind, text: str, *, package: str | None = None,
               pinout: str | None = None, description: str = "",
               source: str | None = None) -> PartSpec | None:
    """The part a value text calls for: ``"100n C0G 50V"`` → a 100 nF C0G capacitor
    rated 50 V DC. None for kinds called for by part number (bjt, fet, diode, ic, other).

    See the module docstring for the words. Values are SI (Ω, F, H, Hz, V, A, W);
    a tolerance becomes ``tol`` min/max as signed fractions. A capacitor with a safety
    class and a plain voltage (``100n X2 275V``) is rated in V AC (IEC 60384-14 marks
    safety capacitors with their AC rating). Raises NotationError naming the word it
    cannot read or place.
    """
    unit = VALUE_KINDS.get(kind)
    if unit is None:
        return None
    words = _words(text)
    if not words:
        raise NotationError(f"no value in {text!r}; write it like 4k7 or 100n C0G 50V")
    value, rest = _read_value(words, unit, kind)
    params = [Param(VALUE_PARAMS[kind], Bound.NOM, value.value)]
    tol = value.tol
    given: dict[str, str] = {"tolerance": words[0]} if tol is not None else {}
    family: str | None = None
    attrs: dict[str, str] = {}
    plain_volts = False

    def once(what: str, word: str) -> None:
        if what in given:
            label = PARAMS[what].label if what in PARAMS else what
            raise NotationError(f"{text!r} gives the {label} twice "
                                f"({given[what]!r} and {word!r}); keep one")
        given[what] = word

    for word in rest:
        t = _tolerance(word, value.value, unit, text)
        if t is not None:
            once("tolerance", word)
            tol = t
            continue
        up = word.upper()
        if kind is Kind.CAPACITOR and all(c in SAFETY_CLASSES for c in up.split("/")):
            once("safety class", word)
            attrs["safety"] = up
            continue
        if FAMILIES.get(kind):
            try:
                fam = normalise_family(kind, word)
            except ValueError:
                fam = None
            if fam is not None:
                once("family", word)
                family = fam
                continue
        rating = _rating(word, kind)
        if rating is None:
            fams = ", ".join(FAMILIES.get(kind, ())[:6])
            units = ", ".join(EXTRA_PARAMS.get(kind, {})) or "none"
            safety = ", a safety class (X2)" if kind is Kind.CAPACITOR else ""
            raise NotationError(
                f"cannot place {word!r} in {text!r}; after the value write a family "
                f"({fams} ...), a tolerance (5%){safety} or a rating in {units}")
        pname, v, plain = rating
        once(pname, word)
        plain_volts = plain_volts or (pname == "v_rated" and plain)
        params.append(Param(pname, PARAMS[pname].bound, v))
    if "safety" in attrs and plain_volts and "v_ac" not in given:
        # A safety capacitor is marked with its AC rating (IEC 60384-14): "100n X2 275V"
        # means 275 V AC. Only "630VDC" written out stays a DC rating.
        params = [Param("v_ac", p.bound, p.value) if p.name == "v_rated" else p
                  for p in params]
    if tol is not None:
        params.append(Param("tol", Bound.MIN, tol[0]))
        params.append(Param("tol", Bound.MAX, tol[1]))
    return PartSpec(number=text.strip(), kind=kind, family=family, package=package,
                    pinout=pinout, description=description, attrs=attrs, params=params,
                    source=source)


#: The kind a value's unit implies (the inverse of VALUE_KINDS).
_UNIT_KIND = {u: k for k, u in VALUE_KINDS.items()}


def value_kind(text: str) -> Kind | None:
    """The kind a bare value implies: its unit (4.7kΩ, 22uF, 10uH, 10MHz), else the RKM
    letter (IEC 60062: R, K/k, M, G for resistance; p, n, u/µ for capacitance), else None."""
    from stock.quantities import parse_value

    words = text.split()
    if not words:
        return None
    first = words[0]
    try:
        v = parse_value(first, None)
    except (NotationError, ValueError):
        return None
    if v.unit in _UNIT_KIND:
        return _UNIT_KIND[v.unit]
    letters = {ch for ch in first if ch.isalpha()}
    if letters & set("pnuµμ"):
        return Kind.CAPACITOR
    if letters & set("RKkMG"):
        return Kind.RESISTOR
    return None
