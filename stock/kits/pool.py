"""Candidates for the slots of a kit check, picked from a light index of the store.

A large store holds tens of thousands of parts of one kind; the fit engine cannot judge
every one of them for every slot of a kit while a builder waits, and the plan's solver
slows down with every link. So for each slot the pool

1. **screens**: drops parts whose rating surely misses a hard bound of the slot
   (:func:`stock.fit.screen`: VCEO, IC, VRRM …, and a required family), and for a
   resistor, capacitor or inductor slot parts whose value lies outside the slot's value
   window. A part that lacks the parameter stays (an unknown is a warning, not a failure);
2. **orders** what is left: the called-for part (or, for a value slot, parts of the same
   value and family) first; then, for a value slot, the nearest value; otherwise the part
   least over-qualified on the screened ratings, which is also what the fit ranking
   prefers (keep the better parts for where they are needed); more free stock first on ties;
3. **keeps** the first ones until they are at least :data:`LEAST` parts and their free
   stock covers :data:`COVER` × the slot's need — at most :data:`MOST` parts.

Only the kept parts are loaded in full and judged by the fit engine; every one of them
still passes through all of the slot's checks. In a small store every candidate is kept
(fewer than :data:`LEAST` per kind), so the check judges them all. The limits are this
project's common practice, chosen so a 150-slot kit answers within 2 s on 100,000 parts
(benchmarks/bench_check.py).

The index comes from :meth:`stock.store.api.Store.kind_index` (three set-wise queries per
kind, no part records built); a store without it (a test double with only
``candidates``) is indexed from its candidate list instead, with the same rules.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import Any

from stock.kinds import Kind
from stock.params import RLC_PARAMS
from stock.parts import PartSpec, Stocked, part_key
from stock.slots import Op, Requirement

#: Keep at least this many candidates per slot (every candidate, in a small store).
LEAST = 16
#: … and on until their free stock covers this many times the slot's need …
COVER = 3
#: … but never more than this many.
MOST = 48
#: Parts kept for the combination search of a short value slot (R, C, L).
COMBINE_MOST = 400
#: Values within this factor of a combination's target take part (a two-part series or
#: parallel pair needs one part within 2× of the target; three parts reach further).
COMBINE_SPAN = 40.0

#: The parameter that holds a value slot's value.
VALUE_PARAM = RLC_PARAMS

_SAME_VALUE = 1e-6  # as stock.kits.check: nominal values this close are the same value
_UNKNOWN = 10.0  # ordering penalty of a part lacking a screened rating (log10 units)


@dataclass
class _Index:
    """Free parts of one kind as columns (numpy arrays), with a way to load them."""

    ids: list[Any]  # part ids (store) or Stocked records (a candidate list)
    keys: dict[str, int]  # part key → row
    families: list[str | None]  # family per row
    free: Any  # numpy int array
    lo: dict[str, Any]  # name → lowest guaranteed value (NaN: none)
    hi: dict[str, Any]  # name → highest guaranteed value
    nom: dict[str, Any]  # name → nominal (or typical, else lowest) value

    def __post_init__(self) -> None:
        import numpy as np

        self.codes: dict[str | None, int] = {}
        self.family = np.array([self.codes.setdefault(f, len(self.codes))
                                for f in self.families], dtype=np.int64)
        # per value parameter: rows sorted by value (NaN last) and the rows of unknown value
        self.by_value: dict[str, tuple[Any, Any]] = {}
        self.unknown_value: dict[str, Any] = {}
        for name, v in self.nom.items():
            order = np.argsort(v, kind="stable")
            known = int(np.count_nonzero(~np.isnan(v)))
            self.by_value[name] = (order[:known], v[order[:known]])
            self.unknown_value[name] = order[known:]

    def code(self, family: str | None) -> int:
        """The integer code of a family (−1 when no part has it)."""
        return self.codes.get(family, -1)


class CandidatePool:
    """Per-slot candidate lists for one check over one store (cached per kind and id)."""

    def __init__(self, store: Any, names: dict[Kind, set[str]] | None = None, *,
                 least: int = LEAST, cover: int = COVER, most: int = MOST) -> None:
        self.store = store
        self.names = names or {}
        self.least, self.cover, self.most = least, cover, most
        self._index: dict[Kind, _Index] = {}
        self._loaded: dict[Any, Stocked] = {}

    # --- the index ------------------------------------------------------------------------
    def index(self, kind: Kind, need: Iterable[str] = ()) -> _Index:
        """The index of ``kind``, with columns for ``need`` (rebuilt when one is missing)."""
        missing = set(need) - set(self._index[kind].lo) if kind in self._index else set()
        if missing:
            self.names.setdefault(kind, set()).update(missing)
            del self._index[kind]
        if kind not in self._index:
            names = sorted(self.names.get(kind, set()) | set(need) |
                           ({VALUE_PARAM[kind]} if kind in VALUE_PARAM else set()))
            if hasattr(self.store, "kind_index"):
                parts, params = self.store.kind_index(kind, names)
                self._index[kind] = _from_rows(parts, params, names)
            else:
                self._index[kind] = _from_list(list(self.store.candidates(kind)), names)
        return self._index[kind]

    def _load(self, idx: _Index, rows: Iterable[int]) -> list[Stocked]:
        rows = list(rows)
        if not rows:
            return []
        refs = [idx.ids[i] for i in rows]
        if isinstance(refs[0], Stocked):
            return refs
        missing = [r for r in refs if r not in self._loaded]
        if missing:
            self._loaded.update(self.store.stocked_by_id(missing))
        return [self._loaded[r] for r in refs if r in self._loaded]

    # --- per slot ----------------------------------------------------------------------------
    def for_slot(self, kind: Kind, calls_for: str, called: PartSpec | None,
                 reqs: Sequence[Requirement], need: int) -> list[Stocked]:
        """The candidates of one slot: exact ones first, then the screened stand-ins."""
        return self.stocked(kind, self.pick(kind, calls_for, called, reqs, need))

    def stocked(self, kind: Kind, rows: Sequence[int]) -> list[Stocked]:
        """The full records of index rows (loaded once, then cached)."""
        return self._load(self.index(kind), rows)

    def preload(self, picks: Iterable[tuple[Kind, Sequence[int]]]) -> None:
        """Load the records of many picks at once (one set-wise load, not one per slot)."""
        ids = []
        for kind, rows in picks:
            idx = self.index(kind)
            ids += [idx.ids[i] for i in rows if not isinstance(idx.ids[i], Stocked)
                    and idx.ids[i] not in self._loaded]
        if ids:
            self._loaded.update(self.store.stocked_by_id(list(dict.fromkeys(ids))))

    def pick(self, kind: Kind, calls_for: str, called: PartSpec | None,
             reqs: Sequence[Requirement], need: int, *, wider: int = 1) -> list[int]:
        """Index rows of one slot's candidates, exact ones first (see the module doc).

        ``wider`` multiplies the limits: the kit check asks again, wider, for a slot whose
        first candidates fail checks the screen cannot see (fT at the operating point,
        VF) and do not cover its need.
        """
        import numpy as np

        from stock.fit.requirements import screen

        sure = screen(list(reqs))
        idx = self.index(kind, {r.param for r in sure if r.param != "family"})
        n = len(idx.ids)
        if n == 0:
            return []
        name = VALUE_PARAM.get(kind)
        target = called.nominal(name) if (called is not None and name) else None
        # Rows to look at: a value slot's window (and the exact value) by binary search
        # in the value-sorted index, plus parts of unknown value; else every row.
        rows = np.arange(n)
        if name is not None:
            low = max([float(r.value) for r in sure if r.param == name and r.op is Op.GE],
                      default=-math.inf)
            high = min([float(r.value) for r in sure if r.param == name and r.op is Op.LE],
                       default=math.inf)
            if target is not None:
                slack = _SAME_VALUE * abs(target)
                low, high = min(low, target - slack), max(high, target + slack)
            if low > -math.inf or high < math.inf:
                order, values = idx.by_value[name]
                i0 = int(np.searchsorted(values, low, side="left"))
                i1 = int(np.searchsorted(values, high, side="right"))
                rows = np.concatenate([order[i0:i1], idx.unknown_value[name]])
        row = idx.keys.get(part_key(calls_for))
        if row is not None and len(rows) < n and not bool((rows == row).any()):
            rows = np.append(rows, row)
        fam = idx.family[rows]
        free = idx.free[rows]
        m = len(rows)
        # exact: the called-for number; for a value slot the same value (and family)
        exact = rows == row if row is not None else np.zeros(m, dtype=bool)
        if target is not None and name is not None:
            v = idx.nom[name][rows]
            same = np.abs(v - target) <= _SAME_VALUE * abs(target) if target else v == 0
            same &= ~np.isnan(v)
            if called is not None and called.family is not None:
                same &= fam == idx.code(called.family)
            exact |= same
        keep = np.ones(m, dtype=bool)
        score = np.zeros(m, dtype=float)
        for r in sure:
            if r.param == "family":  # "signal|schottky": any of them (stock.fit.checks);
                # a part with no family recorded is unknown (a warning), so it stays
                keep &= np.isin(fam, [idx.code(f) for f in str(r.value).split("|")]
                                + [idx.code(None)])
                continue
            value = float(r.value)
            if r.param == name:
                col = idx.nom[name][rows]
            else:
                col = (idx.lo if r.op is Op.GE else idx.hi)[r.param][rows]
            unknown = np.isnan(col)
            with np.errstate(invalid="ignore"):
                meets = col >= value if r.op is Op.GE else col <= value
            keep &= unknown | meets
            if r.param != name and value > 0:
                with np.errstate(divide="ignore", invalid="ignore"):
                    spare = np.abs(np.log10(np.where(unknown | (col <= 0), value, col) / value))
                score += np.where(unknown, _UNKNOWN, spare)
        if target and name is not None:
            v = idx.nom[name][rows]
            with np.errstate(divide="ignore", invalid="ignore"):
                near = np.abs(np.log10(np.where(v > 0, v, np.nan) / target))
            score += np.where(np.isnan(near), 1e9, near)
        first = np.flatnonzero(exact)
        first = first[np.argsort(-free[first], kind="stable")]
        rest = np.flatnonzero(keep & ~exact)
        rest = rest[np.lexsort((-free[rest], score[rest]))]
        order = np.concatenate([first, rest])
        cum = np.cumsum(free[order])
        covered = int(np.searchsorted(cum, self.cover * max(need, 1))) + 1
        take = min(max(self.least * wider, covered), self.most * wider, len(order))
        # the exact ones may exceed the cap when many are needed to cover the need
        take = max(take, min(len(first), covered))
        return rows[order[:take]].tolist()  # type: ignore[no-any-return]

    def around(self, kind: Kind, target: float) -> list[Stocked]:
        """Parts for the combination search of a short value slot: values within
        :data:`COMBINE_SPAN` of ``target``, the two with most free stock per value."""
        import numpy as np

        name = VALUE_PARAM.get(kind)
        if name is None or not target or target <= 0:
            return []
        idx = self.index(kind)
        if not idx.ids:
            return []
        v = idx.nom[name]
        with np.errstate(invalid="ignore"):
            inside = (v >= target / COMBINE_SPAN) & (v <= target * COMBINE_SPAN)
        rows = np.flatnonzero(inside)
        rows = rows[np.lexsort((-idx.free[rows], v[rows]))]
        kept: list[int] = []
        seen: dict[float, int] = {}
        for r in rows.tolist():
            key = float(f"{v[r]:.6g}")
            if seen.get(key, 0) < 2:
                seen[key] = seen.get(key, 0) + 1
                kept.append(r)
        if len(kept) > COMBINE_MOST:  # the nearest values first
            kept.sort(key=lambda r: abs(math.log(v[r] / target)))
            kept = kept[:COMBINE_MOST]
        return self._load(idx, kept)


def _from_rows(parts: list[tuple[int, str, str | None, int]],
               params: list[tuple[int, str, str, float]], names: Sequence[str]) -> _Index:
    """The index from the store's rows: per part and name the lowest and highest
    guaranteed (non-typical) value and the nominal one (``nom``, else ``typ``, else the
    lowest), aggregated with numpy."""
    import numpy as np

    parts = sorted(parts)  # by id, for the binary search below
    n = len(parts)
    ids = np.array([p[0] for p in parts], dtype=np.int64)
    lo = {k: np.full(n, np.nan) for k in names}
    hi = {k: np.full(n, np.nan) for k in names}
    nom = {k: np.full(n, np.nan) for k in names}
    if params and n:
        pid = np.fromiter((r[0] for r in params), dtype=np.int64, count=len(params))
        name = np.array([r[1] for r in params], dtype=object)
        bound = np.array([r[2] for r in params], dtype=object)
        value = np.fromiter((r[3] for r in params), dtype=float, count=len(params))
        pos = np.searchsorted(ids, pid)
        pos[pos >= n] = 0
        known = ids[pos] == pid  # rows of parts without free stock drop out
        typ = bound == "typ"
        for k in names:
            sel = known & (name == k)
            sure = sel & ~typ
            np.fmin.at(lo[k], pos[sure], value[sure])
            np.fmax.at(hi[k], pos[sure], value[sure])
            for b in ("typ", "nom"):  # nom wins: written last
                m = sel & (bound == b)
                nom[k][pos[m]] = value[m]
            nom[k] = np.where(np.isnan(nom[k]), lo[k], nom[k])
    return _Index(ids.tolist(), {key: i for i, (_, key, _f, _q) in enumerate(parts)},
                  [p[2] for p in parts], np.array([p[3] for p in parts], dtype=np.int64),
                  lo, hi, nom)


def _from_list(stock: list[Stocked], names: Sequence[str]) -> _Index:
    import numpy as np

    from stock.kinds import Bound

    n = len(stock)
    lo = {k: np.full(n, np.nan) for k in names}
    hi = {k: np.full(n, np.nan) for k in names}
    nom = {k: np.full(n, np.nan) for k in names}
    for i, s in enumerate(stock):
        for name in names:
            vals = s.part.values(name)
            sure = [p.value for p in vals if p.bound is not Bound.TYP]
            if sure:
                lo[name][i], hi[name][i] = min(sure), max(sure)
            nominal = s.part.nominal(name)
            if nominal is None and sure:
                nominal = min(sure)
            if nominal is not None:
                nom[name][i] = nominal
    return _Index(list(stock), {part_key(s.part.number): i for i, s in enumerate(stock)},
                  [s.part.family for s in stock],
                  np.array([s.free for s in stock], dtype=np.int64), lo, hi, nom)
