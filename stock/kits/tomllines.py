"""Where each key of a TOML document sits: a line index for error messages.

``tomllib`` parses TOML but forgets positions. Kit-file errors must name the line, so
this module scans the text once more and maps every key path — ``("slot", 2, "need",
1)`` for the second entry of ``need`` in the third ``[[slot]]`` — to its 1-based line.
It follows the TOML 1.0 grammar far enough for that (tables, arrays of tables, dotted
keys, inline tables, multi-line arrays and strings, comments); the document has
already been parsed by ``tomllib``, so it need not reject anything.
"""

from __future__ import annotations

import re

Path = tuple[str | int, ...]

_BARE = re.compile(r"[A-Za-z0-9_-]+")


def _read_key(s: str, i: int) -> tuple[list[str], int]:
    """A (dotted) key starting at ``s[i]``; returns its parts and the index after it."""
    parts: list[str] = []
    n = len(s)
    while True:
        while i < n and s[i] in " \t":
            i += 1
        if i < n and s[i] in "\"'":
            q = s[i]
            j = i + 1
            buf = []
            while j < n and s[j] != q:
                if q == '"' and s[j] == "\\" and j + 1 < n:
                    buf.append(s[j + 1])
                    j += 2
                    continue
                buf.append(s[j])
                j += 1
            parts.append("".join(buf))
            i = j + 1
        else:
            m = _BARE.match(s, i)
            if not m:
                return parts, i
            parts.append(m.group())
            i = m.end()
        while i < n and s[i] in " \t":
            i += 1
        if i < n and s[i] == ".":
            i += 1
            continue
        return parts, i


class _Scanner:
    """Walks a value (possibly spanning lines), recording where entries start."""

    def __init__(self, lines: list[str], index: dict[Path, int]) -> None:
        self.lines = lines
        self.index = index

    def value(self, row: int, col: int, path: Path) -> tuple[int, int]:
        """Scan the value at (row, col); record nested keys and items; return the end."""
        row, col = self._skip(row, col, newlines=False)
        if row >= len(self.lines):
            return row, col
        line = self.lines[row]
        ch = line[col] if col < len(line) else ""
        if ch == "[":
            return self._array(row, col + 1, path)
        if ch == "{":
            return self._inline(row, col + 1, path)
        if line.startswith('"""', col) or line.startswith("'''", col):
            return self._multiline_string(row, col + 3, line[col:col + 3])
        if ch in "\"'":
            return row, self._string_end(line, col + 1, ch)
        j = col
        while j < len(line) and line[j] not in ",]}#" and not line[j].isspace():
            j += 1
        # date-times may hold one space ("1979-05-27 07:32:00"); positions only matter
        return row, j

    def _skip(self, row: int, col: int, *, newlines: bool) -> tuple[int, int]:
        while row < len(self.lines):
            line = self.lines[row]
            while col < len(line) and line[col] in " \t":
                col += 1
            if col < len(line) and line[col] != "#":
                return row, col
            if not newlines:
                return row, col
            row, col = row + 1, 0
        return row, col

    @staticmethod
    def _string_end(line: str, j: int, q: str) -> int:
        while j < len(line):
            if q == '"' and line[j] == "\\":
                j += 2
                continue
            if line[j] == q:
                return j + 1
            j += 1
        return j

    def _multiline_string(self, row: int, col: int, q: str) -> tuple[int, int]:
        while row < len(self.lines):
            line = self.lines[row]
            j = col
            while j < len(line):
                if q == '"""' and line[j] == "\\":
                    j += 2
                    continue
                if line.startswith(q, j):
                    j += 3
                    while j < len(line) and line[j] == q[0]:  # up to two extra quotes
                        j += 1
                    return row, j
                j += 1
            row, col = row + 1, 0
        return row, 0

    def _array(self, row: int, col: int, path: Path) -> tuple[int, int]:
        item = 0
        while True:
            row, col = self._skip(row, col, newlines=True)
            if row >= len(self.lines):
                return row, col
            line = self.lines[row]
            if line[col] == "]":
                return row, col + 1
            if line[col] == ",":
                col += 1
                continue
            self.index.setdefault((*path, item), row + 1)
            row, col = self.value(row, col, (*path, item))
            item += 1

    def _inline(self, row: int, col: int, path: Path) -> tuple[int, int]:
        while True:
            row, col = self._skip(row, col, newlines=True)
            if row >= len(self.lines):
                return row, col
            line = self.lines[row]
            if line[col] == "}":
                return row, col + 1
            if line[col] == ",":
                col += 1
                continue
            keys, col = _read_key(line, col)
            if not keys:
                return row, len(line)
            here = (*path, *keys)
            for k in range(1, len(keys) + 1):
                self.index.setdefault((*path, *keys[:k]), row + 1)
            row, col = self._skip(row, col, newlines=False)
            if row < len(self.lines) and col < len(self.lines[row]) \
                    and self.lines[row][col] == "=":
                col += 1
            row, col = self.value(row, col, here)


def line_index(text: str) -> dict[Path, int]:
    """Map every key path (and array item) of the TOML ``text`` to its 1-based line.

    Arrays of tables get their item number: the third ``[[slot]]`` header is
    ``("slot", 2)``, its ``refs`` key ``("slot", 2, "refs")``.
    """
    lines = text.splitlines()
    index: dict[Path, int] = {}
    counts: dict[tuple[str, ...], int] = {}  # array-of-tables path → items seen
    scanner = _Scanner(lines, index)
    current: Path = ()
    row = 0

    def resolve(keys: list[str]) -> Path:
        out: list[str | int] = []
        plain: list[str] = []
        for k in keys:
            out.append(k)
            plain.append(k)
            n = counts.get(tuple(plain))
            if n is not None:
                out.append(n - 1)
        return tuple(out)

    while row < len(lines):
        line = lines[row]
        stripped = line.lstrip()
        col = len(line) - len(stripped)
        if not stripped or stripped.startswith("#"):
            row += 1
            continue
        if stripped.startswith("[["):
            keys, _ = _read_key(line, col + 2)
            counts[tuple(keys)] = counts.get(tuple(keys), 0) + 1
            current = resolve(keys)
            index.setdefault(current, row + 1)
            for k in range(1, len(current)):
                index.setdefault(current[:k], row + 1)
            row += 1
            continue
        if stripped.startswith("["):
            keys, _ = _read_key(line, col + 1)
            current = resolve(keys)
            for k in range(1, len(current) + 1):
                index.setdefault(current[:k], row + 1)
            row += 1
            continue
        keys, col = _read_key(line, col)
        if not keys:
            row += 1
            continue
        for k in range(1, len(keys) + 1):
            index.setdefault((*current, *keys[:k]), row + 1)
        while col < len(line) and line[col] in " \t=":
            col += 1
        end_row, _ = scanner.value(row, col, (*current, *keys))
        row = max(end_row, row) + 1
    return index


def line_of(index: dict[Path, int], path: Path) -> int | None:
    """The line of ``path``, or of its nearest enclosing key that has one."""
    p = tuple(path)
    while p:
        if p in index:
            return index[p]
        p = p[:-1]
    return None
