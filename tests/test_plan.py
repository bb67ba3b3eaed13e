"""Tests of stock.plan: the exact allocation plan against hand-computed optima, a brute
force reference, and the greedy baseline."""

from __future__ import annotations

import itertools
import tomllib
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from stock.errors import PlanError
from stock.plan import (
    COSTS,
    CostModel,
    Demand,
    Link,
    Ranked,
    Supply,
    add_scarcity,
    check_plan,
    costs_from_rank,
    greedy,
    link_cost,
    solve,
)

CASES = tomllib.loads((Path(__file__).parent / "data" / "plans" / "cases.toml").read_text(
    encoding="utf-8"))["case"]


def _problem(case):
    demands = [Demand(k, q, i, label) for i, (k, q, label) in enumerate(case["demands"])]
    supplies = [Supply(p, d, f) for p, d, f in case["supplies"]]
    links = [Link(d, p, c, e) for d, p, c, e in case["links"]]
    return demands, supplies, links


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
def test_hand_computed_optimum(case):
    # Source: each case's "source" field in tests/data/plans/cases.toml (worked by hand).
    demands, supplies, links = _problem(case)
    plan = solve(demands, supplies, links, short_cost=case.get("short_cost"))
    assert plan.cost == case["cost"]
    got = [[a.demand, a.part, a.drawer, a.qty] for a in plan.allocations]
    assert got == case["allocations"]
    assert plan.short == case["short"]
    assert check_plan(plan, demands, supplies, links) == []
    if "note" in case:
        assert case["note"] in plan.notes


@pytest.mark.parametrize("case", CASES, ids=[c["name"] for c in CASES])
def test_greedy_baseline_is_never_better(case):
    demands, supplies, links = _problem(case)
    g = greedy(demands, supplies, links, short_cost=case.get("short_cost"))
    assert g.cost == case["greedy_cost"]
    assert check_plan(g, demands, supplies, links) == []
    assert solve(demands, supplies, links, short_cost=case.get("short_cost")).cost <= g.cost


def test_some_case_is_strictly_better_than_greedy():
    # The issue asks for constructed cases where the plan beats greedy outright.
    better = [c["name"] for c in CASES if c["cost"] < c["greedy_cost"]]
    assert len(better) >= 2


def test_cost_model_orders_exact_before_stand_ins():
    # Common practice of this project (docs/kits.md): exact < best stand-in < worse ones.
    assert link_cost(exact=True) == COSTS.exact == 0
    s0 = link_cost(exact=False, rank=0)
    s1 = link_cost(exact=False, rank=1)
    assert 0 < s0 < s1
    assert link_cost(exact=False, rank=0, warnings=1) > s0
    assert link_cost(exact=False, rank=0, dropin=False) > s0
    m = CostModel(stand_in=7, rank_step=3, warning=2, not_dropin=5)
    # hand-computed: 7 + 3*2 + 2*1 + 5 = 20
    assert link_cost(exact=False, rank=2, warnings=1, dropin=False, model=m) == 20


def test_costs_from_rank_keeps_the_cheapest_link_per_part():
    links = costs_from_rank("k:Q1", [
        Ranked("PN2222A", exact=True),
        Ranked("2N2222A", rank=0, why="same die, metal can"),
        Ranked("2N2222A", rank=3),
        Ranked("MPSH10", rank=1, warnings=1),
    ])
    got = {lk.part: (lk.cost, lk.exact) for lk in links}
    assert got == {"PN2222A": (0, True), "2N2222A": (100, False), "MPSH10": (130, False)}


def test_scarcity_penalty_hand_computed():
    # MPSH10: 2 free; Q2 and Q3 call for it exactly (1 each), Q1 could use it as a
    # stand-in (1). Wanted 3 > 2 free, contested by Q2 + Q3 = 2 units: full penalty 50.
    # 2N2222A is plentiful: no penalty.
    demands = [Demand("Q1", 1), Demand("Q2", 1), Demand("Q3", 1)]
    supplies = [Supply("MPSH10", "B2", 2), Supply("2N2222A", "A1", 9)]
    links = [Link("Q1", "MPSH10", 100, False), Link("Q1", "2N2222A", 100, False),
             Link("Q2", "MPSH10", 0, True), Link("Q3", "MPSH10", 0, True)]
    out = {(lk.demand, lk.part): lk.cost for lk in add_scarcity(demands, supplies, links)}
    assert out == {("Q1", "MPSH10"): 150, ("Q1", "2N2222A"): 100,
                   ("Q2", "MPSH10"): 0, ("Q3", "MPSH10"): 0}
    # With 3 free nothing is scarce; with Q3 gone, 1 contested unit of 2 free: ceil(25).
    assert add_scarcity(demands, [Supply("MPSH10", "B2", 3)], links)[0].cost == 100
    out2 = add_scarcity(demands[:2], [Supply("MPSH10", "B2", 1)], links[:3])
    assert out2[0].cost == 150
    demands4 = [Demand("Q1", 2), Demand("Q2", 1)]
    out3 = add_scarcity(demands4, [Supply("MPSH10", "B2", 2)], links[:3])
    assert out3[0].cost == 125  # contested 1 of 2 free: ceil(50 * 1 / 2)


def test_scarcity_breaks_an_even_choice_in_favour_of_the_plentiful_part():
    # Q1 ranks MPSH10 and 2N2222A equally; with the penalty the plan keeps MPSH10 for
    # Q2 even though both plans cover every unit.
    demands = [Demand("Q1", 1, 0, "Q1 (switch)"), Demand("Q2", 1, 1, "Q2 (rf-amp)")]
    supplies = [Supply("MPSH10", "B2", 1), Supply("2N2222A", "A1", 9)]
    links = add_scarcity(demands, supplies, [
        Link("Q1", "MPSH10", 100, False), Link("Q1", "2N2222A", 100, False),
        Link("Q2", "MPSH10", 0, True)])
    plan = solve(demands, supplies, links)
    assert {(a.demand, a.part) for a in plan.allocations} == {("Q1", "2N2222A"),
                                                              ("Q2", "MPSH10")}
    assert plan.short == {}
    assert "Q1 (switch): stood in 2N2222A to keep the only MPSH10 for Q2 (rf-amp)" in plan.notes


def test_bad_input_is_refused_with_a_named_error():
    with pytest.raises(PlanError, match="listed twice"):
        solve([Demand("a", 1), Demand("a", 2)], [], [])
    with pytest.raises(PlanError, match="not among the demands"):
        solve([Demand("a", 1)], [], [Link("b", "X", 0, True)])
    with pytest.raises(PlanError, match="free -1"):
        solve([Demand("a", 1)], [Supply("X", "D", -1)], [])
    with pytest.raises(PlanError, match="cost -5"):
        greedy([Demand("a", 1)], [], [Link("a", "X", -5, True)])


def test_empty_problem():
    plan = solve([], [], [])
    assert plan.allocations == [] and plan.short == {} and plan.cost == 0


# --- brute force reference and properties ------------------------------------------


def _brute_force(demands, supplies, links, short_cost):
    """Least cost and least short count by trying every integer allocation (tiny cases)."""
    free: dict[str, int] = {}
    for s in supplies:
        free[s.part] = free.get(s.part, 0) + s.free
    per_demand = []
    for d in demands:
        mine = [lk for lk in links if lk.demand == d.key]
        options = [v for v in itertools.product(range(d.qty + 1), repeat=len(mine))
                   if sum(v) <= d.qty]
        per_demand.append([(mine, v) for v in options])
    best = None
    for combo in itertools.product(*per_demand):
        used: dict[str, int] = {}
        cost = 0
        short = 0
        for d, (mine, v) in zip(demands, combo, strict=True):
            for lk, n in zip(mine, v, strict=True):
                used[lk.part] = used.get(lk.part, 0) + n
                cost += lk.cost * n
            short += d.qty - sum(v)
        if any(n > free.get(p, 0) for p, n in used.items()):
            continue
        total = cost + short * short_cost
        key = (total, short)
        best = key if best is None or key < best else best
    return best


PARTS = ["X", "Y", "Z"]


@st.composite
def problems(draw, max_demands=3, max_qty=3):
    n_dem = draw(st.integers(0, max_demands))
    demands = [Demand(f"d{i}", draw(st.integers(0, max_qty)), draw(st.integers(0, 2)))
               for i in range(n_dem)]
    supplies = []
    for p in PARTS:
        for drawer in draw(st.lists(st.sampled_from(["A", "B"]), unique=True, max_size=2)):
            supplies.append(Supply(p, drawer, draw(st.integers(0, 3))))
    links = []
    for d in demands:
        for p in draw(st.lists(st.sampled_from(PARTS), unique=True, max_size=3)):
            exact = draw(st.booleans())
            cost = 0 if exact else draw(st.integers(1, 40))
            links.append(Link(d.key, p, cost, exact))
    return demands, supplies, links


@settings(max_examples=150, deadline=None)
@given(problems())
def test_plan_matches_brute_force_and_never_loses_to_greedy(problem):
    demands, supplies, links = problem
    plan = solve(demands, supplies, links)
    # every demand unit allocated or reported short; nothing beyond free stock
    assert check_plan(plan, demands, supplies, links) == []
    g = greedy(demands, supplies, links)
    assert check_plan(g, demands, supplies, links) == []
    assert plan.cost <= g.cost
    ref = _brute_force(demands, supplies, links, plan.short_cost)
    if ref is not None:
        assert plan.cost == ref[0]
    # the default short cost makes the plan cover as many units as any allocation can
    best_short = _brute_force(demands, supplies, [Link(lk.demand, lk.part, 0, lk.exact)
                                                  for lk in links], 1)
    if best_short is not None:
        assert sum(plan.short.values()) == best_short[1]


@settings(max_examples=60, deadline=None)
@given(problems(max_demands=6, max_qty=20))
def test_plan_is_sound_and_deterministic_on_larger_stores(problem):
    demands, supplies, links = problem
    a = solve(demands, supplies, links)
    b = solve(demands, supplies, links)
    assert check_plan(a, demands, supplies, links) == []
    assert a.allocations == b.allocations and a.short == b.short and a.notes == b.notes
    assert a.cost <= greedy(demands, supplies, links).cost


def test_huge_costs_fall_back_to_unscaled_and_stay_exact():
    # 10 000 units with a short cost of 2^45 would overflow 64-bit integers once scaled
    # for the tie offsets; the plan then drops the offsets but keeps the exact optimum.
    demands = [Demand("a", 10_000), Demand("b", 1)]
    supplies = [Supply("X", "D1", 5_000)]
    links = [Link("a", "X", 3, False), Link("b", "X", 0, True)]
    plan = solve(demands, supplies, links, short_cost=2**45)
    assert check_plan(plan, demands, supplies, links) == []
    # hand-computed: b takes one X (0), a the other 4 999 (3 each), 5 001 units of a short
    assert plan.cost == 3 * 4_999 + 2**45 * 5_001
    assert plan.short == {"a": 5_001}
    with pytest.raises(PlanError, match="costs must lie between"):
        solve(demands, supplies, links, short_cost=2**59)


@pytest.mark.slow
def test_larger_store_is_sound_and_beats_or_ties_greedy():
    # 120 demands × 40 parts, pseudo-random but fixed (no wall-clock assertions).
    import random

    rnd = random.Random(7)
    parts = [f"P{i}" for i in range(40)]
    demands = [Demand(f"k:S{i}", rnd.randint(1, 6), i) for i in range(120)]
    supplies = [Supply(p, f"D{j}", rnd.randint(0, 8)) for p in parts for j in range(2)]
    links = []
    for d in demands:
        for p in rnd.sample(parts, 4):
            exact = rnd.random() < 0.25
            links.append(Link(d.key, p, 0 if exact else rnd.randint(100, 200), exact))
    plan = solve(demands, supplies, links)
    assert check_plan(plan, demands, supplies, links) == []
    assert plan.cost <= greedy(demands, supplies, links).cost


def test_docs_example_runs_as_written():
    # docs/kits.md shows this example with its output; keep the two in step.
    import re

    text = (Path(__file__).parent.parent / "docs" / "kits.md").read_text(encoding="utf-8")
    block = text.split("### Python API")[1].split("```python")[1].split("```")[0]
    code = "\n".join(line for line in block.splitlines() if not line.startswith("plan."))
    ns: dict = {}
    exec(code, ns)  # noqa: S102 - our own documentation
    plan = ns["plan"]
    shown = dict(re.findall(r"^plan\.(\w+)\s+# (.*)$", block, flags=re.M))
    assert repr(plan.short) == shown["short"]
    assert repr(plan.notes) == shown["notes"].replace('"', "'")
    assert [(a.demand, a.part, a.drawer, a.qty, a.exact) for a in plan.allocations] == [
        ("tx:Q1", "2N2222A", "A1", 1, False), ("tx:Q2", "MPSH10", "B2", 1, True)]
