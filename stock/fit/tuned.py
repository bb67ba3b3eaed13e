"""Tuned circuits: an LC tank's resonant frequency, and whether its trimmer can retune it.

When a stand-in changes the L or a fixed C of a tank, the resonant frequency moves:

    f0 = 1 / (2π √(L·C))        C = 1 / ((2π f)² L)        L = 1 / ((2π f)² C)

(facts.md §5.1; standard circuit theory, e.g. the ARRL Handbook). The tank's capacitance
is every capacitor in parallel across the coil: the fixed ones, the trimmer and the stray
capacitance of wiring and the active device. Whether the tank can come back on frequency is
one subtraction: the trimmer must supply ``C_needed − C_fixed − C_stray`` within its range.

Values are SI floats: henry, farad, hertz.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from stock.errors import FitError
from stock.fit.combine import fmt_si, policy_value
from stock.kinds import Bound, Kind
from stock.parts import PartSpec
from stock.slots import Slot

_TWO_PI = 2.0 * math.pi

#: Capacitor families that are adjustable: the tank's trimmer.
TRIMMER_FAMILIES = frozenset({"trimmer", "variable"})

#: Without a trimmer, how close (as a fraction) counts as "on frequency" [common practice];
#: the policy table carries it as ``tank_f_tol``, this is the fallback.
F_TOL_DEFAULT = 0.005


def _positive(name: str, value: float) -> None:
    if not (value > 0 and math.isfinite(value)):
        raise FitError(f"{name} = {value!r} must be a positive SI value (H, F or Hz)")


def resonant_frequency(l: float, c: float) -> float:  # noqa: E741 - the textbook symbol
    """f0 in hertz of inductance ``l`` (H) with capacitance ``c`` (F): 1/(2π√(LC))."""
    _positive("L", l)
    _positive("C", c)
    return 1.0 / (_TWO_PI * math.sqrt(l * c))


def c_for(f: float, l: float) -> float:  # noqa: E741
    """The total capacitance (F) that tunes inductance ``l`` (H) to ``f`` (Hz)."""
    _positive("f", f)
    _positive("L", l)
    return 1.0 / ((_TWO_PI * f) ** 2 * l)


def l_for(f: float, c: float) -> float:
    """The inductance (H) that tunes capacitance ``c`` (F) to ``f`` (Hz)."""
    _positive("f", f)
    _positive("C", c)
    return 1.0 / ((_TWO_PI * f) ** 2 * c)


@dataclass(frozen=True)
class Retune:
    """The tank after a change, and whether a trimmer setting brings it back on frequency.

    ``f_new`` is the resonant frequency with the trimmer at mid-range (or with the fixed
    capacitance alone when there is no trimmer); ``c_needed_total`` the whole tank C that
    gives ``f_target``; ``c_trimmer_needed`` what the trimmer must supply (may be negative:
    then the fixed C alone is already too large); ``f_range`` the frequencies the trimmer
    sweeps (low, high).
    """

    f_target: float
    f_new: float
    c_needed_total: float
    trimmer_range: tuple[float, float] | None
    can_retune: bool
    text: str
    c_trimmer_needed: float = 0.0
    f_range: tuple[float, float] | None = None


def retune(*, l: float, c_fixed: float, f_target: float,  # noqa: E741
           trimmer: tuple[float, float] | None = None, c_stray: float = 0.0,
           f_tol: float | None = None) -> Retune:
    """Can the tank (``l``, ``c_fixed`` + ``c_stray`` + trimmer) be tuned to ``f_target``?

    ``trimmer`` is the trimmer's (min, max) capacitance in farads. With a trimmer the
    answer is whether ``C_needed − c_fixed − c_stray`` lies in its range; without one,
    whether the fixed tank already lands within ``f_tol`` (a fraction; default: policy rule
    ``tank_f_tol``) of ``f_target``.
    """
    _positive("L", l)
    _positive("f_target", f_target)
    if c_fixed < 0 or c_stray < 0:
        raise FitError("fixed and stray capacitance cannot be negative; give them in farads")
    c_need = c_for(f_target, l)
    c_trim = c_need - c_fixed - c_stray
    where = (f"L {fmt_si(l, 'H')}, fixed {fmt_si(c_fixed, 'F')}"
             + (f" + stray {fmt_si(c_stray, 'F')}" if c_stray else ""))
    if trimmer is not None:
        t_lo, t_hi = sorted(trimmer)
        if t_lo < 0:
            raise FitError(f"trimmer range {trimmer!r} cannot go below zero; give farads")
        c_base = c_fixed + c_stray
        if c_base + t_lo <= 0:
            raise FitError("the tank has no capacitance at the trimmer's minimum; "
                           "give the stray capacitance")
        f_new = resonant_frequency(l, c_base + (t_lo + t_hi) / 2)
        f_range = (resonant_frequency(l, c_base + t_hi), resonant_frequency(l, c_base + t_lo))
        span = t_hi - t_lo
        # a relative slack keeps a setting exactly at an end stop inside the range
        can = t_lo - 1e-9 * c_need <= c_trim <= t_hi + 1e-9 * c_need
        head = (f"{where}, trimmer {fmt_si(t_lo, 'F')}–{fmt_si(t_hi, 'F')}: "
                f"{fmt_si(f_new, 'Hz')} at mid-range, sweeps "
                f"{fmt_si(f_range[0], 'Hz')}–{fmt_si(f_range[1], 'Hz')}")
        if can:
            at = 100.0 * (c_trim - t_lo) / span if span > 0 else 50.0
            text = (f"{head}; {fmt_si(f_target, 'Hz')} needs the trimmer at {fmt_si(c_trim, 'F')} "
                    f"({at:.0f} % of its range): can retune")
        elif c_trim < t_lo:
            text = (f"{head}; {fmt_si(f_target, 'Hz')} needs the trimmer at {fmt_si(c_trim, 'F')}, "
                    f"below its minimum: remove {fmt_si(t_lo - c_trim, 'F')} of fixed capacitance "
                    "or use a smaller inductance")
        else:
            text = (f"{head}; {fmt_si(f_target, 'Hz')} needs the trimmer at {fmt_si(c_trim, 'F')}, "
                    f"above its maximum: add {fmt_si(c_trim - t_hi, 'F')} of fixed capacitance "
                    "(class 1, C0G) or use a larger inductance")
        return Retune(f_target, f_new, c_need, (t_lo, t_hi), can, text, c_trim, f_range)
    c_total = c_fixed + c_stray
    if c_total <= 0:
        raise FitError("the tank has no capacitance; give its fixed or stray capacitance")
    f_new = resonant_frequency(l, c_total)
    off = (f_new - f_target) / f_target
    if f_tol is None:
        f_tol = policy_value(None, "tank_f_tol", F_TOL_DEFAULT)
    can = abs(off) <= f_tol
    text = (f"{where}: resonates at {fmt_si(f_new, 'Hz')} ({off * 100:+.2f} % from "
            f"{fmt_si(f_target, 'Hz')}); no trimmer, and the tank needs "
            f"{fmt_si(c_need, 'F')} in all"
            + (": on frequency" if can else
               f": {'add' if c_trim > 0 else 'remove'} {fmt_si(abs(c_trim), 'F')} of fixed "
               "capacitance or fit a trimmer"))
    return Retune(f_target, f_new, c_need, None, can, text, c_trim, None)


def trimmer_range(part: PartSpec) -> tuple[float, float] | None:
    """A trimmer's (min, max) capacitance from its ``c`` min and max values, or None."""
    lo = [p.value for p in part.values("c") if p.bound is Bound.MIN]
    hi = [p.value for p in part.values("c") if p.bound is Bound.MAX]
    if not lo or not hi:
        return None
    return min(lo), max(hi)


def _changed(slot: Slot, changed: Mapping[str, float | tuple[float, float]]
             ) -> float | tuple[float, float] | None:
    for key in (slot.label, *slot.refs):
        if key in changed:
            return changed[key]
    return None


def retune_group(slots: Sequence[Slot], changed: Mapping[str, float | tuple[float, float]],
                 f_target: float, *, c_stray: float = 0.0, f_tol: float | None = None
                 ) -> Retune:
    """Retune one tie group of slots: an inductor, fixed capacitors in parallel, a trimmer.

    ``changed`` maps a slot's label (``"C3"`` or ``"C3,C4"``) or one of its references to the
    stand-in's value (H or F; a trimmer's ``(min, max)``). Other slots keep their called-for
    part's value. A slot counts once however many references it has: the group is one tank.
    Raises :class:`FitError` when the group is not one inductor with capacitors.
    """
    inductors: list[float] = []
    fixed: list[float] = []
    trimmers: list[tuple[float, float]] = []
    for slot in slots:
        new = _changed(slot, changed)
        part = slot.part
        if slot.kind is Kind.INDUCTOR:
            value = new if new is not None else (part.nominal("l") if part else None)
            if not isinstance(value, float | int):
                raise FitError(f"slot {slot.label}: no inductance known; give the part or its "
                               "value")
            inductors.append(float(value))
        elif slot.kind is Kind.CAPACITOR:
            is_trim = part is not None and part.family in TRIMMER_FAMILIES
            if isinstance(new, tuple):
                trimmers.append((float(new[0]), float(new[1])))
            elif is_trim and new is None:
                assert part is not None
                rng = trimmer_range(part)
                if rng is None:
                    raise FitError(f"slot {slot.label}: trimmer without a range; record its c "
                                   "min and max (c=5p:min, c=30p:max)")
                trimmers.append(rng)
            else:
                value = new if new is not None else (part.nominal("c") if part else None)
                if value is None:
                    raise FitError(f"slot {slot.label}: no capacitance known; give the part or "
                                   "its value")
                fixed.append(float(value))
        else:
            raise FitError(f"slot {slot.label} is a {slot.kind.value}; an LC tie group holds "
                           "one inductor and capacitors (crystal groups: stock.fit.crystal)")
    if len(inductors) != 1:
        raise FitError(f"the tie group has {len(inductors)} inductors; an LC tank has exactly "
                       "one")
    if len(trimmers) > 1:
        raise FitError("the tie group has more than one trimmer; keep one and list the others "
                       "as fixed values")
    return retune(l=inductors[0], c_fixed=sum(fixed), f_target=f_target,
                  trimmer=trimmers[0] if trimmers else None, c_stray=c_stray, f_tol=f_tol)
