"""The reference catalog: datasheet limits of common parts, and templates of passive families.

The catalog is plain CSV in ``stock/catalog/data/`` (format in ``docs/catalog.md``), plus an
optional file of the user's own in the config folder (``catalog.csv``) whose rows extend or
override the shipped ones. Nothing is read at import time; :func:`load_catalog` parses the
files on first use and caches the result.

Every parameter value that comes from here carries ``Origin.CATALOG``; a row's ``source``
names the datasheet or registration it comes from, or says ``from memory``.

Voltages and currents of PNP and P-channel parts, negative regulators and JFET cut-off
voltages are stored as magnitudes (``vceo=40V`` for a −40 V PNP), so that one comparison
serves both polarities.
"""

from __future__ import annotations

import csv
import re
from collections.abc import Callable, Iterable, Iterator, Sequence
from dataclasses import dataclass, field, replace
from enum import StrEnum
from pathlib import Path
from typing import TYPE_CHECKING

from stock.errors import ImportFileError, StockError, UnknownPart
from stock.kinds import FAMILIES, FAMILY_ALIASES, PIN_LETTERS, Bound, Kind, normalise_family
from stock.params import PARAMS, VALUE_PARAMS
from stock.parts import Origin, Param, PartSpec, Stocked, part_key

if TYPE_CHECKING:
    from stock.paramtext import Criterion

#: The columns of a catalog file, in order; ``attrs`` is optional.
COLUMNS: tuple[str, ...] = (
    "number", "kind", "family", "package", "pinout", "pin_variants", "description", "params",
    "source", "confidence",
)
OPTIONAL_COLUMNS: tuple[str, ...] = ("attrs",)

#: The source text of a row nobody has checked against a document.
FROM_MEMORY = "from memory"

#: Where the shipped catalog files live (read in name order).
DATA_DIR = Path(__file__).with_name("data")

#: The file name of the user's own catalog in the config folder.
USER_FILE_NAME = "catalog.csv"


class Confidence(StrEnum):
    """How far a catalog row has been checked."""

    DATASHEET = "datasheet"  # confirmed in the named document (facts.md [C] or [D])
    FROM_MEMORY = "from-memory"  # remembered, not confirmed here: check before relying on it


#: Pin letters beyond :data:`stock.kinds.PIN_LETTERS`: three-terminal regulators are
#: I(nput), G(round/common), O(utput), A(djust).
EXTRA_PIN_LETTERS: dict[Kind, str] = {Kind.IC: "IGOA"}

#: The parameter holding a passive part's value. A passive row without it is a
#: *template*: the family-and-rating figures that a value of that family fills in.
VALUE_PARAM = VALUE_PARAMS


def is_template(spec: PartSpec) -> bool:
    """True for a passive family row (``C0G-50V``, ``CF-0.25W``) that carries no value."""
    name = VALUE_PARAM.get(spec.kind)
    return name is not None and not spec.values(name)


@dataclass
class _Entry:
    spec: PartSpec
    order: int  # position in the files, to keep file order among equals


@dataclass
class Catalog:
    """Parts by number; parametric search; passive templates."""

    _entries: dict[str, _Entry] = field(default_factory=dict)

    @classmethod
    def of(cls, parts: Iterable[PartSpec]) -> Catalog:
        """A catalog of ``parts``; a later part with the same number replaces an earlier one."""
        cat = cls()
        for spec in parts:
            cat._put(spec)
        return cat

    def _put(self, spec: PartSpec) -> None:
        key = part_key(spec.number)
        old = self._entries.get(key)
        self._entries[key] = _Entry(spec, old.order if old else len(self._entries))

    # --- lookup ------------------------------------------------------------------------
    def get(self, number: str) -> PartSpec | None:
        """A copy of the row for ``number`` (case and spacing folded), or None."""
        e = self._entries.get(part_key(number))
        return None if e is None else _copy(e.spec)

    def __contains__(self, number: object) -> bool:
        return isinstance(number, str) and part_key(number) in self._entries

    def __iter__(self) -> Iterator[PartSpec]:
        """Copies of every row, in file order (user rows that override keep the place)."""
        for e in sorted(self._entries.values(), key=lambda e: e.order):
            yield _copy(e.spec)

    def __len__(self) -> int:
        return len(self._entries)

    def source(self, number: str) -> str:
        """Where the row for ``number`` comes from; UnknownPart if it is not in the catalog."""
        e = self._entries.get(part_key(number))
        if e is None:
            raise UnknownPart(f"{number!r} is not in the catalog; list it with 'stock catalog'")
        return e.spec.source or FROM_MEMORY

    def variants(self, number: str) -> list[str]:
        """Other pin orders seen under ``number`` (``["CBE"]``); [] when none or unknown."""
        e = self._entries.get(part_key(number))
        if e is None:
            return []
        text = e.spec.attrs.get("pin_variants", "")
        return [v for v in text.split("|") if v]

    # --- search ------------------------------------------------------------------------
    def search(self, kind: Kind | None = None, family: str | None = None,
               criteria: Sequence[Criterion] = (), *, typical: bool = False,
               templates: bool = False) -> list[PartSpec]:
        """Rows of ``kind`` and ``family`` that meet every criterion, by kind, family, number.

        A ``>=`` criterion holds against :meth:`PartSpec.low`, ``<=`` against
        :meth:`PartSpec.high`, i.e. against guaranteed limits (a rating, a min, a max); a
        typical value counts only when ``typical`` is True. ``=`` on a number matches the
        nominal value, or lies within the row's min..max; on text (family, package, pinout)
        it is a case-blind comparison. Templates are left out unless ``templates`` is True.
        """
        fam = normalise_family(kind, family) if (kind is not None and family) else (
            _fold_family(family) if family else None)
        out = []
        for e in self._entries.values():
            s = e.spec
            if kind is not None and s.kind != kind:
                continue
            if fam is not None and s.family != fam:
                continue
            if not templates and is_template(s):
                continue
            if all(_meets(s, c, typical) for c in criteria):
                out.append(e)
        out.sort(key=lambda e: (e.spec.kind.value, e.spec.family or "", _natural(e.spec.number)))
        return [_copy(e.spec) for e in out]

    # --- templates -----------------------------------------------------------------------
    def templates(self, kind: Kind | None = None, family: str | None = None) -> list[PartSpec]:
        """The passive templates of ``kind`` and ``family``, in file order."""
        fam = normalise_family(kind, family) if (kind is not None and family) else (
            _fold_family(family) if family else None)
        # indexed once per catalog: an import asks this for every row of a stock list
        index = self.__dict__.get("_template_index")
        if index is None:
            index = {None: [e.spec for e in sorted(self._entries.values(), key=lambda e: e.order)
                            if is_template(e.spec)]}
            for t in index[None]:
                index.setdefault((t.kind, t.family), []).append(t)
            self.__dict__["_template_index"] = index
        if kind is not None and fam is not None:
            return [_copy(t) for t in index.get((kind, fam), [])]
        return [_copy(t) for t in index[None]
                if (kind is None or t.kind == kind) and (fam is None or t.family == fam)]

    def template(self, kind: Kind, family: str | None, hint: str = "") -> PartSpec | None:
        """The figures a passive of ``kind``/``family`` takes from its template, or None.

        ``hint`` is what the builder wrote (``"100n 63V"``, ``"4k7 1/4W"``, ``"22u 25V 105C"``,
        ``"10M HC-49/S"``). Words matching a template's number or package come first; then
        the lowest-rated template that meets every rating written (failing that, the
        highest-rated one). A rating written in the hint then replaces the template's own,
        so the result claims exactly what the builder wrote: ``100n 63V`` of x7r gets the
        X7R figures with v_rated = 63 V, not the 100 V of the template they come from.
        Without a rating the lowest-rated template is taken: the conservative choice. A
        safety-class template (``X2-275VAC``) is used only when the hint names its class.
        """
        found = self.templates(kind, family)
        if not found:  # most kinds have no templates: answer before reading the hint
            return None
        want = _read_hint(hint)
        # a safety class (X2, Y2) is a claim about the part: only when the builder names it
        cands = [t for t in found
                 if not t.attrs.get("safety") or t.attrs["safety"].upper() in want.words]
        if not cands:
            return None

        def rank(t: PartSpec) -> tuple[object, ...]:
            text = f"{t.number} {t.package or ''}".upper()
            score = sum(1 for w in want.words if w in text)
            rating = (_first(t, "v_rated", "v_ac", "p_rated"), _first(t, "tmax"))
            if _rating_ok(t, want):
                return (-score, 0, rating)
            return (-score, 1, tuple(-x for x in rating))

        return _apply_hint(min(cands, key=rank), want)

    # --- candidates to buy -------------------------------------------------------------------
    def to_buy(self, kind: Kind | None = None, family: str | None = None,
               exclude: Iterable[str] = ()) -> list[Stocked]:
        """Catalog parts of ``kind``/``family`` as candidates that would have to be bought.

        Each is ``Stocked(part, free=0, to_buy=True)``; numbers in ``exclude`` (the ones in
        the drawers) and templates are left out. The fit engine checks them like any other.
        """
        skip = {part_key(n) for n in exclude}
        return [Stocked(s, free=0, to_buy=True) for s in self.search(kind, family)
                if part_key(s.number) not in skip]


# --- criteria ----------------------------------------------------------------------------
_TEXT_FIELDS = ("family", "package", "pinout", "kind", "number")
_REL = 1e-9  # float noise allowance when comparing parsed SI values


def _meets(spec: PartSpec, crit: Criterion, typical: bool) -> bool:
    name, op, value = crit.param, str(crit.op), crit.value
    if name in _TEXT_FIELDS or isinstance(value, str):
        have = getattr(spec, name, None) if name in _TEXT_FIELDS else spec.attrs.get(name)
        if have is None:
            return False
        want = str(value).strip().lower()
        have = str(have).strip().lower()
        if name == "family":
            try:
                want = normalise_family(spec.kind, want) or want
            except ValueError:
                return False
        return op == "=" and have == want
    v = float(value)
    tol = abs(v) * _REL
    if op == ">=":
        g = spec.low(name)
        return g is not None and (g.guaranteed or typical) and g.value >= v - tol
    if op == "<=":
        g = spec.high(name)
        return g is not None and (g.guaranteed or typical) and g.value <= v + tol
    nom = spec.nominal(name)
    if nom is not None:
        return abs(nom - v) <= max(tol, abs(nom) * 1e-6)
    lo, hi = spec.get(name, Bound.MIN), spec.get(name, Bound.MAX)
    return lo is not None and hi is not None and lo.value - tol <= v <= hi.value + tol


# --- template hints ------------------------------------------------------------------------
@dataclass
class _Hint:
    volts: float | None = None
    ac: bool = False
    watts: float | None = None
    celsius: float | None = None
    words: list[str] = field(default_factory=list)


_NUM = r"(\d+(?:[.,]\d+)?)"
_HINT_V = re.compile(_NUM + r"\s*V(AC|DC)?$", re.I)
_HINT_W = re.compile(r"(?:(\d+)/(\d+)|" + _NUM + r")\s*W$", re.I)
_HINT_T = re.compile(_NUM + r"\s*°?C$")


def _read_hint(text: str) -> _Hint:
    """Pick ratings and words out of what the builder wrote (never raises)."""
    h = _Hint()
    for tok in re.split(r"[\s,;]+", text.strip()):
        if not tok:
            continue
        if m := _HINT_V.match(tok):
            h.volts, h.ac = float(m.group(1).replace(",", ".")), (m.group(2) or "").upper() == "AC"
        elif m := _HINT_W.match(tok):
            h.watts = (int(m.group(1)) / int(m.group(2)) if m.group(1)
                       else float(m.group(3).replace(",", ".")))
        elif m := _HINT_T.match(tok):
            h.celsius = float(m.group(1).replace(",", "."))
        elif len(tok) > 1:
            h.words.append(tok.upper())
    return h


def _rating_ok(t: PartSpec, want: _Hint) -> bool:
    if want.volts is not None:
        have = _first(t, "v_ac") if want.ac else _first(t, "v_rated", "v_ac")
        if have < want.volts * (1 - _REL):
            return False
    if want.watts is not None and _first(t, "p_rated") < want.watts * (1 - _REL):
        return False
    return not (want.celsius is not None and _first(t, "tmax") < want.celsius)


def _apply_hint(t: PartSpec, want: _Hint) -> PartSpec:
    """``t`` with the ratings the builder wrote in place of the template's own."""
    new: list[Param] = []

    def put(name: str, value: float | None) -> None:
        p = t.get(name)
        if value is not None and p is not None:
            new.append(Param(name, p.bound, value, p.at, Origin.CATALOG))

    if want.ac or t.get("v_rated") is None:
        put("v_ac", want.volts)
    else:
        put("v_rated", want.volts)
    put("p_rated", want.watts)
    put("tmax", want.celsius)
    return t.with_params(new) if new else t


def _first(spec: PartSpec, *names: str) -> float:
    """The first of ``names`` the spec has (its rating), or -inf when none."""
    for n in names:
        p = spec.get(n)
        if p is not None:
            return p.value
    return float("-inf")


def _fold_family(text: str) -> str:
    """A family spelling folded without knowing the kind (``NP0`` -> ``c0g``)."""
    key = text.strip().lower().replace("_", "-").replace(" ", "-")
    return FAMILY_ALIASES.get(key, key)


def _natural(number: str) -> tuple[object, ...]:
    """Sort key that puts 2N918 before 2N2222 (digits compare as numbers)."""
    return tuple(int(t) if t.isdigit() else t for t in re.split(r"(\d+)", part_key(number)))


def _copy(spec: PartSpec) -> PartSpec:
    return replace(spec, attrs=dict(spec.attrs), params=list(spec.params))


# --- reading files -----------------------------------------------------------------------
def _pin_letters(kind: Kind) -> str:
    return PIN_LETTERS.get(kind, "") + EXTRA_PIN_LETTERS.get(kind, "")


def _parse_attrs(text: str) -> dict[str, str]:
    out = {}
    for item in text.split(";"):
        if not item.strip():
            continue
        key, sep, val = item.partition("=")
        if not sep or not key.strip():
            raise ValueError(f"attribute {item.strip()!r} is not key=value")
        out[key.strip().lower()] = val.strip()
    return out


def read_catalog_file(path: Path) -> list[PartSpec]:
    """The rows of one catalog file, validated; ImportFileError names file, row and column.

    Row numbers count the header as row 1, as a spreadsheet shows them.
    """
    from stock.paramtext import parse_param

    # Many rows share expressions (tj=150°C, pd=625mW@ta=25°C): read each text once per file.
    memo: dict[tuple[str, Kind], list[Param]] = {}

    def read_params(text: str, kind: Kind) -> list[Param]:
        out: list[Param] = []
        for piece in text.split(";"):
            piece = piece.strip()
            if not piece:
                continue
            got = memo.get((piece, kind))
            if got is None:
                got = [Param(p.name, p.bound, p.value, p.at, Origin.CATALOG)
                       for p in parse_param(piece, kind)]
                memo[(piece, kind)] = got
            out.extend(got)
        return out

    name = str(path)
    try:
        fh = path.open(encoding="utf-8-sig", newline="")
    except OSError as exc:
        raise ImportFileError(f"cannot read the catalog file: {exc.strerror}", file=name) from None
    parts: list[PartSpec] = []
    seen: dict[str, int] = {}
    with fh:
        reader = csv.reader(fh)
        try:
            header = [h.strip().lower() for h in next(reader)]
        except StopIteration:
            raise ImportFileError("the file is empty; the first row must name the columns "
                                  + ",".join(COLUMNS), file=name, row=1) from None
        except UnicodeDecodeError:
            raise ImportFileError("the file is not UTF-8 text; save it as CSV UTF-8",
                                  file=name) from None
        if tuple(header[:len(COLUMNS)]) != COLUMNS or any(
                h not in OPTIONAL_COLUMNS for h in header[len(COLUMNS):]):
            raise ImportFileError("the header must be " + ",".join(COLUMNS)
                                  + " (optionally followed by attrs)", file=name, row=1)
        try:
            for rec in reader:
                rowno = reader.line_num
                if not any(c.strip() for c in rec):
                    continue
                if len(rec) > len(header):
                    raise ImportFileError(f"{len(rec)} cells where the header has {len(header)}; "
                                          "quote cells that contain commas", file=name, row=rowno)
                cells = dict(zip(header, (c.strip() for c in rec), strict=False))
                spec = _read_row(cells, read_params, name, rowno)
                key = part_key(spec.number)
                if key in seen:
                    raise ImportFileError(f"{spec.number} is listed twice (also row {seen[key]}); "
                                          "keep one row per number", file=name, row=rowno,
                                          column="number")
                seen[key] = rowno
                parts.append(spec)
        except UnicodeDecodeError:
            raise ImportFileError("the file is not UTF-8 text; save it as CSV UTF-8",
                                  file=name) from None
        except csv.Error as exc:
            raise ImportFileError(f"malformed CSV: {exc}", file=name, row=reader.line_num) from None
    return parts


def _read_row(cells: dict[str, str], read_params: Callable[[str, Kind], list[Param]],
              file: str, rowno: int) -> PartSpec:
    def bad(column: str, message: str) -> ImportFileError:
        return ImportFileError(message, file=file, row=rowno, column=column)

    number = cells.get("number", "")
    if not number:
        raise bad("number", "the part number is empty")
    try:
        kind = Kind(cells.get("kind", "").lower())
    except ValueError:
        raise bad("kind", f"unknown kind {cells.get('kind')!r}; use one of: "
                  + ", ".join(k.value for k in Kind)) from None
    try:
        family = normalise_family(kind, cells.get("family"))
    except ValueError as exc:
        raise bad("family", str(exc)) from None
    if family is None and FAMILIES[kind]:
        raise bad("family", f"a {kind.value} needs a family: one of {', '.join(FAMILIES[kind])}")
    pinout = cells.get("pinout", "").upper()
    letters = _pin_letters(kind)
    if pinout and (not letters or any(c not in letters for c in pinout)
                   or len(set(pinout)) != len(pinout)):
        raise bad("pinout", f"pin order {pinout!r} must use each of the letters "
                  f"{letters or '(none for this kind)'} at most once, pin 1 first")
    variants = [v.strip().upper() for v in cells.get("pin_variants", "").split("|") if v.strip()]
    for v in variants:
        if not pinout or sorted(v) != sorted(pinout) or v == pinout:
            raise bad("pin_variants", f"variant {v!r} must be another order of the pin letters "
                      f"{pinout or '(give the pinout first)'}; separate variants with |")
    source = cells.get("source", "")
    if not source:
        raise bad("source", f"say where the figures come from (a datasheet) or write "
                  f"{FROM_MEMORY!r}")
    try:
        confidence = Confidence(cells.get("confidence", "").lower())
    except ValueError:
        raise bad("confidence", "confidence must be " + " or ".join(c.value for c in Confidence)
                  ) from None
    if source.lower() == FROM_MEMORY and confidence is not Confidence.FROM_MEMORY:
        raise bad("confidence", f"a row whose source is {FROM_MEMORY!r} has confidence "
                  f"{Confidence.FROM_MEMORY.value}")
    text = cells.get("params", "")
    if not text:
        raise bad("params", "no parameters; write them like vceo=40V; ic=600mA")
    try:
        params = read_params(text, kind)
    except (StockError, ValueError) as exc:
        raise bad("params", str(exc)) from None
    lows: dict[tuple[str, tuple[tuple[str, float], ...]], float] = {}
    for p in params:
        pdef = PARAMS.get(p.name)
        if pdef is None or not pdef.applies_to(kind):
            raise bad("params", f"{p.name} is not a parameter of a {kind.value}")
        if p.bound == Bound.MIN:
            lows[(p.name, tuple(sorted(p.at.items())))] = p.value
    for p in params:
        lo = lows.get((p.name, tuple(sorted(p.at.items()))))
        # a min above its max is a slip such as 24..60mA (read as 24 A .. 60 mA)
        if p.bound == Bound.MAX and lo is not None and lo > p.value:
            raise bad("params", f"{p.name}: the minimum is above the maximum; write the unit on "
                      "both ends of a range, as 24mA..60mA")
    try:
        attrs = _parse_attrs(cells.get("attrs", ""))
    except ValueError as exc:
        raise bad("attrs", f"{exc}; write attributes like safety=X2") from None
    attrs["confidence"] = confidence.value
    if variants:
        attrs["pin_variants"] = "|".join(variants)
    return PartSpec(
        number=number, kind=kind, family=family, package=cells.get("package") or None,
        pinout=pinout or None, description=cells.get("description", ""), attrs=attrs,
        params=params,
        source=source,
    )


def format_rows(parts: Iterable[PartSpec]) -> str:
    """``parts`` as catalog CSV text (header included), ready to edit into a user catalog."""
    import io

    from stock.paramtext import render_params

    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow((*COLUMNS, *OPTIONAL_COLUMNS))
    for s in parts:
        extra = {k: v for k, v in s.attrs.items() if k not in ("confidence", "pin_variants")}
        w.writerow((s.number, s.kind.value, s.family or "", s.package or "", s.pinout or "",
                    s.attrs.get("pin_variants", ""), s.description, render_params(s.params),
                    s.source or FROM_MEMORY,
                    s.attrs.get("confidence", Confidence.FROM_MEMORY.value),
                    "; ".join(f"{k}={v}" for k, v in extra.items())))
    return buf.getvalue()


# --- loading with a cache -----------------------------------------------------------------
_shipped: list[PartSpec] | None = None
_cache: dict[tuple[str, int, int] | None, Catalog] = {}


def shipped_files() -> list[Path]:
    """The catalog files that ship with stock, in the order they are read."""
    return sorted(DATA_DIR.glob("*.csv"))


def user_catalog_path() -> Path:
    """Where the user's own catalog file is looked for."""
    from stock.config import config_dir

    return config_dir() / USER_FILE_NAME


def _shipped_parts() -> list[PartSpec]:
    global _shipped
    if _shipped is None:
        parts: list[PartSpec] = []
        where: dict[str, Path] = {}
        for path in shipped_files():
            for spec in read_catalog_file(path):
                key = part_key(spec.number)
                if key in where:
                    raise ImportFileError(f"{spec.number} is also in {where[key].name}; keep "
                                          "one row per number", file=str(path), column="number")
                where[key] = path
                parts.append(spec)
        _shipped = parts
    return _shipped


def load_catalog(user_file: Path | None = None) -> Catalog:
    """The shipped catalog plus the user's file (its rows win), parsed once and cached.

    Without ``user_file`` the user's ``catalog.csv`` in the config folder is used when it
    exists. A changed user file is read again.
    """
    path = user_file if user_file is not None else user_catalog_path()
    key: tuple[str, int, int] | None = None
    if user_file is not None or path.exists():
        try:
            st = path.stat()
        except OSError:
            raise ImportFileError("the catalog file does not exist; check the path",
                                  file=str(path)) from None
        key = (str(path.resolve()), st.st_mtime_ns, st.st_size)
    cat = _cache.get(key)
    if cat is None:
        parts = list(_shipped_parts())
        if key is not None:
            parts += read_catalog_file(path)
        cat = Catalog.of(parts)
        _cache[key] = cat
    return cat


def clear_cache() -> None:
    """Forget every parsed catalog (after the shipped files change, in tests)."""
    global _shipped
    _shipped = None
    _cache.clear()


__all__ = [
    "COLUMNS", "Catalog", "Confidence", "FROM_MEMORY", "VALUE_PARAM", "clear_cache",
    "format_rows", "is_template", "load_catalog", "read_catalog_file", "shipped_files",
    "user_catalog_path",
]
