"""Worked examples (tests/data/fit_formulas.toml): derating, swing, fT, passive rules."""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import Any

import pytest

from stock.fit import check_part, requirements_for, resolve_value_slot
from stock.kinds import Kind
from stock.paramtext import parse_params
from stock.parts import PartSpec
from stock.quantities import parse_value
from stock.rules import load_policy
from stock.slots import Conditions, Role, Slot

ROWS = tomllib.loads((Path(__file__).parent / "data" / "fit_formulas.toml")
                     .read_text("utf-8"))["example"]
UNITS = {"supply": "V", "freq": "Hz", "current": "A", "dissipation": "W", "ambient": "°C",
         "v_peak": "V", "v_rms": "V", "v_dc": "V", "i_peak": "A", "impedance": "Ω"}
PARAM_UNITS = {"pd": "W", "vceo": "V", "vds": "V", "id": "A", "ft": "Hz", "v_rated": "V",
               "vrrm": "V", "p_rated": "W", "l": "H"}


@pytest.mark.parametrize("row", ROWS, ids=[r["id"] for r in ROWS])
def test_worked_example(row: dict[str, Any]) -> None:
    policy = load_policy({})
    kind = Kind(row["kind"])
    called = resolve_value_slot(row["called_value"], kind) if "called_value" in row else None
    cond = Conditions(**{k: parse_value(v, UNITS[k]).value
                         for k, v in row.get("conditions", {}).items()})
    slot = Slot(["X1"], 1, row.get("called_value", ""), kind, called, Role(row["role"]), cond)
    reqs = requirements_for(slot, policy)
    unit = PARAM_UNITS[row["param"]]
    rel = row.get("rel", 0.005)
    mine = [r for r in reqs if r.param == row["param"]
            and ("rule" not in row or r.rule == row["rule"])]
    assert mine, f"no {row['param']} requirement in {reqs}"
    if "candidate_params" in row or "candidate_value" in row:
        if "candidate_value" in row:
            cand = resolve_value_slot(row["candidate_value"], kind)
        else:
            cand = PartSpec("candidate", kind, None,
                            params=parse_params(row["candidate_params"], kind))
        [check] = [c for c in check_part(cand, slot, mine, policy)]
        if "actual" in row:
            assert check.actual == pytest.approx(parse_value(row["actual"], unit).value, rel=rel)
        if "required" in row:
            assert check.required_value == pytest.approx(
                parse_value(row["required"], unit).value, rel=rel)
    else:
        assert float(mine[0].value) == pytest.approx(
            parse_value(row["required"], unit).value, rel=rel)


def test_derating_ignores_a_zero_thermal_resistance() -> None:
    """PD(TA) = (Tj,max − TA)/RθJA (facts.md §5.3) needs a positive RθJA; a record with
    RθJA = 0 (a typing slip) is no figure at all: the derating line comes from PD(25 °C)
    and Tj instead, as when RθJA is missing (found in review: it divided by zero). The
    figures are the PN2222A's (facts.md §4.1): 625 mW, Tj 150 °C → 200 °C/W."""
    from stock.fit import pd_at
    from stock.kinds import Bound, Kind
    from stock.parts import Param, PartSpec

    def part(*extra: Param) -> PartSpec:
        return PartSpec("Q", Kind.BJT, "npn", params=[
            Param("pd", Bound.MAX, 0.625, {"ta": 25.0}), Param("tj", Bound.MAX, 150.0),
            *extra])

    watts, _ = pd_at(part(Param("rth_ja", Bound.MAX, 0.0)), 60.0)
    assert watts == pd_at(part(), 60.0)[0]
    assert watts is not None and abs(watts - (150.0 - 60.0) / 200.0) < 1e-12  # 450 mW
