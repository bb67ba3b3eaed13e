"""Ranking of candidates, the fitness verdict and the --json shape."""

from __future__ import annotations

import json

from stock.fit import Fitness, assess, assessment_json
from stock.kinds import Kind
from stock.paramtext import parse_params
from stock.parts import PartSpec, Stocked
from stock.rules import load_policy
from stock.slots import Conditions, Op, Requirement, Role, Slot, Source

POLICY = load_policy({})

# facts.md §4.1 rows (see tests/data/fit_cases.toml for the sources)
PN2222A = ("vceo=40V; ic=600mA; pd=625mW@ta=25°C; ft>=300MHz@ic=20mA,vce=20V; tj=150°C; "
           "rth_ja=200")
MPSH10 = "vceo=25V; ic=50mA; pd=350mW@ta=25°C; ft>=650MHz@ic=4mA,vce=10V; tj=150°C; rth_ja=357"
BC547B = "vceo=45V; ic=100mA; pd=625mW@ta=25°C; ft>=150MHz@ic=10mA,vce=5V; tj=150°C; rth_ja=200"
TWO_N3906 = "vceo=40V; ic=200mA; pd=625mW@ta=25°C; ft>=250MHz; tj=150°C"


def npn(number: str, params: str, pins: str = "EBC", family: str = "npn") -> PartSpec:
    return PartSpec(number, Kind.BJT, family, "TO-92", pins, params=parse_params(params))


def audio_slot(**kw: object) -> Slot:
    return Slot(["Q1"], 1, "npn", Kind.BJT, None, Role.AUDIO_AMP,
                Conditions(supply=12.0, freq=20e3, current=0.01),
                [Requirement("family", Op.EQ, "npn", Source.USER, "npn")], **kw)  # type: ignore


def test_failing_candidates_are_dropped_unless_asked() -> None:
    cands = [Stocked(npn("2N3906", TWO_N3906, family="pnp"), 5),
             Stocked(npn("PN2222A", PN2222A), 5)]
    shown = assess(audio_slot(), cands, POLICY)
    assert [a.part for a in shown] == ["PN2222A"]
    every = assess(audio_slot(), cands, POLICY, include_failing=True)
    assert [a.part for a in every] == ["PN2222A", "2N3906"]
    assert every[-1].fitness is Fitness.FAILS and every[-1].rank == 2
    assert every[-1].deciding is not None and every[-1].deciding.param == "family"


def test_fewer_warnings_rank_first() -> None:
    # the same ratings, but one record lacks fT: unknown → a warning
    no_ft = npn("NPN-NOFT", "vceo=40V; ic=600mA; pd=625mW@ta=25°C; tj=150°C")
    full = npn("PN2222A", PN2222A)
    ranked = assess(audio_slot(), [Stocked(no_ft, 5), Stocked(full, 5)], POLICY)
    assert [a.part for a in ranked] == ["PN2222A", "NPN-NOFT"]
    assert ranked[1].fitness is Fitness.FITS_WITH_WARNINGS and ranked[1].warnings == 1


def test_do_not_spend_the_uhf_transistor_on_audio() -> None:
    # both fit an audio stage with ample margin; MPSH10's fT (650 MHz) is the scarce one
    ranked = assess(audio_slot(), [Stocked(npn("MPSH10", MPSH10), 5),
                                   Stocked(npn("PN2222A", PN2222A), 5)], POLICY)
    assert [a.part for a in ranked] == ["PN2222A", "MPSH10"]
    assert ranked[1].versatility > ranked[0].versatility


def test_demand_from_the_kit_planner_keeps_wanted_parts() -> None:
    cands = [Stocked(npn("PN2222A", PN2222A), 5), Stocked(npn("BC547B", BC547B), 5)]
    plain = assess(audio_slot(), cands, POLICY)
    wanted = plain[0].part
    ranked = assess(audio_slot(), cands, POLICY, demand={wanted.lower(): 4})
    assert ranked[-1].part == wanted and ranked[-1].demand == 4


def test_enough_free_quantity_ranks_first() -> None:
    a = Stocked(npn("PN2222A", PN2222A), free=1)
    b = Stocked(npn("PN2222A-B", PN2222A), free=10)
    ranked = assess(audio_slot(), [a, b], POLICY, need=4)
    assert [r.part for r in ranked] == ["PN2222A-B", "PN2222A"]
    ranked = assess(audio_slot(), [a, b], POLICY, need=1)
    assert [r.part for r in ranked] == ["PN2222A", "PN2222A-B"]  # then by number


def test_drop_in_ranks_before_crossed_leads() -> None:
    called = npn("PN2222A", PN2222A)
    slot = Slot(["Q1"], 1, "PN2222A", Kind.BJT, called, Role.AUDIO_AMP,
                Conditions(supply=12.0, freq=20e3, current=0.01))
    cands = [Stocked(npn("X-CROSS", PN2222A, pins="BEC"), 5),
             Stocked(npn("X-REV", PN2222A, pins="CBE"), 5),
             Stocked(npn("X-SAME", PN2222A, pins="EBC"), 5)]
    ranked = assess(slot, cands, POLICY)
    assert [a.part for a in ranked] == ["X-SAME", "X-REV", "X-CROSS"]


def test_board_pinout_on_the_slot_overrides_the_part() -> None:
    called = npn("PN2222A", PN2222A)
    slot = Slot(["Q1"], 1, "PN2222A", Kind.BJT, called, Role.AUDIO_AMP,
                Conditions(supply=12.0, freq=20e3, current=0.01), pinout="CBE")
    [a] = assess(slot, [Stocked(npn("X", PN2222A, pins="CBE"), 5)], POLICY)
    assert a.dropin.verdict.value == "drop-in"


def test_json_shape_is_stable() -> None:
    called = npn("PN2222A", PN2222A)
    slot = Slot(["Q1"], 1, "PN2222A", Kind.BJT, called, Role.AUDIO_AMP,
                Conditions(supply=12.0, freq=20e3, current=0.01))
    [a] = assess(slot, [Stocked(npn("X-REV", PN2222A, pins="CBE"), 7, [("A3", 7)])], POLICY)
    doc = assessment_json(a)
    assert set(doc) == {"rank", "part", "kind", "family", "package", "pinout", "free",
                        "drawers", "to_buy", "fitness", "warnings", "smallest_margin", "dropin",
                        "checks"}
    assert doc["drawers"] == [{"drawer": "A3", "free": 7}]
    assert doc["dropin"]["verdict"] == "reversed" and doc["dropin"]["mapping"] == [[1, 3],
                                                                                  [2, 2], [3, 1]]
    for c in doc["checks"]:
        assert set(c) == {"param", "required", "required_value", "actual", "actual_text",
                          "bound", "at", "margin", "verdict", "why", "source", "rule"}
        assert c["verdict"] in ("pass", "warn", "fail")
        assert c["source"] in ("part", "role", "user")
    json.dumps(doc)  # plain JSON types only
    ft = next(c for c in doc["checks"] if c["param"] == "ft")
    assert ft["bound"] == "min" and ft["at"] == {"ic": 0.02, "vce": 20.0}
    assert ft["rule"] == "ft_ratio_min" and ft["source"] == "role"


def test_ranking_does_not_depend_on_input_order() -> None:
    import random

    from hypothesis import given, settings
    from hypothesis import strategies as st

    pool = [Stocked(npn(f"N{i}", f"vceo={v}V; ic={ic}mA; pd=625mW@ta=25°C; ft>={ft}MHz; "
                             "tj=150°C", pins=pins), free)
            for i, (v, ic, ft, pins, free) in enumerate([
                (40, 600, 300, "EBC", 5), (25, 50, 650, "BEC", 3), (45, 100, 150, "CBE", 20),
                (12, 600, 300, "EBC", 9), (60, 800, 200, "ECB", 1), (30, 400, 500, "EBC", 2)])]
    called = npn("PN2222A", PN2222A)
    slot = Slot(["Q1"], 1, "PN2222A", Kind.BJT, called, Role.RF_AMP,
                Conditions(supply=12.0, freq=30e6, current=0.02))
    expected = [a.part for a in assess(slot, pool, POLICY, include_failing=True)]

    @settings(max_examples=25)
    @given(st.randoms(use_true_random=False))
    def check(rnd: random.Random) -> None:
        shuffled = list(pool)
        rnd.shuffle(shuffled)
        got = assess(slot, shuffled, POLICY, include_failing=True)
        assert [a.part for a in got] == expected
        assert [a.rank for a in got] == list(range(1, len(pool) + 1))
        fails = [a.fitness is Fitness.FAILS for a in got]
        assert fails == sorted(fails)  # failing candidates last

    check()
