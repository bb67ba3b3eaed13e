"""A policy override from the config file changes the verdicts it should, and no others."""

from __future__ import annotations

from pathlib import Path

import pytest

from stock.fit import assess
from stock.parts import Stocked
from stock.rules import Policy, load_policy
from tests.test_fit_cases import CASES, build


def verdicts(policy: Policy) -> dict[str, str]:
    out = {}
    for case in CASES:
        slot, cand = build(case)
        [a] = assess(slot, [Stocked(cand, free=10)], policy, include_failing=True)
        out[case["id"]] = a.fitness.value
    return out


SHIPPED = verdicts(load_policy({}))


@pytest.mark.parametrize(("override", "changed"), [
    # 12 V rail: at 75 % a 16 V MnO2 tantalum passes (12/0.75 = 16 V); the 25 V case
    # passes either way (facts.md §5.7)
    ("cap_v_fraction_tantalum = 0.75", {"cap-tantalum-12v-16v-fails": "fits"}),
    # a gentler class-C swing factor: 13.8 V × 1.8 = 24.8 V ≤ MPSH10's 25 V, but still
    # below the preferred 2.5 × supply (facts.md §5.6)
    ("swing_class_abc = 1.8", {"bjt-class-c-13v8-swing-fails": "fits with warnings"}),
    # fT ≥ 3 × f: BC547B (≥ 150 MHz) still fails at 100 MHz; nothing else is near the line
    ("ft_ratio_min = 3", {}),
    # detector VF limit 0.35 V: BAT85 (0.32 V at 1 mA) still passes
    ("detector_vf_max = 0.35", {}),
    # a stricter detector: BAT85 fails at 0.3 V
    ("detector_vf_max = 0.3", {"diode-detector-schottky": "fails"}),
])
def test_override_changes_only_what_it_should(tmp_path: Path, override: str,
                                              changed: dict[str, str]) -> None:
    cfg = tmp_path / "config.toml"
    cfg.write_text(f"[rules]\n{override}\n", encoding="utf-8")
    after = verdicts(load_policy(path=cfg))
    diff = {k: v for k, v in after.items() if v != SHIPPED[k]}
    assert diff == changed
