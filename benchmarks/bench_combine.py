"""How fast the combination search answers over a large stock.

Run: ``python -m benchmarks.bench_combine``. It builds a stock of 5,000 distinct resistor
values (log-uniform over 1 Ω … 10 MΩ, ±1 % or ±5 %, a fixed seed, so every run sees the
same data), then times :func:`stock.fit.combine.find_combinations` for several targets that
are not in stock. The goal is an answer within 1 s. Machines differ, so it also times a
baseline in the same run, sorting the 5,000 values, and prints the ratio to it.

The three-part search runs only when the candidates number at most
``combo_three_max_parts`` (policy table); it is timed on an E12 drawer and, alone, on 600 values.
Prints only; asserts nothing (tests never assert wall-clock times).
"""

from __future__ import annotations

import random
import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from benchmarks.common import median_time  # noqa: E402
from stock.fit.combine import find_combinations  # noqa: E402
from stock.kinds import Bound, Kind  # noqa: E402
from stock.parts import Param, PartSpec, Stocked  # noqa: E402


def make_stock(n: int, seed: int = 60063) -> list[Stocked]:
    rng = random.Random(seed)
    values: set[float] = set()
    while len(values) < n:
        v = 10 ** rng.uniform(0, 7)
        values.add(float(f"{v:.4g}"))
    out = []
    for k, v in enumerate(sorted(values)):
        tol = rng.choice((0.01, 0.05))
        part = PartSpec(f"R{k:05d}", Kind.RESISTOR, "metal-film", params=[
            Param("r", Bound.NOM, v), Param("tol", Bound.MIN, -tol),
            Param("tol", Bound.MAX, tol), Param("p_rated", Bound.MAX, 0.25)])
        out.append(Stocked(part, free=rng.randint(1, 50)))
    return out


def timed(fn, repeat: int = 5) -> float:
    """Median seconds of ``fn`` (no warm-up run: the first call is part of what is timed)."""
    return median_time(fn, repeat=repeat, warmup=0)


def main() -> None:
    stock = make_stock(5000)
    values = [s.part.nominal("r") for s in stock]
    shuffled = values[:]
    random.Random(1).shuffle(shuffled)
    base = timed(lambda: sorted(shuffled), repeat=21)
    print(f"baseline: sort 5,000 values            {base * 1e3:8.3f} ms")
    targets = (4.99e3, 123.4e3, 56.7, 1.0e6 + 1234.0)
    for target in targets:
        found: list = []

        def run(target: float = target, found: list = found) -> None:
            found[:] = find_combinations(target, (-0.02, 0.02), Kind.RESISTOR, stock,
                                         power=0.1)

        t = timed(run)
        best = found[0].describe() if found else "none"
        print(f"2-part, 5,000 values, target {target:>10g} Ω: {t * 1e3:8.1f} ms "
              f"({t / base:7.0f} × baseline), {len(found)} found, best {best}")
    # a builder's drawer of E12 values (IEC 60063), ±1 %: odd targets need three parts
    e12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)
    drawer = [Stocked(PartSpec(f"E{m:g}e{d}", Kind.RESISTOR, "metal-film", params=[
        Param("r", Bound.NOM, m * 10**d), Param("tol", Bound.MIN, -0.01),
        Param("tol", Bound.MAX, 0.01)]), free=10) for d in range(7) for m in e12]
    for target in (3.33e3, 7.77e3, 123.0):
        found = []

        def run3(target: float = target, found: list = found) -> None:
            found[:] = find_combinations(target, (-0.015, 0.015), Kind.RESISTOR, drawer)

        t = timed(run3)
        n3 = sum(1 for c in found if len(c.parts) == 3)
        best = found[0].describe() if found else "none"
        print(f"2+3-part, {len(drawer)} E12 values, target {target:>7g} Ω: {t * 1e3:8.1f} ms "
              f"({t / base:7.0f} × baseline), {len(found)} found ({n3} of three), best {best}")
    # the three-part step alone at the size where it is still allowed (policy
    # combo_three_max_parts): every pair of 600 candidates, vectorised
    from stock.fit.combine import Stacking, _candidates, _triples

    big = _candidates(Kind.RESISTOR, make_stock(600, seed=62), 1, None, 0.2)
    t = timed(lambda: _triples(big, Kind.RESISTOR, 4.99e3, 4.99e3 * 0.989, 4.99e3 * 1.011, 1,
                               Stacking.WORST_CASE), repeat=3)
    print(f"3-part step alone, 600 values:              {t * 1e3:8.1f} ms "
          f"({t / base:7.0f} × baseline)")

if __name__ == "__main__":
    main()
