"""Requirements of a slot, from three sources, each kept with its origin.

1. :data:`Source.PART` — the called-for part's guaranteed ratings (what a stand-in must
   meet or beat for its kind); used where nothing more is known.
2. :data:`Source.ROLE` — rules of the policy table applied to the slot's role and
   operating conditions (supply, frequency, current, dissipation, ambient, voltages).
3. :data:`Source.USER` — bounds written on the slot or the command line.

Where two sources bound the same parameter the same way, the more specific one wins:
user over role over part (a 24 V class-C swing replaces the called-for part's 40 V).
"""

from __future__ import annotations

import math
from dataclasses import replace

from stock.fit.checks import DIELECTRIC_RANGE, _ambient_pd
from stock.fit.text import frac, si
from stock.kinds import CAPACITOR_CLASS, POLARISED_FAMILIES, Bound, Kind
from stock.params import RLC_PARAMS
from stock.parts import PartSpec
from stock.rules import Policy
from stock.slots import FREQUENCY_DETERMINING, Op, Requirement, Role, Slot, Source

GE, LE, EQ = Op.GE, Op.LE, Op.EQ

_PA = frozenset({Role.PA_A, Role.PA_B, Role.PA_C, Role.PA_E})
#: Roles whose quiescent dissipation is about supply × current (class A: the whole DC
#: input is dissipated with no drive — textbook).
_CLASS_A_LIKE = frozenset({Role.AUDIO_AMP, Role.RF_AMP, Role.PA_A, Role.OSCILLATOR, Role.MIXER})
#: Roles where the transistor works at the operating frequency (fT rule applies).
_NO_FT = frozenset({Role.SWITCH, Role.PASS, Role.REGULATOR, Role.BIAS, Role.LOAD})
#: Capacitor roles where a larger value does no harm up to a point.
_LARGER_OK_C = frozenset({Role.BYPASS, Role.DECOUPLING, Role.COUPLING, Role.RESERVOIR})
_MAINS = frozenset({Role.MAINS_X, Role.MAINS_Y})
_FAST_DIODE_ROLES = frozenset({Role.CLAMP, Role.SWITCH, Role.DETECTOR})

_VALUE_PARAM = RLC_PARAMS
_WINDOWED = frozenset(RLC_PARAMS.values())  # values a slot holds within a window
_TOL_RULE = {Kind.RESISTOR: "r_tol_default", Kind.CAPACITOR: "c_tol_default",
             Kind.INDUCTOR: "l_tol_default"}

#: Ratings a stand-in must meet or beat, by kind: (param, op, hard). ``hard=False``
#: means missing it only warns (a characteristic the design may not lean on).
_RATINGS: dict[Kind, tuple[tuple[str, Op, bool], ...]] = {
    Kind.BJT: (("vceo", GE, True), ("ic", GE, True), ("pd", GE, True), ("ft", GE, True),
               ("hfe", GE, False), ("ccb", LE, False), ("nf", LE, False)),
    Kind.FET: (("vds", GE, True), ("id", GE, True), ("pd", GE, True), ("gfs", GE, False),
               ("rds_on", LE, False), ("ciss", LE, False), ("crss", LE, False),
               ("nf", LE, False)),
    Kind.DIODE: (("vrrm", GE, True), ("if_avg", GE, True), ("pd", GE, True),
                 ("vf", LE, False), ("cj", LE, False), ("trr", LE, False), ("ir", LE, False),
                 ("ifsm", GE, False), ("cv_ratio", GE, True), ("rs", LE, False),
                 ("q", GE, False)),
    Kind.CAPACITOR: (("v_rated", GE, True), ("v_ac", GE, True), ("esr", LE, False),
                     ("i_ripple", GE, False)),
    Kind.RESISTOR: (("p_rated", GE, True), ("v_limit", GE, False), ("tc", LE, False)),
    Kind.INDUCTOR: (("isat", GE, True), ("irms", GE, True), ("srf", GE, False),
                    ("q", GE, False), ("dcr", LE, False)),
    Kind.CRYSTAL: (("r1", LE, False), ("drive", GE, False)),
    Kind.IC: (("vin", GE, True), ("iout", GE, True), ("vdrop", LE, False), ("gbw", GE, False),
              ("slew", GE, False)),
}


def _p(param: str, op: Op, value: float | str, why: str, **kw: object) -> Requirement:
    return Requirement(param, op, value, Source.PART, why, **kw)  # type: ignore[arg-type]


def _r(param: str, op: Op, value: float | str, why: str, rule: str, **kw: object
       ) -> Requirement:
    return Requirement(param, op, value, Source.ROLE, why, rule, **kw)  # type: ignore[arg-type]


def safety_class(attr: str, role: Role) -> str:
    """The IEC 60384-14 class a position needs from a part's marking (``X1/Y2``): the Y
    class in a line-to-earth position, the X class across the line, else the first."""
    classes = [c.strip().upper() for c in attr.replace(",", "/").split("/") if c.strip()]
    letter = "Y" if role is Role.MAINS_Y else "X" if role is Role.MAINS_X else None
    for c in classes:
        if letter and c.startswith(letter):
            return c
    return classes[0] if classes else attr.strip().upper()


def part_tolerance(part: PartSpec) -> tuple[float, float] | None:
    """The part's tolerance as signed fractions (−0.05, +0.05), or None if not stated."""
    vals = part.values("tol")
    if not vals:
        return None
    lo = [p.value for p in vals if p.bound is Bound.MIN]
    hi = [p.value for p in vals if p.bound is Bound.MAX]
    if lo and hi:
        return (min(lo), max(hi))
    worst = max(abs(p.value) for p in vals)
    return (-worst, worst)


def _from_part(part: PartSpec, slot: Slot, policy: Policy) -> list[Requirement]:
    kind = part.kind
    role = slot.role
    out: list[Requirement] = []
    number = part.number
    freq_det = role in FREQUENCY_DETERMINING

    if part.family and kind in (Kind.BJT, Kind.FET):
        out.append(_p("family", EQ, part.family, f"the same polarity/channel as {number}"))
    if kind is Kind.DIODE and part.family:
        if part.family in ("zener", "varicap", "led"):
            out.append(_p("family", EQ, part.family, f"{number} is a {part.family}"))
        else:
            out.append(_p("family", EQ, "signal|schottky|germanium|rectifier",
                          "a rectifying diode (not a zener, varicap or LED)"))

    # the value of a passive: within the called-for tolerance band
    vparam = _VALUE_PARAM.get(kind)
    if vparam is not None:
        nominal = part.nominal(vparam)
        if nominal is not None:
            tol = part_tolerance(part)
            stated = tol is not None
            if tol is None:
                d = policy[_TOL_RULE[kind]]
                tol = (-d, d)
            band = f"{si(nominal, {'r': 'Ω', 'c': 'F', 'l': 'H'}[vparam])} " \
                   f"{'±' + frac(max(abs(tol[0]), tol[1]))}"
            larger_ok = (kind is Kind.CAPACITOR and role in _LARGER_OK_C) or \
                        (kind is Kind.INDUCTOR and role is Role.RF_CHOKE)
            out.append(_p(vparam, GE, nominal * (1 + tol[0]), f"the called-for value {band}"))
            if not larger_ok:
                out.append(_p(vparam, LE, nominal * (1 + tol[1]), f"the called-for value {band}"))
            if stated and not larger_ok:
                out.append(_p("tol", LE, max(abs(tol[0]), abs(tol[1])),
                              "no looser tolerance than called for"
                              + (" in a frequency-determining position" if freq_det else ""),
                              warn_only=not freq_det))

    if kind is Kind.DIODE and part.family == "zener":
        vz = part.nominal("vz")
        if vz is not None:
            out.append(_p("vz", GE, vz * 0.95, "the zener voltage ±5 % (common practice)"))
            out.append(_p("vz", LE, vz * 1.05, "the zener voltage ±5 % (common practice)"))

    if kind is Kind.DIODE and part.family == "varicap":
        # the tuning range: at least the called-for C at its lowest reverse voltage, at most
        # the called-for C at its highest (guaranteed bounds)
        cvs = [p for p in part.values("cv") if "vr" in p.at]
        if cvs:
            vr_lo = min(p.at["vr"] for p in cvs)
            vr_hi = max(p.at["vr"] for p in cvs)
            lo = [p for p in cvs if p.at["vr"] == vr_lo and p.bound is not Bound.MAX]
            hi = [p for p in cvs if p.at["vr"] == vr_hi and p.bound is not Bound.MIN]
            if lo:
                out.append(_p("cv", GE, min(p.value for p in lo),
                              "reaches the called-for capacitance at low reverse voltage",
                              at=(("vr", vr_lo),)))
            if hi and vr_hi != vr_lo:
                out.append(_p("cv", LE, max(p.value for p in hi),
                              "falls to the called-for capacitance at high reverse voltage",
                              at=(("vr", vr_hi),)))

    if kind is Kind.CAPACITOR:
        fam = part.family
        cls = CAPACITOR_CLASS.get(fam or "")
        if cls is not None and not freq_det:
            out.append(_p("dielectric", LE, cls, "a better dielectric may replace a worse one",
                          warn_only=True))
        if fam is not None and fam not in POLARISED_FAMILIES:
            out.append(_p("polarised", EQ, "no", f"{number} is not polarised",
                          warn_only=role in (Role.BYPASS, Role.DECOUPLING, Role.RESERVOIR)))
        safety = part.attrs.get("safety")
        if safety:
            out.append(_p("safety", EQ, safety_class(safety, role),
                          "IEC 60384-14: same or better class"))
        rng = DIELECTRIC_RANGE.get(fam or "")
        tmax = part.get("tmax")
        tmin = part.get("tmin")
        t_hi = tmax.value if tmax is not None else rng[1] if rng else None
        t_lo = tmin.value if tmin is not None else rng[0] if rng else None
        if t_hi is not None:
            out.append(_p("tmax", GE, t_hi, "the temperature range must cover the original's"))
        if t_lo is not None:
            out.append(_p("tmin", LE, t_lo, "the temperature range must cover the original's"))

    if kind is Kind.CRYSTAL:
        f = part.nominal("f")
        if f is not None:
            out.append(_p("f", EQ, f, "the same nominal frequency"))
        n = part.nominal("overtone")
        if n is not None:
            out.append(_p("overtone", EQ, n, "the same overtone order"))
        cl = part.nominal("cl")
        if cl is not None:
            out.append(_p("cl", EQ, cl, "a different load capacitance shifts the frequency; "
                          "retune the load capacitors", warn_only=True))

    for param, op, hard in _RATINGS.get(kind, ()):
        if kind is Kind.DIODE and param in ("cv_ratio", "rs", "q") and part.family != "varicap":
            continue
        if param == "pd":
            p = _ambient_pd(part)
            if p is not None:
                out.append(_p("pd", GE, p.value, f"{number}'s free-air power rating"))
            continue
        if param == "vf":
            # judged at the called-for part's own test current
            vals = [p for p in part.values("vf") if p.bound is Bound.MAX and "if" in p.at]
            if vals:
                p = min(vals, key=lambda q: q.at["if"])
                out.append(_p("vf", LE, p.value, f"no more forward drop than {number}",
                              at=(("if", p.at["if"]),), warn_only=True))
            continue
        g = part.low(param) if op is GE else part.high(param)
        if g is None:
            continue
        at: tuple[tuple[str, float], ...] = ()
        if param == "hfe" and g.param.at.get("ic"):
            # hFE depends strongly on IC: compare at the called-for part's test current
            at = (("ic", g.param.at["ic"]),)
        hard_here = hard or (param == "trr" and role in _FAST_DIODE_ROLES) or \
            (param == "rds_on" and role is Role.SWITCH) or \
            (param == "i_ripple" and role is Role.RESERVOIR)
        typ = "" if g.guaranteed else " (typical value: a guide only)"
        out.append(_p(param, op, g.value, f"{number}'s rating{typ}",
                      warn_only=not (hard_here and g.guaranteed), at=at))
    return out


def _from_role(slot: Slot, policy: Policy) -> list[Requirement]:
    kind, role, c, part = slot.kind, slot.role, slot.conditions, slot.part
    out: list[Requirement] = []
    vmp = policy["v_margin_pref"]
    imp = policy["i_margin_pref"]

    if kind in (Kind.BJT, Kind.FET):
        vpar, ipar = ("vceo", "ic") if kind is Kind.BJT else ("vds", "id")
        if c.freq and kind is Kind.BJT and role not in _NO_FT:
            lo, hi = policy["ft_ratio_min"], policy["ft_ratio_pref"]
            out.append(_r("ft", GE, lo * c.freq, f"fT ≥ {lo:g} × f (|hfe| ≈ fT/f at "
                          f"{si(c.freq, 'Hz')})", "ft_ratio_min", prefer=hi * c.freq))
        vs = c.supply
        if c.v_peak is not None:
            out.append(_r(vpar, GE, c.v_peak, f"the peak voltage {si(c.v_peak, 'V')}",
                          "v_margin_pref", prefer=c.v_peak * vmp))
        elif vs is not None and role in (Role.PA_A, Role.PA_B, Role.PA_C):
            k = policy["swing_class_abc"]
            pk = k * vs
            pref = pk * vmp if role is Role.PA_A else policy["swing_mismatch_pref"] * vs
            out.append(_r(vpar, GE, pk, f"tuned class {role.value[-1].upper()} swings to "
                          f"{k:g} × {si(vs, 'V')} = {si(pk, 'V')}", "swing_class_abc",
                          prefer=pref))
        elif vs is not None and role is Role.PA_E:
            k = policy["swing_class_e"]
            pk = k * vs
            out.append(_r(vpar, GE, pk, f"class E peaks at {k:g} × {si(vs, 'V')} = "
                          f"{si(pk, 'V')} (Sokal 1975)", "swing_class_e", prefer=pk * vmp))
        elif vs is not None:
            out.append(_r(vpar, GE, vs, f"the supply {si(vs, 'V')}", "v_margin_pref",
                          prefer=vs * vmp))
        i = c.i_peak if c.i_peak is not None else c.current
        if i is not None:
            if role is Role.PA_E and c.i_peak is None:
                k = policy["ipeak_class_e"]
                out.append(_r(ipar, GE, k * i, f"class-E switch current peaks at {k:g} × "
                              f"{si(i, 'A')} (Sokal 1975)", "ipeak_class_e", prefer=k * i * imp))
            else:
                out.append(_r(ipar, GE, i, f"the {'peak ' if c.i_peak else ''}current "
                              f"{si(i, 'A')}", "i_margin_pref", prefer=i * imp))
        diss = c.dissipation
        how = ""
        if diss is None and role in _CLASS_A_LIKE and c.supply and c.current:
            diss = c.supply * c.current
            how = " (supply × current: class-A worst case)"
        if diss is not None:
            out.append(_r("pd", GE, diss, f"dissipates {si(diss, 'W')}{how}; PD(TA) = "
                          "(Tj,max − TA)/RθJA", "pd_fraction_max"))

    elif kind is Kind.DIODE:
        vpk = c.v_peak if c.v_peak is not None else \
            c.v_rms * math.sqrt(2) if c.v_rms is not None else c.supply
        if role in (Role.RECTIFIER_HALF, Role.RECTIFIER_BRIDGE) and vpk is not None:
            rid = "piv_half_wave" if role is Role.RECTIFIER_HALF else "piv_bridge"
            k = policy[rid]
            out.append(_r("vrrm", GE, k * vpk, f"PIV = {k:g} × Vpk {si(vpk, 'V')}", rid,
                          prefer=k * vpk * vmp))
        elif vpk is not None and role in (Role.CLAMP, Role.VARICAP, Role.SWITCH,
                                          Role.DETECTOR, Role.GENERAL):
            out.append(_r("vrrm", GE, vpk, f"the reverse voltage {si(vpk, 'V')}",
                          "v_margin_pref", prefer=vpk * vmp))
        if c.current is not None and role is not Role.DETECTOR:
            out.append(_r("if_avg", GE, c.current, f"the forward current {si(c.current, 'A')}",
                          "i_margin_pref", prefer=c.current * imp))
        if role is Role.DETECTOR:
            i = c.current if c.current is not None else policy["detector_if_default"]
            out.append(_r("vf", LE, policy["detector_vf_max"], "a detector must conduct at "
                          "small signal levels", "detector_vf_max", at=(("if", i),)))
            out.append(_r("cj", LE, policy["detector_cj_max"], "junction capacitance shunts "
                          "the RF to be detected", "detector_cj_max"))

    elif kind is Kind.CAPACITOR:
        nominal = part.nominal("c") if part else None
        if role in FREQUENCY_DETERMINING:
            out.append(_r("dielectric", LE, policy["freq_det_class_max"], "only class 1 "
                          "(C0G/NP0) holds its value where it sets a frequency",
                          "freq_det_class_max"))
        if nominal is not None and role in _LARGER_OK_C:
            lo = policy["c_low_fraction"]
            out.append(_r("c", GE, nominal * lo, f"at least {frac(lo)} of the called-for "
                          f"{si(nominal, 'F')}", "c_low_fraction"))
            rid = "c_reservoir_ratio_pref" if role is Role.RESERVOIR else "c_bypass_ratio_pref"
            k = policy[rid]
            out.append(_r("c", LE, nominal * k, f"up to {k:g} × the called-for value", rid,
                          warn_only=True))
        if role in _MAINS:
            called = part.attrs.get("safety") if part else None
            wanted = (safety_class(called, role) if called else
                      "X2" if role is Role.MAINS_X else "Y2")
            out.append(_r("safety", EQ, wanted, "IEC 60384-14: same or better class, never a "
                          "non-safety part", "caution_v_ac"))
            if c.v_rms is not None:
                out.append(_r("v_ac", GE, c.v_rms, f"the mains {si(c.v_rms, 'V')} RMS",
                              "caution_v_ac"))
            if role is Role.MAINS_Y and nominal is not None:
                out.append(_r("c", LE, nominal, "no larger than called for: a Y capacitor's "
                              "value sets the earth-leakage current", "caution_v_ac"))
        else:
            v = c.v_dc if c.v_dc is not None else c.v_peak if c.v_peak is not None else \
                c.v_rms * math.sqrt(2) if c.v_rms is not None else c.supply
            if v is not None:
                out.append(_r("v_rated", GE, v, f"the working voltage {si(v, 'V')}",
                              "cap_v_fraction"))

    elif kind is Kind.RESISTOR:
        r = part.nominal("r") if part else None
        p = c.dissipation
        how = ""
        if p is None and r:
            vr = c.v_rms if c.v_rms is not None else c.v_dc
            if vr is not None:
                p, how = vr * vr / r, f" (V²/R with {si(vr, 'V')})"
            elif c.current is not None:
                p, how = c.current ** 2 * r, f" (I²R with {si(c.current, 'A')})"
        if p is not None:
            hi, pref = policy["r_p_fraction_max"], policy["r_p_fraction_pref"]
            out.append(_r("p_rated", GE, p / hi, f"dissipates {si(p, 'W')}{how}; run at ≤ "
                          f"{frac(hi)} of the rating", "r_p_fraction_max", prefer=p / pref))
        v = c.v_peak if c.v_peak is not None else c.v_dc if c.v_dc is not None else \
            c.v_rms * math.sqrt(2) if c.v_rms is not None else None
        if v is not None and v > policy["r_v_check_above"]:
            out.append(_r("v_limit", GE, v, f"the voltage across it {si(v, 'V')}",
                          "r_v_check_above", prefer=v * vmp))

    elif kind is Kind.INDUCTOR:
        ipk = c.i_peak if c.i_peak is not None else c.current
        if ipk is not None:
            out.append(_r("isat", GE, ipk, f"the peak current {si(ipk, 'A')}", "i_margin_pref",
                          prefer=ipk * imp))
        if c.current is not None:
            out.append(_r("irms", GE, c.current, f"the current {si(c.current, 'A')}",
                          "i_margin_pref", prefer=c.current * imp))
        if c.freq:
            lo, hi = policy["srf_ratio_min"], policy["srf_ratio_pref"]
            out.append(_r("srf", GE, lo * c.freq, f"self-resonance well above "
                          f"{si(c.freq, 'Hz')}", "srf_ratio_min", prefer=hi * c.freq))
            if role is Role.RF_CHOKE and c.impedance:
                k = policy["rfc_x_ratio"]
                lmin = k * c.impedance / (2 * math.pi * c.freq)
                out.append(_r("l", GE, lmin, f"XL ≥ {k:g} × {si(c.impedance, 'Ω')} at "
                              f"{si(c.freq, 'Hz')}", "rfc_x_ratio"))
    return out


_PRIORITY = {Source.USER: 0, Source.ROLE: 1, Source.PART: 2}


def _key(r: Requirement) -> tuple[str, Op, tuple[tuple[str, float], ...]]:
    # a varicap's C is bounded at two reverse voltages; elsewhere the operating point does
    # not make a second requirement (the role's VF at 1 mA replaces the part's at 5 mA)
    return (r.param, r.op, r.at if r.param == "cv" else ())


#: Roles where a transistor's speed is not what the position demands (at DC or audio).
LOW_FREQUENCY_ROLES = frozenset({Role.SWITCH, Role.PASS, Role.AUDIO_AMP, Role.BIAS,
                                 Role.REGULATOR, Role.LOAD})


def requirements_for(slot: Slot, policy: Policy) -> list[Requirement]:
    """The requirements of a slot: part ratings, role rules and explicit bounds merged.

    For one parameter and direction the more specific source wins (user > role > part);
    the rest keep their generation order: part, role, user.
    """
    part_reqs = _from_part(slot.part, slot, policy) if slot.part is not None else []
    role_reqs = _from_role(slot, policy)
    if slot.role in LOW_FREQUENCY_ROLES:
        # The called-for part's figures decide only "when nothing more is known". In a
        # switch, pass element, bias or audio stage its fT says how fast the designer's
        # part was, not what the position needs (the circuit's RF frequency, if the kit
        # gives one, is not this stage's): a preference.
        part_reqs = [replace(r, warn_only=True) if r.param == "ft" else r for r in part_reqs]
    if slot.conditions.ambient is not None and slot.kind in (
            Kind.CAPACITOR, Kind.RESISTOR, Kind.INDUCTOR, Kind.CRYSTAL) and \
            not any(r.param == "tmax" for r in part_reqs):
        role_reqs.append(_r("tmax", GE, slot.conditions.ambient, "rated for the ambient "
                            f"{slot.conditions.ambient:g} °C", "ambient_default"))
    user_reqs = list(slot.requirements)
    every = part_reqs + role_reqs + user_reqs
    best: dict[tuple[str, Op, tuple[tuple[str, float], ...]], int] = {}
    for r in every:
        k = _key(r)
        best[k] = min(best.get(k, 9), _PRIORITY[r.source])
    return [r for r in every if _PRIORITY[r.source] == best[_key(r)]]


#: Characteristics a store query may screen on when a requirement is a plain ``>=``: a
#: part whose guaranteed min (or max) lies below it fails for sure, and one that only has
#: a typical value is kept (the query ignores typical rows).
SCREENED_CHARS = frozenset({"ft", "srf"})


def screen(reqs: list[Requirement]) -> list[Requirement]:
    """The requirements a store query may use to drop candidates before :func:`assess`.

    Only hard bounds on ratings (a single guaranteed figure: VCEO, IC, VDS, VRRM, Isat …),
    the family equality and the value window of a resistor, capacitor or inductor slot
    (its nominal value between two bounds) qualify: a part that misses one of them fails
    for sure. A query must still keep parts that lack the parameter (they are "unknown",
    a warning, not a failure). Characteristics, derated limits (PD at TA, a capacitor's
    voltage by dielectric) and bounds at an operating point are left to the checks.
    """
    from stock.params import PARAMS, Sense

    out = []
    for r in reqs:
        if r.warn_only or r.at:
            continue
        if r.param == "family" and r.op is EQ:
            out.append(r)
            continue
        if r.param in _WINDOWED and r.op in (GE, LE) and not isinstance(r.value, str):
            out.append(r)  # the nominal value is the record's own figure for it
            continue
        if r.param in SCREENED_CHARS and r.op is GE and not isinstance(r.value, str):
            out.append(r)  # any guaranteed value below the bound means the min is too
            continue
        pdef = PARAMS.get(r.param)
        if pdef is None or pdef.sense is not Sense.RATING or r.op is EQ or \
                isinstance(r.value, str) or r.param == "pd" or \
                (r.param == "v_rated" and r.rule == "cap_v_fraction") or \
                (r.param == "vceo" and r.rule in ("swing_class_abc", "swing_class_e")):
            # (an RF transistor's VCER may cover a swing its VCEO does not: a warning)
            continue
        out.append(r)
    return out
