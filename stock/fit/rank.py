"""Verdicts per candidate and the ranking of candidates for one slot.

Order: failing candidates last (shown only when asked), parts in the drawers before catalog
parts that would have to be bought, then fewer warnings, then a larger
smallest margin (margins above ``rank_margin_ample`` all count as ample, in 10 % steps),
then drop-in before reversed before crossed leads, then enough free quantity, then the
part fewer other slots could use (``demand``) and the one least over-qualified on scarce
capabilities (fT, voltage), so the one UHF transistor is not spent on an audio stage.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from enum import StrEnum

from stock.fit.checks import Check, Verdict
from stock.fit.dropin import DropIn
from stock.gcpause import cycle_collector_paused
from stock.parts import Stocked, part_key
from stock.slots import Op


class Fitness(StrEnum):
    """The electrical verdict on one candidate."""

    FITS = "fits"
    FITS_WITH_WARNINGS = "fits with warnings"
    FAILS = "fails"


@dataclass(slots=True)
class Assessment:
    """One candidate for one slot: its checks, verdicts and rank (1 = best)."""

    stocked: Stocked
    checks: list[Check]
    fitness: Fitness
    dropin: DropIn
    smallest_margin: float | None
    warnings: int
    rank: int = 0
    versatility: float = 0.0  # over-qualification on scarce capabilities (log10 units)
    demand: int = 0  # how many other slots could use this part (kit planner's count)

    @property
    def part(self) -> str:
        return self.stocked.part.number

    @property
    def failures(self) -> list[Check]:
        return [c for c in self.checks if c.verdict is Verdict.FAIL]

    @property
    def deciding(self) -> Check | None:
        """The check that decides the verdict: the worst failure (categorical ones first),
        else the worst warning (a shortfall, then an unknown, then a thin margin), else the
        check with the smallest margin."""
        fails = [c for c in self.checks if c.verdict is Verdict.FAIL]
        if fails:
            # a categorical failure (polarity, safety class, dielectric) decides before a
            # numeric shortfall; then the largest shortfall
            return min(fails, key=lambda c: -math.inf if c.margin is None else c.margin)
        warns = [c for c in self.checks if c.verdict is Verdict.WARN]
        if warns:
            # a known shortfall first, then an unknown value, then a thin or typical margin
            def order(c: Check) -> tuple[int, float]:
                if c.margin is None:
                    return (1, 0.0)
                return (0 if c.margin < 0 else 2, c.margin)

            return min(warns, key=order)
        with_margin = [c for c in self.checks if c.margin is not None]
        return min(with_margin, key=lambda c: c.margin) if with_margin else None  # type: ignore


#: Parameters whose surplus is a scarce capability worth keeping for slots that need it,
#: with a weight: speed is the scarce one (a UHF transistor), voltage less so; current
#: and power surplus is common and not counted (common practice).
SCARCE: dict[str, float] = {"ft": 1.0, "vceo": 0.3, "vds": 0.3, "vrrm": 0.3, "v_rated": 0.3}


def fitness_of(checks: list[Check]) -> tuple[Fitness, int, float | None]:
    """(fitness, number of warnings, smallest margin) of a list of checks."""
    warnings = 0
    failed = False
    smallest: float | None = None
    for c in checks:
        if c.verdict is Verdict.FAIL:
            failed = True
        elif c.verdict is Verdict.WARN:
            warnings += 1
        if c.margin is not None and (smallest is None or c.margin < smallest):
            smallest = c.margin
    if failed:
        return Fitness.FAILS, warnings, smallest
    return (Fitness.FITS_WITH_WARNINGS if warnings else Fitness.FITS), warnings, smallest


def _failure_count(a: Assessment) -> int:
    if a.fitness is not Fitness.FAILS:
        return 0
    return sum(1 for c in a.checks if c.verdict is Verdict.FAIL)


def surplus(c: Check) -> float:
    """One check's share of a candidate's versatility: the weighted log10(actual/required)
    of a scarce ``>=`` check — how far the part is over-qualified there (0 = just meets
    it). A candidate's versatility is the sum over its checks."""
    if c.param in SCARCE and c.op is Op.GE and \
            isinstance(c.actual, float | int) and isinstance(c.required_value, float | int) \
            and c.required_value > 0 and c.actual > c.required_value:
        return SCARCE[c.param] * math.log10(c.actual / c.required_value)
    return 0.0


def sort_key(a: Assessment, need: int, ample: float) -> tuple:
    """The ranking key (smaller is better); see the module docstring."""
    fails = 1 if a.fitness is Fitness.FAILS else 0
    margin = a.smallest_margin
    if margin is None:
        band = 0.0  # nothing measured: rank as a thin margin
    else:
        band = math.floor((margin if margin < ample else ample) * 10 + 1e-9) / 10
    stocked = a.stocked
    short = 0 if stocked.free >= need else 1
    # what is in the drawers comes before what would have to be bought
    return (fails, stocked.to_buy, _failure_count(a) if fails else 0, a.warnings, -band,
            a.dropin.order, short, a.demand, round(a.versatility, 2),
            part_key(stocked.part.number))


def rank(assessments: list[Assessment], *, need: int = 1, ample: float = 0.5,
         demand: Mapping[str, int] | None = None) -> list[Assessment]:
    """Sort in place by :func:`sort_key` and number the ranks from 1."""
    if demand:
        folded = {part_key(k): v for k, v in demand.items()}
        for a in assessments:
            a.demand = folded.get(part_key(a.part), 0)
    with cycle_collector_paused():  # many small acyclic keys
        assessments.sort(key=lambda a: sort_key(a, need, ample))
    for i, a in enumerate(assessments, 1):
        a.rank = i
    return assessments
