"""Kit check benchmark (issue: kit commands): ``check`` of 20 copies of a 150-slot kit
against a store of 100,000 parts, plan included, target within 2 s on this machine.

The store is :func:`benchmarks.generate.generate_store` (100,000 invented part types,
200,000 receipts over 320 drawers). The kit is built here, from parts and values that
exist in that store plus some that do not (so the plan has shortfalls, stand-ins and
combination searches to do):

* 36 transistor slots calling for generated ``GEN-Q…`` parts, in switch, audio-amp,
  rf-amp and oscillator roles at 12 V, some with explicit bounds;
* 10 diode slots calling for ``GEN-D…`` parts (rectifier, clamp, detector);
* 44 resistor slots with IEC 60063 E12 values (5 %), bias and load roles;
* 44 capacitor slots with E12 values, C0G or X7R, decoupling, coupling and timing roles;
* 16 slots that are short: E24-only values (not in the E12 store), a part number the
  store lacks (with a family bound, so stand-ins are searched), and large quantities.

It prints the median time of the whole check (three runs after a warm-up), the time
split — candidate queries (the store), ranking (the fit engine's checks and ranking),
the LP (min-cost flow solves: the plan and the buildable-copies search), combinations —
and the ratio of the whole check to the plan's LP solve alone.

Run: python -m benchmarks.bench_check   (generates the store once into a temporary folder,
about 20 s; ``--db PATH`` reuses a generated store). Prints only; asserts nothing.
"""

from __future__ import annotations

import argparse
import random
import sqlite3
import tempfile
import time
from collections import defaultdict
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

from benchmarks.common import median_time
from benchmarks.generate import E12, generate_store

# IEC 60063 E24 members that are not in E12: no generated resistor or capacitor has them.
E24_ONLY = (1.1, 1.3, 1.6, 2.0, 2.4, 3.0, 3.6, 4.3, 5.1, 6.2, 7.5, 9.1)

COPIES = 20


def _value(x: float, unit: str) -> str:
    from stock.quantities import render

    return render(x, unit, style="rkm") if unit == "Ω" else render(x, unit)


def kit_text(db: Path, seed: int = 150) -> str:
    """A 150-slot kit file (TOML) over the generated store at ``db``."""
    rnd = random.Random(seed)
    raw = sqlite3.connect(db)
    bjts = [r[0] for r in raw.execute(
        "SELECT number FROM parts WHERE kind = 'bjt' ORDER BY id LIMIT 4000")]
    diodes = [r[0] for r in raw.execute(
        "SELECT number FROM parts WHERE kind = 'diode' ORDER BY id LIMIT 1000")]
    raw.close()
    lines = ['name = "bench150"', 'title = "invented 150-slot benchmark kit"',
             "[conditions]", 'supply = "12V"', 'freq = "7MHz"', 'ambient = "35°C"']
    n = {"Q": 0, "D": 0, "R": 0, "C": 0}

    def slot(letter: str, qty: int, calls_for: str, kind: str, role: str,
             extra: list[str] | None = None) -> None:
        first = n[letter] + 1
        n[letter] += qty
        refs = f"{letter}{first}" + (f"-{letter}{n[letter]}" if qty > 1 else "")
        lines.extend(["[[slot]]", f'refs = "{refs}"', f'calls_for = "{calls_for}"',
                      f'kind = "{kind}"', f'role = "{role}"', *(extra or [])])

    roles_q = [("switch", 'conditions = { current = "20mA" }'),
               ("audio-amp", 'conditions = { current = "2mA" }'),
               ("rf-amp", 'conditions = { current = "5mA" }'),
               ("oscillator", 'conditions = { current = "8mA" }')]
    for i in range(36):
        role, cond = roles_q[i % 4]
        extra = [cond] + (['need = ["vceo>=25V"]'] if i % 3 == 0 else [])
        slot("Q", rnd.choice((1, 1, 2)), rnd.choice(bjts), "bjt", role, extra)
    for i in range(10):
        role = ("rectifier-half", "clamp", "detector")[i % 3]
        slot("D", rnd.choice((1, 2, 4)), rnd.choice(diodes), "diode", role,
             ['conditions = { current = "50mA", v_peak = "15V" }'])
    for i in range(44):
        r = rnd.choice(E12) * 10 ** rnd.randint(1, 5)
        slot("R", rnd.choice((1, 1, 2, 3)), f"{_value(r, 'Ω')} 5%", "resistor",
             ("bias", "load")[i % 2])
    for i in range(44):
        c = rnd.choice(E12) * 10 ** rnd.randint(-11, -7)
        fam = "C0G" if c < 1e-9 else "X7R"
        slot("C", rnd.choice((1, 1, 2)), f"{_value(c, 'F')} {fam} 50V", "capacitor",
             ("decoupling", "coupling", "timing", "bypass")[i % 4])
    # the short ones
    for _ in range(8):
        r = rnd.choice(E24_ONLY) * 10 ** rnd.randint(2, 4)
        slot("R", 1, f"{_value(r, 'Ω')} 1%", "resistor", "bias")
    for _ in range(4):
        c = rnd.choice(E24_ONLY) * 10 ** rnd.randint(-11, -10)
        slot("C", 1, f"{_value(c, 'F')} C0G 50V", "capacitor", "timing")
    for i in range(2):
        slot("Q", 1, f"NOT-IN-STORE-{i}", "bjt", "switch",
             ['need = ["family=npn", "vceo>=30V"]', 'conditions = { current = "50mA" }'])
    slot("R", 40, "4k7 5%", "resistor", "bias")  # 800 units for 20 copies: more than free
    slot("C", 30, "100n X7R 50V", "capacitor", "decoupling")
    return "\n".join(lines) + "\n"


# --- the time split ---------------------------------------------------------------------------


class Split:
    """Seconds spent in each stage during one check (wrapped entry points). Times are
    exclusive: a stage called inside another (the index query inside candidate picking,
    ranking inside the fit engine) counts only for itself."""

    def __init__(self) -> None:
        self.t: dict[str, float] = defaultdict(float)
        self.calls: dict[str, int] = defaultdict(int)
        self.first_solve: tuple[Any, ...] | None = None
        self._inner: list[float] = []  # time of wrapped calls inside the current one

    def wrap(self, stage: str, fn: Callable[..., Any], keep: bool = False) -> Callable[..., Any]:
        def timed(*a: Any, **kw: Any) -> Any:
            t0 = time.perf_counter()
            self._inner.append(0.0)
            try:
                return fn(*a, **kw)
            finally:
                spent = time.perf_counter() - t0
                inner = self._inner.pop()
                self.t[stage] += spent - inner
                if self._inner:
                    self._inner[-1] += spent
                self.calls[stage] += 1
                if keep and self.first_solve is None:
                    self.first_solve = (a, kw)
        return timed


@contextmanager
def instrumented(store: Any) -> Iterator[Split]:
    """Time the stages of :func:`stock.kits.check.check` by wrapping their entry points."""
    import stock.fit.combine as combine
    import stock.fit.engine as engine
    import stock.fit.rank as rank
    import stock.fit.requirements as requirements
    import stock.kits.check as kc
    import stock.kits.pool as pool

    split = Split()
    saved = [(engine, "assess", engine.assess), (rank, "rank", rank.rank),
             (pool.CandidatePool, "pick", pool.CandidatePool.pick),
             (requirements, "requirements_for", requirements.requirements_for),
             (kc, "_resolve", kc._resolve),
             (kc, "solve", kc.solve), (combine, "find_combinations", combine.find_combinations),
             (store, "kind_index", store.kind_index),
             (store, "stocked_by_id", store.stocked_by_id)]
    engine.assess = split.wrap("ranking", engine.assess)  # type: ignore[assignment]
    rank.rank = split.wrap("ranking", rank.rank)  # type: ignore[assignment]
    kc.solve = split.wrap("LP", kc.solve, keep=True)  # type: ignore[assignment]
    pool.CandidatePool.pick = split.wrap(  # type: ignore[method-assign]
        "candidate picking", pool.CandidatePool.pick)
    requirements.requirements_for = split.wrap(  # type: ignore[assignment]
        "requirements", requirements.requirements_for)
    kc._resolve = split.wrap("part look-ups", kc._resolve)  # type: ignore[assignment]
    combine.find_combinations = split.wrap(  # type: ignore[assignment]
        "combinations", combine.find_combinations)
    store.kind_index = split.wrap("candidate queries", store.kind_index)
    store.stocked_by_id = split.wrap("candidate queries", store.stocked_by_id)
    try:
        yield split
    finally:
        for owner, name, fn in saved:
            if owner is store:
                delattr(store, name)  # back to the class method
            else:
                setattr(owner, name, fn)


def main() -> None:
    from stock.kits import parse_kit
    from stock.kits.check import check
    from stock.plan import solve
    from stock.rules import load_policy
    from stock.store.api import Store

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--db", type=Path, help="a store made by benchmarks.generate (reused)")
    args = ap.parse_args()
    tmp = None
    path = args.db
    if path is None or not path.exists():
        tmp = tempfile.TemporaryDirectory()
        path = path or Path(tmp.name) / "big.db"
        t0 = time.perf_counter()
        generate_store(path)
        print(f"generated 100,000 parts / 200,000 movements in {time.perf_counter() - t0:.1f} s")
    kit = parse_kit(kit_text(path), file="bench150.toml")
    print(f"kit: {len(kit.slots)} slots, {kit.units()} parts per copy, {COPIES} copies")
    store = Store(f"sqlite:///{path}")
    policy = load_policy({})

    def run() -> Any:
        return check([(kit, COPIES)], store, policy, catalog=lambda _: None)

    rep = run()  # warm-up (imports, SQLite page cache)
    with instrumented(store) as split:
        t0 = time.perf_counter()
        rep = run()
        once = time.perf_counter() - t0
    total = median_time(run, repeat=3, warmup=0)
    s = rep.summaries[0]
    kinds = defaultdict(int)
    for sc in rep.slots:
        kinds["short" if sc.short else ("stand-in" if any(not a.exact for a in sc.allocations)
                                        else "in stock")] += 1
    print(f"result: {dict(kinds)}; {s.buildable} of {s.wanted} copies buildable; "
          f"{len(rep.plan.allocations)} allocations; {len(rep.plan.notes)} notes")
    print(f"check, instrumented run: {once * 1000:.0f} ms")
    other = once - sum(split.t.values())
    stages = {"candidate queries": "store: per-kind index and record loads",
              "candidate picking": "in memory: screen, order, cover (stock.kits.pool)",
              "ranking": "fit engine: checks and ranking", "LP": "min-cost flow solves",
              "combinations": "short R/C/L slots", "requirements": "per slot",
              "part look-ups": "called-for parts in the store"}
    for stage, what in stages.items():
        print(f"  {stage:<18} {split.t[stage] * 1000:8.0f} ms  ({split.calls[stage]} calls; "
              f"{what})")
    print(f"  {'other':<18} {other * 1000:8.0f} ms  (exact matching, links, costs, notes)")
    assert split.first_solve is not None
    a, kw = split.first_solve
    lp = median_time(lambda: solve(*a, **kw), repeat=5)
    demands, supplies, links = a
    print(f"plan LP alone: {len(demands)} demands, {len(supplies)} supplies, {len(links)} links")
    print(f"check 150 slots × {COPIES} copies, 100k parts: median {total * 1000:.0f} ms; "
          f"plan LP solve alone {lp * 1000:.1f} ms; ratio {total / lp:.0f}×")
    verdict = "ok" if total <= 2.0 else "MISSED"
    print(f"target: within 2 s on this machine: {total:.2f} s  {verdict}")
    store.close()
    if tmp is not None:
        tmp.cleanup()


if __name__ == "__main__":
    main()
