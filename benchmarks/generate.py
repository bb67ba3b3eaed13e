"""A large invented store for the benchmarks: 100,000 part types, 200,000 movements.

Part records are random but physically plausible (VCEO 15–400 V, fT 1 MHz–5 GHz,
E12 values for passives); they are generated, not taken from any datasheet. Measured
characteristics (fT, VF) are written the way datasheets state them, to two significant
figures ("250 MHz", "0.72 V"); ``distinct=True`` keeps every drawn digit instead, so no
two parts share a value (the fit benchmark's worst case for shared checks).
"""

from __future__ import annotations

import random
from pathlib import Path

from stock.kinds import Bound, Kind
from stock.parts import Param, PartSpec

E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)  # IEC 60063


def _stated(x: float, distinct: bool) -> float:
    """``x`` as a datasheet states it (two significant figures), or as drawn."""
    return x if distinct else float(f"{x:.2g}")


def _bjt(i: int, rnd: random.Random, distinct: bool) -> PartSpec:
    vceo = rnd.choice((15, 20, 25, 30, 40, 45, 60, 80, 100, 160, 250, 400))
    ft = _stated(10 ** rnd.uniform(6, 9.7), distinct)
    return PartSpec(f"GEN-Q{i:06d}", Kind.BJT, rnd.choice(("npn", "pnp")), "TO-92",
                    rnd.choice(("EBC", "CBE", "ECB")), params=[
                        Param("vceo", Bound.MAX, float(vceo)),
                        Param("ic", Bound.MAX, rnd.choice((0.05, 0.1, 0.2, 0.5, 0.8, 1.5, 3.0))),
                        Param("pd", Bound.MAX, rnd.choice((0.35, 0.5, 0.625, 1.0)), {"ta": 25.0}),
                        Param("ft", Bound.MIN if rnd.random() < 0.7 else Bound.TYP, ft),
                        Param("hfe", Bound.MIN, float(rnd.choice((25, 40, 60, 100, 200)))),
                        Param("tj", Bound.MAX, rnd.choice((125.0, 150.0, 175.0))),
                        Param("rth_ja", Bound.MAX, rnd.choice((200.0, 250.0, 357.0)))])


def _cap(i: int, rnd: random.Random, distinct: bool) -> PartSpec:
    c = rnd.choice(E12) * 10 ** rnd.randint(-12, -5)
    fam = rnd.choice(("c0g", "x7r", "x5r", "film", "electrolytic"))
    t = rnd.choice((0.05, 0.1, 0.2))
    return PartSpec(f"GEN-C{i:06d}", Kind.CAPACITOR, fam, "0805", params=[
        Param("c", Bound.NOM, c), Param("tol", Bound.MIN, -t), Param("tol", Bound.MAX, t),
        Param("v_rated", Bound.MAX, float(rnd.choice((16, 25, 50, 100, 250))))])


def _res(i: int, rnd: random.Random, distinct: bool) -> PartSpec:
    r = rnd.choice(E12) * 10 ** rnd.randint(0, 6)
    t = rnd.choice((0.01, 0.05))
    return PartSpec(f"GEN-R{i:06d}", Kind.RESISTOR, rnd.choice(("metal-film", "carbon-film")),
                    "axial", params=[Param("r", Bound.NOM, r), Param("tol", Bound.MIN, -t),
                                     Param("tol", Bound.MAX, t),
                                     Param("p_rated", Bound.MAX, rnd.choice((0.25, 0.6, 1.0)))])


def _diode(i: int, rnd: random.Random, distinct: bool) -> PartSpec:
    return PartSpec(f"GEN-D{i:06d}", Kind.DIODE, rnd.choice(("signal", "schottky", "rectifier")),
                    "DO-35", "AK", params=[
                        Param("vrrm", Bound.MAX, float(rnd.choice((20, 40, 75, 100, 400, 1000)))),
                        Param("if_avg", Bound.MAX, rnd.choice((0.15, 0.2, 1.0, 3.0))),
                        Param("vf", Bound.MAX, _stated(rnd.uniform(0.3, 1.1), distinct),
                              {"if": 0.01})])


MAKERS = ((_bjt, 0.3), (_cap, 0.3), (_res, 0.3), (_diode, 0.1))


def specs(n: int, seed: int = 7, distinct: bool = False) -> list[PartSpec]:
    rnd = random.Random(seed)
    out = []
    for i in range(n):
        x, acc = rnd.random(), 0.0
        for maker, share in MAKERS:
            acc += share
            if x <= acc:
                out.append(maker(i, rnd, distinct))
                break
        else:
            out.append(_diode(i, rnd, distinct))
    return out


def generate_store(path: Path, n_parts: int = 100_000, n_moves: int = 200_000,
                   seed: int = 7, distinct: bool = False) -> None:
    """Fill a new SQLite store at ``path`` through the library's bulk paths (the ledger);
    ``distinct``: measured values keep every drawn digit (see the module docstring)."""
    from stock.store import ledger, repo
    from stock.store.api import Store
    from stock.store.ledger import Reason
    from stock.transfer import _drawers

    rnd = random.Random(seed)
    store = Store(f"sqlite:///{path}")
    all_specs = specs(n_parts, seed, distinct)
    with store.write() as s:
        ids = repo.insert_parts_bulk(s, all_specs)
        labels = [f"{c}{n}" for c in "ABCDEFGH" for n in range(1, 41)]
        drawer_ids, _ = _drawers(s, labels)
        id_list = list(ids.values())
        entries = [(pid, drawer_ids[rnd.choice(labels)], rnd.randint(1, 200)) for pid in id_list]
        extra = n_moves - len(entries)
        entries += [(rnd.choice(id_list), drawer_ids[rnd.choice(labels)], rnd.randint(1, 50))
                    for _ in range(max(extra, 0))]
        ledger.post_many(s, entries, reason=Reason.IMPORT, ref="benchmark")
    store.close()
