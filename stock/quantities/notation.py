"""Read and write values the way builders write them.

Reading (:func:`parse_value`) accepts SI notation (``4.7k``, ``4.7 kΩ``, ``0.1uF``,
``10.106 MHz``, ``2.2E-6``), the IEC 60062 RKM code (``4K7``, ``2R2``, ``R47``, ``4n7``,
``10M7``, ``4V7``), marking codes when the caller says what the part is (``104`` on a
capacitor, ``472``/``4701``/``01C`` on a resistor, ``101`` on an inductor), and a trailing
tolerance (``4K7J``, ``4.7k 1%``, ``100n ±10%``, ``2p2 ±0.25pF``). Writing
(:func:`render`) has four styles; see docs/notation.md for every rule.

Values are SI floats. A value is built from its decimal digits in one step
(``float("4.7e3")``), so text reads back to the very float its decimal means, and a value
rendered with all its digits reads back unchanged.
"""

from __future__ import annotations

import math
import re
from dataclasses import replace
from decimal import Decimal

from stock.errors import NotationError
from stock.kinds import Kind
from stock.quantities.codes import (
    cap_code_or_none,
    eia96_or_none,
    inductor_code_or_none,
    rkm_or_none,
    smd_or_none,
    tolerance_letter,
)
from stock.quantities.units import (
    KIND_UNITS,
    MICRO,
    NO_PREFIX,
    OHM,
    PREFIX_OUT,
    PREFIXES,
    UNIT_ALIASES,
    Value,
    canonical_unit,
    fail,
)

__all__ = ["parse_value", "parse_quantity", "parse_tol", "render", "render_tol", "STYLES"]

#: Rendering styles (see :func:`render`).
STYLES = ("builder", "si", "rkm", "plain", "compact")

#: A value whose shortest exact decimal has at most this many significant digits is
#: written with all of them (crystal frequencies such as 3.579545 MHz need seven);
#: longer ones (computed results) are rounded to ``digits``.
EXACT_DIGITS = 7

_MINUS = "\u2212"

# --- reading ----------------------------------------------------------------------------

_NUM_RE = re.compile(
    r"^(?P<sign>[+-]?)(?P<m>\d+\.?\d*|\.\d+)(?:[eE](?P<e>[+-]?\d+))?(?P<rest>.*)$"
)
_PCT = r"\d+(?:\.\d*)?"
# a trailing tolerance: "±5%", "± 0.5 %", "+80/-20%", "+80%/-20%", or " 5%" after a space
_TOL_RE = re.compile(
    r"^(?P<v>.*?\S)\s*(?P<t>±\s*" + _PCT + r"\s*%|\+\s*" + _PCT + r"\s*%?\s*/\s*-\s*"
    + _PCT + r"\s*%|-\s*" + _PCT + r"\s*%?\s*/\s*\+\s*" + _PCT + r"\s*%)$"
)
_BARE_PCT_RE = re.compile(r"^(?P<v>.*\S)\s+(?P<t>" + _PCT + r"\s*%)$")
_ABS_TOL_RE = re.compile(r"^(?P<v>.*?\S)\s*±\s*(?P<a>[^±%]+)$")


def _clean(text: str) -> str:
    t = text.strip().replace(_MINUS, "-").replace("\u00a0", " ").replace("\u202f", " ")
    return t.replace("+/-", "±").replace("+-", "±")


def _pct(num: str) -> float:
    # "4.7" % -> 0.047 from the decimal string, so 4.7 % is exactly float("0.047")
    return float(f"{num}e-2")


def parse_tol(text: str) -> tuple[float, float]:
    """Read a tolerance: ``±5%``, ``5%``, ``+80/-20%``, ``-20/+80%`` or an IEC 60062 letter
    (``J``). Returns (minus, plus) as signed fractions: ``(-0.05, 0.05)``."""
    t = _clean(text).replace(" ", "")
    if len(t) == 1 and t.isalpha():
        return tolerance_letter(t.upper(), None, 1.0)
    m = re.fullmatch(r"±?(" + _PCT + r")%", t)
    if m:
        f = _pct(m[1])
        return (-f, f)
    m = re.fullmatch(r"\+(" + _PCT + r")%?/-(" + _PCT + r")%", t)
    if m:
        return (-_pct(m[2]), _pct(m[1]))
    m = re.fullmatch(r"-(" + _PCT + r")%?/\+(" + _PCT + r")%", t)
    if m:
        return (-_pct(m[1]), _pct(m[2]))
    raise NotationError(
        f"cannot read {text!r} as a tolerance; write it like ±5%, 5%, +80/-20% or J"
    )


def _decimal_comma(t: str, raw: str, unit: str | None) -> str:
    """Accept ``4,7k`` as 4.7k when the comma is the only separator (see docs)."""
    if "," not in t:
        return t
    m = re.search(r"\d,(\d+)", t)
    if "." in t or t.count(",") > 1 or not m:
        raise fail(raw, unit, "a comma may only stand for the decimal point, as in 4,7k")
    if len(m[1]) == 3:
        raise fail(raw, unit, "a comma before three digits could be a thousands separator")
    return t.replace(",", ".")


def _unit_token(tok: str, unit: str | None, prefixed: bool) -> tuple[str, int] | None:
    """The (canonical unit, extra power of ten) a unit spelling means here, or None."""
    if tok in UNIT_ALIASES:
        return UNIT_ALIASES[tok]
    if tok == "C":
        # "C" after a number: °C where a temperature is expected, coulomb where a charge
        # is (or after a prefix: 8.3nC); otherwise it is ambiguous.
        if prefixed or unit == "C":
            return ("C", 0)
        if unit == "°C":
            return ("°C", 0)
    return None


def _si(t: str, unit: str | None, raw: str) -> Value:
    m = _NUM_RE.match(t)
    if not m:
        raise fail(raw, unit)
    rest = m["rest"].strip()
    exp = int(m["e"]) if m["e"] else 0
    found: str | None = None
    prefixed = False
    if rest == "C" and unit != "C" and unit != "°C":
        raise fail(raw, unit, "write °C for a temperature")
    if rest:
        got = _unit_token(rest, unit, False)
        if got is None:
            if rest[:3].lower() == "meg":  # SPICE's spelling of mega
                exp, prefixed, tail = exp + 6, True, rest[3:].strip()
            elif rest[0] in PREFIXES:
                exp, prefixed, tail = exp + PREFIXES[rest[0]], True, rest[1:].strip()
            else:
                raise fail(raw, unit, f"{rest!r} is not a unit or SI prefix")
            if tail:
                got = _unit_token(tail, unit, True)
                if got is None:
                    if tail == "C":
                        raise fail(raw, unit, "write °C for a temperature")
                    raise fail(raw, unit, f"{tail!r} is not a unit")
        if got is not None:
            found, scale = got
            exp += scale
    if prefixed and (found in NO_PREFIX or (found is None and unit in NO_PREFIX)):
        raise fail(raw, unit, f"{found or unit} takes no SI prefix")
    _check_unit(found, unit, raw)
    value = float(f"{m['sign']}{m['m']}e{exp}")
    return _finite(Value(value, found or unit, None, raw), m["m"], unit)


def _check_unit(found: str | None, unit: str | None, raw: str) -> None:
    if found is None or unit is None:
        return
    if found != unit:
        from stock.quantities.units import quantity_name

        raise fail(raw, unit, f"that is a {quantity_name(found)} ({found})")


def _finite(v: Value, mantissa: str, unit: str | None) -> Value:
    if not math.isfinite(v.value):
        raise fail(v.text, unit, "the number is too large")
    if v.value == 0 and mantissa.strip("0.") != "":
        raise fail(v.text, unit, "the number is too small")
    return v


def _codes(t: str, unit: str | None, kind: Kind | None, code: bool) -> Value | None:
    """Marking codes, only where the caller says the text may be one."""
    if (kind is Kind.CAPACITOR or code) and unit in (None, "F"):
        # 473J (no space) is a marking; "1 F" with a space is a value in farads.
        m = re.fullmatch(r"\d{1,3}([A-Z])?", t)
        if m and m[1] not in ("N", "P"):  # 100N, 10P: RKM (nF, pF), see docs
            return cap_code_or_none(t)
    if (kind is Kind.RESISTOR or code) and unit in (None, OHM):
        # 10R is RKM (10 Ω), not EIA-96 (1.24 Ω): write Y for EIA-96's ×0.01
        return eia96_or_none(t, allow_r=False) or smd_or_none(t)
    if (kind is Kind.INDUCTOR or code) and unit in (None, "H"):
        return inductor_code_or_none(t)
    return None


def parse_value(text: str, unit: str | None = None, *, kind: Kind | None = None,
                code: bool = False) -> Value:
    """Read a value as builders write it; see the module docstring and docs/notation.md.

    ``unit`` is the unit the caller expects ("Ω", "F", "H", "Hz", "V", "A", "W", "°C" …;
    "" for a plain number). A unit written in the text must agree with it; a bare number
    takes it. ``kind`` (or ``code=True``) also allows marking codes: the capacitor code on
    a capacitor, SMD and EIA-96 codes on a resistor, the µH code on an inductor; a bare
    ``104`` is otherwise the number 104. Raises NotationError naming the text.
    """
    if not isinstance(text, str):
        raise NotationError(f"cannot read {text!r} as a value: expected text such as 4k7")
    unit = canonical_unit(unit)
    if unit is None and kind is not None:
        unit = KIND_UNITS.get(kind)
    t = _clean(text)
    if not t:
        raise fail(text, unit, "it is empty")
    tol: tuple[float, float] | None = None
    absolute: str | None = None
    m = _TOL_RE.match(t) or _BARE_PCT_RE.match(t)
    if m:
        t, tol = m["v"].strip(), parse_tol(m["t"])
    else:
        m = _ABS_TOL_RE.match(t)
        if m:
            t, absolute = m["v"].strip(), m["a"].strip()
    t = _decimal_comma(t, text, unit)
    v = _codes(t, unit, kind, code) or rkm_or_none(t, unit) or _si(t, unit, text)
    if not math.isfinite(v.value):
        raise fail(text, unit, "the number is too large")
    if absolute is not None:
        a = parse_value(absolute, v.unit)
        if v.value == 0:
            raise fail(text, unit, "an absolute tolerance needs a non-zero value")
        frac = abs(a.value / v.value)
        tol = (-frac, frac)
    if tol is not None and v.tol is not None:
        raise fail(text, unit, "it gives two tolerances")
    return replace(v, tol=tol if tol is not None else v.tol, text=text)


def parse_quantity(text: str, unit: str | None = None, **kw: object) -> float:
    """``parse_value(text, unit, **kw).value``: the SI float alone."""
    return parse_value(text, unit, **kw).value  # type: ignore[arg-type]


# --- writing ----------------------------------------------------------------------------

def _sig(v: float, digits: int) -> tuple[str, int]:
    """Significant digits of |v| (no trailing zeros) and the power of ten of the first.

    Exact (shortest round-trip) digits when there are at most max(EXACT_DIGITS, digits),
    else rounded to ``digits``.
    """
    v = abs(v)
    if v == 0:
        return "0", 0
    d = Decimal(repr(v))
    _, ds, e = d.as_tuple()
    s = "".join(map(str, ds)).lstrip("0")
    first = int(e) + len(ds) - 1
    s = s.rstrip("0") or "0"
    if len(s) > max(EXACT_DIGITS, digits):
        rounded = f"{v:.{max(digits, 1) - 1}e}"
        if math.isfinite(float(rounded)):  # near the float limit rounding up would overflow
            mant, ex = rounded.split("e")
            s, first = mant.replace(".", "").rstrip("0") or "0", int(ex)
    return s, first


def _place(s: str, first: int, p: int) -> tuple[str, str]:
    """Integer and fraction digits of s·10**(first-len(s)+1) / 10**p."""
    k = first - p + 1
    if k <= 0:
        return "", "0" * (-k) + s
    if k >= len(s):
        return s + "0" * (k - len(s)), ""
    return s[:k], s[k:]


def _dec(s: str, first: int, p: int) -> str:
    i, f = _place(s, first, p)
    return (i or "0") + ("." + f if f else "")


def _sci(s: str, first: int) -> str:
    return s[0] + ("." + s[1:] if len(s) > 1 else "") + f"e{first}"


def _eng(v: float, digits: int, micro: str = MICRO) -> tuple[str, str] | None:
    """Engineering form: (number, prefix); None when out of the f … T prefix range."""
    s, first = _sig(v, digits)
    if s == "0":
        return "0", ""
    p = 3 * math.floor(first / 3)
    if p < -15 or p > 12:
        return None
    pre = PREFIX_OUT[p]
    return _dec(s, first, p), (micro if pre == MICRO else pre)


def _sign(v: float) -> str:
    return "-" if v < 0 else ""


def _plain_number(v: float, digits: int) -> str:
    s, first = _sig(v, digits)
    if s == "0":
        return "0"
    if -6 <= first <= 15:
        return _sign(v) + _dec(s, first, 0)
    return _sign(v) + _sci(s, first)


def _with_unit(v: float, unit: str | None, digits: int, sep: str, micro: str = MICRO) -> str:
    """SI notation: number, prefix and unit (``4.7 kΩ``; ``-55 °C``; ``13 V/µs``)."""
    if unit == "V/s":
        # datasheets give slew rate in V/µs: shift the decimal point exactly
        s, first = _sig(v, digits)
        return _sign(v) + (_dec(s, first - 6, 0) if s != "0" else "0") + sep + "V/" + micro + "s"
    if unit in NO_PREFIX:
        return _plain_number(v, digits) + sep + unit
    if not unit:
        return _plain_number(v, digits) if unit == "" else _prefixed(v, digits, micro)
    eng = _eng(v, digits, micro)
    if eng is None:
        s, first = _sig(v, digits)
        return _sign(v) + _sci(s, first) + sep + unit
    num, pre = eng
    return _sign(v) + num + sep + pre + unit


def _prefixed(v: float, digits: int, micro: str) -> str:
    eng = _eng(v, digits, micro)
    if eng is None:
        s, first = _sig(v, digits)
        return _sign(v) + _sci(s, first)
    return _sign(v) + eng[0] + eng[1]


#: RKM letter per power of ten, by unit and style.
_RKM_OUT: dict[str, dict[int, str]] = {
    OHM: {0: "R", 3: "K", 6: "M", 9: "G", 12: "T"},
    "F": {-12: "p", -9: "n", -6: MICRO, -3: "m", 0: "F"},
    "H": {-9: "n", -6: MICRO, -3: "m"},
    "V": {0: "V"},
}


def _rkm(v: float, unit: str, digits: int, *, builder: bool) -> str | None:
    """The RKM form, or None when the value is outside what the code covers."""
    s, first = _sig(v, digits)
    letters = dict(_RKM_OUT[unit])
    if builder and unit == OHM:
        letters[3] = "k"  # builders write 4k7
    if s == "0":
        return "0R" if unit == OHM else None
    lo, hi = min(letters), max(letters)
    p = 3 * math.floor(first / 3)
    if unit == OHM and p < 0:
        p = 0  # R47, 0R047 — no milliohm letter in common use
        if first < -4:
            return None
    elif unit == "F" and builder and p == -3:
        if first >= -1:
            return None  # 0.1 F and up (supercapacitors): SI reads better
        p = -6  # builders write 2200µ, not 2m2
    elif unit == "V" and p != 0:
        if first < -3 or first > 2:
            return None
        p = 0
    if p < lo:
        if first < lo - 3:
            return None
        p = lo
    if p > hi:
        return None
    if builder and unit == "F" and p == 0:
        return None  # a farad and up: write it in SI
    i, f = _place(s, first, p)
    if builder or unit == "V":
        i = i or "0"
    return _sign(v) + i + letters[p] + f


def render(value: float, unit: str | None = None, *, style: str = "builder",
           digits: int = 3) -> str:
    """Write an SI value for people.

    Styles (docs/notation.md has the full rules):

    * ``builder`` — resistors and capacitors as builders mark them: ``4k7``, ``470R``,
      ``0R47``, ``100n``, ``4n7``, ``2µ2``, ``2200µ``, ``0p68``; inductors ``4.7µH``;
      anything else in SI with a space: ``10.106 MHz``, ``625 mW``, ``-55 °C``.
    * ``si`` — ``4.7 kΩ``, ``100 nF``, ``2.2 µH``.
    * ``compact`` — SI without the space: ``4.7kΩ``, ``300MHz`` (the parameter syntax).
    * ``rkm`` — IEC 60062 letters: ``4K7``, ``R47``, ``2R2``, ``100n``, ``p68``, ``2µ2``,
      ``4V7``; units the code does not cover are written as ``si``.
    * ``plain`` — ASCII number with an SI prefix and no unit: ``4.7k``, ``2.2u``.

    A value whose exact decimal has up to seven significant digits keeps them all
    (3.579545 MHz); longer ones are rounded to ``digits`` significant digits.
    """
    if not isinstance(value, (int, float)) or not math.isfinite(value):
        raise NotationError(f"cannot render {value!r}: the value must be a finite number")
    value = float(value)
    unit = canonical_unit(unit)
    if style == "plain":
        if unit in NO_PREFIX:
            return _plain_number(value, digits)
        return _prefixed(value, digits, "u")
    if style == "si":
        return _with_unit(value, unit, digits, " ")
    if style == "compact":
        return _with_unit(value, unit, digits, "")
    if style == "rkm":
        if unit in _RKM_OUT:
            out = _rkm(value, unit, digits, builder=False)
            if out is not None:
                return out
        return _with_unit(value, unit, digits, " ")
    if style == "builder":
        if unit in (OHM, "F"):
            out = _rkm(value, unit, digits, builder=True)
            if out is not None:
                return out
        if unit == "H":
            return _with_unit(value, unit, digits, "")
        return _with_unit(value, unit, digits, " ")
    raise NotationError(f"unknown render style {style!r}; use one of {', '.join(STYLES)}")


def _pct_text(f: float) -> str:
    s, first = _sig(f, 17)
    return "0" if s == "0" else _dec(s, first + 2, 0)


def render_tol(tol: tuple[float, float] | None) -> str:
    """Write a tolerance: ``±5 %``, ``+80/−20 %``; ``""`` for None."""
    if tol is None:
        return ""
    minus, plus = tol
    if minus == -plus:
        return f"±{_pct_text(plus)} %"

    def signed(f: float, default: str) -> str:
        sign = "+" if f > 0 else _MINUS if f < 0 else default
        return sign + _pct_text(f)

    return f"{signed(plus, '+')}/{signed(minus, _MINUS)} %"
