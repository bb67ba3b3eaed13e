"""IEC 60062 marking codes: RKM letter-and-digit code, tolerance letters, the three-digit
capacitor code, SMD resistor codes and EIA-96.

Each parser takes the marking as printed and returns a :class:`Value` in SI units
(ohm, farad, henry), raising :class:`~stock.errors.NotationError` when the text is not
that kind of marking. Values are built from the decimal digits in one step
(``float("47e-12")``) so that a marking reads back to the exact float its decimal means.
"""

from __future__ import annotations

import re

from stock.errors import NotationError
from stock.quantities.units import NO_PREFIX, OHM, UNIT_ALIASES, Value, fail, quantity_name

#: IEC 60062 tolerance letters as (minus, plus) fractions. Source: IEC 60062 / EIA tolerance
#: code list (facts.md §2.2). N (±30 %) is from memory. P is left out on purpose: it means
#: +100/−0 % on capacitors but ±0.02 % on resistors (IEC 60062:2016), so the caller's context
#: decides (see :func:`tolerance_letter`).
TOLERANCE_LETTERS: dict[str, tuple[float, float]] = {
    "A": (-0.0005, 0.0005),
    "B": (-0.001, 0.001),
    "C": (-0.0025, 0.0025),
    "D": (-0.005, 0.005),
    "F": (-0.01, 0.01),
    "G": (-0.02, 0.02),
    "J": (-0.05, 0.05),
    "K": (-0.10, 0.10),
    "M": (-0.20, 0.20),
    "N": (-0.30, 0.30),  # from memory (facts.md §2.2 [M])
    "Z": (-0.20, 0.80),  # capacitors, +80/−20 %: Murata radial MLCC part numbering
}

#: On a capacitor below 10 pF these letters are absolute tolerances in farads, not
#: percentages (IEC 60062; AVX/Kyocera C0G datasheet; facts.md §2.2 "test trap").
PF_TOLERANCE_LETTERS: dict[str, float] = {
    "B": 0.1e-12, "C": 0.25e-12, "D": 0.5e-12, "F": 1e-12, "G": 2e-12,
}

#: "P": capacitors +100/−0 % (signalpro.biz, secondary); resistors ±0.02 % (IEC 60062:2016,
#: from memory).
P_TOLERANCE: dict[str, tuple[float, float]] = {"F": (0.0, 1.0), OHM: (-0.0002, 0.0002)}


def tolerance_letter(letter: str, unit: str | None, nominal: float) -> tuple[float, float]:
    """The (minus, plus) fractions an IEC 60062 letter means for a value in ``unit``."""
    if unit == "F" and letter in PF_TOLERANCE_LETTERS and 0 < abs(nominal) < 10e-12:
        frac = PF_TOLERANCE_LETTERS[letter] / abs(nominal)
        return (-frac, frac)
    if letter == "P" and unit in P_TOLERANCE:
        return P_TOLERANCE[unit]
    if letter in TOLERANCE_LETTERS:
        return TOLERANCE_LETTERS[letter]
    raise NotationError(
        f"unknown tolerance letter {letter!r}; use one of "
        f"{', '.join(TOLERANCE_LETTERS)} (IEC 60062), e.g. 4K7J for ±5 %"
    )


def _num(mantissa: str, exp: int) -> float:
    """The float that decimal ``mantissa`` × 10**exp means, correctly rounded once."""
    return float(f"{mantissa}e{exp}")


# --- RKM (IEC 60062 letter-and-digit code) -------------------------------------------

#: Letters that replace the decimal point, with their power of ten and the unit they
#: imply (None = a bare SI prefix, any unit). IEC 60062: R K M G (T) for resistance, L for
#: milliohm; p n µ m F for capacitance. Builders also write k, u, upper-case P N U, V for
#: volts on zeners (4V7) and, for inductors, R for a decimal point in microhenry
#: (4R7 = 4.7 µH: common practice, facts.md §2.1).
RKM_LETTERS: dict[str, tuple[int, str | None]] = {
    "R": (0, OHM), "r": (0, OHM), "L": (-3, OHM),
    "K": (3, None), "k": (3, None), "M": (6, None), "G": (9, None), "T": (12, None),
    "p": (-12, None), "P": (-12, None), "n": (-9, None), "N": (-9, None),
    "u": (-6, None), "U": (-6, None), "µ": (-6, None), "μ": (-6, None), "m": (-3, None),
    "F": (0, "F"), "V": (0, "V"),
}
_RESISTANCE_LETTERS = frozenset("RrLKkMGT")

_RKM_RE = re.compile(
    r"^(?P<sign>[+-]?)(?P<a>\d*)(?P<l>[" + "".join(RKM_LETTERS) + r"])(?P<b>\d*)(?P<rest>.*)$"
)


def rkm_or_none(text: str, unit: str | None) -> Value | None:
    """Read an RKM form (4K7, 2R2, R47, 4n7, 10M7, 4V7, 4K7J, 4k7 ohm), or None if the text
    is not one. ``unit`` is the unit the caller expects (or None)."""
    m = _RKM_RE.match(text.strip())
    if not m or not (m["a"] or m["b"]):
        return None
    letter, rest = m["l"], m["rest"].strip()
    exp, implied = RKM_LETTERS[letter]
    if letter in "Rr" and unit == "H":
        exp, implied = -6, "H"  # inductor marking: R is the decimal point in µH
    written: str | None = None
    tol_letter: str | None = None
    if rest:
        if (len(rest) == 1 and rest in TOLERANCE_LETTERS and letter in _RESISTANCE_LETTERS
                and unit in (None, OHM)):
            tol_letter = rest  # 4K7F: F is ±1 %, not farad
        elif rest in UNIT_ALIASES:
            written, scale = UNIT_ALIASES[rest]
            if scale:
                return None
        elif rest == "C" and unit in ("°C", "C"):
            written = unit
        elif len(rest) == 1 and (rest in TOLERANCE_LETTERS or rest == "P"):
            tol_letter = rest
        elif len(rest) == 1 and rest.isupper():
            raise fail(text, unit, f"{rest} is not an IEC 60062 tolerance letter "
                                   f"({', '.join(TOLERANCE_LETTERS)})")
        else:
            return None
    if letter in "Rr" and written == "H" and unit is None:
        exp, implied = -6, "H"
    found = written or implied
    if implied and written and implied != written:
        raise fail(text, unit, f"the letter {letter} means {implied}, not {written}")
    if unit is not None and found and found != unit:
        raise fail(text, unit, f"that is a {quantity_name(found)} ({found})")
    final = found or unit
    if exp and final in NO_PREFIX:
        raise fail(text, unit, f"{final} takes no SI prefix")
    value = _num(f"{m['sign']}{m['a'] or '0'}.{m['b'] or '0'}", exp)
    tol = tolerance_letter(tol_letter, final, value) if tol_letter else None
    return Value(value, final, tol, text)


def parse_rkm(text: str, unit: str | None = None) -> Value:
    """Read an IEC 60062 RKM marking: ``4K7``, ``2R2``, ``R47``, ``4n7``, ``2µ2``, ``15M0``,
    ``4K7J`` (±5 %). ``unit`` is the expected unit (Ω, F, H, V ...) or None."""
    v = rkm_or_none(text, unit)
    if v is None:
        raise fail(text, unit, "not an RKM code such as 4K7, 2R2, R47, 4n7")
    return v


# --- three-digit capacitor code (value in pF) ----------------------------------------

_CAP_RE = re.compile(r"^(?P<d>\d{1,3})\s*(?P<t>[A-Z])?$")


def cap_code_or_none(text: str) -> Value | None:
    """Read a capacitor code, or None if the text does not look like one."""
    m = _CAP_RE.match(text.strip())
    if not m:
        return None
    d = m["d"]
    if len(d) <= 2:
        value = _num(d, -12)  # one or two digits: pF as written (facts.md §2.4)
    else:
        mult = int(d[2])
        # third digit: 0–6 is the power of ten, 8 is ×0.01 and 9 is ×0.1 (facts.md §2.4)
        power = {8: -2, 9: -1}.get(mult, mult)
        if mult == 7:
            raise NotationError(
                f"cannot read {text!r} as a capacitor code: a third digit of 7 is not used; "
                "write it like 104, 471, 229 or 473J"
            )
        value = _num(d[:2], power - 12)
    tol = tolerance_letter(m["t"], "F", value) if m["t"] else None
    return Value(value, "F", tol, text)


def parse_cap_code(text: str) -> Value:
    """Read the three-digit capacitor code, value in pF: ``104`` = 100 nF, ``471`` = 470 pF,
    ``229`` = 2.2 pF, ``108`` = 0.1 pF, ``47`` = 47 pF, ``473J`` = 47 nF ±5 %."""
    v = cap_code_or_none(text)
    if v is None:
        raise NotationError(
            f"cannot read {text!r} as a capacitor code; write it like 104, 471, 229 or 473J"
        )
    return v


# --- SMD resistor codes ---------------------------------------------------------------

_SMD_RE = re.compile(r"^\d{3,4}$")


def smd_or_none(text: str) -> Value | None:
    """Read a 3- or 4-digit SMD resistor code (472, 4701), or None."""
    t = text.strip()
    if not _SMD_RE.match(t):
        return None
    # last digit is the power of ten; the others are significant (facts.md §2.5)
    return Value(_num(t[:-1], int(t[-1])), OHM, None, text)


def parse_smd_resistor(text: str) -> Value:
    """Read an SMD resistor marking: 3-digit ``472`` = 4.7 kΩ, ``220`` = 22 Ω; 4-digit
    ``4701`` = 4.70 kΩ; with R as the decimal point ``4R7``, ``12R0``."""
    v = smd_or_none(text)
    if v is None and "R" in text.upper():
        v = rkm_or_none(text, OHM)
    if v is None:
        raise NotationError(
            f"cannot read {text!r} as an SMD resistor code; write it like 472, 4701, 4R7 or 01C"
        )
    return v


# --- EIA-96 ---------------------------------------------------------------------------

#: EIA-96 multiplier letters as powers of ten (facts.md §2.5).
EIA96_LETTERS: dict[str, int] = {
    "Z": -3, "Y": -2, "R": -2, "X": -1, "S": -1, "A": 0, "B": 1, "H": 1,
    "C": 2, "D": 3, "E": 4, "F": 5,
}
_EIA96_RE = re.compile(r"^(?P<n>\d\d)(?P<l>[" + "".join(EIA96_LETTERS) + r"])$")


def eia96_or_none(text: str, *, allow_r: bool = True) -> Value | None:
    """Read an EIA-96 code (01C), or None. ``allow_r=False`` leaves ``10R`` to RKM."""
    m = _EIA96_RE.match(text.strip().upper())
    if not m or (m["l"] == "R" and not allow_r):
        return None
    from stock.quantities.eseries import SERIES

    n = int(m["n"])
    if not 1 <= n <= 96:
        raise NotationError(
            f"cannot read {text!r} as an EIA-96 code: the number must be 01 to 96; "
            "write it like 01C, 68X or 66B"
        )
    # the two digits index the E96 list (01 -> 100); the letter multiplies (facts.md §2.5)
    digits = f"{SERIES['E96'][n - 1]:.2f}".replace(".", "")
    return Value(_num(digits, EIA96_LETTERS[m["l"]]), OHM, None, text)


def parse_eia96(text: str) -> Value:
    """Read an EIA-96 marking: ``01C`` = 10.0 kΩ, ``68X`` = 49.9 Ω, ``66B`` = 4.75 kΩ."""
    v = eia96_or_none(text)
    if v is None:
        raise NotationError(
            f"cannot read {text!r} as an EIA-96 code; write two digits and a letter "
            f"({', '.join(EIA96_LETTERS)}), like 01C, 68X or 66B"
        )
    return v


# --- inductor code (value in µH) --------------------------------------------------------

def inductor_code_or_none(text: str) -> Value | None:
    """Read a 3-digit inductor code in µH (``101`` = 100 µH, ``470`` = 47 µH), or None.

    Common practice on moulded and SMD inductors: like the capacitor code, but in µH.
    """
    t = text.strip()
    if not re.fullmatch(r"\d{3}", t):
        return None
    return Value(_num(t[:2], int(t[2]) - 6), "H", None, text)
