"""Slots from the command line, value slots, cautions, and check invariants."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from stock.errors import NotationError, UnknownPart
from stock.fit import (
    Verdict,
    assess,
    cautions,
    check_one,
    requirements_for,
    resolve_value_slot,
    slot_from_args,
)
from stock.kinds import Bound, Kind
from stock.paramtext import parse_params
from stock.parts import Param, PartSpec, Stocked
from stock.rules import load_policy
from stock.slots import Conditions, Op, Requirement, Role, Slot, Source

POLICY = load_policy({})


@pytest.mark.parametrize(("text", "kind", "param", "value", "family"), [
    ("4k7", Kind.RESISTOR, "r", 4700.0, None),              # IEC 60062 RKM
    ("100n C0G 50V", Kind.CAPACITOR, "c", 100e-9, "c0g"),
    ("100p NP0", Kind.CAPACITOR, "c", 100e-12, "c0g"),      # NP0 = C0G (facts.md §3.2)
    ("104 X7R", Kind.CAPACITOR, "c", 100e-9, "x7r"),        # 3-digit code (facts.md §2.4)
    ("22uH", Kind.INDUCTOR, "l", 22e-6, None),
    ("10MHz 20pF", Kind.CRYSTAL, "f", 10e6, None),
])
def test_value_slots(text: str, kind: Kind, param: str, value: float, family: str | None
                     ) -> None:
    part = resolve_value_slot(text, kind)
    assert part.nominal(param) == pytest.approx(value)
    assert part.family == family and part.kind is kind


def test_value_slot_ratings_and_tolerance() -> None:
    p = resolve_value_slot("10n film X2 275VAC 10%", Kind.CAPACITOR)
    assert p.attrs["safety"] == "X2" and p.family == "film"
    assert p.get("v_ac").value == 275.0  # type: ignore[union-attr]
    assert p.get("tol", Bound.MAX).value == pytest.approx(0.10)  # type: ignore[union-attr]
    r = resolve_value_slot("470R 1/4W", Kind.RESISTOR)
    assert r.get("p_rated").value == pytest.approx(0.25)  # type: ignore[union-attr]
    x = resolve_value_slot("10MHz 20pF", Kind.CRYSTAL)
    assert x.nominal("cl") == pytest.approx(20e-12)


@pytest.mark.parametrize("text", ["100n purple", "4k7k", ""])
def test_value_slot_errors_name_the_word(text: str) -> None:
    with pytest.raises(NotationError):
        resolve_value_slot(text, Kind.RESISTOR if "k" in text else Kind.CAPACITOR)


def test_slot_from_args_resolves_and_parses() -> None:
    known = {"PN2222A": PartSpec("PN2222A", Kind.BJT, "npn", "TO-92", "EBC",
                                 params=parse_params("vceo=40V; ic=600mA"))}
    slot = slot_from_args("PN2222A", role="pa-c", conditions=Conditions(supply=12.0),
                          needs=["vceo>=60V"], resolve=known.get)
    assert slot.kind is Kind.BJT and slot.role is Role.PA_C and slot.part is not None
    reqs = requirements_for(slot, POLICY)
    vceo = [r for r in reqs if r.param == "vceo"]
    assert [(r.source, r.value) for r in vceo] == [(Source.USER, 60.0)]  # the user wins
    bare = slot_from_args("npn", kind="bjt")
    assert bare.part is None and bare.requirements[0].value == "npn"
    value = slot_from_args("4k7", resolve=known.get)
    assert value.kind is Kind.RESISTOR and value.part is not None


def test_slot_from_args_errors() -> None:
    with pytest.raises(UnknownPart, match="stock add"):
        slot_from_args("ZZ9999", resolve=lambda _n: None)
    with pytest.raises(ValueError, match="pa-c"):
        slot_from_args("npn", kind="bjt", role="class-c")


def test_sources_merge_user_over_role_over_part() -> None:
    part = PartSpec("PN2222A", Kind.BJT, "npn", params=parse_params("vceo=40V; ic=600mA"))
    base = Slot(["Q1"], 1, "PN2222A", Kind.BJT, part, Role.PA_C, Conditions(supply=12.0))
    reqs = requirements_for(base, POLICY)
    assert [(r.source, r.value) for r in reqs if r.param == "vceo"] == [(Source.ROLE, 24.0)]
    assert [(r.source, r.value) for r in reqs if r.param == "ic"] == [(Source.PART, 0.6)]


def test_cautions_where_a_role_can_hurt() -> None:
    mains = Slot(["C1"], 1, "100n X2", Kind.CAPACITOR, None, Role.MAINS_X,
                 Conditions(v_rms=230.0))
    text = " ".join(cautions(mains))
    assert "IEC 60384-14" in text and "never a plain capacitor" in text
    assert "230 V RMS" in text and "regulations" in text
    pa = Slot(["Q1"], 1, "npn", Kind.BJT, None, Role.PA_C, Conditions(supply=13.8, current=1.0))
    text = " ".join(cautions(pa))
    assert "licence" in text and "harmonic" in text and "Heat" in text
    tant = PartSpec("10u tantalum", Kind.CAPACITOR, "tantalum")
    dec = Slot(["C2"], 1, "10u", Kind.CAPACITOR, None, Role.DECOUPLING, Conditions(supply=5.0))
    assert any("Polarised" in c for c in cautions(dec, tant))
    assert cautions(dec) == []


@given(st.floats(0.5, 500), st.floats(0.5, 500), st.sampled_from([Op.GE, Op.LE]),
       st.sampled_from([Bound.MAX, Bound.TYP]))
def test_verdict_and_margin_agree(required: float, actual: float, op: Op, bound: Bound
                                  ) -> None:
    # a check passes exactly when its margin is not negative; a typical value never passes
    name = "vceo" if op is Op.GE else "rds_on"
    kind = Kind.BJT if op is Op.GE else Kind.FET
    part = PartSpec("X", kind, params=[Param(name, bound, actual)])
    slot = Slot([], 1, "X", kind)
    c = check_one(part, Requirement(name, op, required, Source.USER, "test"), slot, POLICY)
    assert c.margin is not None
    if c.margin < -1e-9:
        assert c.verdict is Verdict.FAIL
    elif bound is Bound.TYP:
        assert c.verdict is Verdict.WARN and "typical" in c.why
    elif c.margin > 1e-9:
        assert c.verdict is Verdict.PASS


@given(st.floats(1, 100), st.floats(1.0, 10.0))
def test_a_better_rating_never_worsens_the_verdict(vceo: float, factor: float) -> None:
    slot = Slot([], 1, "npn", Kind.BJT, None, Role.PA_C, Conditions(supply=12.0, freq=1e6))
    order = {"fits": 0, "fits with warnings": 1, "fails": 2}

    def fitness(v: float) -> int:
        part = PartSpec("X", Kind.BJT, "npn",
                        params=parse_params(f"vceo={v}V; ft>=100MHz; ic=1A"))
        [a] = assess(slot, [Stocked(part, 1)], POLICY, include_failing=True)
        return order[a.fitness.value]

    assert fitness(vceo * factor) <= fitness(vceo)


@pytest.mark.parametrize(("text", "kind"), [
    # IEC 60062 RKM letters and SI units decide the kind of a bare value
    ("4k7", Kind.RESISTOR), ("2R2", Kind.RESISTOR), ("1M0", Kind.RESISTOR),
    ("100n", Kind.CAPACITOR), ("2u2", Kind.CAPACITOR), ("47p X7R", Kind.CAPACITOR),
    ("22uF", Kind.CAPACITOR), ("10uH", Kind.INDUCTOR), ("10MHz", Kind.CRYSTAL),
])
def test_kind_of_a_bare_value(text: str, kind: Kind) -> None:
    assert slot_from_args(text).kind is kind


def test_a_bare_number_needs_a_kind() -> None:
    with pytest.raises(UnknownPart, match="--kind"):
        slot_from_args("100")


@pytest.mark.parametrize(("marking", "role", "wanted"), [
    # facts.md §3.4: a dual-rated X1/Y2 part in a line-to-earth position is held as Y2,
    # across the line as X1
    ("X1/Y2", Role.MAINS_Y, "Y2"), ("X1/Y2", Role.MAINS_X, "X1"), ("Y1", Role.MAINS_X, "Y1"),
])
def test_safety_class_of_a_dual_rated_called_for_part(marking: str, role: Role,
                                                      wanted: str) -> None:
    part = resolve_value_slot(f"4n7 {marking} 300VAC", Kind.CAPACITOR)
    slot = Slot(["C1"], 1, part.number, Kind.CAPACITOR, part, role, Conditions(v_rms=230.0))
    [req] = [r for r in requirements_for(slot, POLICY) if r.param == "safety"]
    assert req.value == wanted
