"""Checks: one requirement held against one candidate part.

Each :class:`Check` carries what was required, what the candidate has (with its
datasheet bound and test conditions), the margin (a fraction, positive = headroom), the
verdict and a one-line why. Requirements are held against *guaranteed* limits
(``min``/``max``, ratings); a requirement met only by a ``typ`` value is a warning, and a
parameter the record lacks is "unknown" — a warning, never a silent pass.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from enum import StrEnum
from functools import lru_cache
from typing import Any

from stock.fit.text import at_text, frac, si
from stock.kinds import CAPACITOR_CLASS, POLARISED_FAMILIES, Bound, Kind
from stock.params import PARAMS
from stock.parts import Param, PartSpec
from stock.rules import Policy
from stock.slots import Op, Requirement, Slot, Source


class Verdict(StrEnum):
    """The outcome of one check."""

    PASS = "pass"
    WARN = "warn"
    FAIL = "fail"


class Check:
    """One requirement against one candidate.

    Fields: ``param``, ``required`` (rendered, e.g. ">= 50 V"), ``required_value``,
    ``actual``, ``actual_text``, ``bound`` (which datasheet bound ``actual`` is),
    ``at`` (its test conditions), ``margin`` (a fraction; positive = headroom, negative =
    short by), ``verdict``, ``why``, ``source``, ``rule``. Read-only.

    The three text fields of the common numeric checks are rendered on first use: ranking
    thousands of candidates needs only verdicts and margins.
    """

    __slots__ = ("param", "_required", "required_value", "actual", "_actual_text", "bound",
                 "at", "margin", "verdict", "_why", "source", "rule", "_lazy", "op")

    _FIELDS = ("param", "required", "required_value", "actual", "actual_text", "bound", "at",
               "margin", "verdict", "why", "source", "rule")

    def __init__(self, param: str, required: str | None, required_value: float | str | None,
                 actual: float | str | None, actual_text: str | None, bound: Bound | None,
                 at: Mapping[str, float], margin: float | None, verdict: Verdict,
                 why: Any, source: Source, rule: str | None,
                 lazy: tuple | None = None) -> None:
        # plain assignments: thousands of checks are built per query (read-only by
        # convention; the text fields are properties)
        self.param = param
        self._required = required
        self.required_value = required_value
        self.actual = actual
        self._actual_text = actual_text
        self.bound = bound
        self.at = at
        self.margin = margin
        self.verdict = verdict
        self._why = why
        self.source = source
        self.rule = rule
        self._lazy = lazy
        self.op: Op | None = lazy[0].op if lazy is not None else None

    def _render(self) -> None:
        required, actual_text, why = _render_judged(*self._lazy)  # type: ignore[misc]
        if self._required is None:
            self._required = required
        if self._actual_text is None:
            self._actual_text = actual_text
        if self._why is None:
            self._why = why
        self._lazy = None

    @property
    def required(self) -> str:
        if self._lazy is not None:
            self._render()
        return self._required  # type: ignore[return-value]

    @property
    def actual_text(self) -> str:
        if self._lazy is not None:
            self._render()
        return self._actual_text  # type: ignore[return-value]

    @property
    def why(self) -> str:
        if self._lazy is not None:
            self._render()
        if isinstance(self._why, tuple):  # a deferred text: (function, args)
            self._why = self._why[0](*self._why[1])
        return self._why  # type: ignore[return-value]

    def _tuple(self) -> tuple:
        return tuple(getattr(self, f) for f in self._FIELDS)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Check):
            return NotImplemented
        return self._tuple() == other._tuple()

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return "Check(" + ", ".join(f"{f}={getattr(self, f)!r}" for f in self._FIELDS) + ")"


_NO_AT: Mapping[str, float] = {}

#: IEC 60384-14 replacement matrix ("same or better class"), facts.md §3.4. The positions
#: and definitions are the standard's; the matrix itself is common practice. X3, Y3 and
#: Y4 rows are from memory (impulse ratings below X2/Y2).
SAFETY_ACCEPT: dict[str, frozenset[str]] = {
    "X1": frozenset({"X1", "Y1"}),
    "X2": frozenset({"X2", "X1", "Y2", "Y1"}),
    "X3": frozenset({"X3", "X2", "X1", "Y2", "Y1"}),
    "Y1": frozenset({"Y1"}),
    "Y2": frozenset({"Y2", "Y1"}),
    "Y3": frozenset({"Y3", "Y2", "Y1"}),
    "Y4": frozenset({"Y4", "Y2", "Y1"}),
}

#: Temperature range implied by a dielectric code when the record states none
#: (EIA-198 letters, facts.md §3.1/§3.3).
DIELECTRIC_RANGE: dict[str, tuple[float, float]] = {
    "c0g": (-55.0, 125.0),
    "x7r": (-55.0, 125.0),
    "x5r": (-55.0, 85.0),
    "x6s": (-55.0, 105.0),
    "y5v": (-30.0, 85.0),
    "z5u": (10.0, 85.0),
}

#: Families whose rated voltage is derated by a policy rule (facts.md §5.7).
_CAP_FRACTION_RULE = {
    "tantalum": "cap_v_fraction_tantalum",
    "tantalum-polymer": "cap_v_fraction_tantalum_polymer",
    "electrolytic": "cap_v_fraction_electrolytic",
    "polymer": "cap_v_fraction_electrolytic",
}

_STABLE_FAMILIES = frozenset({"c0g", "class1", "mica"})


def _unit(param: str) -> str:
    pdef = PARAMS.get(param)
    return pdef.unit if pdef else ""


def _label(param: str) -> str:
    return param.upper() if len(param) <= 4 else param


def _render_req(req: Requirement, unit: str, value: float | None = None,
                prefer: float | None = None) -> str:
    v = req.value if value is None else value
    if isinstance(v, str):
        return f"{req.op.value} {v}"
    text = f"{req.op.value} {_fmt(req.param, v, unit)}"
    if prefer is not None:
        text += f" (prefer {req.op.value} {_fmt(req.param, prefer, unit)})"
    if req.at:
        text += " " + at_text(req.at)
    return text


def _fmt(param: str, v: float, unit: str) -> str:
    if param == "tol":
        return "±" + frac(v)
    return si(v, unit)


def _margin(op: Op, required: float, actual: float, unit: str) -> float | None:
    if unit == "°C" or required == 0:
        return None  # temperatures are not on a ratio scale
    if op is Op.GE:
        return (actual - required) / abs(required)
    return (required - actual) / abs(required)


def _met(op: Op, required: float, actual: float) -> bool:
    # a relative epsilon: 4k7 ± 5 % must include exactly 4k7·1.05 after float rounding
    eps = 1e-9 * max(abs(required), abs(actual))
    return actual >= required - eps if op is Op.GE else actual <= required + eps


def _unknown(req: Requirement, required: str, what: str = "") -> Check:
    why = what or f"unknown: the record has no {req.param}; check the datasheet"
    return Check(req.param, required, req.value, None, "unknown", None, _NO_AT, None,
                 Verdict.WARN, why, req.source, req.rule)


def _judge(req: Requirement, required: float, actual: float, bound: Bound | None,
           guaranteed: bool, at: Mapping[str, float], unit: str, *,
           prefer: float | None = None, actual_text: Any = None,
           rendered: Any = None) -> Check:
    """Compare and build the check (the common path of every numeric requirement).

    Only the verdict and margin are computed here; the text is rendered on first use.
    """
    op = req.op
    margin = _margin(op, required, actual, unit)
    if not _met(op, required, actual):
        outcome = 0
        verdict = Verdict.WARN if req.warn_only else Verdict.FAIL
    elif not guaranteed:
        outcome = 1
        verdict = Verdict.WARN
    elif prefer is not None and not _met(op, prefer, actual):
        outcome = 2
        verdict = Verdict.WARN
    else:
        outcome = 3
        verdict = Verdict.PASS
    return Check(req.param, None, required, actual, None, bound, at, margin, verdict, None,
                 req.source, req.rule, (req, required, actual, bound, at, unit, prefer,
                                        actual_text, rendered, outcome))


def _render_judged(req: Requirement, required: float, actual: float, bound: Bound | None,
                   at: Mapping[str, float], unit: str, prefer: float | None,
                   actual_text: Any, rendered: Any, outcome: int
                   ) -> tuple[str, str, str]:
    """The texts of a check built by :func:`_judge`: (required, actual_text, why)."""
    # deferred texts come as (function, args) pairs
    if isinstance(rendered, tuple):
        rendered = rendered[0](*rendered[1])
    if isinstance(actual_text, tuple):
        actual_text = actual_text[0](*actual_text[1])
    rtext = rendered or _render_req(req, unit, required, prefer)
    atext = actual_text or _fmt(req.param, actual, unit)
    if bound is not None and bound is not Bound.NOM and actual_text is None:
        atext += f" {bound.value}"
        if at:
            atext += " " + at_text(at)
    if outcome == 0:
        word = "below" if req.op is Op.GE else "above"
        why = f"{_label(req.param)} {atext} is {word} {rtext.split(' (prefer')[0]}; {req.why}"
    elif outcome == 1:
        why = f"met only by a typical value ({atext}); nothing guarantees it"
    elif outcome == 2:
        why = (f"meets {_fmt(req.param, required, unit)} but not the preferred "
               f"{_fmt(req.param, prefer, unit)}; {req.why}")  # type: ignore[arg-type]
    else:
        why = req.why or "meets the requirement"
    return rtext, atext, why.rstrip("; ")


# --- picking the candidate's value ---------------------------------------------------------

@lru_cache(maxsize=256)
def _other_conditions(at: tuple[tuple[str, float], ...]) -> str:
    return f"(given at other test conditions than {at_text(at)[2:]})"


def _pick_at(part: PartSpec, req: Requirement
             ) -> tuple[Param | None, Param | None, str, bool, bool]:
    """The candidate's values of ``req.param`` at the requirement's operating point.

    Returns (guaranteed, typical, note, a pass proves it, a failure proves it). For VF at
    a forward current: a guaranteed maximum at the same or a higher current bounds VF at
    the working current (VF rises with IF), so it proves a pass; it proves a failure only
    when given at (about) the working current. For other parameters (hFE at IC, a
    varicap's C at VR): a value within 10 % of that condition proves either way; values
    at other conditions only hint (a warning).
    """
    key, want = req.at[0]
    vals = part.values(req.param)
    if not vals:
        return None, None, "", True, True
    gbound = Bound.MIN if req.op is Op.GE else Bound.MAX
    if req.param == "vf" and key == "if":
        usable = [p for p in vals if key in p.at and p.at[key] >= want * (1 - 1e-9)]
        note = ""
        if not usable:
            usable = [p for p in vals if key not in p.at]
            note = "(no test current given)" if usable else \
                "VF is given only at lower currents than the working point"
        g = [p for p in usable if p.bound is gbound]
        t = [p for p in usable if p.bound in (Bound.TYP, Bound.NOM)]

        def nearest(ps: list[Param]) -> Param | None:
            return min(ps, key=lambda q: q.at.get(key, 0.0)) if ps else None

        best = nearest(g)
        fail_proves = best is not None and best.at.get(key, want) <= want * 1.1
        if best is not None and not fail_proves and not note:
            note = _higher_current(key, best.at.get(key, want), want)
        return best, nearest(t), note, True, fail_proves
    near = [p for p in vals if key in p.at and abs(p.at[key] - want) <= 0.1 * abs(want)]
    if not near and req.param != "cv":
        # not given at the same test condition: the worst case over the others, flagged
        g = [p for p in vals if p.bound is gbound]
        t = [p for p in vals if p.bound in (Bound.TYP, Bound.NOM)]
        best = (min if req.op is Op.GE else max)(g, key=lambda q: q.value) if g else None
        return best, (t[0] if t else None), _other_conditions(req.at), False, False
    if not near:
        return None, None, f"no {req.param} given at {at_text(req.at)[2:]}", True, True
    g = [p for p in near if p.bound is gbound]
    t = [p for p in near if p.bound in (Bound.TYP, Bound.NOM)]
    best = (min if req.op is Op.GE else max)(g, key=lambda q: q.value) if g else None
    return best, (t[0] if t else None), "", True, True


@lru_cache(maxsize=256)
def _higher_current(key: str, given: float, want: float) -> str:
    return (f"(guaranteed only at {key.upper()} {si(given, 'A')}, above the working "
            f"{si(want, 'A')}: lower there, but how much lower is not given)")


def _ambient_pd(part: PartSpec) -> Param | None:
    """The free-air PD rating (not the one stated at a case temperature)."""
    vals = part.values("pd")
    for p in vals:
        if "tc" not in p.at:
            return p
    return None


def pd_at(part: PartSpec, ta: float) -> tuple[float | None, str]:
    """PD(TA) = (Tj,max − TA)/RθJA, capped at the 25 °C rating (facts.md §5.3).

    RθJA is taken from the record, else derived from PD(25 °C) and Tj,max the way
    datasheets state the derating line. Up to the rating's own ambient (25 °C) the stated
    free-air rating holds; a rating at a case temperature is never used. Returns (watts or
    None, how it was found).
    """
    watts, tj, r, t25 = _pd_numbers(part, ta)
    if watts is None:
        return None, ""
    return watts, _pd_text(watts, ta, tj, r, t25)


def _pd_numbers(part: PartSpec, ta: float
                ) -> tuple[float | None, float | None, float | None, float]:
    """(PD(TA), Tj,max, RθJA, the TA of the PD rating) in one pass over the record."""
    pd25: float | None = None
    t25 = 25.0
    tj: float | None = None
    r: float | None = None
    for p in part.params:
        name = p.name
        if name == "pd":
            if pd25 is None and "tc" not in p.at:  # the free-air rating, not the case one
                pd25 = p.value
                t25 = p.at.get("ta", 25.0)
        elif name == "tj":
            if tj is None:
                tj = p.value
        elif name == "rth_ja" and p.bound is not Bound.MIN and p.value > 0:
            if r is None or p.value > r:  # (a zero or negative RθJA is no figure at all)
                r = p.value
    if r is None and pd25 and tj is not None and tj > t25:
        r = (tj - t25) / pd25
    if pd25 is not None and ta <= t25:
        # the stated rating holds up to its own ambient (some sheets state a PD, Tj and
        # RθJA that do not quite agree; the rating is what they guarantee there)
        return pd25, tj, r, t25
    if tj is None or r is None:
        return None, tj, r, t25
    derated = (tj - ta) / r
    if pd25 is not None and pd25 < derated:
        derated = pd25
    return max(derated, 0.0), tj, r, t25


def _pd_text(watts: float, ta: float, tj: float | None, r: float | None, t25: float) -> str:
    if tj is None or r is None or ta <= t25:
        return f"{si(watts, 'W')} at {t25:g} °C (rated)"
    return f"{si(watts, 'W')} at {ta:g} °C (Tj {tj:g} °C, RθJA {r:.3g} °C/W)"


# --- the special parameters ----------------------------------------------------------------

def _check_family(part: PartSpec, req: Requirement) -> Check:
    allowed = str(req.value).split("|")
    shown = " or ".join(allowed)
    rtext = f"= {shown}"
    fam = part.family
    if fam is None:
        return _unknown(req, rtext, "unknown: the record has no family (polarity, channel, type)")
    if fam in allowed:
        return Check("family", rtext, req.value, fam, fam, None, _NO_AT, None, Verdict.PASS,
                     req.why or "same family", req.source, req.rule)
    verdict = Verdict.WARN if req.warn_only else Verdict.FAIL
    return Check("family", rtext, req.value, fam, fam, None, _NO_AT, None, verdict,
                 f"{fam} where {shown} is called for; {req.why}".rstrip("; "), req.source,
                 req.rule)


def _check_safety(part: PartSpec, req: Requirement) -> Check:
    wanted = str(req.value).upper()
    ok = SAFETY_ACCEPT.get(wanted, frozenset({wanted}))
    rtext = f"class {wanted} or better ({', '.join(sorted(ok))})"
    has = part.attrs.get("safety")
    if not has:
        return Check("safety", rtext, wanted, None, "no safety class", None, _NO_AT, None,
                     Verdict.FAIL, "not an IEC 60384-14 safety capacitor: never use a plain "
                     "capacitor in a mains position, whatever its DC rating", req.source, req.rule)
    classes = {c.strip().upper() for c in has.replace(",", "/").split("/")}
    if classes & ok:
        return Check("safety", rtext, wanted, has, has, None, _NO_AT, None, Verdict.PASS,
                     f"{has} is the same or a better class than {wanted} (IEC 60384-14)",
                     req.source, req.rule)
    return Check("safety", rtext, wanted, has, has, None, _NO_AT, None, Verdict.FAIL,
                 f"{has} may not replace {wanted}: same or better class only "
                 "(IEC 60384-14)", req.source, req.rule)


def _check_dielectric(part: PartSpec, req: Requirement) -> Check:
    limit = int(float(req.value))
    rtext = f"class <= {limit}" + (" (C0G/NP0, mica)" if limit == 1 else "")
    fam = part.family
    if fam is None:
        return _unknown(req, rtext, "unknown: the record has no dielectric; check the marking")
    cls = CAPACITOR_CLASS.get(fam)
    strict = not req.warn_only
    if cls is None:
        if fam == "film" and limit == 1:
            return Check("dielectric", rtext, limit, fam, "film", None, _NO_AT, None,
                         Verdict.WARN, "film: polypropylene is stable enough, polyester drifts; "
                         "check the film type", req.source, req.rule)
        if fam in POLARISED_FAMILIES and limit == 1:
            return Check("dielectric", rtext, limit, fam, fam, None, _NO_AT, None,
                         Verdict.FAIL if strict else Verdict.WARN,
                         f"{fam} in a frequency-determining position: only class 1 holds its "
                         "value", req.source, req.rule)
        return Check("dielectric", rtext, limit, fam, fam, None, _NO_AT, None, Verdict.PASS,
                     f"{fam} is not a ceramic: no ceramic class to compare", req.source,
                     req.rule)
    atext = f"{fam} (class {cls})"
    if cls <= limit:
        return Check("dielectric", rtext, limit, fam, atext, None, _NO_AT, None, Verdict.PASS,
                     req.why or "same or better dielectric", req.source, req.rule)
    return Check("dielectric", rtext, limit, fam, atext, None, _NO_AT, None,
                 Verdict.FAIL if strict else Verdict.WARN,
                 f"class {cls} where class {limit} is called for; {req.why}".rstrip("; "),
                 req.source, req.rule)


def _check_polarised(part: PartSpec, req: Requirement) -> Check:
    rtext = "non-polarised"
    fam = part.family
    if fam is None:
        return _unknown(req, rtext, "unknown: the record has no family; is it polarised?")
    if fam not in POLARISED_FAMILIES:
        return Check("polarised", rtext, "no", "no", f"{fam}: non-polarised", None, _NO_AT,
                     None, Verdict.PASS, "non-polarised", req.source, req.rule)
    verdict = Verdict.WARN if req.warn_only else Verdict.FAIL
    why = (f"{fam} is polarised: only where the DC across it never reverses, + to the higher "
           "potential; reversed it can vent or burn") if req.warn_only else \
          f"{fam} is polarised and this position is not: reversed it can vent or burn"
    return Check("polarised", rtext, "no", "yes", f"{fam}: polarised", None, _NO_AT, None,
                 verdict, why, req.source, req.rule)


def _check_tol(part: PartSpec, req: Requirement) -> Check:
    limit = float(req.value)
    rtext = f"<= ±{frac(limit)}"
    vals = part.values("tol")
    if not vals:
        return _unknown(req, rtext, "unknown: the record has no tolerance; check the marking")
    worst = max(abs(p.value) for p in vals)
    typ_only = all(p.bound is Bound.TYP for p in vals)
    return _judge(req, limit, worst, None, not typ_only, _NO_AT, "",
                  actual_text="±" + frac(worst), rendered=rtext)


def _check_cap_voltage(part: PartSpec, req: Requirement, policy: Policy) -> Check:
    working = float(req.value)
    fam = part.family or ""
    rule_id = _CAP_FRACTION_RULE.get(fam, "cap_v_fraction_other")
    fraction = policy[rule_id]
    required = working / fraction
    prefer = None
    if CAPACITOR_CLASS.get(fam, 1) >= 2:  # class-2/3 ceramics lose C under DC bias
        prefer = working / policy["cap_v_fraction_class2"]
    rated = part.get("v_rated")
    r = Requirement(req.param, Op.GE, required, req.source,
                    f"{fam or 'this dielectric'} at ≤ {fraction * 100:g} % of its rating "
                    f"({rule_id}) for {working:g} V working", rule_id, req.warn_only)
    if rated is None:
        return _unknown(r, _render_req(r, "V", required, prefer))
    return _judge(r, required, rated.value, None, True, _NO_AT, "V", prefer=prefer,
                  rendered=(_render_req, (r, "V", required, prefer)))


def _check_pd(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    dissipation = float(req.value)
    ta = slot.conditions.ambient
    if ta is None:
        ta = policy["ambient_default"]
    required = dissipation / policy["pd_fraction_max"]
    prefer = dissipation / policy["pd_fraction_pref"]
    actual, tj, r, t25 = _pd_numbers(part, ta)
    if actual is None:
        return _unknown(req, _pd_required(ta, required, prefer),
                        "unknown: the record lacks PD, Tj or RθJA to derate at "
                        f"{ta:g} °C; check the datasheet")
    return _judge(req, required, actual, None, True, {"ta": ta}, "W", prefer=prefer,
                  actual_text=(_pd_text, (actual, ta, tj, r, t25)),  # rendered on use
                  rendered=(_pd_required, (ta, required, prefer)))


def _check_pd_free_air(part: PartSpec, req: Requirement) -> Check:
    """A power rating against the candidate's free-air rating at 25 °C (never the rating
    at a case temperature, which needs an ideal heat sink; facts.md §5.3)."""
    actual, tj, r, t25 = _pd_numbers(part, 25.0)
    if actual is None:
        only_case = any(p.name == "pd" for p in part.params)
        return _unknown(req, _render_req(req, "W"), "unknown: only a case-temperature PD is "
                        "on record (it assumes a heat sink); check the free-air rating"
                        if only_case else "")
    return _judge(req, float(req.value), actual, None, True, {"ta": 25.0}, "W",
                  prefer=req.prefer, actual_text=(_pd_text, (actual, 25.0, tj, r, t25)))


def _pd_required(ta: float, required: float, prefer: float) -> str:
    return f"PD({ta:g} °C) >= {si(required, 'W')} (prefer >= {si(prefer, 'W')})"


def _check_crystal_f(part: PartSpec, req: Requirement, policy: Policy) -> Check:
    want = float(req.value)
    ppm_max = policy["xtal_f_ppm_max"]
    rtext = f"= {si(want, 'Hz')} ± {ppm_max:g} ppm"
    f = part.nominal("f")
    if f is None:
        return _unknown(req, rtext)
    dev = (f - want) / want * 1e6
    margin = (ppm_max - abs(dev)) / ppm_max
    atext = f"{si(f, 'Hz')} ({dev:+.3g} ppm)"
    if abs(dev) <= ppm_max:
        return Check("f", rtext, want, f, atext, Bound.NOM, _NO_AT, margin, Verdict.PASS,
                     req.why or "same nominal frequency", req.source, req.rule)
    if part.get("c1") is not None:
        # the pulling maths (facts.md §5.2) lives in stock.fit.crystal
        from stock.errors import FitError
        from stock.fit.crystal import reachable

        try:
            pulling = reachable(part, want, (policy["xtal_cl_min"], policy["xtal_cl_max"]))
        except FitError as exc:
            return _unknown(req, rtext, f"unknown: {exc}")
        if pulling.known and pulling.reachable:
            return Check("f", rtext, want, f, atext, Bound.NOM, _NO_AT, margin, Verdict.WARN,
                         pulling.text + "; retune the load capacitors", req.source,
                         "xtal_cl_max")
    return Check("f", rtext, want, f, atext, Bound.NOM, _NO_AT, margin, Verdict.FAIL,
                 f"{dev:+.3g} ppm off: beyond what the load capacitance can pull",
                 req.source, req.rule)


def _check_equal(part: PartSpec, req: Requirement, rel: float = 0.0) -> Check:
    unit = _unit(req.param)
    want = float(req.value)
    rtext = f"= {si(want, unit)}" if req.param != "overtone" else f"= {want:g}"
    have = part.nominal(req.param)
    if have is None:
        return _unknown(req, rtext)
    same = abs(have - want) <= rel * abs(want) + 1e-18
    atext = si(have, unit) if req.param != "overtone" else f"{have:g}"
    verdict = Verdict.PASS if same else (Verdict.WARN if req.warn_only else Verdict.FAIL)
    why = (req.why or "same") if same else f"{atext} where {rtext[2:]} is called for; {req.why}"
    return Check(req.param, rtext, want, have, atext, Bound.NOM, _NO_AT, None, verdict,
                 why.rstrip("; "), req.source, req.rule)


def _check_temperature(part: PartSpec, req: Requirement) -> Check:
    """tmax/tmin: from the record, else implied by the dielectric code (EIA-198)."""
    p = part.get(req.param)
    rtext = _render_req(req, "°C")
    if p is not None:
        return _judge(req, float(req.value), p.value, None, True, _NO_AT, "°C",
                      rendered=rtext)
    rng = DIELECTRIC_RANGE.get(part.family or "") if part.kind is Kind.CAPACITOR else None
    if rng is None:
        return _unknown(req, rtext)
    value = rng[1] if req.param == "tmax" else rng[0]
    return _judge(req, float(req.value), value, None, True, _NO_AT, "°C", rendered=rtext,
                  actual_text=f"{value:g} °C (from the {(part.family or '').upper()} code, "
                              "EIA-198)")


_SENSE = {name: pdef.sense for name, pdef in PARAMS.items()}


def _select(part: PartSpec, name: str, op: Op) -> tuple[Param | None, Param | None]:
    """(guaranteed value, typical value) of ``name`` to hold an ``op`` bound against.

    The same choice as :meth:`PartSpec.low`/:meth:`PartSpec.high` in one pass: a rating or
    nominal value is its own guarantee; for a characteristic the worst ``min`` (for >=) or
    ``max`` (for <=), else a ``nom`` value; ``typ`` only ever as the typical fallback.
    """
    first: Param | None = None
    best: Param | None = None
    nom: Param | None = None
    typ: Param | None = None
    want = Bound.MIN if op is Op.GE else Bound.MAX
    for p in part.params:
        if p.name != name:
            continue
        if first is None:
            first = p
        b = p.bound
        if b is want:
            if best is None or (p.value < best.value if op is Op.GE else p.value > best.value):
                best = p
        elif b is Bound.TYP:
            if typ is None:
                typ = p
        elif b is Bound.NOM and nom is None:
            nom = p
    if first is None:
        return None, None
    if _SENSE.get(name) != "char":
        return (first, None) if first.bound is not Bound.TYP else (None, first)
    return (best or nom), typ


def _check_numeric(part: PartSpec, req: Requirement) -> Check:
    """A numeric bound: held against the guaranteed limit; a typical value only warns.

    A limit given at other test conditions than the requirement's proves less: a pass or
    a failure it cannot prove is a warning that says so.
    """
    unit = _unit(req.param)
    value = float(req.value)
    note = ""
    pass_proves = fail_proves = True
    if req.at:
        g, t, note, pass_proves, fail_proves = _pick_at(part, req)
    else:
        g, t = _select(part, req.param, req.op)
    if g is None and t is None:
        return _unknown(req, _render_req(req, unit, value, req.prefer),
                        f"unknown: {note}" if note else "")
    show_bound = _SENSE.get(req.param, "char") == "char"
    check: Check | None = None
    if g is not None:
        check = _judge(req, value, g.value, g.bound if show_bound else None, True, g.at, unit,
                       prefer=req.prefer)
        if check.verdict is not Verdict.FAIL or t is None:
            if note and ((check.verdict is Verdict.PASS and not pass_proves) or
                         (check.verdict is Verdict.FAIL and not fail_proves)):
                return _replace_verdict(check, Verdict.WARN, (_why_with_note, (check, note)))
            return check
    assert t is not None
    typ_check = _judge(req, value, t.value, t.bound if show_bound else None, False, t.at, unit,
                       prefer=req.prefer)
    if check is not None and typ_check.verdict is Verdict.FAIL:
        return check  # the guaranteed limit fails and so does the typical value
    return typ_check


def _replace_verdict(c: Check, verdict: Verdict, why: Any) -> Check:
    """The same check with another verdict and why (texts stay deferred where they were)."""
    return Check(c.param, c._required, c.required_value, c.actual, c._actual_text, c.bound,
                 c.at, c.margin, verdict, why, c.source, c.rule, c._lazy)


def _why_with_note(c: Check, note: str) -> str:
    return f"{c.why} {note}"


_SWING_RULES = frozenset({"swing_class_abc", "swing_class_e"})


#: A resolved check: (part, requirement, slot, policy) → the check.
CheckFn = Callable[[PartSpec, Requirement, Slot, Policy], Check]


def check_one(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    """Hold one requirement against one part."""
    return checker(req)(part, req, slot, policy)


def checker(req: Requirement) -> CheckFn:
    """The function that holds ``req`` against a part: :func:`check_one`'s dispatch on
    the requirement, resolved once (the fit engine calls it for thousands of parts). The
    two choices that depend on the part (a JFET's drain current, a crystal's frequency)
    are made in the function returned."""
    param = req.param
    fixed = _BY_PARAM.get(param)
    if fixed is not None:
        return fixed
    if param == "v_rated" and req.rule == "cap_v_fraction":
        return _cap_voltage_fn
    if param == "pd" and req.rule == "pd_fraction_max":
        return _check_pd
    if param == "pd" and req.op is Op.GE:
        return _PD_FREE_AIR
    general = _general(req)
    if param == "id":
        def drain_current(part: PartSpec, req: Requirement, slot: Slot, policy: Policy
                          ) -> Check:
            if part.family in ("n-jfet", "p-jfet") and part.get("id") is None \
                    and part.get("idss") is not None:
                return _check_jfet_id(part, req)
            return general(part, req, slot, policy)
        return drain_current
    if param == "f":
        def frequency(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
            if part.kind is Kind.CRYSTAL:
                return _check_crystal_f(part, req, policy)
            return general(part, req, slot, policy)
        return frequency
    return general


def _general(req: Requirement) -> CheckFn:
    """The check of a requirement no special rule covers: equal, attribute or bound."""
    if req.op is Op.EQ and not isinstance(req.value, str):
        return _equal_fn
    if isinstance(req.value, str):
        return _attribute_fn
    if req.param == "vceo" and req.rule in _SWING_RULES:
        return _swing_fn
    return _NUMERIC


def _part_only(check: Callable[[PartSpec, Requirement], Check]) -> CheckFn:
    """``check``, which reads only the part and the requirement, in the one signature
    (part, requirement, slot, policy) that :func:`checker` returns."""
    def fn(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
        return check(part, req)
    return fn


def _cap_voltage_fn(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    return _check_cap_voltage(part, req, policy)


def _equal_fn(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    # a crystal's load capacitance is equal within 5 %; any other value exactly
    return _check_equal(part, req, 0.05 if req.param == "cl" else 0.0)


def _check_jfet_id(part: PartSpec, req: Requirement) -> Check:
    # a JFET's drain current with the gate at the source is IDSS: a stage biased for
    # more than the guaranteed minimum IDSS may not reach its current
    r = Requirement("idss", req.op, req.value, req.source,
                    f"{req.why}; a JFET carries at most IDSS".lstrip("; "), req.rule,
                    req.warn_only, req.prefer, req.at)
    c = _check_numeric(part, r)
    return Check("id", c.required, c.required_value, c.actual, "IDSS " + c.actual_text,
                 c.bound, c.at, c.margin, c.verdict, c.why, c.source, c.rule)


def _attribute_fn(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    param = req.param
    have = part.attrs.get(param)
    ok = have is not None and have.lower() == str(req.value).lower()
    return Check(param, f"= {req.value}", req.value, have, have or "unknown", None, _NO_AT,
                 None, Verdict.PASS if ok else Verdict.WARN if have is None or req.warn_only
                 else Verdict.FAIL, req.why or f"{param} must be {req.value}", req.source,
                 req.rule)


def _swing_fn(part: PartSpec, req: Requirement, slot: Slot, policy: Policy) -> Check:
    check = _check_numeric(part, req)
    if check.verdict is Verdict.FAIL:
        # RF power transistors are specified with the base returned through a low
        # impedance; VCER is then the practical limit (facts.md §5.6)
        vcer = part.get("vcer")
        if vcer is not None and vcer.value >= float(req.value):
            return _replace_verdict(check, Verdict.WARN,
                                    f"VCEO is short but VCER {si(vcer.value, 'V')} covers the "
                                    "swing: only with the base returned through a low impedance")
    return check


#: The checks chosen by the parameter alone.
_BY_PARAM: dict[str, CheckFn] = {
    "family": _part_only(_check_family), "safety": _part_only(_check_safety),
    "dielectric": _part_only(_check_dielectric), "polarised": _part_only(_check_polarised),
    "tol": _part_only(_check_tol), "tmax": _part_only(_check_temperature),
    "tmin": _part_only(_check_temperature)}
_PD_FREE_AIR = _part_only(_check_pd_free_air)
_NUMERIC = _part_only(_check_numeric)


def reads(req: Requirement) -> tuple[str, ...] | None:
    """The parameters :func:`check_one` reads for ``req`` besides the part's kind and
    family, or None when it reads more of the record (attributes, a crystal's figures).

    The fit engine shares one check among candidates that are equal in these, so this
    must follow :func:`check_one`'s dispatch: naming more than it reads is safe (fewer
    shared checks), naming less is a wrong answer. ``tests/test_fit_memo.py`` holds the
    shared checks against direct ones over the catalog.
    """
    param = req.param
    if param in ("family", "dielectric", "polarised"):
        return ()
    if param == "safety" or param == "f" or isinstance(req.value, str):
        return None  # attributes; a crystal's frequency reads its motional figures too
    if param == "id":
        return ("id", "idss")  # a JFET's drain current is IDSS
    if param == "pd":
        return ("pd", "tj", "rth_ja")  # derated to the ambient
    if param == "vceo" and req.rule in _SWING_RULES:
        return ("vceo", "vcer")
    return (param,)


def check_part(part: PartSpec, slot: Slot, reqs: list[Requirement], policy: Policy
               ) -> list[Check]:
    """Every requirement of a slot held against one candidate part."""
    return [check_one(part, req, slot, policy) for req in reqs]


def render_requirement(req: Requirement) -> str:
    """A requirement as a builder reads it: '>= 24 V (prefer >= 30 V)', '= npn'."""
    if isinstance(req.value, str):
        return f"{req.op.value} {req.value.replace('|', ' or ')}"
    if req.param == "v_rated" and req.rule == "cap_v_fraction":
        return f"rated for {si(float(req.value), 'V')} working, derated by dielectric"
    if req.param == "pd" and req.rule == "pd_fraction_max":
        return f"PD(TA) >= {si(float(req.value), 'W')} dissipated"
    if req.param == "dielectric":
        return f"class <= {float(req.value):g}"
    if req.param == "overtone":
        return f"= {float(req.value):g}"
    return _render_req(req, _unit(req.param), float(req.value), req.prefer)
