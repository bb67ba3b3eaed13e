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
    """The candidate rows of record, fetched by hand: parts, their parameter rows and
    drawers (three queries over the screened ids).

    ``bounds``: (parameter, minimum) pairs; a part whose guaranteed value is below one is
    left out, a part without the parameter stays (as the store's screen does).
    """
    misses = "".join(f" AND b.part_id NOT IN (SELECT part_id FROM params WHERE name = '{n}' "
                     f"AND bound IN ('min', 'max', 'nom') AND value < {v!r})" for n, v in bounds)
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


def raw_fetch_doc(con: sqlite3.Connection, bounds: list[tuple[str, float]]) -> int:
    """The same candidates fetched by hand the way the store's loader reads them: a row
    per part with its columns, parameter document and free balances folded into text."""
    misses = "".join(f" AND p.id NOT IN (SELECT part_id FROM params WHERE name = '{n}' "
                     f"AND bound IN ('min', 'max', 'nom') AND value < {v!r})" for n, v in bounds)
    dict(con.execute("SELECT id, label FROM drawers"))
    return len(con.execute(
        "SELECT p.id, p.number, p.kind, p.family, p.package, p.pinout, p.description, p.attrs, "
        "p.source, p.params_doc, SUM(b.on_hand - b.reserved), "
        "group_concat(b.drawer_id || ':' || (b.on_hand - b.reserved), ',') "
        "FROM parts p JOIN balances b ON b.part_id = p.id WHERE p.kind = 'bjt' "
        f"AND p.family = 'npn' AND b.on_hand > b.reserved{misses} GROUP BY p.family, p.id "
        "ORDER BY p.family, p.id").fetchall())


def measure(db: Path, title: str, targets: bool) -> bool:
    """Rank every candidate for the benchmark slot in the store at ``db``; with
    ``targets`` the issue's targets decide, else the figures are for information."""
    from stock.catalog import load_catalog
    from stock.fit import requirements_for, screen, slot_from_args, stand_ins
    from stock.kinds import Kind
    from stock.rules import load_policy
    from stock.slots import Conditions
    from stock.store.api import Store

    store = Store(f"sqlite:///{db}")
    policy = load_policy({})
    slot = slot_from_args("PN2222A", kind=Kind.BJT, role="rf-amp",
                          conditions=Conditions(supply=13.8, freq=14e6, current=0.02),
                          needs=(), resolve=load_catalog().get)
    sure = screen(requirements_for(slot, policy))
    bounds = [(r.param, float(r.value)) for r in sure if r.param != "family"]

    def ours() -> int:
        ranked, _ = stand_ins(store, slot, policy)
        return len(ranked)

    con = sqlite3.connect(db)
    pool = store.candidates(Kind.BJT, "npn", sure)
    assert len(pool) == raw_fetch(con, bounds) == raw_fetch_doc(con, bounds), \
        "store and raw SQL disagree"
    print(f"\n{title}\ncandidates after screening: {len(pool)} of "
          f"{con.execute('SELECT COUNT(*) FROM parts').fetchone()[0]} parts; {ours()} fit")
    t_load = median_time(lambda: store.candidates(Kind.BJT, "npn", sure))
    # 11 alternating runs: this machine's speed wanders from minute to minute
    t_all, t_raw = compare(ours, lambda: raw_fetch(con, bounds), repeat=11)
    t_all_2, t_doc = compare(ours, lambda: raw_fetch_doc(con, bounds), repeat=11)
    print(f"split: loading {t_load * 1000:.0f} ms, ranking {(t_all - t_load) * 1000:.0f} ms")
    ok = report("fit PN2222A rf-amp 14 MHz (rank all)", t_all, t_raw, 3.0, "raw SQL (rows)")
    report("  the same, against the loader's own query", t_all_2, t_doc, 3.0, "raw SQL (doc) ")
    within = t_all <= 0.3
    print(f"absolute: {t_all:.3f} s (target ≤ 0.3 s)  {'ok' if within else 'MISSED'}")
    store.close()
    return (ok and within) or not targets


def value_slots(db: Path) -> None:
    """For information: other kinds of slot on the same store, value slots above all,
    whose candidates the store screens by the value window."""
    from stock.catalog import load_catalog
    from stock.fit import slot_from_args, stand_ins
    from stock.kinds import Kind
    from stock.rules import load_policy
    from stock.slots import Conditions
    from stock.store.api import Store

    store = Store(f"sqlite:///{db}")
    policy = load_policy({})
    print("\nother slots on the same store (for information)")
    for text, kind, role, cond in (
            ("100n", Kind.CAPACITOR, "bypass", Conditions(supply=12.0)),
            ("100p C0G 50V", Kind.CAPACITOR, "tuned", Conditions(supply=12.0, freq=7e6)),
            ("4k7", Kind.RESISTOR, "bias", Conditions(supply=12.0, dissipation=0.05)),
            ("1N4148", Kind.DIODE, "detector", Conditions(freq=7e6, current=0.001)),
            ("PN2222A", Kind.BJT, "switch", Conditions(supply=12.0, current=0.1))):
        slot = slot_from_args(text, kind=kind, role=role, conditions=cond,
                              resolve=load_catalog().get)
        ranked, pool = stand_ins(store, slot, policy)
        t = median_time(lambda slot=slot: stand_ins(store, slot, policy), repeat=11)
        print(f"  {text:>12} {role:<9} {len(pool):6} candidates, {len(ranked):6} fit: "
              f"{t * 1000:6.1f} ms  {'ok' if t <= 0.3 else 'over 0.3 s'}")
    store.close()


def main(path: Path | None = None) -> bool:
    """The target store (values as datasheets state them) at ``path`` (made if absent),
    then the worst case for shared checks: every fT distinct."""
    with tempfile.TemporaryDirectory() as d:
        base = path or Path(d) / "big.db"
        results = []
        for db, distinct, title, targets in (
                (base, False, "store with values as datasheets state them (the target)", True),
                (base.with_suffix(".distinct.db"), True,
                 "worst case: no two parts share an fT (for information)", False)):
            if not db.exists():
                t0 = time.perf_counter()
                generate_store(db, distinct=distinct)
                print(f"generated 100,000 parts / 200,000 movements in "
                      f"{time.perf_counter() - t0:.1f} s")
            results.append(measure(db, title, targets))
        value_slots(base)
        return all(results)


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else None)
