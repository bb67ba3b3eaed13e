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
