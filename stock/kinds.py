"""Fixed choices of the domain, as named types: kinds, families, bounds, pin letters.

These are the words used everywhere: code, CLI, docs, files and output.
"""

from __future__ import annotations

from enum import StrEnum
from functools import lru_cache

from stock.errors import UnknownName


class Kind(StrEnum):
    """What sort of part a part type is."""

    BJT = "bjt"
    FET = "fet"
    DIODE = "diode"
    CAPACITOR = "capacitor"
    RESISTOR = "resistor"
    INDUCTOR = "inductor"
    CRYSTAL = "crystal"
    IC = "ic"
    OTHER = "other"


class Bound(StrEnum):
    """Which datasheet bound a parameter value is.

    ``min`` and ``max`` are guaranteed limits; ``typ`` is a typical value that nothing
    guarantees; ``nom`` is a nominal value (a resistor's 4k7, a crystal's frequency).
    """

    MIN = "min"
    TYP = "typ"
    MAX = "max"
    NOM = "nom"


#: The family of a part within its kind: polarity, channel, diode type, dielectric,
#: resistor technology. One indexed column in the store, so parametric searches can
#: filter on it first.
FAMILIES: dict[Kind, tuple[str, ...]] = {
    Kind.BJT: ("npn", "pnp"),
    Kind.FET: ("n-jfet", "p-jfet", "n-mosfet", "p-mosfet"),
    Kind.DIODE: ("signal", "schottky", "germanium", "rectifier", "zener", "varicap", "led"),
    Kind.CAPACITOR: (
        "c0g",  # class 1, 0 ± 30 ppm/°C (NP0 is the older name)
        "class1",  # other temperature-compensating class-1 codes (U2J, P3K ...)
        "x7r",
        "x5r",
        "x6s",
        "y5v",
        "z5u",
        "film",
        "mica",
        "electrolytic",
        "tantalum",
        "tantalum-polymer",
        "polymer",
        "trimmer",
        "variable",
    ),
    Kind.RESISTOR: (
        "carbon-film",
        "metal-film",
        "carbon-comp",
        "metal-oxide",
        "wirewound",
        "thick-film",
        "thin-film",
        "trimmer",
        "potentiometer",
    ),
    Kind.INDUCTOR: ("air", "ferrite", "iron-powder", "choke", "toroid", "molded"),
    Kind.CRYSTAL: ("fundamental", "overtone", "resonator"),
    Kind.IC: ("regulator", "opamp", "audio-amp", "comparator", "timer", "logic", "mixer", "other"),
    Kind.OTHER: (),
}

#: Spelling variants users type, folded to the family name above.
FAMILY_ALIASES: dict[str, str] = {
    "np0": "c0g",
    "cog": "c0g",
    "n-channel-jfet": "n-jfet",
    "njfet": "n-jfet",
    "pjfet": "p-jfet",
    "nmos": "n-mosfet",
    "pmos": "p-mosfet",
    "n-mos": "n-mosfet",
    "p-mos": "p-mosfet",
    "elko": "electrolytic",
    "electrolytic-aluminium": "electrolytic",
    "aluminium": "electrolytic",
    "aluminum": "electrolytic",
    "tant": "tantalum",
    "ge": "germanium",
    "si": "signal",
}

#: Capacitor dielectric classes (EIA-198): class 1 is temperature-compensating and
#: stable, class 2/3 trade stability for volume. See docs/rules.md.
CAPACITOR_CLASS: dict[str, int] = {
    "c0g": 1,
    "class1": 1,
    "mica": 1,  # silvered mica behaves as a stable class-1 dielectric (common practice)
    "x7r": 2,
    "x5r": 2,
    "x6s": 2,
    "y5v": 3,
    "z5u": 3,
}

#: Families whose parts are polarised (reversed they fail, sometimes violently).
POLARISED_FAMILIES = frozenset({"electrolytic", "tantalum", "tantalum-polymer", "polymer"})

#: Pin letters by kind, for the pin-order string (first letter = pin 1).
PIN_LETTERS: dict[Kind, str] = {
    Kind.BJT: "EBC",
    Kind.FET: "SGD",
    Kind.DIODE: "AK",
}


def parse_kind(text: str) -> Kind:
    """Read a kind name (case-insensitive); raise ValueError naming the choices."""
    key = text.strip().lower()
    aliases = {"transistor": "bjt", "mosfet": "fet", "jfet": "fet", "cap": "capacitor",
               "res": "resistor", "xtal": "crystal", "coil": "inductor"}
    key = aliases.get(key, key)
    try:
        return Kind(key)
    except ValueError:
        choices = ", ".join(k.value for k in Kind)
        raise UnknownName(f"unknown kind {text!r}; use one of: {choices}") from None


@lru_cache(maxsize=1024)
def normalise_family(kind: Kind, text: str | None) -> str | None:
    """Fold a family spelling (``NP0``, ``nmos``) to our name; ValueError if unknown."""
    if text is None or not text.strip():
        return None
    key = text.strip().lower().replace("_", "-").replace(" ", "-")
    key = FAMILY_ALIASES.get(key, key)
    allowed = FAMILIES[kind]
    if allowed and key not in allowed:
        raise UnknownName(
            f"unknown {kind.value} family {text!r}; use one of: {', '.join(allowed)}"
        )
    return key
