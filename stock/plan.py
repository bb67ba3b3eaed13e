"""Allocate free stock to slot demands at least total cost: the allocation plan.

Several slots (and several copies of a kit) compete for the same drawers. This module
solves that as a transportation problem — a min-cost flow — exactly, with OR-Tools'
``SimpleMinCostFlow``. A min-cost flow with integer capacities has an integral optimum
(total unimodularity of the network matrix; Ahuja, Magnanti & Orlin, *Network Flows*,
1993, ch. 9 — from memory), so no unit is ever split.

The module is pure: it knows demands, supplies and links (which part may serve which
demand, at what integer cost), never the store or the fit engine. The caller (``stock
kits check``) turns fit rankings into links with :func:`costs_from_rank` and
:func:`add_scarcity`.

Flow graph (one unit of flow = one part)::

    source ──qty──▶ demand ──link cost──▶ part ──▶ (part, drawer) ──free──▶ sink
                       └────────────── short_cost ───────────────────────▶ sink

The cost model (integers; see docs/kits.md):

* an exact part (the called-for part, or the same value within tolerance) costs
  ``exact`` (0);
* a stand-in costs ``stand_in + rank_step * rank + warning * warnings (+ not_dropin)``,
  so the worse it ranks, the more it costs;
* spending a contested part as a stand-in — one that other slots need more and that
  is too scarce for all of them — costs up to ``scarcity`` more (:func:`add_scarcity`);
* a short unit (left without a part) costs more than any chain of re-assignments can
  save, so the plan first covers as many units as free stock allows, then is cheapest.

Determinism: the optimum is unique in cost but not always in allocation. Ties are
broken by a stable order, by adding small *tie offsets* to the arc costs, scaled so
they never change the optimum (every base cost is multiplied by ``K``, larger than the
sum of offsets any flow can collect). Among equally cheap plans the solver then picks
the one where earlier demands get their earlier-listed links, drawers are emptied in
the order the supplies were given, and later demands go short first.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field

from stock.errors import PlanError


@dataclass(frozen=True)
class Demand:
    """Units a slot needs: ``key`` names the slot (``"kit:R3-R6"``), ``qty`` its count.

    ``order`` sorts demands (lower first: greedy serves it first, ties favour it);
    ``label`` is how notes name it (``"Q2 (rf-amp)"``; the key when empty).
    """

    key: str
    qty: int
    order: int = 0
    label: str = ""

    @property
    def name(self) -> str:
        return self.label or self.key


@dataclass(frozen=True)
class Supply:
    """Free units of one part in one drawer."""

    part: str
    drawer: str
    free: int


@dataclass(frozen=True)
class Link:
    """Part ``part`` may serve demand ``demand`` at integer ``cost`` per unit."""

    demand: str
    part: str
    cost: int
    exact: bool
    note: str = ""
    penalty: int = 0  # part of ``cost`` added by add_scarcity (not a fit judgement)

    @property
    def fit_cost(self) -> int:
        """The cost as the fit ranking set it, before any scarcity penalty."""
        return self.cost - self.penalty


@dataclass
class Allocation:
    """``qty`` units of ``part`` from ``drawer`` given to ``demand``."""

    demand: str
    part: str
    drawer: str
    qty: int
    exact: bool


@dataclass
class Plan:
    """The result: allocations, units short per demand, total cost, explanations.

    ``cost`` is the model cost: link costs of the allocated units plus ``short_cost``
    per short unit (tie offsets excluded), so two plans of one problem compare.
    """

    allocations: list[Allocation]
    short: dict[str, int]
    cost: int
    notes: list[str] = field(default_factory=list)
    short_cost: int = 0

    def allocated(self, demand: str) -> int:
        """Units given to ``demand``."""
        return sum(a.qty for a in self.allocations if a.demand == demand)

    def taken(self) -> dict[tuple[str, str], int]:
        """Units taken per (part, drawer)."""
        out: dict[tuple[str, str], int] = defaultdict(int)
        for a in self.allocations:
            out[(a.part, a.drawer)] += a.qty
        return dict(out)


# --- the cost model ------------------------------------------------------------------


@dataclass(frozen=True)
class CostModel:
    """Integer costs per unit (dimensionless points; only their order matters).

    The numbers are common practice of this project, not a standard: a stand-in must
    always cost more than an exact part, each step down the fit ranking a little more,
    and a fit warning or a non-drop-in package as much as a couple of rank steps.
    """

    exact: int = 0
    stand_in: int = 100  # any stand-in costs at least this
    rank_step: int = 10  # per place below the best stand-in
    warning: int = 20  # per warning of the fit check
    not_dropin: int = 30  # package or pin order differ: the builder must bend leads
    scarcity: int = 50  # most a contested part adds (see add_scarcity)


COSTS = CostModel()


@dataclass(frozen=True)
class Ranked:
    """One candidate for a slot as the fit engine ranked it (0 = best stand-in)."""

    part: str
    exact: bool = False
    rank: int = 0
    warnings: int = 0
    dropin: bool = True
    why: str = ""


def link_cost(*, exact: bool, rank: int = 0, warnings: int = 0, dropin: bool = True,
              model: CostModel = COSTS) -> int:
    """The cost of one unit: ``exact`` for an exact part, else the stand-in formula."""
    if exact:
        return model.exact
    return (model.stand_in + model.rank_step * max(rank, 0)
            + model.warning * max(warnings, 0) + (0 if dropin else model.not_dropin))


def costs_from_rank(demand: str, ranked: Iterable[Ranked], *,
                    model: CostModel = COSTS) -> list[Link]:
    """Links for one demand from its ranked candidates.

    Integer cost model: exact = ``model.exact`` (0); stand-in = ``stand_in + rank_step *
    rank + warning * warnings + not_dropin`` (if the package or pin order differ). A
    part listed twice keeps its cheapest link.
    """
    best: dict[str, Link] = {}
    for r in ranked:
        cost = link_cost(exact=r.exact, rank=r.rank, warnings=r.warnings, dropin=r.dropin,
                         model=model)
        old = best.get(r.part)
        if old is None or cost < old.cost:
            best[r.part] = Link(demand, r.part, cost, r.exact, r.why)
    return list(best.values())


def add_scarcity(demands: Sequence[Demand], supplies: Sequence[Supply],
                 links: Sequence[Link], *, model: CostModel = COSTS) -> list[Link]:
    """Links with a penalty for spending a contested part as a stand-in.

    A part is *scarce* when the demands that can use it want more units than are free.
    Spending it as a stand-in in demand ``d`` costs extra in proportion to the units
    other demands *need more* — those where the part is cheaper (exact, or a better
    fit), or that have fewer alternatives — up to ``model.scarcity`` when those alone
    would take every free unit: ``ceil(scarcity * min(1, contested / free))``. Exact
    links are never penalised: spending a part where it is called for is what it is for.
    """
    qty = {d.key: d.qty for d in demands}
    free: dict[str, int] = defaultdict(int)
    for s in supplies:
        free[s.part] += max(s.free, 0)
    by_part: dict[str, list[Link]] = defaultdict(list)
    n_links: dict[str, int] = defaultdict(int)
    for lk in links:
        by_part[lk.part].append(lk)
        n_links[lk.demand] += 1
    out = []
    for lk in links:
        users = by_part[lk.part]
        want = sum(qty.get(u.demand, 0) for u in users)
        have = free[lk.part]
        if lk.exact or have <= 0 or want <= have:
            out.append(lk)
            continue
        contested = sum(
            qty.get(u.demand, 0) for u in users
            if u.demand != lk.demand
            and (u.cost < lk.cost or n_links[u.demand] < n_links[lk.demand])
        )
        extra = -(-model.scarcity * min(contested, have) // have)  # ceiling division
        out.append(Link(lk.demand, lk.part, lk.cost + extra, lk.exact, lk.note,
                        lk.penalty + extra) if extra else lk)
    return out


# --- checks common to both planners ------------------------------------------------


def _checked(demands: Sequence[Demand], supplies: Sequence[Supply],
             links: Sequence[Link]) -> tuple[list[Demand], list[Supply], list[Link]]:
    """Validate and put into the stable order both planners use."""
    seen: set[str] = set()
    for d in demands:
        if d.key in seen:
            raise PlanError(f"demand {d.key!r} is listed twice; merge its quantities")
        if d.qty < 0:
            raise PlanError(f"demand {d.key!r} has quantity {d.qty}; use 0 or more")
        seen.add(d.key)
    places: set[tuple[str, str]] = set()
    for s in supplies:
        if (s.part, s.drawer) in places:
            raise PlanError(f"{s.part} in drawer {s.drawer} is listed twice; merge its free "
                            "quantities")
        if s.free < 0:
            raise PlanError(f"{s.part} in drawer {s.drawer} has free {s.free}; use 0 or more")
        places.add((s.part, s.drawer))
    pairs: set[tuple[str, str]] = set()
    for lk in links:
        if lk.demand not in seen:
            raise PlanError(f"a link names demand {lk.demand!r}, which is not among the "
                            "demands; add the demand or drop the link")
        if lk.cost < 0:
            raise PlanError(f"link {lk.demand} → {lk.part} has cost {lk.cost}; costs are 0 "
                            "or more")
        if (lk.demand, lk.part) in pairs:
            raise PlanError(f"link {lk.demand} → {lk.part} is listed twice; keep the "
                            "cheaper one")
        pairs.add((lk.demand, lk.part))
    order = sorted(range(len(demands)), key=lambda i: (demands[i].order, i))
    return [demands[i] for i in order], list(supplies), list(links)


def _default_short_cost(demands: Sequence[Demand], links: Sequence[Link]) -> int:
    # An augmenting path that covers one more unit visits each demand at most once and
    # so saves at most (number of demands) × (largest link cost); a short unit dearer
    # than that is never chosen while a unit could be covered.
    top = max((lk.cost for lk in links), default=0)
    return max(top, 1) * max(len(demands), 1) + 1


def _cost_of(allocs: Sequence[Allocation], short: dict[str, int], links: Sequence[Link],
             short_cost: int) -> int:
    cost = {(lk.demand, lk.part): lk.cost for lk in links}
    return (sum(cost[(a.demand, a.part)] * a.qty for a in allocs)
            + short_cost * sum(short.values()))


# --- the exact plan ------------------------------------------------------------------

_INT_LIMIT = 2**62  # keep every arc cost × node count inside a signed 64-bit integer

#: Largest cost a link or a short unit may have. The cost model's points are in the
#: hundreds; this bound keeps the solver's own cost arithmetic inside 64 bits.
MAX_COST = 2**45


def solve(demands: Sequence[Demand], supplies: Sequence[Supply], links: Sequence[Link], *,
          short_cost: int | None = None) -> Plan:
    """The least-cost allocation (OR-Tools min-cost flow; exact and integral).

    Never allocates more than a drawer's free quantity; every unit of every demand is
    either allocated or counted in ``Plan.short``. ``short_cost`` is the cost of a unit
    left short (default: more than any re-assignment can save).
    """
    from ortools.graph.python import min_cost_flow

    demands, supplies, links = _checked(demands, supplies, links)
    if short_cost is None:
        short_cost = _default_short_cost(demands, links)
    if not 0 <= short_cost <= MAX_COST or any(lk.cost > MAX_COST for lk in links):
        raise PlanError(f"costs must lie between 0 and {MAX_COST} points; scale the cost "
                        "model down")
    active = [d for d in demands if d.qty > 0]
    total = sum(d.qty for d in active)
    rank = {d.key: i for i, d in enumerate(active)}
    n_dem = len(active)
    links = [lk for lk in links if lk.demand in rank]
    by_demand: dict[str, list[Link]] = defaultdict(list)
    for lk in links:
        by_demand[lk.demand].append(lk)
    places: dict[str, list[Supply]] = defaultdict(list)
    for s in supplies:
        if s.free > 0:
            places[s.part].append(s)

    # Tie offsets (see the module docstring): a link's offset grows with its place in
    # its demand's list, weighted so earlier demands win ties; a drawer's with its place
    # in the part's supply list; a short arc's with how early its demand is.
    n_links = max((len(v) for v in by_demand.values()), default=1)
    n_drawers = max((len(v) for v in places.values()), default=1)
    top_offset = max(n_links * (n_dem + 1), (n_links - 1) * (n_dem + 1) + n_drawers)
    scale = total * top_offset + 1
    top_cost = max([short_cost, *(lk.cost for lk in links)])
    n_nodes = 2 + n_dem + len(places) + sum(len(v) for v in places.values())
    if (top_cost + 1) * scale * (n_nodes + 1) >= _INT_LIMIT:
        scale = 1  # too large to scale safely: the solver's own (deterministic) order rules

    def tie(value: int) -> int:
        return value if scale > 1 else 0

    mcf = min_cost_flow.SimpleMinCostFlow()
    node = 0

    def new_node() -> int:
        nonlocal node
        node += 1
        return node - 1

    source, sink = new_node(), new_node()
    d_node = {d.key: new_node() for d in active}
    p_node = {p: new_node() for p in places}
    link_arcs: dict[int, Link] = {}
    drawer_arcs: dict[int, Supply] = {}
    short_arcs: dict[int, str] = {}
    for d in active:
        mcf.add_arc_with_capacity_and_unit_cost(source, d_node[d.key], d.qty, 0)
    for d in active:
        weight = n_dem + 1 - rank[d.key]  # earlier demand: heavier weight on its order
        for pos, lk in enumerate(by_demand[d.key]):
            if lk.part not in p_node:
                continue
            arc = mcf.add_arc_with_capacity_and_unit_cost(
                d_node[d.key], p_node[lk.part], d.qty, lk.cost * scale + tie(pos * weight))
            link_arcs[arc] = lk
        arc = mcf.add_arc_with_capacity_and_unit_cost(
            d_node[d.key], sink, d.qty, short_cost * scale + tie(n_links * weight))
        short_arcs[arc] = d.key
    for part, stock in places.items():
        for pos, s in enumerate(stock):
            drawer = new_node()
            mcf.add_arc_with_capacity_and_unit_cost(p_node[part], drawer, s.free, tie(pos))
            arc = mcf.add_arc_with_capacity_and_unit_cost(drawer, sink, s.free, 0)
            drawer_arcs[arc] = s
    mcf.set_node_supply(source, total)
    mcf.set_node_supply(sink, -total)
    status = mcf.solve()
    if status != mcf.OPTIMAL:  # cannot happen: short arcs make every instance feasible
        raise PlanError(f"the min-cost flow solver returned {status.name}; report this "
                        "with the kit and the store")

    # Read the flow back: demand → part from link arcs, part → drawer from drawer arcs,
    # then pair them up per part in the stable order (any pairing has the same cost).
    per_part: dict[str, list[tuple[Link, int]]] = defaultdict(list)
    for arc, lk in link_arcs.items():
        f = mcf.flow(arc)
        if f:
            per_part[lk.part].append((lk, f))
    from_drawer: dict[str, list[tuple[Supply, int]]] = defaultdict(list)
    for arc, s in drawer_arcs.items():
        f = mcf.flow(arc)
        if f:
            from_drawer[s.part].append((s, f))
    allocs: list[Allocation] = []
    for part, uses in per_part.items():
        drawers = [s.drawer for s, _ in from_drawer[part]]
        left = [f for _, f in from_drawer[part]]
        i = 0
        for lk, f in sorted(uses, key=lambda u: rank[u[0].demand]):
            while f:
                take = min(f, left[i])
                allocs.append(Allocation(lk.demand, part, drawers[i], take, lk.exact))
                f -= take
                left[i] -= take
                if left[i] == 0:
                    i += 1
    short = {key: mcf.flow(arc) for arc, key in short_arcs.items() if mcf.flow(arc)}
    allocs = _sorted(allocs, active, links, supplies)
    plan = Plan(allocs, short, _cost_of(allocs, short, links, short_cost), [], short_cost)
    plan.notes = explain(plan, demands, supplies, links)
    return plan


def _sorted(allocs: list[Allocation], demands: Sequence[Demand], links: Sequence[Link],
            supplies: Sequence[Supply]) -> list[Allocation]:
    d_pos = {d.key: i for i, d in enumerate(demands)}
    l_pos = {(lk.demand, lk.part): i for i, lk in enumerate(links)}
    s_pos = {(s.part, s.drawer): i for i, s in enumerate(supplies)}
    merged: dict[tuple[str, str, str], Allocation] = {}
    for a in allocs:
        k = (a.demand, a.part, a.drawer)
        if k in merged:
            merged[k].qty += a.qty
        else:
            merged[k] = Allocation(a.demand, a.part, a.drawer, a.qty, a.exact)
    return sorted(merged.values(), key=lambda a: (d_pos[a.demand], l_pos[(a.demand, a.part)],
                                                   s_pos[(a.part, a.drawer)]))


# --- the greedy baseline -------------------------------------------------------------


def greedy(demands: Sequence[Demand], supplies: Sequence[Supply],
           links: Sequence[Link], *, short_cost: int | None = None) -> Plan:
    """Slot by slot in demand order, cheapest link first, drawers in the order given.

    The obvious method, kept as a baseline: it can spend a scarce part on an early slot
    that a later slot needed more. Same cost model as :func:`solve`.
    """
    demands, supplies, links = _checked(demands, supplies, links)
    if short_cost is None:
        short_cost = _default_short_cost(demands, links)
    left = {(s.part, s.drawer): s.free for s in supplies}
    by_demand: dict[str, list[tuple[int, Link]]] = defaultdict(list)
    for pos, lk in enumerate(links):
        by_demand[lk.demand].append((pos, lk))
    allocs: list[Allocation] = []
    short: dict[str, int] = {}
    for d in demands:
        need = d.qty
        for _, lk in sorted(by_demand[d.key], key=lambda t: (t[1].cost, t[0])):
            for s in supplies:
                if need == 0:
                    break
                if s.part != lk.part:
                    continue
                take = min(need, left[(s.part, s.drawer)])
                if take:
                    allocs.append(Allocation(d.key, lk.part, s.drawer, take, lk.exact))
                    left[(s.part, s.drawer)] -= take
                    need -= take
        if need:
            short[d.key] = need
    allocs = _sorted(allocs, demands, links, supplies)
    plan = Plan(allocs, short, _cost_of(allocs, short, links, short_cost), [], short_cost)
    plan.notes = explain(plan, demands, supplies, links)
    return plan


# --- explanations --------------------------------------------------------------------


def explain(plan: Plan, demands: Sequence[Demand], supplies: Sequence[Supply],
            links: Sequence[Link]) -> list[str]:
    """One line per stand-in chosen to save a better part for another slot, and per short.

    ``"C3: stood in 2N2222A to keep the only MPSH10 for Q2 (rf-amp)"``: demand C3 had a
    cheaper link to MPSH10, but every free MPSH10 went to other demands.
    """
    name = {d.key: d.name for d in demands}
    free: dict[str, int] = defaultdict(int)
    for s in supplies:
        free[s.part] += s.free
    used_by: dict[str, dict[str, int]] = defaultdict(lambda: defaultdict(int))
    for a in plan.allocations:
        used_by[a.part][a.demand] += a.qty
    link = {(lk.demand, lk.part): lk for lk in links}
    by_demand: dict[str, list[Link]] = defaultdict(list)
    for lk in links:
        by_demand[lk.demand].append(lk)
    notes: list[str] = []
    done: set[tuple[str, str]] = set()
    for a in plan.allocations:
        if a.exact or (a.demand, a.part) in done:
            continue
        done.add((a.demand, a.part))
        mine = link[(a.demand, a.part)].fit_cost
        # A part the fit ranking liked as well or better, all of whose free units went
        # to other demands: the plan gave it up here on purpose.
        for better in sorted(by_demand[a.demand], key=lambda lk: lk.fit_cost):
            if better.part == a.part or better.fit_cost > mine or free[better.part] == 0:
                continue
            others = [k for k in used_by[better.part] if k != a.demand]
            if not others or sum(used_by[better.part].values()) < free[better.part]:
                continue
            n = free[better.part]
            what = (f"the only {better.part}" if n == 1
                    else f"the {n} free {better.part}")
            notes.append(f"{name[a.demand]}: stood in {a.part} to keep {what} for "
                         f"{', '.join(name[k] for k in others)}")
            break
    for d in demands:
        if plan.short.get(d.key):
            if by_demand[d.key]:
                why = "no free part that fits is left"
            else:
                # (a combination of two or three parts may still make it: see the check)
                why = "no single part in stock fits"
            notes.append(f"{d.name}: {plan.short[d.key]} short ({why})")
    return notes


def check_plan(plan: Plan, demands: Sequence[Demand], supplies: Sequence[Supply],
               links: Sequence[Link]) -> list[str]:
    """Problems with ``plan`` (empty when sound): over-allocation, unlinked parts,
    demand units neither allocated nor short. Used by the tests and as a safety net."""
    problems = []
    free = {(s.part, s.drawer): s.free for s in supplies}
    for (part, drawer), n in plan.taken().items():
        if n > free.get((part, drawer), 0):
            problems.append(f"{part} in {drawer}: {n} taken, {free.get((part, drawer), 0)} "
                            "free")
    pairs = {(lk.demand, lk.part) for lk in links}
    for a in plan.allocations:
        if (a.demand, a.part) not in pairs:
            problems.append(f"{a.demand} got {a.part}, which has no link")
        if a.qty <= 0:
            problems.append(f"{a.demand} got {a.qty} of {a.part}")
    for d in demands:
        got = plan.allocated(d.key) + plan.short.get(d.key, 0)
        if got != d.qty:
            problems.append(f"{d.key}: {got} allocated or short, {d.qty} wanted")
    return problems
