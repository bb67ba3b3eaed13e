"""The fit engine: what in the drawers will do for a slot, and why.

Requirements come from the called-for part, the slot's role and conditions, and the
user (:mod:`stock.fit.requirements`); each is held against each candidate as a check
(:mod:`stock.fit.checks`); drop-in is judged beside it (:mod:`stock.fit.dropin`); the
candidates are ranked (:mod:`stock.fit.rank`). Combinations, tuned circuits and crystal
pulling live in :mod:`stock.fit.combine`, :mod:`stock.fit.tuned`, :mod:`stock.fit.crystal`.
"""

from stock.fit.caution import cautions
from stock.fit.checks import (
    Check,
    Verdict,
    check_one,
    check_part,
    pd_at,
    render_requirement,
)
from stock.fit.dropin import DropIn, DropInVerdict, dropin, pin_mapping
from stock.fit.engine import (
    JSON_VERSION,
    assess,
    assessment_json,
    combination_json,
    combinations_for,
    parse_role,
    resolve_value_slot,
    slot_from_args,
)
from stock.fit.find import combination_pool, stand_ins
from stock.fit.rank import Assessment, Fitness
from stock.fit.requirements import requirements_for, screen

__all__ = [
    "JSON_VERSION",
    "Assessment",
    "Check",
    "DropIn",
    "DropInVerdict",
    "Fitness",
    "Verdict",
    "assess",
    "assessment_json",
    "cautions",
    "combination_json",
    "combinations_for",
    "check_one",
    "check_part",
    "combination_pool",
    "dropin",
    "parse_role",
    "pd_at",
    "pin_mapping",
    "render_requirement",
    "requirements_for",
    "resolve_value_slot",
    "screen",
    "slot_from_args",
    "stand_ins",
]
