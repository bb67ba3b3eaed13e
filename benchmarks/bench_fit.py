"""Fit benchmarks (issue: the fit engine):

Ranking every candidate for one slot in a store of 100,000 parts: within 0.3 s, and
within 3× of the raw SQL that fetches the same candidate rows. The slot is a PN2222A
(VCEO 40 V, IC 600 mA) in an RF amplifier at 14 MHz, 20 mA, 13.8 V.

Run: python -m benchmarks.bench_fit
"""

from __future__ import annotations

import sqlite3
import sys
import tempfile
import time
from pathlib import Path

from benchmarks.common import compare, median_time, report
from benchmarks.generate import generate_store


def raw_fetch(con: sqlite3.Connection, bounds: list[tuple[str, float]]) -> int:
    """The candidate rows, fetched by hand: parts, their parameters and drawers.

    ``bounds``: (parameter, minimum) pairs; a part whose guaranteed value is below one is
    left out, a part without the parameter stays (as the store's screen does).
    """
    misses = "".join(f" AND b.part_id NOT IN (SELECT part_id FROM params WHERE name = '{n}' "
                     f"AND bound != 'typ' AND value < {v!r})" for n, v in bounds)
    ids = ("SELECT b.part_id FROM balances b JOIN parts p ON p.id = b.part_id "
           "WHERE p.kind = 'bjt' AND p.family = 'npn' AND b.on_hand > b.reserved"
           f"{misses} GROUP BY b.part_id")
    n = len(con.execute(f"SELECT id, number, family, package, pinout, description, attrs, "
                        f"source FROM parts WHERE id IN ({ids}) ORDER BY id").fetchall())
    con.execute(f"SELECT part_id, name, bound, value, at, origin FROM params WHERE part_id IN "
                f"({ids}) ORDER BY id").fetchall()
    con.execute(f"SELECT b.part_id, d.label, b.on_hand - b.reserved FROM balances b JOIN "
                f"drawers d ON d.id = b.drawer_id WHERE b.part_id IN ({ids}) AND b.on_hand > "
                f"b.reserved ORDER BY b.part_id, d.label").fetchall()
    return n


def main(path: Path | None = None) -> bool:
    from stock.catalog import load_catalog
    from stock.fit import assess, requirements_for, screen, slot_from_args
    from stock.kinds import Kind
    from stock.rules import load_policy
    from stock.slots import Conditions
    from stock.store.api import Store

    with tempfile.TemporaryDirectory() as d:
        db = path or Path(d) / "big.db"
        if not db.exists():
            t0 = time.perf_counter()
            generate_store(db)
            print(f"generated 100,000 parts / 200,000 movements in "
                  f"{time.perf_counter() - t0:.1f} s")
        store = Store(f"sqlite:///{db}")
        policy = load_policy({})
        slot = slot_from_args("PN2222A", kind=Kind.BJT, role="rf-amp",
                              conditions=Conditions(supply=13.8, freq=14e6, current=0.02),
                              needs=(), resolve=load_catalog().get)
        reqs = requirements_for(slot, policy)
        sure = screen(reqs)
        bounds = [(r.param, float(r.value)) for r in sure if r.param != "family"]

        def ours() -> int:
            pool = store.candidates(Kind.BJT, "npn", sure)
            return len(assess(slot, pool, policy))

        con = sqlite3.connect(db)
        pool = store.candidates(Kind.BJT, "npn", sure)
        assert len(pool) == raw_fetch(con, bounds), "store and raw SQL disagree"
        print(f"candidates after screening: {len(pool)} of "
              f"{con.execute('SELECT COUNT(*) FROM parts').fetchone()[0]} parts; "
              f"{ours()} fit")
        t_load = median_time(lambda: store.candidates(Kind.BJT, "npn", sure))
        t_all, t_raw = compare(ours, lambda: raw_fetch(con, bounds))
        print(f"split: loading {t_load * 1000:.0f} ms, ranking {(t_all - t_load) * 1000:.0f} ms")
        ok = report("fit PN2222A rf-amp 14 MHz (rank all)", t_all, t_raw, 3.0, "raw SQL")
        within = t_all <= 0.3
        print(f"absolute: {t_all:.3f} s (target ≤ 0.3 s)  {'ok' if within else 'MISSED'}")
        return ok and within


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else None)
