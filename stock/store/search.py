"""Parametric queries over the store: what is in stock that meets given bounds.

A criterion ``>= x`` is held against a guaranteed value: a rating, or a characteristic's
``min``; ``<= x`` against a rating or a characteristic's ``max``. Typical values count
only when asked (``typical=True``), since nothing guarantees them.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from typing import Any

from sqlalchemy import String, and_, cast, func, select
from sqlalchemy.orm import Session

from stock.gcpause import cycle_collector_paused
from stock.kinds import Bound, Kind
from stock.params import PARAMS, Sense
from stock.parts import Stocked
from stock.slots import Op
from stock.store.models import Balance, Drawer, ParamRow, Part
from stock.store.paramdoc import StoredPart, StoredStock

#: Criteria on these names compare a column of the part, not a parameter.
COLUMNS = {"family": Part.family, "package": Part.package, "pinout": Part.pinout}

_GUARANTEED = [b.value for b in Bound if b is not Bound.TYP]  # bounds a datasheet guarantees
_REL = 1e-9  # relative slack for "=" on floats (values parsed from text round-trip exactly)


def _bounds(name: str, op: Op, typical: bool) -> tuple[str, ...]:
    pdef = PARAMS.get(name)
    if pdef is None or pdef.sense in (Sense.RATING, Sense.NOMINAL):
        return ("min", "max", "nom") + (("typ",) if typical else ())
    guaranteed = {Op.GE: ("min", "nom"), Op.LE: ("max", "nom"), Op.EQ: ("nom", "min", "max")}
    return guaranteed[op] + (("typ",) if typical else ())


def _value_test(op: Op, value: float) -> Any:
    if op == Op.GE:
        return ParamRow.value >= value
    if op == Op.LE:
        return ParamRow.value <= value
    slack = abs(value) * _REL
    return ParamRow.value.between(value - slack, value + slack)


def criterion_clause(c: Any, typical: bool = False) -> Any:
    """A WHERE clause on ``parts`` for one criterion (param, op, value)."""
    name, op, value = c.param, Op(c.op), c.value
    if name in COLUMNS:
        return func.lower(COLUMNS[name]) == str(value).lower()
    if isinstance(value, str):
        needle = json.dumps({name: value})[1:-1]  # '"safety": "X2"', as attrs are stored
        return Part.attrs.like(f"%{needle}%")
    # An uncorrelated IN (...) is one range scan of the (name, bound, value) index; a
    # correlated EXISTS let SQLite's planner rescan that index once per part (quadratic).
    return Part.id.in_(
        select(ParamRow.part_id).where(
            ParamRow.name == name,
            ParamRow.bound.in_(_bounds(name, op, typical)),
            _value_test(op, float(value)),
        )
    )


def _free():
    return func.coalesce(func.sum(Balance.on_hand - Balance.reserved), 0)


def search(session: Session, kind: Kind | None, family: str | None,
           criteria: Sequence[Any] = (), *, typical: bool = False, include_empty: bool = False,
           limit: int | None = 50) -> list[tuple[int, int]]:
    """(part id, free quantity) of parts that meet every criterion.

    Sorted so the part that meets the first numeric criterion with the least to spare
    comes first (keep the better parts for where they are needed), then by free stock.
    """
    free = _free().label("free")
    matched = select(Part.id.label("id"), Part.key.label("key"), free).outerjoin(
        Balance, Balance.part_id == Part.id)
    conds = []
    if kind is not None:
        conds.append(Part.kind == Kind(kind).value)
    if family:
        conds.append(Part.family == family)
    conds.extend(criterion_clause(c, typical) for c in criteria)
    if conds:
        matched = matched.where(and_(*conds))
    matched = matched.group_by(Part.id, Part.key)
    if not include_empty:
        matched = matched.having(_free() > 0)
    m = matched.subquery("m")
    stmt = select(m.c.id, m.c.free)
    order: list[Any] = []
    numeric = [c for c in criteria if c.param not in COLUMNS and not isinstance(c.value, str)]
    if numeric:
        # The sort key is joined as one aggregate over the criterion's index range, not a
        # correlated subquery per part: without statistics SQLite ran that subquery through
        # the (name, bound, value) index once per part, quadratic on a large store.
        c = numeric[0]
        agg = func.min(ParamRow.value) if Op(c.op) != Op.LE else func.max(ParamRow.value)
        k = (select(ParamRow.part_id.label("part_id"), agg.label("v"))
             .where(ParamRow.name == c.param,
                    ParamRow.bound.in_(_bounds(c.param, Op(c.op), typical)))
             .group_by(ParamRow.part_id).subquery("k"))
        stmt = stmt.outerjoin(k, k.c.part_id == m.c.id)
        order.append(k.c.v.desc() if Op(c.op) == Op.LE else k.c.v.asc())
    order += [m.c.free.desc(), m.c.key]
    stmt = stmt.order_by(*order)
    if limit:
        stmt = stmt.limit(limit)
    return [(int(r[0]), int(r[1])) for r in session.execute(stmt)]




def _screened(stmt: Any, screen: Sequence[Any]) -> Any:
    """``stmt`` (over ``parts``) without the parts whose rating surely misses a ``screen``
    bound. Parts lacking the parameter stay (an unknown value is a warning, not a
    failure)."""
    for r in screen:
        op, name = Op(r.op), r.param
        if name == "family":  # "signal|schottky": any of them; no family is unknown
            stmt = stmt.where(Part.family.in_(str(r.value).split("|")) | Part.family.is_(None))
            continue
        miss = ParamRow.value < float(r.value) if op == Op.GE else ParamRow.value > float(r.value)
        # uncorrelated NOT IN: one index range scan (see criterion_clause); the guaranteed
        # bounds listed, not "!= 'typ'", so the scan narrows on bound and value too
        stmt = stmt.where(Part.id.not_in(
            select(ParamRow.part_id).where(ParamRow.name == name,
                                           ParamRow.bound.in_(_GUARANTEED), miss)))
    return stmt


def _stock_query(free_only: bool) -> Any:
    """A row per part: its columns, parameter document, free stock and free balances
    folded into one text ("drawer id:free,…"); the caller adds WHERE and GROUP BY.
    ``free_only`` keeps only parts with free stock."""
    free = Balance.on_hand - Balance.reserved
    held = func.aggregate_strings(cast(Balance.drawer_id, String) + ":" + cast(free, String),
                                  ",")
    stmt = select(Part.id, Part.number, Part.kind, Part.family, Part.package, Part.pinout,
                  Part.description, Part.attrs, Part.source, Part.params_doc,
                  func.coalesce(func.sum(free), 0), held)
    on = and_(Balance.part_id == Part.id, Balance.on_hand > Balance.reserved)
    return stmt.join(Balance, on) if free_only else stmt.outerjoin(Balance, on)


_KINDS = {k.value: k for k in Kind}


def _drawer_places(session: Session) -> dict[int, tuple[int, str]]:
    """Drawer id → (place in the database's own order of labels, label): drawers are
    listed in that order (its collation), as every other listing sorts them."""
    return {i: (n, label) for n, (i, label) in enumerate(raw_rows(
        session, select(Drawer.id, Drawer.label).order_by(Drawer.label)))}


def _stocked(session: Session, stmt: Any, labels: dict[int, tuple[int, str]]
             ) -> list[tuple[int, Stocked]]:
    """(part id, record) for each row of a :func:`_stock_query` statement."""
    out: list[tuple[int, Stocked]] = []
    with cycle_collector_paused():  # thousands of small acyclic records
        for pid, number, kind, fam, package, pinout, desc, attrs, source, doc, total, held in \
                raw_rows(session, stmt):
            part = StoredPart(number, _KINDS[kind], fam, package, pinout, desc or "",
                              json.loads(attrs) if attrs and attrs != "{}" else {},
                              source=source, doc=doc)
            out.append((pid, StoredStock(part, int(total), held=held or "", labels=labels)))
    return out


def load_candidates(session: Session, kind: Kind, family: str | None = None,
                    screen: Sequence[Any] = ()) -> list[Stocked]:
    """Free parts of ``kind`` as :class:`Stocked` records, minus those a ``screen`` bound
    surely rules out.

    The fit engine ranks every one of these, so this is one query, a row per part: its
    columns, its parameter document (not its ``params`` rows: see
    :mod:`stock.store.paramdoc`) and its free stock; the records decode their parameters
    and drawers when first asked.
    """
    stmt = _stock_query(free_only=True).where(Part.kind == Kind(kind).value)
    if family:
        stmt = stmt.where(Part.family == family)
    # grouped and ordered as the (kind, family) index yields the parts (its rows end in the
    # id), so SQLite needs no temporary sort of the wide rows
    order = (Part.family, Part.id)
    stmt = _screened(stmt, screen).group_by(*order).order_by(*order)
    return [s for _, s in _stocked(session, stmt, _drawer_places(session))]


def kind_columns(session: Session, kind: Kind, names: Sequence[str]
                 ) -> tuple[list[tuple[int, str, str | None, int]],
                            list[tuple[int, str, str, float]]]:
    """A light index of the free parts of ``kind`` for planners that pick candidates in
    memory: (id, key, family, free) per part with free stock (in no particular order),
    and (part id, name, bound, value) rows of the parameters in ``names`` — of any kind:
    the caller keeps the rows of its own parts.

    Two set-wise queries; no part records are built (the caller aggregates the rows).
    Core rows through the session's connection: the ORM's row processing would double
    the time on 100,000 rows. The parameter rows come straight off the (name, bound,
    value) index; joining them to the kind's parts costs more than the rows it saves.
    """
    free = func.sum(Balance.on_hand - Balance.reserved)
    parts = [(int(pid), key, fam, int(q)) for pid, key, fam, q in raw_rows(
        session, select(Part.id, Part.key, Part.family, free)
        .join(Balance, Balance.part_id == Part.id)
        .where(Part.kind == Kind(kind).value, Balance.on_hand > Balance.reserved)
        .group_by(Part.id, Part.key, Part.family))]
    if not names or not parts:
        return parts, []
    params = raw_rows(session, select(ParamRow.part_id, ParamRow.name, ParamRow.bound,
                                      ParamRow.value).where(ParamRow.name.in_(list(names))))
    return parts, params


def raw_rows(session: Session, stmt: Any) -> list[tuple[Any, ...]]:
    """Plain tuples for a statement of plain columns, straight from the driver's cursor.

    For index reads of a hundred thousand rows, where SQLAlchemy's Row objects cost more
    than the query. The statement is compiled with its (few, simple) literals inline.
    """
    conn = session.connection()
    sql = str(stmt.compile(dialect=conn.dialect, compile_kwargs={"literal_binds": True}))
    cur = conn.connection.dbapi_connection.cursor()  # type: ignore[union-attr]
    try:
        cur.execute(sql)
        return list(cur.fetchall())
    finally:
        cur.close()


def load_stocked(session: Session, ids: Sequence[int]) -> dict[int, Stocked]:
    """:class:`Stocked` records (free stock and drawers, none when nothing is free) for
    part ids, set-wise, by id."""
    out: dict[int, Stocked] = {}
    labels = _drawer_places(session)
    for i in range(0, len(ids), 900):  # below SQLite's default bound-parameter limit
        stmt = _stock_query(free_only=False).where(Part.id.in_(list(ids[i : i + 900])))
        out.update(_stocked(session, stmt.group_by(Part.id), labels))
    return out
