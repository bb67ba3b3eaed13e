"""Combinations: two or three R, C or L parts from free stock that make a missing value.

Where no single part in the drawers fits a value slot, two parts in series or parallel
(and three, where the search stays fast) often do. A combination fits when its
*worst-case* tolerance stack lies inside the slot's tolerance window, and when every
part withstands its share of the voltage or power.

Formulas (facts.md §5.4, standard circuit theory):

* resistors and inductors in series, capacitors in parallel, add: ``X = Σ Xi``;
* resistors and inductors in parallel, capacitors in series, add as reciprocals:
  ``1/X = Σ 1/Xi``;
* both rise monotonically in every ``Xi``, so the worst-case extremes come from all
  parts at their low limit and all at their high limit; equal relative tolerances give
  the same relative tolerance for the combination;
* the statistical (RSS) alternative stacks each part's excursion as a root sum of
  squares [common practice]; it is an option, worst case is the default;
* series capacitors divide a DC voltage in inverse proportion to C; series resistors
  share power in proportion to R (``Pi = P·Ri/R``), parallel ones inversely
  (``Pi = P·R/Ri``);
* inductors are assumed not to couple (no mutual inductance).

Values are SI floats (ohm, farad, henry); tolerances are fractions (−0.05, +0.05).
"""

from __future__ import annotations

import bisect
import itertools
import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from enum import StrEnum
from typing import Any

from stock.errors import FitError
from stock.kinds import CAPACITOR_CLASS, POLARISED_FAMILIES, Kind, normalise_family
from stock.params import RLC_PARAMS
from stock.parts import PartSpec, Stocked


class Topology(StrEnum):
    """How the parts of a combination are wired; part ``a`` is the first of ``parts``.

    * ``series``: all parts in series (two or three);
    * ``parallel``: all parts in parallel;
    * ``series-parallel``: ``a`` in series with (``b`` ∥ ``c``);
    * ``parallel-series``: ``a`` in parallel with (``b`` in series with ``c``).
    """

    SERIES = "series"
    PARALLEL = "parallel"
    SERIES_PARALLEL = "series-parallel"
    PARALLEL_SERIES = "parallel-series"


class Stacking(StrEnum):
    """How part tolerances stack up in a combination."""

    WORST_CASE = "worst-case"  # every part at its limit at once (facts.md §5.4)
    RSS = "rss"  # root sum of squares of each part's excursion [common practice]


#: The value parameter of each kind a combination can be made of.
VALUE_PARAM = RLC_PARAMS

#: Adjustable parts never go into a fixed-value combination.
_ADJUSTABLE = frozenset({"trimmer", "variable", "potentiometer"})

#: Defaults when no policy table is at hand (the same values ship in stock/data/rules.toml).
_DEFAULTS: dict[str, float] = {
    "combo_tol_unknown": 0.20,  # IEC 60062: no tolerance band means ±20 % (facts.md §2.3)
    "combo_stacking_rss": 0.0,  # 0 = worst case, 1 = RSS
    "combo_three_max_parts": 600.0,
    "r_p_fraction_max": 0.6,
    "cap_v_fraction_tantalum": 0.5,
    "cap_v_fraction_tantalum_polymer": 0.8,
    "cap_v_fraction_electrolytic": 0.8,
    "cap_v_fraction_class2": 0.5,
    "cap_v_fraction_other": 1.0,
}

# Relative slack for comparing a worst-case limit with the slot's window: a stack that
# lands exactly on the edge (10 k ±5 % + 10 k ±5 % against 20 k ±5 %) must count as inside
# despite floating-point rounding.
_EPS = 1e-9


@dataclass(frozen=True)
class Combination:
    """Two or three stocked parts that together make a value, with their worst case.

    ``nominal``, ``low`` and ``high`` are SI values (low/high are the stacked limits);
    ``error`` is ``(nominal − target)/target``; ``checks`` are one-line notes on ratings,
    dielectrics and assumptions; ``ok`` is False when a part is over its rating.
    """

    topology: Topology
    parts: tuple[Stocked, ...]
    nominal: float
    low: float
    high: float
    error: float
    checks: list[str] = field(default_factory=list)
    ok: bool = True

    @property
    def excursion(self) -> float:
        """The largest distance of a limit from the target, as a fraction of the target."""
        target = self.nominal / (1.0 + self.error)
        return max(target - self.low, self.high - target) / target

    def describe(self) -> str:
        """The parts by number, joined by their wiring: ``A in series with (B ∥ C)``.

        Words for series, because ``+`` would read as adding values, which series
        capacitors do not.
        """
        names = [s.part.number for s in self.parts]
        if self.topology is Topology.SERIES:
            return " in series with ".join(names)
        if self.topology is Topology.PARALLEL:
            return " ∥ ".join(names)
        if self.topology is Topology.SERIES_PARALLEL:
            return f"{names[0]} in series with ({names[1]} ∥ {names[2]})"
        return f"{names[0]} ∥ ({names[1]} in series with {names[2]})"


# --- values of a combination -------------------------------------------------------------

def _adds_in_series(kind: Kind) -> bool:
    """True for R and L (impedance ∝ value); False for C (impedance ∝ 1/C)."""
    if kind in (Kind.RESISTOR, Kind.INDUCTOR):
        return True
    if kind is Kind.CAPACITOR:
        return False
    raise FitError(f"cannot combine {kind.value} parts; combinations are of resistors, "
                   "capacitors or inductors")


def _add(x: Any, y: Any) -> Any:
    return x + y


def _rec(x: Any, y: Any) -> Any:
    # 1/(1/x + 1/y) written so that it also works elementwise on numpy arrays
    return x * y / (x + y)


def _ops(kind: Kind) -> tuple[Callable[[Any, Any], Any], Callable[[Any, Any], Any]]:
    """(series op, parallel op) in value space for ``kind``."""
    return (_add, _rec) if _adds_in_series(kind) else (_rec, _add)


def _evaluate(topology: Topology, kind: Kind, vals: Sequence[Any]) -> Any:
    """The value of ``vals`` wired as ``topology`` (floats, or numpy arrays elementwise)."""
    ser, par = _ops(kind)
    if topology in (Topology.SERIES, Topology.PARALLEL):
        op = ser if topology is Topology.SERIES else par
        out = vals[0]
        for v in vals[1:]:
            out = op(out, v)
        return out
    if len(vals) != 3:
        raise FitError(f"a {topology.value} combination has exactly 3 parts, not {len(vals)}")
    a, b, c = vals
    if topology is Topology.SERIES_PARALLEL:
        return ser(a, par(b, c))
    return par(a, ser(b, c))


def _stack(topology: Topology, kind: Kind, noms: Sequence[Any], lows: Sequence[Any],
           highs: Sequence[Any], stacking: Stacking) -> tuple[Any, Any, Any]:
    nom = _evaluate(topology, kind, noms)
    if stacking is Stacking.WORST_CASE:
        # monotonic in every part (facts.md §5.4): extremes at all-low and all-high
        return nom, _evaluate(topology, kind, lows), _evaluate(topology, kind, highs)
    down: Any = 0.0
    up: Any = 0.0
    for i in range(len(noms)):
        lo = list(noms)
        lo[i] = lows[i]
        hi = list(noms)
        hi[i] = highs[i]
        down = down + (nom - _evaluate(topology, kind, lo)) ** 2
        up = up + (_evaluate(topology, kind, hi) - nom) ** 2
    return nom, nom - down ** 0.5, nom + up ** 0.5


def combine_value(parts: Sequence[tuple[float, float, float]], topology: Topology | str,
                  kind: Kind, *, stacking: Stacking | str = Stacking.WORST_CASE
                  ) -> tuple[float, float, float]:
    """(nominal, low, high) of ``parts`` wired as ``topology``, in SI units.

    Each part is ``(nominal, tol_minus, tol_plus)`` with tolerances as fractions
    (``(4700, -0.05, 0.05)``). ``low``/``high`` are the worst-case stack unless
    ``stacking="rss"``. Raises :class:`FitError` for a non-positive value or a tolerance
    of −100 % or less.
    """
    topology = Topology(topology)
    stacking = Stacking(stacking)
    if not parts:
        raise FitError("a combination needs at least one part")
    noms, lows, highs = [], [], []
    for nom, tminus, tplus in parts:
        if not (nom > 0 and math.isfinite(nom)):
            raise FitError(f"part value {nom!r} is not a positive number; give SI values")
        if tminus > 0 or tplus < 0 or tminus <= -1:
            raise FitError(f"tolerance ({tminus}, {tplus}) is not (−x, +y) with x < 1; "
                           "write ±5 % as (-0.05, 0.05)")
        noms.append(nom)
        lows.append(nom * (1.0 + tminus))
        highs.append(nom * (1.0 + tplus))
    nom, low, high = _stack(topology, kind, noms, lows, highs, stacking)
    return float(nom), float(low), float(high)


# --- candidates from stock -----------------------------------------------------------------

@dataclass
class _Cand:
    stocked: Stocked
    value: float
    tminus: float
    tplus: float
    free: int
    tol_known: bool

    @property
    def low(self) -> float:
        return self.value * (1.0 + self.tminus)

    @property
    def high(self) -> float:
        return self.value * (1.0 + self.tplus)


def part_tolerance(part: PartSpec, unknown: float = 0.20) -> tuple[float, float, bool]:
    """(tol_minus, tol_plus, known) of a part from its ``tol`` parameter.

    ``tol`` min is the lower limit (−0.05), max the upper (+0.05); a single value is read
    as symmetric. No tolerance on record gives ±``unknown`` (IEC 60062: a resistor without a
    tolerance band is ±20 %, facts.md §2.3) and ``known`` False.
    """
    lo = part.low("tol")
    hi = part.high("tol")
    if lo is None and hi is None:
        return -unknown, unknown, False
    if lo is None:
        assert hi is not None
        return -abs(hi.value), abs(hi.value), True
    if hi is None or hi.param is lo.param:
        return -abs(lo.value), abs(lo.value), True
    return -abs(lo.value), abs(hi.value), True


def _candidates(kind: Kind, stock: Sequence[Stocked], need: int, family: str | None,
                unknown_tol: float) -> list[_Cand]:
    pname = VALUE_PARAM[kind]
    out: list[_Cand] = []
    for s in stock:
        p = s.part
        if p.kind is not kind or s.to_buy or s.free < need:
            continue
        if p.family in _ADJUSTABLE:
            continue
        if family is not None and p.family != family:
            continue
        v = p.nominal(pname)
        if v is None or not (v > 0 and math.isfinite(v)):
            continue
        tminus, tplus, known = part_tolerance(p, unknown_tol)
        if tminus <= -1:
            continue
        out.append(_Cand(s, v, tminus, tplus, s.free, known))
    return out


# --- rating checks --------------------------------------------------------------------------

_PREFIXES = ((1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"),
             (1e-9, "n"), (1e-12, "p"), (1e-15, "f"))


def fmt_si(value: float, unit: str) -> str:
    """``4.7 kΩ``, ``33 nF``: three significant figures with an SI prefix."""
    if value == 0 or not math.isfinite(value):
        return f"{value:g} {unit}"
    mag = abs(value)
    for scale, prefix in _PREFIXES:
        if mag >= scale * 0.9995:
            return f"{value / scale:.3g} {prefix}{unit}"
    return f"{value:.3g} {unit}"


_UNIT = {Kind.RESISTOR: "Ω", Kind.CAPACITOR: "F", Kind.INDUCTOR: "H"}


def _voltage_fractions(topology: Topology, kind: Kind, vals: Sequence[float]) -> list[float]:
    """The fraction of the voltage across the combination that each part sees.

    Series parts divide the voltage in proportion to their impedance: R or ωL, or 1/(ωC)
    for capacitors, so a DC voltage divides inversely to C (facts.md §5.4).
    """
    z = [v if _adds_in_series(kind) else 1.0 / v for v in vals]
    if topology is Topology.PARALLEL:
        return [1.0] * len(z)
    if topology is Topology.SERIES:
        total = sum(z)
        return [zi / total for zi in z]
    a, b, c = z
    if topology is Topology.SERIES_PARALLEL:
        zbc = b * c / (b + c)
        return [a / (a + zbc), zbc / (a + zbc), zbc / (a + zbc)]
    return [1.0, b / (b + c), c / (b + c)]


def _worst_share(topology: Topology, kind: Kind, cands: Sequence[_Cand],
                 share: Callable[[list[float], int], float]) -> list[float]:
    """Each part's largest ``share`` over every corner of the tolerance box (2ⁿ ≤ 8)."""
    worst = [0.0] * len(cands)
    for corner in itertools.product((0, 1), repeat=len(cands)):
        vals = [c.high if up else c.low for c, up in zip(cands, corner, strict=True)]
        for i in range(len(cands)):
            worst[i] = max(worst[i], share(vals, i))
    return worst


def _cap_v_fraction(family: str | None, policy: Mapping[str, float]) -> tuple[float, str]:
    if family in ("tantalum", "tantalum-polymer", "electrolytic"):
        rid = "cap_v_fraction_" + family.replace("-", "_")
    elif family is not None and CAPACITOR_CLASS.get(family, 1) >= 2:
        rid = "cap_v_fraction_class2"
    else:
        rid = "cap_v_fraction_other"
    return float(policy.get(rid, _DEFAULTS[rid])), rid


def _rate(topology: Topology, kind: Kind, cands: Sequence[_Cand], *, v_working: float | None,
          power: float | None, policy: Mapping[str, float]) -> tuple[list[str], bool]:
    """Rating and dielectric notes for one combination, and whether every part holds."""
    notes: list[str] = []
    ok = True
    multi = len(cands) > 1
    for c in cands:
        if not c.tol_known:
            t = -c.tminus * 100
            notes.append(f"{c.stocked.part.number}: no tolerance on record, taken as ±{t:g} %")
    if kind is Kind.CAPACITOR:
        fams = {c.stocked.part.family for c in cands}
        classes = {CAPACITOR_CLASS.get(f) for f in fams if f is not None}
        if len(fams) > 1:
            names = ", ".join(sorted(f or "unknown" for f in fams))
            notes.append(f"mixes dielectrics ({names}): the combination drifts with the "
                         "least stable part")
        if classes - {1, None}:
            notes.append("class-2/3 dielectric: capacitance moves with temperature, DC bias "
                         "and age; keep it out of frequency-determining positions")
        if any(c.stocked.part.attrs.get("safety") for c in cands):
            notes.append("safety (X/Y) capacitors: a mains position takes one part of the "
                          "right IEC 60384-14 class, never a combination; see its datasheet")
        series_like = topology is not Topology.PARALLEL
        if series_like and any(c.stocked.part.family in POLARISED_FAMILIES for c in cands):
            notes.append("polarised capacitors in series: leakage, not capacitance, sets the "
                          "DC sharing; fit equal balancing resistors across each")
        if v_working is not None:
            fr = _worst_share(topology, kind, cands,
                              lambda vals, i: _voltage_fractions(topology, kind, vals)[i])
            for c, f in zip(cands, fr, strict=True):
                frac, rid = _cap_v_fraction(c.stocked.part.family, policy)
                ok = _share_note(notes, c.stocked.part, f * v_working, "v_rated", "V", frac,
                                 rid, "sees", "no rated voltage on record, check its "
                                 "marking") and ok
    elif kind is Kind.RESISTOR:
        if power is not None and multi:
            def p_share(vals: list[float], i: int) -> float:
                # P_i = V_i²/R_i with V² = P·R_total (facts.md §5.4: P = V²/R)
                total = _evaluate(topology, kind, vals)
                f = _voltage_fractions(topology, kind, vals)[i]
                return power * total * f * f / vals[i]

            shares = _worst_share(topology, kind, cands, p_share)
        elif power is not None:
            shares = [power]
        else:
            shares = []
        frac = float(policy.get("r_p_fraction_max", _DEFAULTS["r_p_fraction_max"]))
        for c, p_i in zip(cands, shares, strict=False):
            ok = _share_note(notes, c.stocked.part, p_i, "p_rated", "W", frac,
                             "r_p_fraction_max", "dissipates", "no power rating on record, "
                             "check its size") and ok
        if v_working is not None:
            fr = _worst_share(topology, kind, cands,
                              lambda vals, i: _voltage_fractions(topology, kind, vals)[i])
            for c, f in zip(cands, fr, strict=True):
                lim = c.stocked.part.low("v_limit")
                if lim is not None and f * v_working > lim.value * (1 + _EPS):
                    ok = False
                    notes.append(f"{c.stocked.part.number}: {fmt_si(f * v_working, 'V')} across "
                                 f"it exceeds its limiting element voltage "
                                 f"{fmt_si(lim.value, 'V')}: OVER")
    elif kind is Kind.INDUCTOR and multi:
        notes.append("assumes no mutual coupling: mount the inductors apart or at right angles, "
                     "or the total changes")
        if topology is not Topology.SERIES:
            notes.append("paralleled inductors share current inversely to L (to DCR at DC); "
                         "check each part's current rating")
    return notes, ok


# --- the search -----------------------------------------------------------------------------

def _topologies(kind: Kind) -> tuple[Topology, Topology]:
    """(topology whose values add, topology whose values add as reciprocals)."""
    if _adds_in_series(kind):
        return Topology.SERIES, Topology.PARALLEL
    return Topology.PARALLEL, Topology.SERIES


def _policy(policy: Mapping[str, float] | None) -> Mapping[str, float]:
    if policy is not None:
        return policy
    try:
        from stock.rules import shipped_policy

        return shipped_policy()
    except Exception:  # the table is optional for this module: fall back to the defaults
        return _DEFAULTS


def policy_value(policy: Mapping[str, float] | None, rid: str, default: float) -> float:
    """Rule ``rid`` from ``policy`` (default: the shipped table), else ``default``."""
    return float(_policy(policy).get(rid, default))


def find_combinations(target: float, tol: tuple[float, float], kind: Kind,
                      stock: Sequence[Stocked], *, max_parts: int = 3, need: int = 1,
                      v_working: float | None = None, power: float | None = None,
                      family: str | None = None, limit: int = 10,
                      stacking: Stacking | str | None = None,
                      policy: Mapping[str, float] | None = None) -> list[Combination]:
    """Two- (and three-) part combinations of free stock that make ``target`` within ``tol``.

    ``target`` is the SI value the slot calls for; ``tol`` its window as fractions
    (``(-0.05, 0.05)``). Parts of ``kind`` (and ``family`` when given) with ``need`` free each
    (a part used twice needs ``2·need``) are paired; a pair fits when its stacked limits lie
    inside ``target·(1+tol)``. ``v_working`` (DC volts across the combination) and ``power``
    (watts it dissipates) are shared out and held against each part's rating, derated by the
    policy table. Results: rating-clean ones first, then fewest parts, smallest worst-case
    excursion, most free stock; at most ``limit``.

    Three-part combinations are searched when two-part ones do not fill ``limit`` and the
    candidates number at most ``combo_three_max_parts`` (policy), so the answer stays fast.
    """
    if kind not in VALUE_PARAM:
        raise FitError(f"cannot combine {kind.value} parts; combinations are of resistors, "
                       "capacitors or inductors")
    if not (target > 0 and math.isfinite(target)):
        raise FitError(f"target {target!r} is not a positive value; give it in SI units")
    tminus, tplus = tol
    if tminus > 0 or tplus < 0 or tminus <= -1:
        raise FitError(f"tolerance window {tol!r} is not (−x, +y); write ±5 % as (-0.05, 0.05)")
    if need < 1:
        raise FitError(f"need {need} must be at least 1 (the number of combinations to make)")
    pol = _policy(policy)
    if stacking is None:
        stacking = Stacking.RSS if pol.get("combo_stacking_rss", 0.0) else Stacking.WORST_CASE
    stacking = Stacking(stacking)
    try:
        fam = normalise_family(kind, family)
    except ValueError:  # a family spelled outside our list still filters by its own name
        fam = family.strip().lower() if family else None
    unknown = float(pol.get("combo_tol_unknown", _DEFAULTS["combo_tol_unknown"]))
    cands = _candidates(kind, stock, need, fam, unknown)
    if max_parts < 2 or not cands:
        return []
    w_lo = target * (1.0 + tminus) * (1.0 - _EPS)
    w_hi = target * (1.0 + tplus) * (1.0 + _EPS)

    found: list[tuple[tuple[float, float], Topology, tuple[int, ...]]] = []
    found += _pairs(cands, kind, target, w_lo, w_hi, need, stacking)
    results = _finish(found, cands, kind, target, limit, v_working, power, pol, stacking)
    n_ok = sum(1 for r in results if r.ok)
    three_max = int(pol.get("combo_three_max_parts", _DEFAULTS["combo_three_max_parts"]))
    if max_parts >= 3 and n_ok < limit and len(cands) <= three_max:
        found += _triples(cands, kind, target, w_lo, w_hi, need, stacking,
                          keep=max(60 * limit, 600))
        results = _finish(found, cands, kind, target, limit, v_working, power, pol, stacking)
    return results


def _pairs(cands: list[_Cand], kind: Kind, target: float, w_lo: float, w_hi: float,
           need: int, stacking: Stacking
           ) -> list[tuple[tuple[float, float], Topology, tuple[int, ...]]]:
    """Every pair inside the window: sort once, binary-search each part's partner.

    Both ways of wiring two parts become a sum in a suitable space: the values themselves
    for the adding topology, their reciprocals (conductances, elastances) for the other.
    For each part ``a`` the partner's value must lie in ``[U_lo − a, U_hi − a]``, found by
    bisection, so the search is O(n log n) plus the pairs it reports.
    """
    out: list[tuple[tuple[float, float], Topology, tuple[int, ...]]] = []
    top_add, top_rec = _topologies(kind)
    for topology, recip in ((top_add, False), (top_rec, True)):
        if recip:
            order = sorted(range(len(cands)), key=lambda k: 1.0 / cands[k].value)
            us = [1.0 / cands[k].value for k in order]
            u_lo, u_hi = 1.0 / w_hi, 1.0 / w_lo
        else:
            order = sorted(range(len(cands)), key=lambda k: cands[k].value)
            us = [cands[k].value for k in order]
            u_lo, u_hi = w_lo, w_hi
        # the bounds in u-space of each part: low value ↔ high reciprocal
        lo_u = [(1.0 / cands[k].high if recip else cands[k].low) for k in order]
        hi_u = [(1.0 / cands[k].low if recip else cands[k].high) for k in order]
        free = [cands[k].free for k in order]
        n = len(us)
        for i in range(n):
            ui = us[i]
            rest_hi = u_hi - ui
            if rest_hi < ui:  # partners come from i onwards, so nothing further can fit
                break
            j0 = max(i, bisect.bisect_left(us, u_lo - ui))
            j1 = bisect.bisect_right(us, rest_hi, lo=j0)
            for j in range(j0, j1):
                if j == i and free[i] < 2 * need:
                    continue
                if stacking is Stacking.WORST_CASE:
                    s_lo = lo_u[i] + lo_u[j]
                    s_hi = hi_u[i] + hi_u[j]
                    if recip:
                        low, high = 1.0 / s_hi, 1.0 / s_lo
                    else:
                        low, high = s_lo, s_hi
                else:
                    a, b = cands[order[i]], cands[order[j]]
                    _, low, high = _stack(topology, kind, [a.value, b.value], [a.low, b.low],
                                          [a.high, b.high], stacking)
                if low < w_lo or high > w_hi:
                    continue
                exc = max(target - low, high - target) / target
                mf = free[i] // 2 if i == j else min(free[i], free[j])
                out.append(((exc, -mf), topology, (order[i], order[j])))
    return out


def _triples(cands: list[_Cand], kind: Kind, target: float, w_lo: float, w_hi: float,
             need: int, stacking: Stacking, keep: int = 600
             ) -> list[tuple[tuple[float, float], Topology, tuple[int, ...]]]:
    """Three-part combinations, vectorised over every pair (b, c) with numpy.

    For each pair and each wiring the value part ``a`` must have is solved exactly; the two
    stocked values nearest to it are tried. That keeps O(n²) work (fine for a few thousand
    candidates) at the cost of skipping partners further from the ideal value, which would
    rank lower anyway.
    """
    import numpy as np

    n = len(cands)
    vals = np.array([c.value for c in cands])
    order = np.argsort(vals, kind="stable")
    sv = vals[order]
    lows = np.array([c.low for c in cands])
    highs = np.array([c.high for c in cands])
    free = np.array([c.free for c in cands])
    bi, ci = np.triu_indices(n)
    ser, par = _ops(kind)
    out: list[tuple[tuple[float, float], Topology, tuple[int, ...]]] = []
    # (topology, outer op adds?, inner op) in value space
    plans: list[tuple[Topology, bool, Callable[[Any, Any], Any]]] = []
    for top in Topology:
        if top is Topology.SERIES:
            outer_adds, inner = ser is _add, ser
        elif top is Topology.PARALLEL:
            outer_adds, inner = par is _add, par
        elif top is Topology.SERIES_PARALLEL:
            outer_adds, inner = ser is _add, par
        else:
            outer_adds, inner = par is _add, ser
        plans.append((top, outer_adds, inner))
    seen: set[tuple[Topology, tuple[int, ...]]] = set()
    for top, outer_adds, inner in plans:
        inner_nom = inner(vals[bi], vals[ci])
        if outer_adds:
            a_need = target - inner_nom
        else:
            with np.errstate(divide="ignore", invalid="ignore"):
                a_need = 1.0 / (1.0 / target - 1.0 / inner_nom)
        valid = np.isfinite(a_need) & (a_need > 0)
        b_v, c_v, a_need = bi[valid], ci[valid], a_need[valid]
        pos = np.searchsorted(sv, a_need)
        for shift in (-1, 0):
            k = np.clip(pos + shift, 0, n - 1)
            a_v = order[k]
            nom, low, high = _stack(top, kind, [vals[a_v], vals[b_v], vals[c_v]],
                                    [lows[a_v], lows[b_v], lows[c_v]],
                                    [highs[a_v], highs[b_v], highs[c_v]], stacking)
            ok = (low >= w_lo) & (high <= w_hi)
            # free stock: a part used m times needs m·need
            mf = None
            for p in (a_v, b_v, c_v):
                m = (p == a_v).astype(int) + (p == b_v) + (p == c_v)
                ok &= free[p] >= m * need
                q = free[p] // m
                mf = q if mf is None else np.minimum(mf, q)
            hits = np.nonzero(ok)[0]
            if hits.size == 0:
                continue
            exc = np.maximum(target - low, high - target) / target
            if hits.size > keep:  # only the best few can reach the answer
                hits = hits[np.argpartition(exc[hits], keep)[:keep]]
            for idx in hits:
                a, b, c = int(a_v[idx]), int(b_v[idx]), int(c_v[idx])
                parts = tuple(sorted((a, b, c))) if top in (Topology.SERIES, Topology.PARALLEL)\
                    else (a, *sorted((b, c)))
                key = (top, parts)
                if key in seen:
                    continue
                seen.add(key)
                assert mf is not None
                out.append(((float(exc[idx]), -float(mf[idx])), top, parts))
    return out


def _finish(found: list[tuple[tuple[float, float], Topology, tuple[int, ...]]],
            cands: list[_Cand], kind: Kind, target: float, limit: int,
            v_working: float | None, power: float | None, policy: Mapping[str, float],
            stacking: Stacking) -> list[Combination]:
    """Rank, rate in rank order until ``limit`` rating-clean results are found, build them."""
    found.sort(key=lambda t: (len(t[2]), t[0], t[1].value, t[2]))
    good: list[Combination] = []
    bad: list[Combination] = []
    # rating is the costly step; look at a bounded number beyond the limit
    for _key, top, idxs in found[: max(limit * 20, 50)]:
        cs = [cands[k] for k in idxs]
        nom, low, high = _stack(top, kind, [c.value for c in cs], [c.low for c in cs],
                                [c.high for c in cs], stacking)
        notes, ok = _rate(top, kind, cs, v_working=v_working, power=power, policy=policy)
        if stacking is Stacking.RSS:
            notes.insert(0, "limits stacked statistically (RSS), not worst case")
        combo = Combination(top, tuple(c.stocked for c in cs), float(nom), float(low),
                            float(high), float((nom - target) / target), notes, ok)
        (good if ok else bad).append(combo)
        if len(good) >= limit:
            break
    return (good + bad)[:limit]


def _share_note(notes: list[str], p: PartSpec, share: float, rating: str, unit: str,
                frac: float, rule: str, verb: str, missing: str) -> bool:
    """Note one part's share (volts across it, watts in it) against its derated rating;
    False when the share is over what the rule allows. A part with no rating on record
    gets a note to check it, not a failure."""
    rated = p.low(rating)
    if rated is None:
        notes.append(f"{p.number}: {verb} up to {fmt_si(share, unit)}; {missing}")
        return True
    allowed = rated.value * frac
    verdict = "ok" if share <= allowed * (1 + _EPS) else "OVER"
    notes.append(f"{p.number}: {verb} up to {fmt_si(share, unit)} of {fmt_si(allowed, unit)} "
                 f"allowed ({fmt_si(rated.value, unit)} rated × {frac:g}, {rule}): {verdict}")
    return verdict == "ok"
