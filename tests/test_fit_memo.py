"""The fit engine shares one check among candidates equal in what the check reads
(``stock.fit.checks.reads``). Shared or not, every answer must be the same: here every
catalog part is a candidate twice over (as read from the store, so its checks are
shared, and as a plain record, checked directly) for slots of every kind and role.

The reference is the engine itself on plain records (common practice: a memo must not
change a pure function's results); a ``reads`` that names too few parameters makes the
shared checks differ and fails here.
"""

from __future__ import annotations

from dataclasses import replace

import pytest

from stock.catalog import load_catalog
from stock.fit import assess, slot_from_args
from stock.fit.engine import assessment_json
from stock.kinds import Kind
from stock.parts import PartSpec, Stocked
from stock.rules import load_policy
from stock.slots import Conditions, Role
from stock.store.paramdoc import StoredPart, encode

CATALOG = load_catalog()
POLICY = load_policy({})

#: Operating points that exercise the role rules: a low-voltage small-signal stage, a
#: 13.8 V RF stage at 60 °C, and a mains-side position.
CONDITIONS = [
    Conditions(supply=5.0, freq=1e3, current=0.002),
    Conditions(supply=13.8, freq=14e6, current=0.05, ambient=60.0, dissipation=0.4,
               v_dc=12.0, i_peak=0.3, impedance=50.0),
    Conditions(supply=325.0, v_peak=325.0, v_rms=230.0, freq=50.0, current=0.5),
]


def stored(spec: PartSpec, number: str | None = None) -> StoredPart:
    return StoredPart(number or spec.number, spec.kind, spec.family, spec.package,
                      spec.pinout, spec.description, dict(spec.attrs), source=spec.source,
                      doc=encode(spec.params))


def _shape(assessments: list) -> list:
    return [(assessment_json(a), a.versatility) for a in assessments]


def _sorted_conditions(spec: PartSpec) -> PartSpec:
    # the store keeps test conditions sorted by name (so texts list them in that order)
    return replace(spec, params=[p._replace(at=dict(sorted(p.at.items()))) for p in spec.params])


def _pool(kind: Kind) -> tuple[list[Stocked], list[Stocked]]:
    specs = [_sorted_conditions(p) for p in CATALOG if p.kind is kind]
    # each part twice under two numbers: the second copy's checks all come from the memo
    plain = [Stocked(s, 10, [("A1", 10)]) for s in specs] + \
            [Stocked(replace(s, number=s.number + "-B"), 10, [("A2", 10)]) for s in specs]
    from_store = [Stocked(stored(s), 10, [("A1", 10)]) for s in specs] + \
                 [Stocked(stored(s, s.number + "-B"), 10, [("A2", 10)]) for s in specs]
    return plain, from_store


@pytest.mark.parametrize("kind", [k for k in Kind if any(p.kind is k for p in CATALOG)])
def test_shared_checks_give_the_direct_answer(kind: Kind) -> None:
    plain, from_store = _pool(kind)
    called = [p for p in CATALOG if p.kind is kind][:2]
    compared = 0
    for n, part in enumerate(called):
        for i, role in enumerate(Role):
            for cond in (CONDITIONS[(i + n) % 3],):  # each role meets every operating point
                try:
                    slot = slot_from_args(part.number, kind=kind, role=role, conditions=cond,
                                          resolve=CATALOG.get)
                    want = assess(slot, plain, POLICY, include_failing=True)
                except (ValueError, LookupError):
                    continue  # a role that does not apply to this kind
                got = assess(slot, from_store, POLICY, include_failing=True)
                assert _shape(got) == _shape(want), (part.number, role, cond)
                compared += len(want)
    assert compared > 0


def test_a_record_from_the_store_reads_back_the_catalog_values() -> None:
    for spec in CATALOG:
        assert stored(spec) == spec
        assert spec == stored(spec)


def test_a_large_pool_with_values_that_never_repeat() -> None:
    """Past the memo's trial (256 candidates) a requirement whose values never repeat is
    checked anew for every candidate and moved to the end of the evaluation order; the
    answers stay those of checks made one by one. The pool is synthetic (drawn ratings,
    a distinct fT each): inputs for comparing two paths, not reference data."""
    import random

    from stock.kinds import Bound
    from stock.parts import Param

    rnd = random.Random(5)
    specs = [PartSpec(f"Q{i:04d}", Kind.BJT, "npn", "TO-92", rnd.choice(("EBC", "CBE")), params=[
        Param("vceo", Bound.MAX, float(rnd.choice((15, 30, 45, 60)))),
        Param("ic", Bound.MAX, rnd.choice((0.05, 0.2, 0.8))),
        Param("pd", Bound.MAX, rnd.choice((0.35, 0.625)), {"ta": 25.0}),
        Param("ft", Bound.MIN if rnd.random() < 0.7 else Bound.TYP, 10 ** rnd.uniform(6, 9.7)),
        Param("tj", Bound.MAX, rnd.choice((125.0, 150.0))),
        Param("rth_ja", Bound.MAX, rnd.choice((200.0, 357.0)))]) for i in range(900)]
    plain = [Stocked(s, 5, [("A1", 5)]) for s in specs]
    from_store = [Stocked(stored(s), 5, [("A1", 5)]) for s in specs]
    slot = slot_from_args("PN2222A", kind=Kind.BJT, role=Role.RF_AMP, resolve=CATALOG.get,
                          conditions=Conditions(supply=13.8, freq=14e6, current=0.02))
    for include_failing in (False, True):
        want = assess(slot, plain, POLICY, include_failing=include_failing)
        got = assess(slot, from_store, POLICY, include_failing=include_failing)
        assert 0 < len(want) and _shape(got) == _shape(want)
    assert any(a.fitness.value == "fails" for a in want)  # the order of checks was tested
