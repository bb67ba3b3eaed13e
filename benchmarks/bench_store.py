"""Store benchmarks (issue: the store):

1. ``find`` for a typical parametric query on 100,000 parts / 200,000 movements, against
   a hand-written sqlite3 query of the same filter (target ≤ 2×);
2. importing a 50,000-row CSV, against pandas.read_csv plus a raw sqlite3 executemany of
   the same rows into the same tables (target ≤ 2×);
3. ``stock --help`` start-up, against ``python -c "import typer"`` (target ≤ 1.5×).

Run: python -m benchmarks.bench_store   (about a minute on a 2-core machine)
"""

from __future__ import annotations

import json
import random
import sqlite3
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from benchmarks.common import compare, report
from benchmarks.generate import generate_store

FIND_SQL = """
WITH m AS (
  SELECT p.id, p.key, p.number, SUM(b.on_hand - b.reserved) AS free
  FROM parts p JOIN balances b ON b.part_id = p.id
  WHERE p.kind = 'bjt' AND p.family = 'npn'
    AND p.id IN (SELECT part_id FROM params WHERE name = 'vceo'
                 AND bound IN ('min', 'max', 'nom') AND value >= 30)
    AND p.id IN (SELECT part_id FROM params WHERE name = 'ft'
                 AND bound IN ('min', 'nom') AND value >= 100e6)
  GROUP BY p.id HAVING free > 0),
k AS (SELECT part_id, MIN(value) AS v FROM params
      WHERE name = 'vceo' AND bound IN ('min', 'max', 'nom') GROUP BY part_id)
SELECT m.id, m.number, m.free FROM m LEFT JOIN k ON k.part_id = m.id
ORDER BY k.v, m.free DESC, m.key
LIMIT 50
"""

def bench_find(tmp: Path) -> bool:
    from stock.kinds import Kind
    from stock.paramtext import parse_criterion
    from stock.store.api import Store

    path = tmp / "big.db"
    t0 = time.perf_counter()
    generate_store(path)
    print(f"generated 100,000 parts / 200,000 movements in {time.perf_counter() - t0:.1f} s")
    store = Store(f"sqlite:///{path}")
    crit = [parse_criterion("vceo>=30V", Kind.BJT), parse_criterion("ft>=100MHz", Kind.BJT)]
    found = store.find(Kind.BJT, "npn", crit)
    raw = sqlite3.connect(path)
    rows = raw.execute(FIND_SQL).fetchall()
    assert [r[1] for r in rows] == [s.part.number for s in found], "find and SQL disagree"
    ours, base = compare(lambda: store.find(Kind.BJT, "npn", crit),
                         lambda: raw.execute(FIND_SQL).fetchall())
    return report("find bjt npn vceo>=30V ft>=100MHz (50 rows)", ours, base, 2.0, "sqlite3")


def _csv(path: Path, n: int) -> None:
    rnd = random.Random(3)
    with path.open("w", encoding="utf-8") as fh:
        fh.write("part,qty,drawer,kind,family,params\n")
        for i in range(n):
            v = rnd.choice((15, 20, 30, 40, 60, 100))
            fh.write(f"IMP-{i:06d},{rnd.randint(1, 500)},D{i % 60},bjt,npn,"
                     f"vceo={v}V; ic=100mA\n")


def _baseline_import(csv_path: Path, db_path: Path) -> None:
    """pandas.read_csv, then raw executemany of the same rows into the same tables
    (the part rows with their parameter document, as every writer must keep it)."""
    import pandas as pd

    df = pd.read_csv(csv_path)
    con = sqlite3.connect(db_path)
    con.execute("BEGIN")
    drawers = sorted(set(df["drawer"]))
    con.executemany("INSERT INTO drawers(label, note) VALUES (?, '')", [(d,) for d in drawers])
    did = dict(con.execute("SELECT label, id FROM drawers"))
    parsed = []
    for n, ps in zip(df["part"], df["params"], strict=True):
        items = [item.strip().partition("=") for item in ps.split(";")]
        parsed.append((n, [(name, float(val.rstrip("VmA"))) for name, _, val in items]))
    con.executemany(
        "INSERT INTO parts(number, key, kind, family, description, attrs, created_at, "
        "params_doc) VALUES (?, ?, 'bjt', 'npn', '', '{}', '2026-01-01', ?)",
        [(n, n, json.dumps({name: f"max {v!r} import" for name, v in vals},
                           separators=(",", ":"))) for n, vals in parsed])
    pid = dict(con.execute("SELECT key, id FROM parts"))
    params = [(pid[n], name, v) for n, vals in parsed for name, v in vals]
    con.executemany("INSERT INTO params(part_id, name, bound, value, at, origin) "
                    "VALUES (?, ?, 'max', ?, '', 'import')", params)
    rows = [(pid[n], did[d], int(q)) for n, d, q in zip(df["part"], df["drawer"], df["qty"],
                                                           strict=True)]
    con.executemany("INSERT INTO movements(part_id, drawer_id, account, qty, reason, ref, note, at)"
                    " VALUES (?, ?, 'on_hand', ?, 'import', '', '', '2026-01-01')", rows)
    con.executemany("INSERT INTO balances(part_id, drawer_id, on_hand, reserved) "
                    "VALUES (?, ?, ?, 0)", rows)
    con.commit()
    con.close()


def bench_import(tmp: Path) -> bool:
    from stock.store.api import Store
    from stock.transfer import import_stock

    csv_path = tmp / "stock50k.csv"
    _csv(csv_path, 50_000)
    n = [0]

    def fresh() -> Path:
        n[0] += 1
        p = tmp / f"imp{n[0]}.db"
        Store(f"sqlite:///{p}").close()  # migrated, empty
        return p

    def ours() -> None:
        store = Store(f"sqlite:///{fresh()}")
        res = import_stock(store, csv_path)
        assert res.units > 0
        store.close()

    def base() -> None:
        _baseline_import(csv_path, fresh())

    t_ours, t_base = compare(ours, base, repeat=3)
    return report("import 50,000-row CSV (all-or-nothing)", t_ours, t_base, 2.0,
                  "read_csv+executemany")


def bench_help() -> bool:
    exe = Path(sys.executable).with_name("stock")

    def ours() -> None:
        subprocess.run([str(exe), "--help"], check=True, capture_output=True)

    def base() -> None:
        subprocess.run([sys.executable, "-c", "import typer"], check=True, capture_output=True)

    t_ours, t_base = compare(ours, base, repeat=11)
    return report("stock --help start-up", t_ours, t_base, 1.5, "import typer")


def main() -> None:
    with tempfile.TemporaryDirectory() as d:
        tmp = Path(d)
        results = {"help": bench_help(), "import": bench_import(tmp), "find": bench_find(tmp)}
    print(json.dumps(results))


if __name__ == "__main__":
    main()
