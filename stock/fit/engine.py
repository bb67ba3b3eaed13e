"""The fit engine: assess candidates for a slot, rank them, and describe them as JSON.

Pure: it works on :class:`~stock.parts.Stocked` candidates the store query yields (filtered
by kind and family there first), a :class:`~stock.slots.Slot` and a
:class:`~stock.rules.Policy`. No I/O.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping, Sequence
from typing import Any

from stock.errors import NotationError, UnknownPart
from stock.fit.checks import Check, Verdict, checker, reads
from stock.fit.dropin import DropIn, dropin
from stock.fit.rank import Assessment, fitness_of, rank, surplus
from stock.fit.requirements import requirements_for
from stock.gcpause import cycle_collector_paused
from stock.kinds import FAMILIES, Kind, normalise_family, parse_kind
from stock.parts import PartSpec, Stocked
from stock.rules import Policy
from stock.slots import Conditions, Op, Requirement, Role, Slot, Source
from stock.valuetext import VALUE_KINDS, value_kind, value_part

#: Version of the JSON shape of one assessment (docs/fit.md); bump on any change.
JSON_VERSION = 1


def assess(slot: Slot, candidates: Iterable[Stocked], policy: Policy, *, need: int = 1,
           include_failing: bool = False, demand: Mapping[str, int] | None = None
           ) -> list[Assessment]:
    """Check every candidate against the slot's requirements and rank them (best first).

    ``need`` is the quantity the slot needs (a candidate with less free ranks lower);
    ``demand`` counts, per part number, how many other slots could use the part (the
    kit planner passes it) so that scarce parts are kept for the slots that need them.
    Failing candidates are dropped unless ``include_failing``.
    """
    reqs = requirements_for(slot, policy)
    called = slot.part
    board_pkg = slot.package
    board_pins = slot.pinout
    if called is not None and (board_pkg or board_pins):
        called = PartSpec(called.number, called.kind, called.family,
                          board_pkg or called.package, board_pins or called.pinout)
    elif called is None and (board_pkg or board_pins):
        called = PartSpec(slot.calls_for, slot.kind, None, board_pkg, board_pins)
    out: list[Assessment] = []
    with cycle_collector_paused():  # small acyclic objects by the hundred thousand
        _assess_into(out, slot, candidates, reqs, called, policy, include_failing)
    return rank(out, need=need, ample=policy["rank_margin_ample"], demand=demand)


class _SharedChecks:
    """One requirement held against a pool, each check built once and shared among the
    candidates equal in what it reads (:func:`stock.fit.checks.reads`): in a large
    store most candidates share their ratings with many others. Checks are read-only,
    so sharing them is safe; a candidate without cheap keys is checked directly.

    Entries are (check, its share of the candidate's versatility). A requirement whose
    values hardly repeat (a measured fT) stops being remembered once that shows: its
    entries would cost memory and collector time and save nothing.
    """

    __slots__ = ("req", "slot", "policy", "fn", "names", "one", "memo", "misses", "keep")

    #: Candidates after which a memo that missed for three in four of them stops growing.
    TRIAL = 256

    def __init__(self, req: Requirement, slot: Slot, policy: Policy) -> None:
        self.req, self.slot, self.policy = req, slot, policy
        self.fn = checker(req)  # check_one's dispatch, once
        self.names = reads(req)
        self.one = self.names[0] if self.names is not None and len(self.names) == 1 else None
        self.memo: dict[tuple, tuple[Check, float]] = {}
        self.misses = 0
        self.keep = True

    def direct(self, part: PartSpec) -> tuple[Check, float]:
        """Check the whole record (a requirement that reads more than parameters)."""
        c = self.fn(part, self.req, self.slot, self.policy)
        return c, surplus(c)

    def fresh(self, part: PartSpec) -> tuple[Check, float]:
        """Check the parameters the requirement reads, decoding only those."""
        c = self.fn(part.partial(self.names or ()), self.req, self.slot, self.policy)
        return c, surplus(c)

    def miss(self, part: PartSpec, key: tuple, seen: int) -> tuple[Check, float]:
        """Check ``part`` (``seen`` candidates so far) and remember it under ``key``."""
        entry = self.fresh(part)
        if self.keep:
            self.memo[key] = entry
            self.misses += 1
            if seen >= self.TRIAL and self.misses * 4 > seen * 3:
                self.keep = False  # three in four candidates missed: values do not repeat
                self.memo.clear()
        return entry


def _assess_into(out: list[Assessment], slot: Slot, candidates: Iterable[Stocked],
                 reqs: list[Requirement], called: PartSpec | None, policy: Policy,
                 include_failing: bool) -> None:
    shared = [_SharedChecks(req, slot, policy) for req in reqs]
    # Evaluation order: requirement order, until a requirement stops being remembered
    # (its values do not repeat); from then on those go last, so a candidate that fails a
    # remembered one costs little. The checks land in requirement order whatever the
    # order of evaluation.
    order: list[tuple[int, str | None, tuple[str, ...] | None, dict | None, _SharedChecks]] = \
        [(i, sc.one, sc.names, sc.memo, sc) for i, sc in enumerate(shared)]
    n = len(order)
    dropins: dict[tuple[str | None, str | None], DropIn] = {}
    fail = Verdict.FAIL
    kind = slot.kind
    for seen, s in enumerate(candidates):
        part = s.part
        if part.kind is not kind:
            continue
        groups = part.param_groups()
        fam = part.family
        checks: list[Any] = [None] * n
        failed = resort = False
        vers = 0.0
        for i, one, names, memo, sc in order:
            if names is None or groups is None:
                c, v = sc.direct(part)
            elif memo is None:  # no longer remembered: no key to build
                c, v = sc.fresh(part)
            else:
                # kind is the slot's for every candidate; family is read by several checks
                key = (fam, groups.get(one)) if one is not None else \
                    (fam, *[groups.get(name) for name in names])
                hit = memo.get(key)
                if hit is None:
                    kept = sc.keep
                    hit = sc.miss(part, key, seen)
                    resort = resort or (kept and not sc.keep)  # it has just stopped
                c, v = hit
            if c.verdict is fail:
                failed = True
                if not include_failing:
                    break  # most of a large pool fails something early
            checks[i] = c
            vers += v
        if resort:  # after the candidate: never while iterating over the order
            order = sorted(((i, one, names, memo if sc.keep else None, sc)
                            for i, one, names, memo, sc in order),
                           key=lambda o: (o[3] is None or o[2] is None, o[0]))
        if failed and not include_failing:
            continue
        fit, warnings, smallest = fitness_of(checks)
        where = (part.package, part.pinout)  # all a drop-in verdict reads (kind is the slot's)
        d = dropins.get(where)
        if d is None:
            d = dropins[where] = dropin(called, part)
        out.append(Assessment(s, checks, fit, d, smallest, warnings, versatility=vers))


def _num(v: Any) -> Any:
    return v if not isinstance(v, float) else float(f"{v:.6g}")


def assessment_json(a: Assessment) -> dict[str, Any]:
    """One candidate as the documented ``--json`` shape (docs/fit.md)."""
    part = a.stocked.part
    return {
        "rank": a.rank,
        "part": part.number,
        "kind": part.kind.value,
        "family": part.family,
        "package": part.package,
        "pinout": part.pinout,
        "free": a.stocked.free,
        "drawers": [{"drawer": d, "free": n} for d, n in a.stocked.drawers],
        "to_buy": a.stocked.to_buy,
        "fitness": a.fitness.value,
        "warnings": a.warnings,
        "smallest_margin": _num(a.smallest_margin),
        "dropin": {"verdict": a.dropin.verdict.value, "text": a.dropin.text,
                   "mapping": [list(m) for m in a.dropin.mapping] if a.dropin.mapping else None},
        "checks": [
            {
                "param": c.param,
                "required": c.required,
                "required_value": _num(c.required_value),
                "actual": _num(c.actual),
                "actual_text": c.actual_text,
                "bound": c.bound.value if c.bound else None,
                "at": {k: _num(v) for k, v in c.at.items()},
                "margin": _num(c.margin),
                "verdict": c.verdict.value,
                "why": c.why,
                "source": c.source.value,
                "rule": c.rule,
            }
            for c in a.checks
        ],
    }


# --- building a slot from the command line ---------------------------------------------

def resolve_value_slot(text: str, kind: Kind) -> PartSpec:
    """A part record from a value written on a slot: ``4k7``, ``100n C0G 50V``, ``10n X2``.

    Read by :func:`stock.valuetext.value_part` (the one reader of value text, so a slot
    on the command line means what the same text means in a kit file: ``470`` on a
    resistor is 470 Ω). Raises :class:`NotationError` naming a word it cannot read, or
    for a kind that is called for by part number.
    """
    part = value_part(kind, text, description="a value written on the slot")
    if part is None:
        raise NotationError(f"{text!r}: only resistor, capacitor, inductor and crystal values "
                            f"can be written as values, not a {kind.value}; give a part number")
    return part


def parse_role(text: str | Role | None) -> Role:
    """A role name (``pa-c``, ``audio-amp``) as a :class:`Role`; ValueError naming choices."""
    if text is None:
        return Role.GENERAL
    if isinstance(text, Role):
        return text
    key = text.strip().lower().replace("_", "-").replace(" ", "-")
    try:
        return Role(key)
    except ValueError:
        from stock.errors import suggest

        roles = [r.value for r in Role]
        raise ValueError(f"unknown role {text!r}{suggest(key, roles)}; use one of: "
                         f"{', '.join(roles)}") from None


def slot_from_args(calls_for: str, *, kind: Kind | str | None = None,
                   role: Role | str | None = None, conditions: Conditions | None = None,
                   needs: Sequence[str] = (),
                   resolve: Callable[[str], PartSpec | None] | None = None,
                   package: str | None = None, pinout: str | None = None) -> Slot:
    """A slot from command-line words: what is called for, role, conditions, bounds.

    ``resolve`` looks a part number up (the store's ``find_part``); a value such as
    ``4k7`` or ``100n C0G 50V`` becomes a part record through :func:`resolve_value_slot`;
    a bare family (``npn``, ``n-mosfet``) with ``kind`` makes a slot with no called-for
    part. ``needs`` are explicit bounds (``vceo>=60V``): they win over everything else.
    """
    k = parse_kind(kind) if isinstance(kind, str) else kind
    r = parse_role(role)
    part = resolve(calls_for) if resolve is not None else None
    reqs: list[Requirement] = []
    if part is not None:
        k = k or part.kind
        if part.kind is not k:
            raise ValueError(f"{calls_for} is a {part.kind.value}, not a {k.value}; "
                             "drop --kind or name another part")
    else:
        k = k or value_kind(calls_for)
        if k is None:
            raise UnknownPart(f"no part {calls_for!r} in the store or the catalog; add it "
                              "with 'stock add', or give --kind and --need bounds")
        fam = None
        if FAMILIES.get(k) and calls_for.strip():
            try:
                fam = normalise_family(k, calls_for)
            except ValueError:
                fam = None
        if fam is not None:
            reqs.append(Requirement("family", Op.EQ, fam, Source.USER,
                                    "written on the command line"))
        elif k in VALUE_KINDS:
            part = resolve_value_slot(calls_for, k)
        else:
            raise UnknownPart(f"no part {calls_for!r} in the store or the catalog; add it "
                              f"with 'stock add', or write a {k.value} family "
                              f"({', '.join(FAMILIES[k])}) with --need bounds")
    if needs:
        from stock.paramtext import parse_criterion

        for text in needs:
            c = parse_criterion(text, k)
            reqs.append(Requirement(c.param, c.op, c.value, Source.USER,
                                    f"written on the command line ({text})"))
    return Slot(refs=[], qty=1, calls_for=calls_for, kind=k, part=part, role=r,
                conditions=conditions or Conditions(), requirements=reqs,
                package=package, pinout=pinout.upper().replace("-", "") if pinout else None)


def combinations_for(slot: Slot, pool: Sequence[Stocked], policy: Policy, *, need: int = 1,
                     limit: int = 5) -> list[Any]:
    """Two- or three-part combinations from ``pool`` that make a value slot's value.

    For resistor, capacitor and inductor slots whose called-for part has a nominal value;
    the window is the called-for tolerance (or the default for the kind, docs/rules.md).
    In a frequency-determining position only the called-for dielectric family is combined.
    Returns :class:`stock.fit.combine.Combination` records (empty for other slots).
    """
    from stock.fit.combine import find_combinations
    from stock.fit.requirements import part_tolerance
    from stock.slots import FREQUENCY_DETERMINING

    vparam = {Kind.RESISTOR: "r", Kind.CAPACITOR: "c", Kind.INDUCTOR: "l"}.get(slot.kind)
    if vparam is None or slot.part is None:
        return []
    target = slot.part.nominal(vparam)
    if not target:
        return []
    tol = part_tolerance(slot.part)
    if tol is None:
        d = policy[{"r": "r_tol_default", "c": "c_tol_default", "l": "l_tol_default"}[vparam]]
        tol = (-d, d)
    c = slot.conditions
    v_working = c.v_dc if c.v_dc is not None else c.supply
    family = slot.part.family if slot.role in FREQUENCY_DETERMINING else None
    return list(find_combinations(target, tol, slot.kind, pool, need=need,
                                  v_working=v_working, power=c.dissipation, family=family,
                                  limit=limit, policy=policy))


def combination_json(c: Any) -> dict[str, Any]:
    """One combination in the ``--json`` shape (docs/fit.md)."""
    return {
        "topology": c.topology.value,
        "parts": [s.part.number for s in c.parts],
        "text": c.describe(),
        "nominal": _num(c.nominal),
        "low": _num(c.low),
        "high": _num(c.high),
        "error": _num(c.error),
        "ok": c.ok,
        "notes": list(c.checks),
    }
