"""Units, SI prefixes and the parsed-value record shared by the notation modules.

Canonical unit symbols are the ones :mod:`stock.params` uses: ``Ω`` (U+03A9), ``F``,
``H``, ``Hz``, ``V``, ``A``, ``W``, ``°C``, ``s``, ``S``, ``C``, ``dB``, ``°C/W``,
``ppm/°C``, ``V/s``; ``""`` is a plain number (hFE). Spelling variants users type are
folded to these here, and nowhere else.
"""

from __future__ import annotations

from dataclasses import dataclass

from stock.errors import NotationError
from stock.kinds import Kind

OHM = "\u03a9"  # Ω U+03A9 GREEK CAPITAL OMEGA, the symbol stock.params uses
MICRO = "\u00b5"  # µ U+00B5 MICRO SIGN: what we write; U+03BC and "u" are read too


@dataclass(frozen=True)
class Value:
    """A value read from builders' notation.

    ``value`` is SI (ohm, farad, henry, hertz, volt, ampere, watt, second; °C for
    temperatures). ``unit`` is the canonical unit symbol found in the text or implied by
    the caller, or None. ``tol`` is (minus, plus) as signed fractions, e.g.
    ``(-0.05, 0.05)`` for ±5 %, or None when the text gives none. ``text`` is what the
    user typed.
    """

    value: float
    unit: str | None
    tol: tuple[float, float] | None
    text: str


#: SI prefixes we read, as powers of ten. "K" is read as kilo (builders write 4K7 and
#: 10K); "M" is always mega and "m" always milli (SI); "u", "µ" (U+00B5) and "μ" (U+03BC)
#: are all micro. Peta/exa are left out so that "P" and "E" cannot be misread.
PREFIXES: dict[str, int] = {
    "f": -15, "p": -12, "n": -9, "u": -6, "µ": -6, "μ": -6, "m": -3,
    "k": 3, "K": 3, "M": 6, "G": 9, "T": 12,
}

#: The prefixes we write, by power of ten.
PREFIX_OUT: dict[int, str] = {-15: "f", -12: "p", -9: "n", -6: MICRO, -3: "m", 0: "",
                              3: "k", 6: "M", 9: "G", 12: "T"}

#: Spellings of each unit, folded to the canonical symbol, with a scale factor as a power
#: of ten (V/µs is how datasheets give slew rate; we store V/s).
UNIT_ALIASES: dict[str, tuple[str, int]] = {
    "\u03a9": (OHM, 0), "\u2126": (OHM, 0), "ohm": (OHM, 0), "ohms": (OHM, 0), "Ohm": (OHM, 0),
    "Ohms": (OHM, 0), "R": (OHM, 0),
    "F": ("F", 0), "farad": ("F", 0),
    "H": ("H", 0), "henry": ("H", 0),
    "Hz": ("Hz", 0), "hz": ("Hz", 0), "HZ": ("Hz", 0),
    "V": ("V", 0), "volt": ("V", 0), "volts": ("V", 0),
    "A": ("A", 0), "amp": ("A", 0), "amps": ("A", 0),
    "W": ("W", 0), "watt": ("W", 0), "watts": ("W", 0),
    "°C": ("°C", 0), "℃": ("°C", 0), "degC": ("°C", 0), "deg C": ("°C", 0),
    "s": ("s", 0), "sec": ("s", 0),
    "S": ("S", 0),
    "dB": ("dB", 0),
    "°C/W": ("°C/W", 0), "K/W": ("°C/W", 0), "degC/W": ("°C/W", 0),
    "ppm/°C": ("ppm/°C", 0), "ppm/K": ("ppm/°C", 0), "ppm/degC": ("ppm/°C", 0),
    "ppm": ("ppm/°C", 0),
    "V/s": ("V/s", 0), "V/µs": ("V/s", 6), "V/μs": ("V/s", 6), "V/us": ("V/s", 6),
}

#: Units that never take an SI prefix: a "k" before them is a mistake, not kilo.
NO_PREFIX = frozenset({"°C", "dB", "°C/W", "ppm/°C"})

#: What each unit measures, for error messages.
QUANTITY_NAMES: dict[str, str] = {
    OHM: "resistance", "F": "capacitance", "H": "inductance", "Hz": "frequency",
    "V": "voltage", "A": "current", "W": "power", "°C": "temperature", "s": "time",
    "S": "conductance", "C": "charge", "dB": "level in dB", "°C/W": "thermal resistance",
    "ppm/°C": "temperature coefficient", "V/s": "slew rate", "": "plain number",
}

#: Example spellings shown in error messages, per expected unit.
EXAMPLES: dict[str | None, str] = {
    OHM: "4k7, 4.7k, 4.7 kΩ or 4K7J",
    "F": "100n, 100 nF, 0.1uF or 4n7",
    "H": "22uH, 4.7 µH or 4µ7",
    "Hz": "10.106 MHz, 455k or 32768 Hz",
    "V": "12V, 3.3 V or 4V7",
    "A": "150mA, 0.15 A or 2.5 mA",
    "W": "625mW or 0.625 W",
    "°C": "25 °C, -55degC or 125C",
    "s": "4 ns or 2.5 ms",
    "S": "12 mS",
    "C": "8.3 nC",
    "dB": "3 dB",
    "°C/W": "200 °C/W",
    "ppm/°C": "30 ppm/°C or -750ppm/K",
    "V/s": "13 V/µs",
    "": "100, 2.5 or 1e3",
    None: "4.7k, 100n, 1e3 or 2.5 mA",
}

#: The unit a kind's value is in, used when the caller gives a kind but no unit.
KIND_UNITS: dict[Kind, str] = {
    Kind.RESISTOR: OHM, Kind.CAPACITOR: "F", Kind.INDUCTOR: "H", Kind.CRYSTAL: "Hz",
}


def quantity_name(unit: str | None) -> str:
    """'resistance' for Ω, ...; a generic word for anything else."""
    if unit is None:
        return "value"
    return QUANTITY_NAMES.get(unit, f"value in {unit}")


def fail(text: str, unit: str | None, why: str = "") -> NotationError:
    """The one-line error for ``text`` that cannot be read as a ``unit`` value."""
    forms = EXAMPLES.get(unit, EXAMPLES[None])
    article = "an" if quantity_name(unit)[0] in "aeiou" else "a"
    reason = f" ({why})" if why else ""
    return NotationError(
        f"cannot read {text!r} as {article} {quantity_name(unit)}{reason}; "
        f"write it like {forms}"
    )


def canonical_unit(unit: str | None) -> str | None:
    """Fold a caller's unit spelling to the canonical symbol (``ohm`` -> ``Ω``)."""
    if unit is None or unit == "":
        return unit
    if unit in UNIT_ALIASES:
        return UNIT_ALIASES[unit][0]
    if unit == "C" or unit in QUANTITY_NAMES:
        return unit
    return unit
