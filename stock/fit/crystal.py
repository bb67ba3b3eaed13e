"""Crystal pulling: which frequencies a crystal reaches over a range of load capacitance.

A quartz crystal's equivalent circuit is a motional branch (L1, C1, R1) with the shunt
capacitance C0 across it. Loaded by a capacitance CL it resonates above its series
resonance fs by (facts.md §5.2; Petermann-Technik pull calculator, a crystal vendor's
design-in page):

    (fL − fs)/fs ≈ C1 / (2 (C0 + CL))

so between two loads ``Δf/f ≈ (C1/2)·(1/(C0+CL2) − 1/(C0+CL1))`` and the trim sensitivity
is ``S = −C1 / (2 (C0+CL)²)`` per farad. Raising CL lowers the frequency. The anti-resonance
``fa ≈ fs·√(1 + C1/C0)`` gives ``C0 = C1 / ((fa/fs)² − 1)``. An overtone mode pulls about
1/n² as far as the fundamental (facts.md §5.2, secondary source): modelled here by a
motional capacitance of C1/n².

Values are SI floats (F, Hz); offsets and pulls are fractions (1e-6 = 1 ppm).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

from stock.errors import FitError
from stock.fit.combine import fmt_si, policy_value
from stock.fit.tuned import TRIMMER_FAMILIES, trimmer_range
from stock.kinds import Bound, Kind
from stock.parts import PartSpec, Stocked
from stock.slots import Slot

#: C0 assumed when a crystal's record has none (policy ``xtal_c0_assumed``): 7 pF is the
#: usual HC-49/U specification limit (facts.md §5.2: Intel SA-1110 crystal spec, Yoketant
#: glossary). A larger C0 pulls less, so the assumption errs on the side of "cannot reach".
C0_ASSUMED = 7e-12

#: The overtone order assumed for a crystal of family "overtone" with no order on record
#: (policy ``xtal_overtone_assumed``):
#: the third overtone is the usual one [common practice].
OVERTONE_ASSUMED = 3


def _check(c1: float, c0: float, *cls: float) -> None:
    if not (c1 > 0 and math.isfinite(c1)):
        raise FitError(f"motional capacitance C1 = {c1!r} must be a positive value in farads")
    if not (c0 >= 0 and math.isfinite(c0)):
        raise FitError(f"shunt capacitance C0 = {c0!r} must be zero or positive, in farads")
    for cl in cls:
        if not (cl >= 0 and math.isfinite(cl)) or c0 + cl <= 0:
            raise FitError(f"load capacitance CL = {cl!r} must be zero or positive (farads) "
                           "with C0 + CL above zero")


def load_offset(c1: float, c0: float, cl: float) -> float:
    """(fL − fs)/fs ≈ C1/(2(C0+CL)): how far a load CL lifts the crystal above fs."""
    _check(c1, c0, cl)
    return c1 / (2.0 * (c0 + cl))


def pull(c1: float, c0: float, cl_from: float, cl_to: float) -> float:
    """Δf/f when the load changes from ``cl_from`` to ``cl_to`` (negative when CL rises)."""
    _check(c1, c0, cl_from, cl_to)
    return 0.5 * c1 * (1.0 / (c0 + cl_to) - 1.0 / (c0 + cl_from))


def sensitivity(c1: float, c0: float, cl: float) -> float:
    """d(Δf/f)/dCL = −C1/(2(C0+CL)²), per farad (×1e-6 gives ppm/pF); always negative."""
    _check(c1, c0, cl)
    return -c1 / (2.0 * (c0 + cl) ** 2)


def c0_from_fa(fs: float, fa: float, c1: float) -> float:
    """Shunt capacitance from series and anti-resonance: C0 = C1/((fa/fs)² − 1)."""
    if not (fs > 0 and fa > fs and math.isfinite(fa)):
        raise FitError(f"need 0 < fs < fa (got fs={fs!r}, fa={fa!r}); fa is the higher one")
    if not (c1 > 0 and math.isfinite(c1)):
        raise FitError(f"motional capacitance C1 = {c1!r} must be a positive value in farads")
    return c1 / ((fa / fs) ** 2 - 1.0)


def cl_for_offset(c1: float, c0: float, offset: float) -> float | None:
    """The load capacitance that lifts the crystal ``offset`` above fs, or None if none can.

    Solves ``offset = C1/(2(C0+CL))`` exactly: ``CL = C1/(2·offset) − C0``. No positive
    load reaches an offset ≤ 0 (at or below fs) or above ``C1/(2·C0)``.
    """
    if offset <= 0:
        return None
    cl = c1 / (2.0 * offset) - c0
    return cl if cl > 0 else None


@dataclass(frozen=True)
class Pulling:
    """The frequencies a crystal reaches over a load range, and whether one is ``f_wanted``.

    ``f_low``/``f_high`` are at the largest/smallest load; ``cl_needed`` is the load that
    gives ``f_wanted`` (even outside the range; None when no positive load can).
    ``known`` is False when the record lacks what the model needs (then nothing is claimed).
    """

    f_nominal: float
    f_low: float
    f_high: float
    f_wanted: float
    reachable: bool
    cl_needed: float | None
    text: str
    fs: float = 0.0
    known: bool = True
    notes: list[str] = field(default_factory=list)

    @property
    def ppm_off(self) -> float:
        """How far ``f_wanted`` is from the nominal frequency, in ppm."""
        return (self.f_wanted / self.f_nominal - 1.0) * 1e6


def _hz(f: float) -> str:
    """Crystal frequencies to the hertz: 10.000200 MHz (3 significant figures hide pulling)."""
    return f"{f / 1e6:.6f} MHz" if f >= 1e6 else f"{f / 1e3:.3f} kHz"


def _value(part: PartSpec, name: str) -> tuple[float | None, Bound | None]:
    vals = part.values(name)
    if not vals:
        return None, None
    for b in (Bound.NOM, Bound.TYP, Bound.MAX, Bound.MIN):
        for p in vals:
            if p.bound is b:
                return p.value, p.bound
    return vals[0].value, vals[0].bound


def reachable(crystal: PartSpec, f_wanted: float, cl_range: tuple[float, float], *,
              overtone: int | None = None, policy: Mapping[str, float] | None = None,
              ppm_tol: float = 0.0) -> Pulling:
    """Can ``crystal`` be pulled onto ``f_wanted`` (Hz) by a load within ``cl_range`` (F)?

    The record gives ``f`` at its specified load ``cl`` (0 or absent: series resonance),
    ``c1`` (needed), ``c0`` (else 7 pF is assumed) and ``overtone`` (n; pullability ≈ 1/n²,
    modelled by C1/n², where ``c1`` is read as the fundamental-mode value). Then
    ``fs = f/(1 + offset(cl_spec))`` and the reachable range is ``fs·(1 + offset(CL))`` over
    ``cl_range``, widened by ``ppm_tol`` either side (for a fixed load, where the range is
    one point).
    """
    lo_cl, hi_cl = sorted(cl_range)
    if lo_cl < 0:
        raise FitError(f"load range {cl_range!r} cannot go below zero; give farads")
    if not (f_wanted > 0 and math.isfinite(f_wanted)):
        raise FitError(f"wanted frequency {f_wanted!r} must be a positive value in Hz")
    f = crystal.nominal("f")
    if f is None or f <= 0:
        raise FitError(f"crystal {crystal.number}: no frequency on record; add f=…")
    notes: list[str] = []
    c1, c1_bound = _value(crystal, "c1")
    if c1 is None or c1 <= 0:
        text = (f"{crystal.number}: no motional capacitance c1 on record, so its pulling is "
                "unknown; add c1 from the datasheet (typically 10–30 fF for HC-49/U)")
        return Pulling(f, f, f, f_wanted, False, None, text, f, False, notes)
    if c1_bound is Bound.TYP:
        notes.append("c1 is a typical value, not guaranteed")
    c0, c0_bound = _value(crystal, "c0")
    if c0 is None:
        c0 = policy_value(policy, "xtal_c0_assumed", C0_ASSUMED)
        notes.append(f"no c0 on record: assumed {fmt_si(c0, 'F')} (usual HC-49/U limit)")
    elif c0_bound is Bound.TYP:
        notes.append("c0 is a typical value")
    n = overtone
    if n is None:
        rec = crystal.nominal("overtone")
        if rec is not None:
            n = int(round(rec))
        elif crystal.family == "overtone":
            n = int(policy_value(policy, "xtal_overtone_assumed", OVERTONE_ASSUMED))
            notes.append(f"overtone order not on record: assumed {n}")
        else:
            n = 1
    if n < 1:
        raise FitError(f"overtone order {n} must be 1 (fundamental) or more")
    c1_eff = c1 / n**2
    if n > 1:
        notes.append(f"overtone {n}: pulls about 1/{n * n} as far as the fundamental "
                     "(crystal makers' application notes)")
    cl_spec = crystal.nominal("cl") or 0.0
    _check(c1_eff, c0, lo_cl, hi_cl, cl_spec)
    # cl = 0 on record means the frequency is the series resonance itself
    fs = f / (1.0 + load_offset(c1_eff, c0, cl_spec)) if cl_spec > 0 else f
    f_high = fs * (1.0 + load_offset(c1_eff, c0, lo_cl))
    f_low = fs * (1.0 + load_offset(c1_eff, c0, hi_cl))
    cl_need = cl_for_offset(c1_eff, c0, f_wanted / fs - 1.0)
    slack = (1e-12 + ppm_tol * 1e-6) * f_wanted
    ok = f_low - slack <= f_wanted <= f_high + slack
    tol = crystal.high("tol")
    if tol is not None:
        notes.append(f"the crystal's own tolerance (±{abs(tol.value) * 1e6:g} ppm) comes on top")
    where = (f"{crystal.number} ({_hz(f)}"
             + (f" at {fmt_si(cl_spec, 'F')}" if cl_spec > 0 else ", series") + ")")
    rng = (f"reaches {_hz(f_low)}–{_hz(f_high)} with CL "
           f"{fmt_si(lo_cl, 'F')}–{fmt_si(hi_cl, 'F')}")
    want = _hz(f_wanted)
    if ok and cl_need is not None and not lo_cl * (1 - 1e-9) <= cl_need <= hi_cl * (1 + 1e-9):
        text = (f"{where} {rng}; {want} is within ±{ppm_tol:g} ppm of that: on frequency")
    elif ok:
        text = (f"{where} {rng}; {want} needs CL ≈ {fmt_si(cl_need or 0.0, 'F')}: can be "
                "pulled on")
    elif cl_need is None and f_wanted <= fs:
        text = (f"{where} {rng}; {want} is at or below its series resonance "
                f"{_hz(fs)}, which no load capacitance reaches (a series inductor can pull "
                "lower, at some cost in stability)")
    elif cl_need is None:
        text = (f"{where} {rng}; {want} is above what even a vanishing load reaches: "
                "cannot be pulled on")
    else:
        side = "smaller" if cl_need < lo_cl else "larger"
        text = (f"{where} {rng}; {want} would need CL ≈ {fmt_si(cl_need, 'F')}, {side} "
                "than the range: cannot be pulled on")
    return Pulling(f, f_low, f_high, f_wanted, ok, cl_need, text, fs, True, notes)


def find_pullable(f_wanted: float, cl_range: tuple[float, float], stock: Sequence[Stocked], *,
                  need: int = 1, policy: Mapping[str, float] | None = None
                  ) -> list[tuple[Stocked, Pulling]]:
    """Crystals in free stock that can be pulled onto ``f_wanted`` within ``cl_range``.

    Ranked by how close the needed load is to the middle of the range (the most trim left
    either way), then by free stock. Crystals whose pulling is unknown are left out.
    """
    mid = sum(cl_range) / 2.0
    out: list[tuple[Stocked, Pulling]] = []
    for s in stock:
        if s.part.kind is not Kind.CRYSTAL or s.to_buy or s.free < need:
            continue
        if s.part.nominal("f") is None:
            continue
        p = reachable(s.part, f_wanted, cl_range, policy=policy)
        if p.known and p.reachable:
            out.append((s, p))
    out.sort(key=lambda sp: (abs((sp[1].cl_needed or 0.0) - mid), -sp[0].free))
    return out


# --- a crystal and its load capacitors as one tie group ---------------------------------------

#: Without a trimmer, how far (ppm) a changed load may move the crystal and still count as on
#: frequency when the crystal states no tolerance (policy ``xtal_load_ppm_tol``).
LOAD_PPM_TOL = 20.0

#: Stray capacitance of board and oscillator pins, added to the load (policy
#: ``xtal_c_stray``): typically 2–5 pF (public Pierce load-capacitor notes and calculators).
C_STRAY_ASSUMED = 3e-12


def pierce_load(c_a: float, c_b: float | None = None, c_stray: float = 0.0) -> float:
    """The load capacitance (F) a crystal sees from its load capacitors.

    Two capacitors from each crystal pin to ground (the Pierce oscillator) are in series as
    the crystal sees them: ``CL = Ca·Cb/(Ca + Cb) + C_stray`` (the load formula of crystal
    and microcontroller application notes [common practice]). One capacitor (in series with
    the crystal, or across it) gives ``CL = Ca + C_stray``.
    """
    if c_a <= 0 or (c_b is not None and c_b <= 0) or c_stray < 0:
        raise FitError("load capacitors must be positive and the stray capacitance not "
                       "negative; give farads")
    if c_b is None:
        return c_a + c_stray
    return c_a * c_b / (c_a + c_b) + c_stray


def _slot_value(slot: Slot, changed: Mapping[str, object]) -> object:
    for key in (slot.label, *slot.refs):
        if key in changed:
            return changed[key]
    return None


def _load_range(caps: list[tuple[float, float]], c_stray: float) -> tuple[float, float]:
    """CL (min, max) of one or two load capacitors, each given as its (min, max)."""
    if len(caps) == 1:
        return pierce_load(caps[0][0], None, c_stray), pierce_load(caps[0][1], None, c_stray)
    (a_lo, a_hi), (b_lo, b_hi) = caps
    # CL rises with each capacitor, so its extremes are at both lows and both highs
    return pierce_load(a_lo, b_lo, c_stray), pierce_load(a_hi, b_hi, c_stray)


def _group_parts(slots: Sequence[Slot], changed: Mapping[str, object], use_changes: bool
                 ) -> tuple[PartSpec, list[tuple[float, float]], bool]:
    crystals: list[PartSpec] = []
    caps: list[tuple[float, float]] = []
    trimmers = 0
    for slot in slots:
        new = _slot_value(slot, changed) if use_changes else None
        part = slot.part
        if slot.kind is Kind.CRYSTAL:
            xtal = new if isinstance(new, PartSpec) else part
            if xtal is None:
                raise FitError(f"slot {slot.label}: no crystal known; give the part")
            crystals.append(xtal)
        elif slot.kind is Kind.CAPACITOR:
            if isinstance(new, tuple):
                caps.append((float(new[0]), float(new[1])))
                trimmers += 1
            elif isinstance(new, float | int):
                caps.append((float(new), float(new)))
            elif part is not None and part.family in TRIMMER_FAMILIES:
                rng = trimmer_range(part)
                if rng is None:
                    raise FitError(f"slot {slot.label}: trimmer without a range; record its c "
                                   "min and max (c=5p:min, c=30p:max)")
                caps.append(rng)
                trimmers += 1
            else:
                c = part.nominal("c") if part is not None else None
                if c is None:
                    raise FitError(f"slot {slot.label}: no capacitance known; give the part or "
                                   "its value")
                caps.append((c, c))
        else:
            raise FitError(f"slot {slot.label} is a {slot.kind.value}; a crystal's tie group "
                           "holds the crystal and its load capacitors")
    if len(crystals) != 1:
        raise FitError(f"the tie group has {len(crystals)} crystals; a crystal's load group has "
                       "exactly one")
    if not 1 <= len(caps) <= 2:
        raise FitError(f"the tie group has {len(caps)} load capacitors; give one or two (a "
                       "Pierce oscillator has one from each pin to ground)")
    return crystals[0], caps, trimmers > 0


def load_group(slots: Sequence[Slot], changed: Mapping[str, object],
               f_wanted: float | None = None, *, c_stray: float | None = None,
               ppm_tol: float | None = None, policy: Mapping[str, float] | None = None
               ) -> Pulling:
    """A crystal's tie group after a stand-in: is the crystal still (or again) on frequency?

    The group is one crystal and one or two load capacitors (one may be a trimmer, its range
    on record as ``c`` min and max). ``changed`` maps a slot's label or reference to the
    stand-in: a value in farads, a trimmer's ``(min, max)``, or a crystal's
    :class:`~stock.parts.PartSpec`. ``f_wanted`` defaults to the frequency the circuit as
    designed gives (its trimmer at mid-range). With a trimmer the answer is whether some
    setting reaches ``f_wanted``; with fixed capacitors, whether the new frequency lies within
    ``ppm_tol`` (default: the crystal's own tolerance, else policy ``xtal_load_ppm_tol``).
    """
    stray = c_stray if c_stray is not None else policy_value(policy, "xtal_c_stray",
                                                              C_STRAY_ASSUMED)
    old_xtal, old_caps, _ = _group_parts(slots, changed, use_changes=False)
    new_xtal, new_caps, has_trimmer = _group_parts(slots, changed, use_changes=True)
    if f_wanted is None:
        mid = [((lo + hi) / 2, (lo + hi) / 2) for lo, hi in old_caps]
        cl = _load_range(mid, stray)[0]
        ref = reachable(old_xtal, 1.0, (cl, cl), policy=policy)  # any f: only fs is needed
        if not ref.known:
            return ref
        f_wanted = ref.f_low
    if ppm_tol is None:
        tol = new_xtal.high("tol")
        ppm_tol = (abs(tol.value) * 1e6 if tol is not None
                   else policy_value(policy, "xtal_load_ppm_tol", LOAD_PPM_TOL))
    cl_range = _load_range(new_caps, stray)
    result = reachable(new_xtal, f_wanted, cl_range, policy=policy,
                       ppm_tol=0.0 if has_trimmer else ppm_tol)
    result.notes.append(f"load includes {fmt_si(stray, 'F')} stray capacitance")
    return result
