"""IEC 60063 preferred-number series (E series) and lookups in them.

``SERIES`` holds the decade values (1.0 ≤ v < 10) of E3 … E192 as published in IEC 60063
(value lists: facts.md §1.1). E3 … E24 are two-figure series and keep eight historical
values that the formula ``10**(i/24)`` would not give (2.7 3.0 3.3 3.6 3.9 4.3 4.7 8.2,
facts.md §1.2); E48 … E192 are three-figure series equal to ``round(100·10**(i/n))/100``,
except E192's 9.20 where the formula gives 9.19 (facts.md §1.2).

All lookups work on any decade. Two values count as equal when they agree to 1 part in
10**9, so a computed 4700.000000000001 Ω is the E12 member 4k7.
"""

from __future__ import annotations

import math

from stock.errors import NotationError, suggest

SERIES: dict[str, tuple[float, ...]] = {
    "E3": (1.0, 2.2, 4.7),
    "E6": (1.0, 1.5, 2.2, 3.3, 4.7, 6.8),
    "E12": (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2),
    "E24": (
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
        3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    ),
    "E48": (
        1.00, 1.05, 1.10, 1.15, 1.21, 1.27, 1.33, 1.40, 1.47, 1.54, 1.62, 1.69, 1.78, 1.87,
        1.96, 2.05, 2.15, 2.26, 2.37, 2.49, 2.61, 2.74, 2.87, 3.01, 3.16, 3.32, 3.48, 3.65,
        3.83, 4.02, 4.22, 4.42, 4.64, 4.87, 5.11, 5.36, 5.62, 5.90, 6.19, 6.49, 6.81, 7.15,
        7.50, 7.87, 8.25, 8.66, 9.09, 9.53
    ),
    "E96": (
        1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30, 1.33, 1.37,
        1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74, 1.78, 1.82, 1.87, 1.91,
        1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32, 2.37, 2.43, 2.49, 2.55, 2.61, 2.67,
        2.74, 2.80, 2.87, 2.94, 3.01, 3.09, 3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74,
        3.83, 3.92, 4.02, 4.12, 4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23,
        5.36, 5.49, 5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
        7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76
    ),
    "E192": (
        1.00, 1.01, 1.02, 1.04, 1.05, 1.06, 1.07, 1.09, 1.10, 1.11, 1.13, 1.14, 1.15, 1.17,
        1.18, 1.20, 1.21, 1.23, 1.24, 1.26, 1.27, 1.29, 1.30, 1.32, 1.33, 1.35, 1.37, 1.38,
        1.40, 1.42, 1.43, 1.45, 1.47, 1.49, 1.50, 1.52, 1.54, 1.56, 1.58, 1.60, 1.62, 1.64,
        1.65, 1.67, 1.69, 1.72, 1.74, 1.76, 1.78, 1.80, 1.82, 1.84, 1.87, 1.89, 1.91, 1.93,
        1.96, 1.98, 2.00, 2.03, 2.05, 2.08, 2.10, 2.13, 2.15, 2.18, 2.21, 2.23, 2.26, 2.29,
        2.32, 2.34, 2.37, 2.40, 2.43, 2.46, 2.49, 2.52, 2.55, 2.58, 2.61, 2.64, 2.67, 2.71,
        2.74, 2.77, 2.80, 2.84, 2.87, 2.91, 2.94, 2.98, 3.01, 3.05, 3.09, 3.12, 3.16, 3.20,
        3.24, 3.28, 3.32, 3.36, 3.40, 3.44, 3.48, 3.52, 3.57, 3.61, 3.65, 3.70, 3.74, 3.79,
        3.83, 3.88, 3.92, 3.97, 4.02, 4.07, 4.12, 4.17, 4.22, 4.27, 4.32, 4.37, 4.42, 4.48,
        4.53, 4.59, 4.64, 4.70, 4.75, 4.81, 4.87, 4.93, 4.99, 5.05, 5.11, 5.17, 5.23, 5.30,
        5.36, 5.42, 5.49, 5.56, 5.62, 5.69, 5.76, 5.83, 5.90, 5.97, 6.04, 6.12, 6.19, 6.26,
        6.34, 6.42, 6.49, 6.57, 6.65, 6.73, 6.81, 6.90, 6.98, 7.06, 7.15, 7.23, 7.32, 7.41,
        7.50, 7.59, 7.68, 7.77, 7.87, 7.96, 8.06, 8.16, 8.25, 8.35, 8.45, 8.56, 8.66, 8.76,
        8.87, 8.98, 9.09, 9.20, 9.31, 9.42, 9.53, 9.65, 9.76, 9.88
    ),
}

#: Relative difference below which two values are the same member.
_REL = 1e-9
#: Tolerance usually associated with each series (facts.md §1.1).
TOLERANCES: dict[str, float] = {
    "E3": 0.40, "E6": 0.20, "E12": 0.10, "E24": 0.05, "E48": 0.02, "E96": 0.01, "E192": 0.005,
}


def _key(series: str) -> str:
    key = str(series).strip().upper()
    if key not in SERIES:
        raise NotationError(
            f"unknown E series {series!r}{suggest(key, list(SERIES))}; "
            f"use one of {', '.join(SERIES)}"
        )
    return key


def decade(series: str) -> tuple[float, ...]:
    """The decade values (1.0 … <10) of ``series`` ("E12", "e24" …)."""
    return SERIES[_key(series)]


def _member(m: float, exp: int) -> float:
    # decimal string -> float in one step, so 4.7 × 10**3 is exactly 4700.0
    return float(f"{m!r}e{exp}")


def _positive(value: float, what: str) -> None:
    if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
        raise NotationError(
            f"cannot look up {value!r} in an E series: {what} must be a positive, finite value"
        )


def _around(value: float, series: str) -> list[float]:
    """Members of the decades around ``value``, ascending (three decades)."""
    exp = math.floor(math.log10(value))
    return [_member(m, e) for e in (exp - 1, exp, exp + 1) for m in SERIES[series]]


def _same(a: float, b: float) -> bool:
    return abs(a - b) <= _REL * max(abs(a), abs(b))


def nearest(value: float, series: str) -> float:
    """The member of ``series`` nearest ``value`` on a log scale (min |log(member/value)|).

    A value exactly midway (geometric mean of two members) goes up to the larger one, so a
    part chosen this way errs towards the larger value (a tie-break of our own choosing;
    facts.md §1.2 calls it common practice). 16 834 Ω -> E24 16 kΩ, E96 16.9 kΩ.
    """
    key = _key(series)
    _positive(value, "the value")
    best, best_d = 0.0, math.inf
    for c in _around(value, key):
        d = abs(math.log(c / value))
        if d < best_d - 1e-12 or (abs(d - best_d) <= 1e-12 and c > best):
            best, best_d = c, d
    return best


def next_up(value: float, series: str) -> float:
    """The smallest member of ``series`` strictly greater than ``value``."""
    key = _key(series)
    _positive(value, "the value")
    return next(c for c in _around(value, key) if c > value and not _same(c, value))


def next_down(value: float, series: str) -> float:
    """The largest member of ``series`` strictly less than ``value``."""
    key = _key(series)
    _positive(value, "the value")
    return next(c for c in reversed(_around(value, key)) if c < value and not _same(c, value))


def series_of(value: float) -> list[str]:
    """The series that contain ``value`` in any decade, coarsest first (4700 -> E3, E6,
    E12, E24, E192). Empty for a value in none of them or not positive."""
    if not (isinstance(value, (int, float)) and math.isfinite(value) and value > 0):
        return []
    return [key for key in SERIES if any(_same(c, value) for c in _around(value, key))]


def values_between(lo: float, hi: float, series: str) -> list[float]:
    """Every member of ``series`` from ``lo`` to ``hi`` inclusive, ascending."""
    key = _key(series)
    _positive(lo, "the low end")
    _positive(hi, "the high end")
    if hi < lo:
        return []
    first, last = math.floor(math.log10(lo)) - 1, math.floor(math.log10(hi)) + 1
    if last - first > 40:
        raise NotationError(
            f"range {lo!r} to {hi!r} spans more than 40 decades; give a narrower range"
        )
    out = []
    for e in range(first, last + 1):
        for m in SERIES[key]:
            c = _member(m, e)
            if (c >= lo or _same(c, lo)) and (c <= hi or _same(c, hi)):
                out.append(c)
    return out
