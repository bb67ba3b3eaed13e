"""Formula-injection escaping of text cells, and the matching unescape on reading.

OWASP "CSV Injection" guidance: a cell that begins with ``=``, ``+``, ``-``, ``@``, tab (0x09) or
carriage return (0x0D) may be run as a formula when a spreadsheet opens the file; prefix such a cell
with a single quote (apostrophe) so it is shown as text. Text that begins with any white space is
prefixed too, because some spreadsheets trim it before deciding (`` =1+1``).

Round trip: the reader strips white space around every cell, then drops one leading apostrophe and
keeps what follows it exactly. So the writer also prefixes text that begins with an apostrophe or
with white space, and the original text comes back exactly, except for trailing white space.
"""

from __future__ import annotations

#: Leading characters a spreadsheet may treat as the start of a formula (OWASP CSV Injection).
FORMULA_TRIGGERS = ("=", "+", "-", "@", "\t", "\r")

APOSTROPHE = "'"

_CSV_PREFIXED = frozenset("".join(FORMULA_TRIGGERS) + APOSTROPHE)


def needs_csv_escape(text: str) -> bool:
    """True when ``text`` must be written with a leading apostrophe in a CSV file."""
    return bool(text) and (text[0] in _CSV_PREFIXED or text[0].isspace())


def escape_csv(text: str) -> str:
    """Return ``text`` as it is written to a CSV cell (apostrophe-prefixed when needed)."""
    return APOSTROPHE + text if needs_csv_escape(text) else text


def escape_xlsx(text: str) -> str:
    """Return ``text`` as it is written to an XLSX string cell.

    A string cell is never evaluated as a formula, so only text beginning with an apostrophe or
    white space needs the prefix (to keep the reader's round trip exact).
    """
    return APOSTROPHE + text if text and (text[0] == APOSTROPHE or text[0].isspace()) else text
