"""Part records in the store: rows to :class:`~stock.parts.PartSpec` and back."""

from __future__ import annotations

import json
from collections import defaultdict
from collections.abc import Iterable, Sequence
from typing import Any

from sqlalchemy import delete, func, insert, select, update
from sqlalchemy.orm import Session

from stock.kinds import Bound, Kind
from stock.parts import Origin, Param, PartSpec, part_key
from stock.store.db import bulk_insert
from stock.store.models import ParamRow, Part, utcnow
from stock.store.paramdoc import encode


def at_text(at: dict[str, float] | None) -> str:
    """Test conditions as stable JSON ('' when there are none)."""
    return json.dumps(dict(sorted(at.items())), separators=(",", ":")) if at else ""


def at_dict(text: str) -> dict[str, float]:
    return json.loads(text) if text else {}


def part_id(session: Session, number: str) -> int | None:
    return session.execute(select(Part.id).where(Part.key == part_key(number))).scalar()


def insert_part(session: Session, spec: PartSpec) -> int:
    """Insert a new part with its parameters; return its id."""
    pid = session.execute(
        insert(Part)
        .values(number=spec.number.strip(), key=part_key(spec.number), kind=spec.kind.value,
                family=spec.family, package=spec.package, pinout=spec.pinout,
                description=spec.description, attrs=json.dumps(spec.attrs, sort_keys=True),
                source=spec.source)
        .returning(Part.id)
    ).scalar_one()
    write_params(session, pid, spec.params)
    return pid


def refresh_docs(session: Session, ids: Iterable[int]) -> None:
    """Rewrite the parameter documents of parts ``ids`` from their ``params`` rows (in row
    order): the one way a document follows a change to the rows."""
    ids = list(ids)
    for i in range(0, len(ids), 500):
        chunk = ids[i : i + 500]
        params = param_rows(session, ParamRow.part_id.in_(chunk))
        session.execute(update(Part), [{"id": pid, "params_doc": encode(params.get(pid, ()))}
                                       for pid in chunk])


def param_rows(session: Session, where: Any = None) -> dict[int, list[Param]]:
    """Part id → its parameters, read from the ``params`` rows (in row order), of the rows
    ``where`` selects (all without it)."""
    stmt = select(ParamRow.part_id, ParamRow.name, ParamRow.bound, ParamRow.value, ParamRow.at,
                  ParamRow.origin).order_by(ParamRow.id)
    if where is not None:
        stmt = stmt.where(where)
    out: dict[int, list[Param]] = defaultdict(list)
    for pid, name, bound, value, at, origin in session.execute(stmt):
        out[pid].append(Param(name, Bound(bound), value, at_dict(at), Origin(origin)))
    return out


def write_params(session: Session, pid: int, params: Iterable[Param], *,
                 replace: bool = False) -> None:
    """Store ``params`` for part ``pid``; with ``replace`` the same name+bound is overwritten."""
    rows = [dict(part_id=pid, name=p.name, bound=Bound(p.bound).value, value=float(p.value),
                 at=at_text(dict(p.at)), origin=Origin(p.origin).value) for p in params]
    if not rows:
        return
    if replace:
        for r in rows:
            session.execute(delete(ParamRow).where(ParamRow.part_id == pid,
                                                   ParamRow.name == r["name"],
                                                   ParamRow.bound == r["bound"]))
    session.execute(insert(ParamRow), rows)
    refresh_docs(session, [pid])


def stale_docs(session: Session) -> list[tuple[int, str]]:
    """(id, number) of the parts whose parameter document differs from their ``params``
    rows."""
    params = param_rows(session)
    return [(pid, number) for pid, number, doc in session.execute(
                select(Part.id, Part.number, Part.params_doc).order_by(Part.key))
            if doc != encode(params.get(pid, ()))]


def update_part(session: Session, pid: int, spec: PartSpec) -> None:
    """Overwrite descriptive fields that ``spec`` sets and replace its parameters by name+bound."""
    part = session.get(Part, pid)
    assert part is not None
    for field in ("family", "package", "pinout"):
        value = getattr(spec, field)
        if value:
            setattr(part, field, value)
    if spec.description:
        part.description = spec.description
    if spec.attrs:
        attrs = json.loads(part.attrs or "{}")
        attrs.update(spec.attrs)
        part.attrs = json.dumps(attrs, sort_keys=True)
    write_params(session, pid, spec.params, replace=True)


def upsert_part(session: Session, spec: PartSpec, *, update: bool = True) -> int:
    """The id of ``spec``'s part: inserted if new, else (``update``) overwritten by it."""
    pid = part_id(session, spec.number)
    if pid is None:
        return insert_part(session, spec)
    if update:
        update_part(session, pid, spec)
    return pid


def load_specs(session: Session, ids: Sequence[int]) -> dict[int, PartSpec]:
    """PartSpecs for part ids, with their parameters, in two queries per 500 ids."""
    out: dict[int, PartSpec] = {}
    for i in range(0, len(ids), 500):
        chunk = list(ids[i : i + 500])
        for row in session.execute(
            select(Part.id, Part.number, Part.kind, Part.family, Part.package, Part.pinout,
                   Part.description, Part.attrs, Part.source).where(Part.id.in_(chunk))
        ):
            out[row[0]] = PartSpec(row[1], Kind(row[2]), row[3], row[4], row[5], row[6] or "",
                                   json.loads(row[7] or "{}"), [], row[8])
        for pid, ps in param_rows(session, ParamRow.part_id.in_(chunk)).items():
            out[pid].params = ps
    return out


def load_spec(session: Session, pid: int) -> PartSpec:
    return load_specs(session, [pid])[pid]


def insert_parts_bulk(session: Session, specs: Sequence[PartSpec]) -> dict[str, int]:
    """Insert many new parts with their parameters; return {part key: id}."""
    if not specs:
        return {}
    now = utcnow()
    keys = [part_key(s.number) for s in specs]
    before = session.execute(select(func.coalesce(func.max(Part.id), 0))).scalar_one()
    bulk_insert(session, Part.__table__, [
        dict(number=s.number.strip(), key=k, kind=s.kind.value, family=s.family,
             package=s.package, pinout=s.pinout, description=s.description,
             attrs=json.dumps(s.attrs, sort_keys=True) if s.attrs else "{}", source=s.source,
             created_at=now, params_doc=encode(s.params))
        for s, k in zip(specs, keys, strict=True)])
    # our rows are the ones above the old maximum id (we hold the write lock)
    ids = {k: int(i) for k, i in session.execute(
        select(Part.key, Part.id).where(Part.id > before))}
    rows = [dict(part_id=ids[k], name=p.name, bound=p.bound.value, value=float(p.value),
                 at=at_text(dict(p.at)) if p.at else "", origin=p.origin.value)
            for s, k in zip(specs, keys, strict=True) for p in s.params]
    bulk_insert(session, ParamRow.__table__, rows)
    return {k: ids[k] for k in keys}


def ids_by_key(session: Session, keys: Sequence[str]) -> dict[str, int]:
    """{key: id} of the parts among ``keys`` that are in the store."""
    if len(keys) > 5000:  # one pass over the table beats hundreds of IN (...) queries
        wanted = set(keys)
        return {k: int(v) for k, v in session.execute(select(Part.key, Part.id)) if k in wanted}
    out: dict[str, int] = {}
    for i in range(0, len(keys), 900):
        out.update((k, int(v)) for k, v in session.execute(
            select(Part.key, Part.id).where(Part.key.in_(keys[i : i + 900]))))
    return out
