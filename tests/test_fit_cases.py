"""Data-driven substitution cases: tests/data/fit_cases.toml (each row names its source)."""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any

import pytest

from stock.fit import Fitness, assess, resolve_value_slot
from stock.kinds import Kind
from stock.paramtext import parse_criterion, parse_params
from stock.parts import PartSpec, Stocked
from stock.quantities import parse_value
from stock.rules import load_policy
from stock.slots import Conditions, Requirement, Role, Slot, Source

DATA = tomllib.loads((Path(__file__).parent / "data" / "fit_cases.toml").read_text("utf-8"))
PARTS: dict[str, dict[str, Any]] = DATA["parts"]
CASES: list[dict[str, Any]] = DATA["case"]

CONDITION_UNITS = {"supply": "V", "freq": "Hz", "current": "A", "dissipation": "W",
                   "ambient": "°C", "v_peak": "V", "v_rms": "V", "v_dc": "V", "i_peak": "A",
                   "impedance": "Ω"}


def part(name: str) -> PartSpec:
    row = PARTS[name]
    kind = Kind(row["kind"])
    return PartSpec(name, kind, row.get("family"), row.get("package"), row.get("pinout"),
                    attrs=dict(row.get("attrs", {})), params=parse_params(row["params"], kind),
                    source=row["source"])


def build(case: dict[str, Any]) -> tuple[Slot, PartSpec]:
    kind = Kind(case["kind"])
    if "called" in case:
        called: PartSpec | None = part(case["called"])
    elif "called_value" in case:
        called = resolve_value_slot(case["called_value"], kind)
    else:
        called = None
    cond = Conditions(**{k: parse_value(v, CONDITION_UNITS[k]).value
                         for k, v in case.get("conditions", {}).items()})
    reqs = []
    for text in case.get("needs", []):
        c = parse_criterion(text, kind)
        reqs.append(Requirement(c.param, c.op, c.value, Source.USER, text))
    slot = Slot(["X1"], 1, case.get("called", case.get("called_value", "")), kind, called,
                Role(case.get("role", "general")), cond, reqs)
    cand = part(case["candidate"]) if "candidate" in case else \
        resolve_value_slot(case["candidate_value"], kind)
    return slot, cand


def test_enough_cases_cover_every_kind() -> None:
    assert len(CASES) >= 30
    kinds = {c["kind"] for c in CASES}
    assert kinds >= {"bjt", "fet", "diode", "capacitor", "resistor", "inductor", "crystal"}
    assert {c["expect"] for c in CASES} == {f.value for f in Fitness}
    assert all(c.get("source") for c in CASES)
    assert len({c["id"] for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_case(case: dict[str, Any]) -> None:
    slot, cand = build(case)
    [a] = assess(slot, [Stocked(cand, free=10)], load_policy({}), include_failing=True)
    lines = "\n".join(f"  {c.param} {c.source} {c.required} | {c.actual_text} -> "
                      f"{c.verdict} ({c.why})" for c in a.checks)
    assert a.fitness == Fitness(case["expect"]), lines
    assert a.deciding is not None and a.deciding.param == case["deciding"], lines
    if "dropin" in case:
        assert a.dropin.verdict.value == case["dropin"], a.dropin.text


@pytest.mark.parametrize("case", CASES, ids=[c["id"] for c in CASES])
def test_screen_drops_only_failing_candidates(case: dict[str, Any]) -> None:
    # a store query may drop parts by the screen bounds: each such part must fail anyway
    from stock.fit import requirements_for, screen
    from stock.slots import Op

    slot, cand = build(case)
    policy = load_policy({})
    dropped = False
    for r in screen(requirements_for(slot, policy)):
        if r.param == "family":
            dropped |= cand.family is not None and cand.family not in str(r.value).split("|")
            continue
        have = [p.value for p in cand.values(r.param)]
        if have and not any((v >= r.value) if r.op is Op.GE else (v <= r.value)
                            for v in have):
            dropped = True
    if dropped:
        [a] = assess(slot, [Stocked(cand, free=10)], policy, include_failing=True)
        assert a.fitness is Fitness.FAILS
