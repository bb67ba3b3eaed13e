"""Check kits against the store: what is there, what stands in, the plan, what is short.

For every slot of every kit (times its copies) :func:`check` finds

* **exact** parts — the called-for part number, or for a value slot (R, C, L, crystal) a
  part of the same value (and family, when the slot names one) that meets the slot;
* **stand-ins** — other parts of the kind the fit engine (:func:`stock.fit.engine.assess`)
  says meet the slot's requirements, ranked;
* the **plan** — free stock allocated to all slots at once at least cost
  (:func:`stock.plan.solve`), with explanations;
* **combinations** — for a short resistor, capacitor or inductor slot, two or three parts
  left over after the plan that make the value (:func:`stock.fit.combine.find_combinations`);

and a summary: how many complete copies of each kit the free stock builds now, and which
slots limit that number. A plain-BOM kit has no roles; its slots are held to the called-for
part's own ratings, and the report says so.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from typing import Any, Protocol

from stock.errors import QuantityError
from stock.kinds import Kind
from stock.kits.designators import compress
from stock.kits.kitfile import VALUE_KINDS, Kit
from stock.parts import PartSpec, Stocked, part_key
from stock.plan import (
    Allocation,
    Demand,
    Plan,
    Ranked,
    Supply,
    add_scarcity,
    costs_from_rank,
    solve,
)
from stock.slots import Role, Slot

#: Version of the JSON shape of a check report (docs/kits.md); bump on any change.
JSON_VERSION = 1

#: A slot whose first candidates (stock.kits.pool) do not cover its need looks at this
#: many times as many before it is called short.
WIDER = 8

#: Nominal values closer than this (relative) are the same value (float noise only).
_SAME_VALUE = 1e-6


class StoreLike(Protocol):
    """What :func:`check` needs of a store (:class:`stock.store.api.Store` has it)."""

    def find_part(self, number: str) -> PartSpec | None: ...

    def candidates(self, kind: Kind, family: str | None = None) -> list[Stocked]: ...


@dataclass
class SlotCheck:
    """One slot of one kit: what is there, what stands in, what the plan gives it."""

    kit: str
    key: str  # the demand key: "kit:R3-R6"
    slot: Slot
    copies: int
    need: int  # units over all copies
    called: PartSpec | None  # the called-for part as resolved (kit value, store, catalog)
    requirements_from: str  # "role and conditions", "called-for part's ratings (plain BOM)"
    exact: list[Stocked] = field(default_factory=list)
    stand_ins: list[Any] = field(default_factory=list)  # stock.fit.rank.Assessment, ranked
    allocations: list[Allocation] = field(default_factory=list)
    short: int = 0
    combinations: list[Any] = field(default_factory=list)  # stock.fit.combine.Combination
    notes: list[str] = field(default_factory=list)

    @property
    def refs(self) -> str:
        return compress(self.slot.refs)


@dataclass
class KitSummary:
    """How many complete copies of a kit the free stock builds, and what limits it."""

    kit: str
    wanted: int
    buildable: int
    limits: list[str] = field(default_factory=list)


@dataclass
class CheckReport:
    """The answer of :func:`check`."""

    slots: list[SlotCheck]
    plan: Plan
    summaries: list[KitSummary]
    notes: list[str] = field(default_factory=list)

    @property
    def complete(self) -> bool:
        """True when every unit of every slot is allocated."""
        return not self.plan.short


def _label(kit: Kit, slot: Slot, several: bool) -> str:
    refs = compress(slot.refs) if slot.refs else slot.calls_for
    text = f"{kit.name} {refs}" if several else refs
    return f"{text} ({slot.role.value})" if slot.role is not Role.GENERAL else text


def _resolve(slot: Slot, store: StoreLike, catalog: Callable[[str], PartSpec | None] | None
             ) -> tuple[PartSpec | None, str]:
    """The called-for part and where it came from."""
    if slot.part is not None:
        return slot.part, "kit"
    found = store.find_part(slot.calls_for)
    if found is not None:
        return found, "store"
    if catalog is not None:
        found = catalog(slot.calls_for)
        if found is not None:
            return found, "catalog"
    return None, ""


def _default_catalog() -> Callable[[str], PartSpec | None] | None:
    try:
        from stock.catalog import load_catalog

        cat = load_catalog()
    except Exception:  # a broken user catalog must not stop a check; the CLI reports it
        return None
    return cat.get


def _value_of(part: PartSpec) -> float | None:
    from stock.catalog import VALUE_PARAM

    name = VALUE_PARAM.get(part.kind)
    return None if name is None else part.nominal(name)


def _is_exact(slot: Slot, called: PartSpec | None, cand: PartSpec) -> bool:
    if part_key(cand.number) == part_key(slot.calls_for):
        return True
    if slot.kind in VALUE_KINDS and called is not None:
        want, have = _value_of(called), _value_of(cand)
        if want is None or have is None or want == 0:
            return want == have and want is not None
        same = abs(have - want) <= _SAME_VALUE * abs(want)
        return same and (called.family is None or called.family == cand.family)
    return False


def _tolerance(part: PartSpec, policy: Any) -> tuple[float, float]:
    from stock.fit.requirements import part_tolerance

    tol = part_tolerance(part)
    if tol is not None:
        return tol
    rule = {Kind.RESISTOR: "r_tol_default", Kind.CAPACITOR: "c_tol_default",
            Kind.INDUCTOR: "l_tol_default"}.get(part.kind)
    t = float(policy[rule]) if rule else 0.05
    return (-t, t)


def check(kits: Sequence[tuple[Kit, int]], store: StoreLike, policy: Any = None, *,
          catalog: Callable[[str], PartSpec | None] | None = None,
          combinations: bool = True) -> CheckReport:
    """Check ``kits`` (each with its number of copies) against the free stock of ``store``.

    ``policy`` is a :class:`stock.rules.Policy` (the user's, by default); ``catalog``
    looks a part number up when the store does not know it (the reference catalog by
    default). Nothing in the store changes: reserving is the build command's job.
    """
    from stock.fit.engine import assess
    from stock.fit.requirements import requirements_for, screen
    from stock.rules import load_policy

    for kit, copies in kits:
        if copies < 1:
            raise QuantityError(f"{kit.name}: {copies} copies; ask for 1 or more")
    if policy is None:
        from stock.config import load_config

        policy = load_policy(load_config())
    if catalog is None:
        catalog = _default_catalog()
    several = len(kits) > 1
    kit_names = [kit.name for kit, _ in kits]
    twice = sorted({n for n in kit_names if kit_names.count(n) > 1})
    if twice:
        raise QuantityError(f"kit {twice[0]} is given twice; give it once with the total "
                            "number of copies")
    from stock.kits.pool import CandidatePool

    # First the requirements of every slot, so the candidate pool knows which ratings to
    # index per kind; then each slot's candidates come from the pool (stock.kits.pool:
    # screened in the store, nearest first, enough to cover the need several times).
    prepared = []
    indexed: dict[Kind, set[str]] = {}
    for kit, copies in kits:
        for slot in kit.slots:
            called, where = _resolve(slot, store, catalog)
            work = slot if called is slot.part else _with_part(slot, called)
            reqs = requirements_for(work, policy)
            indexed.setdefault(slot.kind, set()).update(
                r.param for r in screen(reqs) if r.param != "family")
            prepared.append((slot, called, where, work, reqs, slot.qty * copies))
    pool = CandidatePool(store, indexed)
    picks = [(slot.kind, pool.pick(slot.kind, slot.calls_for, called, reqs, need))
             for slot, called, _, _, reqs, need in prepared]
    pool.preload(picks)
    next_slot = iter(zip(prepared, picks, strict=True))

    checks: list[SlotCheck] = []
    demands: list[Demand] = []
    places: dict[tuple[str, str], int] = {}
    report_notes: list[str] = []
    seen_keys: set[str] = set()
    for kit, copies in kits:
        if kit.source == "bom":
            report_notes.append(f"{kit.name}: plain BOM, no roles or operating conditions; "
                                "each slot is held to the called-for part's own ratings")
        for slot in kit.slots:
            (_, called, where, work, reqs, _), (_, rows) = next(next_slot)
            key = kit.slot_id(slot)
            if key in seen_keys:  # two ref-less slots of a BOM calling for the same text
                key = f"{key}#{len(seen_keys)}"
            seen_keys.add(key)
            sc = SlotCheck(kit.name, key, slot, copies, slot.qty * copies,
                           called, _source_text(kit, work, called))
            cands = pool.stocked(slot.kind, rows)
            for s in cands:
                if _is_exact(work, called, s.part):
                    sc.exact.append(s)
            exact_keys = {part_key(s.part.number) for s in sc.exact}
            user_family = any(r.param == "family" for r in slot.requirements)
            if called is None and slot.kind not in VALUE_KINDS and not user_family:
                # Without the part's record even its polarity is unknown: a PNP must not
                # stand in for an NPN because nothing said otherwise.
                sc.notes.append(f"{slot.calls_for} is not in the store or the catalog: only "
                                "the exact part counts; add its record ('stock add') or give "
                                "the slot bounds with a family (need = [\"family=npn\", ...])"
                                " to find stand-ins")
            elif not reqs:
                sc.notes.append("no requirements known for this slot: only the exact part "
                                "counts")
            else:
                others = [s for s in cands if part_key(s.part.number) not in exact_keys]
                sc.stand_ins = assess(work, others, policy, need=sc.need)
                have = sum(s.free for s in sc.exact) + sum(a.stocked.free
                                                           for a in sc.stand_ins)
                if have < sc.need:
                    # the first candidates failed checks the pool's screen cannot see:
                    # look further (stock.kits.pool) before calling the slot short
                    wide = pool.pick(slot.kind, slot.calls_for, called, reqs, sc.need,
                                     wider=WIDER)
                    if len(wide) > len(rows):
                        cands = pool.stocked(slot.kind, wide)
                        sc.exact = [s for s in cands if _is_exact(work, called, s.part)]
                        exact_keys = {part_key(s.part.number) for s in sc.exact}
                        others = [s for s in cands
                                  if part_key(s.part.number) not in exact_keys]
                        sc.stand_ins = assess(work, others, policy, need=sc.need)
            if called is None and user_family:
                sc.notes.append(f"{slot.calls_for} is not in the store or the catalog: "
                                "stand-ins are judged by the role and the kit's bounds only")
            if called is not None and where == "catalog":
                sc.notes.append(f"{slot.calls_for}: ratings from the reference catalog")
            if sc.exact and called is not None and reqs:
                own = assess(work, sc.exact[:1], policy, need=sc.need, include_failing=True)
                if own and own[0].fitness.value == "fails":
                    bad = ", ".join(c.param for c in own[0].failures)
                    sc.notes.append(f"the called-for {slot.calls_for} itself fails here ({bad});"
                                    " check the kit's conditions and the datasheet")
            for s in cands:
                for drawer, free in s.drawers:
                    if free > 0:
                        places[(s.part.number, drawer)] = free
            demands.append(Demand(sc.key, sc.need, len(demands), _label(kit, slot, several)))
            checks.append(sc)

    # Re-rank each slot's stand-ins knowing how many other slots could use each part
    # (the fit ranking's "demand"), so a part few others can use is spent first; then
    # turn ranks into link costs (stock.plan's cost model).
    from stock.fit.rank import rank

    users: dict[str, int] = {}
    for sc in checks:
        for number in {part_key(x.part.number) for x in sc.exact} | \
                {part_key(a.part) for a in sc.stand_ins}:
            users[number] = users.get(number, 0) + 1
    links = []
    for sc in checks:
        mine = {part_key(x.part.number) for x in sc.exact} | {part_key(a.part)
                                                              for a in sc.stand_ins}
        # rank() looks up only this slot's stand-ins: count for those alone
        others_use = {k: users[k] - (1 if k in mine else 0)
                      for k in {part_key(a.part) for a in sc.stand_ins}}
        rank(sc.stand_ins, need=sc.need, ample=float(policy["rank_margin_ample"]),
             demand=others_use)
        ranked = [Ranked(x.part.number, exact=True, why="exact") for x in sc.exact]
        ranked += [Ranked(a.part, rank=i, warnings=a.warnings,
                          dropin=a.dropin.verdict.value == "drop-in", why=f"stand-in #{i + 1}")
                   for i, a in enumerate(sc.stand_ins)]
        links += costs_from_rank(sc.key, ranked)

    supplies = [Supply(p, d, f) for (p, d), f in places.items()]
    plan = solve(demands, supplies, add_scarcity(demands, supplies, links))
    by_key = {sc.key: sc for sc in checks}
    for alloc in plan.allocations:
        by_key[alloc.demand].allocations.append(alloc)
    for key, n in plan.short.items():
        by_key[key].short = n
    if combinations:
        _add_combinations(checks, plan, pool.around, policy)
    summaries = [_summary(kit, copies, checks, demands, supplies, links)
                 for kit, copies in kits]
    return CheckReport(checks, plan, summaries, report_notes)


def _with_part(slot: Slot, part: PartSpec | None) -> Slot:
    from dataclasses import replace

    return replace(slot, part=part)


def _source_text(kit: Kit, slot: Slot, called: PartSpec | None) -> str:
    if kit.source == "bom":
        return "the called-for part's own ratings (plain BOM: no roles)"
    parts = []
    if called is not None:
        parts.append("the called-for part's ratings")
    if slot.role is not Role.GENERAL:
        parts.append(f"the {slot.role.value} role and the conditions")
    if slot.requirements:
        parts.append("the kit's explicit bounds")
    return ", ".join(parts) or "nothing known beyond the part number"


def _add_combinations(checks: list[SlotCheck], plan: Plan,
                      around: Callable[[Kind, float], list[Stocked]], policy: Any) -> None:
    from stock.fit.combine import find_combinations

    taken = plan.taken()
    for sc in checks:
        if not sc.short or sc.slot.kind not in (Kind.RESISTOR, Kind.CAPACITOR,
                                                Kind.INDUCTOR) or sc.called is None:
            continue
        target = _value_of(sc.called)
        if not target or target <= 0:
            continue
        left = []
        for s in around(sc.slot.kind, target):
            drawers = [(d, f - taken.get((s.part.number, d), 0)) for d, f in s.drawers]
            drawers = [(d, f) for d, f in drawers if f > 0]
            if drawers:
                left.append(Stocked(s.part, sum(f for _, f in drawers), drawers, s.to_buy))
        cond = sc.slot.conditions
        sc.combinations = find_combinations(
            target, _tolerance(sc.called, policy), sc.slot.kind, left, need=sc.short,
            v_working=cond.v_dc if cond.v_dc is not None else cond.v_peak,
            power=cond.dissipation, family=sc.called.family, limit=3, policy=policy)


def _summary(kit: Kit, copies: int, checks: list[SlotCheck], demands: list[Demand],
             supplies: list[Supply], links: list[Any]) -> KitSummary:
    """Largest n ≤ copies such that n copies of ``kit`` (other kits as asked) have no short.

    Feasibility is monotone in n (fewer copies need fewer units), so a binary search over
    exact plans finds it.
    """
    mine = {sc.key: sc for sc in checks if sc.kit == kit.name}

    def scaled(n: int) -> list[Demand]:
        return [Demand(d.key, (mine[d.key].slot.qty * n) if d.key in mine else d.qty,
                       d.order, d.label) for d in demands]

    def short_at(n: int) -> dict[str, int]:
        # Only this kit's shorts count: another kit of the check may be short at any n.
        ds = scaled(n)
        short = solve(ds, supplies, add_scarcity(ds, supplies, links)).short
        return {k: v for k, v in short.items() if k in mine}

    lo, hi = 0, copies
    if not short_at(copies):
        lo = copies
    else:
        hi = copies - 1
        while lo < hi:  # invariant: lo is buildable, hi + 1 … are not (hi may or may not be)
            mid = (lo + hi + 1) // 2
            if short_at(mid):
                hi = mid - 1
            else:
                lo = mid
    limits: list[str] = []
    if lo < copies:
        for key, n in short_at(lo + 1).items():
            sc = mine[key]
            text = (f"{sc.refs or sc.slot.calls_for} ({sc.slot.calls_for}): "
                    f"{sc.slot.qty} per copy, {n} short for copy {lo + 1}")
            made = next((c for c in sc.combinations if c.ok), None)
            if made is not None:  # not counted above: a combination is the builder's call
                text += f"; or make it: {made.describe()}"
            limits.append(text)
    return KitSummary(kit.name, copies, lo, limits)


# --- JSON ------------------------------------------------------------------------------------


def check_json(report: CheckReport) -> dict[str, Any]:
    """The report as the documented ``--json`` shape (docs/kits.md, version JSON_VERSION)."""
    from stock.fit.engine import assessment_json

    def comb(c: Any) -> dict[str, Any]:
        return {"parts": [s.part.number for s in c.parts], "topology": c.topology.value,
                "text": c.describe(), "nominal": c.nominal, "low": c.low, "high": c.high,
                "ok": c.ok, "checks": list(c.checks)}

    return {
        "version": JSON_VERSION,
        "complete": report.complete,
        "cost": report.plan.cost,
        "notes": report.notes + report.plan.notes,
        "kits": [{"kit": s.kit, "wanted": s.wanted, "buildable": s.buildable,
                  "limits": s.limits} for s in report.summaries],
        "slots": [
            {
                "kit": sc.kit,
                "key": sc.key,
                "refs": sc.slot.refs,
                "calls_for": sc.slot.calls_for,
                "kind": sc.slot.kind.value,
                "role": sc.slot.role.value,
                "qty": sc.slot.qty,
                "copies": sc.copies,
                "need": sc.need,
                "requirements_from": sc.requirements_from,
                "exact": [{"part": s.part.number, "free": s.free,
                           "drawers": [{"drawer": d, "free": f} for d, f in s.drawers]}
                          for s in sc.exact],
                "stand_ins": [assessment_json(a) for a in sc.stand_ins],
                "allocations": [{"part": a.part, "drawer": a.drawer, "qty": a.qty,
                                 "exact": a.exact} for a in sc.allocations],
                "short": sc.short,
                "combinations": [comb(c) for c in sc.combinations],
                "notes": sc.notes,
            }
            for sc in report.slots
        ],
    }
