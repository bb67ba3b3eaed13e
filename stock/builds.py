"""Builds: reserve a kit's plan in the drawers, consume it when built, or give it back.

A **build** is N copies of one kit with parts held for it. Its life:

* :func:`reserve` — check the kit against the free stock (:func:`stock.kits.check.check`),
  then hold every allocation of the plan: one ``reserved +q`` movement per slot, part and
  drawer (reason ``reserve``, ref = the build's name). Other checks then see less free
  stock. A plan with short slots is refused unless ``allow_short`` (then only what the
  plan found is held, and the shortfall is kept with the build);
* :func:`build` — k of the copies were built: consume their share of each holding
  (``on_hand −q`` and ``reserved −q`` together, reason ``build``);
* :func:`release` — give back what is still held (``reserved −q``, reason ``release``);
  a build that is fully built cannot be released;
* :func:`pick_list` — what to take from which drawer for the copies still to build,
  sorted by drawer so a builder walks the drawers once.

Each step is one write transaction (:meth:`stock.store.api.Store.write`): it happens
completely or not at all. Quantities change only through :func:`stock.store.ledger.post`.

The plan is kept in ``Build.plan`` (JSON) split **per copy**: every holding lists how
many units each copy takes from it, so building k copies consumes exactly their units.
Units are handed to copies in plan order (exact parts first), so when a plan is short the
last copies are the ones missing parts.
"""

from __future__ import annotations

import json
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from datetime import datetime
from typing import TYPE_CHECKING, Any

from stock.errors import BuildError, QuantityError

if TYPE_CHECKING:
    from stock.kits.check import CheckReport
    from stock.kits.kitfile import Kit
    from stock.parts import PartSpec
    from stock.store.api import Store

#: Version of the JSON kept in ``Build.plan`` and of the ``--json`` shapes (docs/kits.md).
PLAN_VERSION = 1

#: Build names: what a builder types on the command line ("club-night-3", "tx40.b").
_NAME = re.compile(r"[A-Za-z0-9][A-Za-z0-9._-]{0,79}")


@dataclass
class Hold:
    """Units of one part in one drawer held for one slot, split per copy."""

    part: str
    drawer: str
    exact: bool
    per_copy: list[int]  # units each copy takes from here (index 0 = copy 1)

    @property
    def qty(self) -> int:
        return sum(self.per_copy)

    def units(self, first: int, count: int) -> int:
        """Units of copies ``first`` … ``first + count − 1`` (0-based)."""
        return sum(self.per_copy[first:first + count])


@dataclass
class HeldSlot:
    """One slot of the kit as reserved: its holdings and what the plan could not find."""

    key: str  # the check's slot key: "marsh-tx40:R3-R6"
    refs: list[str]
    calls_for: str
    kind: str
    role: str
    qty: int  # units per copy
    holds: list[Hold] = field(default_factory=list)
    short: list[int] = field(default_factory=list)  # units missing per copy

    def short_units(self, first: int, count: int) -> int:
        return sum(self.short[first:first + count])


@dataclass
class BuildInfo:
    """A build as stored: name, kit, copies, how many are built, status, the held plan."""

    name: str
    kit: str
    copies: int
    built: int
    status: str  # reserved | built | released
    created_at: datetime | None
    slots: list[HeldSlot]
    notes: list[str] = field(default_factory=list)

    @property
    def remaining(self) -> int:
        """Copies still to build (0 once built or released)."""
        return self.copies - self.built if self.status == "reserved" else 0

    @property
    def held(self) -> int:
        """Units still reserved in the drawers for this build."""
        return sum(h.units(self.built, self.remaining) for s in self.slots for h in s.holds)

    @property
    def short(self) -> int:
        """Units the plan could not find for the copies still to build."""
        return sum(s.short_units(self.built, self.remaining) for s in self.slots)


@dataclass
class Reserved:
    """What :func:`reserve` did: the build and the check it reserved."""

    build: BuildInfo
    report: CheckReport
    written: bool  # False on a dry run


@dataclass(frozen=True)
class PickLine:
    """One line of a pick list: take ``qty`` of ``part`` from ``drawer`` for ``refs``."""

    drawer: str
    part: str
    qty: int
    refs: str  # the designators it goes to ("R3-R6, R9")
    slot: str  # the slot key
    exact: bool


# --- the per-copy split -------------------------------------------------------------------


def split_per_copy(qty: int, copies: int, allocations: list[tuple[str, str, int, bool]]
                   ) -> tuple[list[Hold], list[int]]:
    """Hand the units of a slot's allocations to its copies, in order.

    ``allocations`` are (part, drawer, qty, exact) in plan order; each copy takes ``qty``
    units, the first copy first. Returns the holdings with their per-copy units and the
    units missing per copy (the plan's shortfall falls on the last copies).
    """
    holds = [Hold(p, d, e, [0] * copies) for p, d, _, e in allocations]
    left = [q for _, _, q, _ in allocations]
    short = [0] * copies
    i = 0
    for c in range(copies):
        want = qty
        while want and i < len(left):
            take = min(want, left[i])
            holds[i].per_copy[c] += take
            left[i] -= take
            want -= take
            if left[i] == 0:
                i += 1
        short[c] = want
    if any(left):  # cannot happen for a plan of this slot: it gives at most qty × copies
        raise BuildError("the plan gives a slot more units than its copies need; report this "
                         "with the kit")
    return holds, short


# --- the stored plan ----------------------------------------------------------------------


def _plan_json(slots: list[HeldSlot], notes: list[str], kit_file: str | None) -> str:
    return json.dumps({
        "version": PLAN_VERSION,
        "kit_file": kit_file,
        "notes": notes,
        "slots": [{"key": s.key, "refs": s.refs, "calls_for": s.calls_for, "kind": s.kind,
                   "role": s.role, "qty": s.qty, "short": s.short,
                   "holds": [{"part": h.part, "drawer": h.drawer, "exact": h.exact,
                              "per_copy": h.per_copy} for h in s.holds]}
                  for s in slots],
    }, ensure_ascii=False)


def _info(row: Any) -> BuildInfo:
    data = json.loads(row.plan or "{}")
    slots = [HeldSlot(s["key"], list(s["refs"]), s["calls_for"], s["kind"], s["role"], s["qty"],
                      [Hold(h["part"], h["drawer"], h["exact"], list(h["per_copy"]))
                       for h in s["holds"]], list(s["short"]))
             for s in data.get("slots", [])]
    return BuildInfo(row.name, row.kit, row.copies, row.built, row.status, row.created_at,
                     slots, list(data.get("notes", [])))


def _held_slots(report: CheckReport, copies: int) -> list[HeldSlot]:
    out = []
    for sc in report.slots:
        allocs = [(a.part, a.drawer, a.qty, a.exact) for a in sc.allocations]
        holds, short = split_per_copy(sc.slot.qty, copies, allocs)
        out.append(HeldSlot(sc.key, list(sc.slot.refs), sc.slot.calls_for, sc.slot.kind.value,
                            sc.slot.role.value, sc.slot.qty, holds, short))
    return out


# --- steps ---------------------------------------------------------------------------------


def check_name(name: str) -> str:
    """``name`` if it is a usable build name, else a BuildError saying how to write one."""
    if not _NAME.fullmatch(name):
        raise BuildError(f"build name {name!r} is not usable; use up to 80 letters, digits, "
                         "'.', '_' or '-', starting with a letter or digit")
    return name


def _row(s: Any, name: str, *, lock: bool = False) -> Any:
    from sqlalchemy import select

    from stock.errors import suggest
    from stock.store.models import Build

    stmt = select(Build).where(Build.name == name)
    if lock and s.get_bind().dialect.name == "postgresql":
        stmt = stmt.with_for_update()  # SQLite already holds the write lock (BEGIN IMMEDIATE)
    row = s.execute(stmt).scalar_one_or_none()
    if row is None:
        names = list(s.execute(select(Build.name)).scalars())
        raise BuildError(f"no build {name!r}{suggest(name, names)}; list builds with "
                         "'stock builds'")
    return row


def _free_name(s: Any, base: str) -> str:
    from sqlalchemy import select

    from stock.store.models import Build

    taken = set(s.execute(select(Build.name).where(Build.name.like(f"{base}%"))).scalars())
    if base not in taken:
        return base
    n = 2
    while f"{base}-{n}" in taken:
        n += 1
    return f"{base}-{n}"


def reserve(store: Store, kit: Kit, copies: int = 1, *, name: str | None = None,
            allow_short: bool = False, dry_run: bool = False, policy: Any = None,
            catalog: Callable[[str], PartSpec | None] | None = None) -> Reserved:
    """Check ``copies`` of ``kit`` against the free stock and hold the plan for a build.

    The build is named ``name`` (default: the kit's name, with ``-2``, ``-3`` … when
    taken); a name in use is refused. A plan with short slots is refused (nothing is
    written) unless ``allow_short``. ``dry_run`` checks everything and writes nothing.
    Raises :class:`BuildError`, or :class:`~stock.errors.InsufficientStock` if the stock
    changed between the check and the reservation (nothing is written then either).
    """
    from sqlalchemy import insert, select

    from stock.kits.check import check
    from stock.store import ledger
    from stock.store.ledger import Account, Reason
    from stock.store.models import Build

    if not isinstance(copies, int) or isinstance(copies, bool) or copies < 1:
        raise QuantityError(f"{copies!r} copies; ask for 1 or more")
    if name is not None:
        check_name(name)
    report = check([(kit, copies)], store, policy, catalog=catalog, combinations=False)
    if report.plan.short and not allow_short:
        units = sum(report.plan.short.values())
        buildable = report.summaries[0].buildable
        fewer = (f"reserve {buildable} cop{'y' if buildable == 1 else 'ies'}, "
                 if buildable else "")
        raise BuildError(f"{kit.name}: {units} units short for {copies} copies (the free stock "
                         f"builds {buildable}); {fewer}buy the rest ('stock check' lists them) "
                         "or add --allow-short to hold what there is")
    slots = _held_slots(report, copies)
    notes = list(report.notes) + list(report.plan.notes)
    with store.write() as s:
        if name is None:
            name = _free_name(s, kit.name if _NAME.fullmatch(kit.name) else "build")
        elif s.execute(select(Build.id).where(Build.name == name)).first() is not None:
            raise BuildError(f"a build named {name!r} exists; choose another --name or look at "
                             f"it with 'stock builds {name}'")
        info = BuildInfo(name, kit.name, copies, 0, "reserved", None, slots, notes)
        if dry_run:
            return Reserved(info, report, False)
        bid = s.execute(insert(Build).values(
            name=name, kit=kit.name, copies=copies, built=0, status="reserved",
            plan=_plan_json(slots, notes, kit.file)).returning(Build.id)).scalar_one()
        for sl in slots:
            for h in sl.holds:
                ledger.post(s, part_id=store._part_id(s, h.part),
                            drawer_id=store._drawer_id(s, h.drawer),
                            deltas={Account.RESERVED: h.qty}, reason=Reason.RESERVE, ref=name,
                            note=_note(sl), build_id=bid, names=(h.part, h.drawer))
        info.created_at = s.get_one(Build, bid).created_at
    return Reserved(info, report, True)


def _note(sl: HeldSlot) -> str:
    from stock.kits.designators import compress

    return compress(sl.refs) if sl.refs else sl.calls_for


def build(store: Store, name: str, copies: int | None = None) -> BuildInfo:
    """Record that ``copies`` more copies of build ``name`` were built (default: all left).

    Their share of every holding leaves the drawers: on hand and reserved go down
    together. The build is ``built`` when its last copy is. A copy the plan was short
    for is built all the same (the builder found those parts elsewhere); ``BuildInfo``
    before the call tells how many units that was.
    """
    from stock.store.ledger import Reason

    with store.write() as s:
        row = _row(s, name, lock=True)
        info = _info(row)
        if info.status != "reserved":
            raise BuildError(f"build {name!r} is {info.status}; nothing is held for it to build")
        left = info.copies - info.built
        k = left if copies is None else copies
        if not isinstance(k, int) or isinstance(k, bool) or k < 1:
            raise QuantityError(f"{k!r} copies; build 1 or more")
        if k > left:
            raise BuildError(f"build {name!r} has {left} of {info.copies} copies left to "
                             f"build; ask for {left} or fewer")
        _post_holds(store, s, info, row.id, k, Reason.BUILD, consume=True)
        row.built = info.built + k
        if row.built == row.copies:
            row.status = "built"
        return _info(row)


def _post_holds(store: Store, s: Any, info: BuildInfo, build_id: int, copies: int,
                reason: Any, *, consume: bool) -> None:
    """Post the next ``copies`` copies' share of every hold: reserved units go down, and
    (``consume``) on-hand units with them, as the parts leave the drawers for the build."""
    from stock.store import ledger
    from stock.store.ledger import Account

    for sl in info.slots:
        for h in sl.holds:
            q = h.units(info.built, copies)
            if q:
                deltas = {Account.RESERVED: -q} | ({Account.ON_HAND: -q} if consume else {})
                ledger.post(s, part_id=store._part_id(s, h.part),
                            drawer_id=store._drawer_id(s, h.drawer), deltas=deltas,
                            reason=reason, ref=info.name, note=_note(sl), build_id=build_id,
                            names=(h.part, h.drawer))


def release(store: Store, name: str) -> BuildInfo:
    """Give back everything still held for build ``name`` (the copies not yet built).

    A build with copies built keeps them (they are in the circuits); the rest is
    released and the build's status becomes ``released``. A fully built or already
    released build is refused.
    """
    from stock.store.ledger import Reason

    with store.write() as s:
        row = _row(s, name, lock=True)
        info = _info(row)
        if info.status == "built":
            raise BuildError(f"build {name!r} is built: its parts are in the circuits and "
                             "cannot be released; put parts that come back in a drawer with "
                             "'stock add'")
        if info.status == "released":
            raise BuildError(f"build {name!r} is already released; nothing is held for it")
        left = info.copies - info.built
        _post_holds(store, s, info, row.id, left, Reason.RELEASE, consume=False)
        row.status = "released"
        return _info(row)


def builds(store: Store) -> list[BuildInfo]:
    """Every build, newest first."""
    from sqlalchemy import select

    from stock.store.models import Build

    with store.read() as s:
        rows = s.execute(select(Build).order_by(Build.id.desc())).scalars().all()
        return [_info(r) for r in rows]


def get_build(store: Store, name: str) -> BuildInfo:
    """One build by name (a BuildError naming close names when there is none)."""
    with store.read() as s:
        return _info(_row(s, name))


# --- the pick list ---------------------------------------------------------------------------


def drawer_order(label: str) -> tuple[Any, ...]:
    """Sort key for drawer labels as a builder reads them: ``A2`` before ``A10``,
    ``CAB1/A3`` by cabinet then drawer (digit runs compare as numbers; common practice)."""
    parts = re.split(r"(\d+)", label.casefold())
    return tuple((0, int(p), "") if p.isdigit() else (1, 0, p) for p in parts if p)


def pick_list(store: Store, name: str, copies: int | None = None) -> list[PickLine]:
    """What to take out of which drawer for the next ``copies`` copies of build ``name``
    (default: every copy still to build), sorted by drawer, then part, then designators."""
    from stock.kits.designators import compress

    info = get_build(store, name)
    if info.status != "reserved":
        raise BuildError(f"build {name!r} is {info.status}; nothing is left to pick")
    k = info.remaining if copies is None else copies
    if not isinstance(k, int) or isinstance(k, bool) or k < 1:
        raise QuantityError(f"{k!r} copies; pick for 1 or more")
    if k > info.remaining:
        raise BuildError(f"build {name!r} has {info.remaining} copies left to build; pick for "
                         f"{info.remaining} or fewer")
    lines = []
    for sl in info.slots:
        for h in sl.holds:
            q = h.units(info.built, k)
            if q:
                lines.append(PickLine(h.drawer, h.part, q,
                                      compress(sl.refs) if sl.refs else sl.calls_for, sl.key,
                                      h.exact))
    return sorted(lines, key=lambda x: (drawer_order(x.drawer), x.part.casefold(), x.slot))


# --- JSON shapes (docs/kits.md) ------------------------------------------------------------


def build_json(info: BuildInfo, *, detail: bool = True) -> dict[str, Any]:
    """A build as the documented ``--json`` shape."""
    out: dict[str, Any] = {
        "version": PLAN_VERSION, "name": info.name, "kit": info.kit, "copies": info.copies,
        "built": info.built, "status": info.status, "remaining": info.remaining,
        "held": info.held, "short": info.short,
        "created_at": info.created_at.isoformat() if info.created_at else None,
    }
    if detail:
        out["notes"] = info.notes
        out["slots"] = [{"key": s.key, "refs": s.refs, "calls_for": s.calls_for,
                         "kind": s.kind, "role": s.role, "qty": s.qty, "short": s.short,
                         "holds": [{"part": h.part, "drawer": h.drawer, "exact": h.exact,
                                    "qty": h.qty, "per_copy": h.per_copy} for h in s.holds]}
                        for s in info.slots]
    return out


def pick_json(info: BuildInfo, lines: list[PickLine], copies: int) -> dict[str, Any]:
    return {"version": PLAN_VERSION, "build": info.name, "kit": info.kit, "copies": copies,
            "lines": [{"drawer": x.drawer, "part": x.part, "qty": x.qty, "refs": x.refs,
                       "slot": x.slot, "exact": x.exact} for x in lines]}


__all__ = ["BuildInfo", "Hold", "HeldSlot", "PickLine", "Reserved", "build", "build_json",
           "builds", "check_name", "drawer_order", "get_build", "pick_json", "pick_list",
           "release", "reserve", "split_per_copy"]
