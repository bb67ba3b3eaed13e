"""Stand-ins for one slot from a store: the candidate query and the ranking together.

The one call the command line, scripts and benchmarks make to answer "what in my drawers
will do here?". The engine itself stays pure; the store comes in as anything with a
``candidates(kind, family, screen)`` method (:class:`stock.store.api.Store`).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from typing import Any, Protocol

from stock.fit.engine import assess
from stock.fit.rank import Assessment
from stock.fit.requirements import requirements_for, screen
from stock.gcpause import cycle_collector_paused
from stock.kinds import Kind
from stock.parts import Stocked
from stock.rules import Policy
from stock.slots import Slot

#: Kinds whose family (polarity, channel) must match, so the store may filter on it first.
_SAME_FAMILY = (Kind.BJT, Kind.FET)


class CandidateSource(Protocol):
    def candidates(self, kind: Kind, family: str | None = None,
                   screen: Sequence[Any] = ()) -> list[Stocked]: ...


class BuySource(Protocol):
    def to_buy(self, kind: Kind | None = None, family: str | None = None,
               exclude: Iterable[str] = ()) -> list[Stocked]: ...


def stand_ins(store: CandidateSource, slot: Slot, policy: Policy, *, need: int = 1,
              include_failing: bool = False, buy_from: BuySource | None = None
              ) -> tuple[list[Assessment], list[Stocked]]:
    """(ranked assessments, the candidate pool) for ``slot`` from ``store``'s free stock.

    Parts that surely miss a rating or the slot's value window are dropped in the store
    query before any ranking, unless failing candidates are wanted. With ``buy_from``
    (the catalog), parts the drawers lack join as stand-ins to buy; they rank after
    stock. Combinations are searched in :func:`combination_pool`, not in this pool.
    """
    fam = slot.part.family if slot.part is not None else None
    prefilter = fam if slot.kind in _SAME_FAMILY else None  # polarity/channel must match
    sure = () if include_failing else screen(requirements_for(slot, policy))
    # loading and ranking make ~100,000 small acyclic objects on a large store: one
    # pause of the cycle collector over both (see stock.gcpause)
    with cycle_collector_paused():
        pool = store.candidates(slot.kind, prefilter, sure)
        if buy_from is not None:
            pool = pool + buy_from.to_buy(slot.kind, prefilter,
                                          exclude=[s.part.number for s in pool])
        ranked = assess(slot, pool, policy, need=need, include_failing=include_failing)
    return ranked, pool


def combination_pool(store: CandidateSource, slot: Slot) -> list[Stocked]:
    """Free parts of the slot's kind that a series or parallel combination may be made
    of, unscreened: parts of other values make the value, and the combination's own
    checks share its voltage and power among the parts (:mod:`stock.fit.combine`), so
    neither the slot's value window nor its ratings rule a part out here."""
    with cycle_collector_paused():
        return store.candidates(slot.kind)
