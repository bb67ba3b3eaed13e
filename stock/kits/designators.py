"""Reference designators: read lists and ranges (``R3-R6, R9``), write them back short.

A reference designator is a class letter group and a number (IEEE 315 / ASME Y14.44
reference designations: ``R`` resistor, ``C`` capacitor, ``Q`` transistor …), with an
optional unit suffix letter as schematic editors give gate sections (``U1A``). Lists
are separated by commas, semicolons or spaces; a range joins two designators of the
same letters with ``-``, ``–`` or ``..`` (``R3-R6``; the short ``R3-6`` too).
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from stock.errors import NotationError

#: Longest range one designator pair may span. Kits rarely number past a few hundred;
#: a longer range is almost always a typo (``R1-R1000`` for ``R1-R10``). Common practice.
MAX_RANGE = 1000

_REF = re.compile(r"([A-Za-z][A-Za-z_]*)(\d+)([A-Za-z]?)\Z")
_RANGE = re.compile(r"\s*(?:\.\.|-|–|—)\s*")
_SPLIT = re.compile(r"[,;\s]+")


def _parse_ref(token: str, whole: str) -> tuple[str, int, str, str]:
    """(letters, number, suffix, digits as written) of one designator."""
    m = _REF.match(token)
    if not m:
        raise NotationError(
            f"{token!r} in {whole!r} is not a reference designator; write letters then a "
            "number, e.g. R3 or U1A")
    letters, digits, suffix = m.groups()
    return letters.upper(), int(digits), suffix.upper(), digits


def _text(letters: str, number: int, suffix: str = "") -> str:
    return f"{letters}{number}{suffix}"


def expand(text: str) -> list[str]:
    """Every designator in ``text``, in the order written; ranges filled in.

    ``"R3-R6, R9"`` → ``[R3, R4, R5, R6, R9]``; ``"C2,C7"``; ``"Q1 Q2"``. Letters are
    folded to upper case. Raises :class:`NotationError` naming the bad piece for a
    token that is no designator, a reversed or mixed-letter range, or a repeat.
    """
    whole = text.strip()
    if not whole:
        return []
    # Join "R3 - R6" into one token before splitting on spaces.
    joined = _RANGE.sub("-", whole.replace("..", "-"))
    out: list[str] = []
    seen: set[str] = set()
    for token in _SPLIT.split(joined):
        if not token:
            continue
        if "-" in token:
            ends = token.split("-")
            if len(ends) != 2 or not ends[0] or not ends[1]:
                raise NotationError(
                    f"{token!r} in {whole!r} is not a range; write first-last, e.g. R3-R6")
            a_letters, a_num, a_suf, a_dig = _parse_ref(ends[0], whole)
            if ends[1].isdigit():  # "R3-6"
                b_letters, b_num, b_suf = a_letters, int(ends[1]), ""
            else:
                b_letters, b_num, b_suf, _ = _parse_ref(ends[1], whole)
            if a_letters != b_letters or a_suf or b_suf:
                raise NotationError(
                    f"range {token!r} in {whole!r} mixes designators; a range joins the "
                    "same letters, e.g. R3-R6")
            if b_num < a_num:
                raise NotationError(
                    f"range {token!r} in {whole!r} runs backwards; write it low to high")
            if b_num - a_num >= MAX_RANGE:
                raise NotationError(
                    f"range {token!r} in {whole!r} spans {b_num - a_num + 1} designators; "
                    f"split it (at most {MAX_RANGE}) or check for a typo")
            width = len(a_dig) if a_dig.startswith("0") else 0  # keep R01-R03 as written
            refs = [f"{a_letters}{n:0{width}d}" for n in range(a_num, b_num + 1)]
        else:
            letters, num, suf, digits = _parse_ref(token, whole)
            refs = [f"{letters}{digits}{suf}"]
        for ref in refs:
            if ref in seen:
                raise NotationError(
                    f"{ref} appears twice in {whole!r}; list each designator once")
            seen.add(ref)
            out.append(ref)
    return out


def sort_key(ref: str) -> tuple[str, int, str, str]:
    """Natural order: letters, then number, then suffix (R2 before R10)."""
    m = _REF.match(ref)
    if not m:
        return (ref.upper(), -1, "", ref)
    letters, digits, suffix = m.groups()
    return (letters.upper(), int(digits), suffix.upper(), digits)


def compress(refs: Sequence[str]) -> str:
    """The short form of a designator list, for output: ``"R3-R6, R9"``.

    Designators are put in natural order and duplicates dropped; runs of three or more
    consecutive numbers become ranges (two stay a pair: ``R1, R2``). The inverse of
    :func:`expand` up to order: ``expand(compress(x)) == sorted(set(x), key=sort_key)``.
    """
    items = sorted({r.strip().upper() for r in refs if r.strip()}, key=sort_key)
    parts: list[str] = []
    run: list[tuple[str, int]] = []  # consecutive plain refs (no suffix, no leading 0)

    def flush() -> None:
        if len(run) >= 3:
            parts.append(f"{_text(run[0][0], run[0][1])}-{_text(run[-1][0], run[-1][1])}")
        else:
            parts.extend(_text(letters, n) for letters, n in run)
        run.clear()

    for ref in items:
        m = _REF.match(ref)
        if m is None or m.group(3) or str(int(m.group(2))) != m.group(2):
            flush()
            parts.append(ref)
            continue
        letters, n = m.group(1).upper(), int(m.group(2))
        if run and (run[-1][0] != letters or run[-1][1] + 1 != n):
            flush()
        run.append((letters, n))
    flush()
    return ", ".join(parts)


def prefix(ref: str) -> str:
    """The class letters of a designator (``"R"`` for ``R12``, ``"FB"`` for ``FB3``)."""
    m = _REF.match(ref.strip())
    return m.group(1).upper() if m else ""
