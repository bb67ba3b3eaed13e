"""Drop-in: does the candidate go into the called-for part's pads as it is?

Reported beside the electrical verdict: same package and pin order is a drop-in; the
reversed order (E-B-C for C-B-E, S-G-D for D-G-S) fits if the part is turned round;
any other order needs the leads crossed, and the mapping is spelled out pad by pad.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from enum import StrEnum
from functools import lru_cache

from stock.kinds import Kind
from stock.parts import PartSpec


class DropInVerdict(StrEnum):
    DROP_IN = "drop-in"
    REVERSED = "reversed"
    CROSS_LEADS = "cross-leads"
    OTHER_PACKAGE = "other-package"
    UNKNOWN = "unknown"


#: Ranking order: the easier to fit, the earlier.
DROPIN_ORDER = {DropInVerdict.DROP_IN: 0, DropInVerdict.REVERSED: 1,
                DropInVerdict.CROSS_LEADS: 2, DropInVerdict.UNKNOWN: 3,
                DropInVerdict.OTHER_PACKAGE: 4}


@dataclass
class DropIn:
    verdict: DropInVerdict
    text: str
    mapping: list[tuple[int, int]] | None = None  # (candidate pin, board pad), 1-based
    order: int = field(init=False, repr=False, compare=False)  # DROPIN_ORDER of the verdict

    def __post_init__(self) -> None:
        # kept on the record: the ranking reads it for every candidate
        self.order = DROPIN_ORDER[self.verdict]


@lru_cache(maxsize=512)
def _pkg_key(p: str) -> str:
    return p.upper().replace(" ", "").replace("-", "").replace("_", "").replace("/", "")


def _pkg(p: str | None) -> str | None:
    return _pkg_key(p) if p else None


def pin_mapping(board: str, candidate: str) -> list[tuple[int, int]] | None:
    """For each candidate pin, the board pad carrying the same lead letter (1-based).

    None when the letters differ (not the same set of leads).
    """
    if sorted(board) != sorted(candidate) or len(set(board)) != len(board):
        return None
    return [(i + 1, board.index(letter) + 1) for i, letter in enumerate(candidate)]


def _dashed(pins: str) -> str:
    return "-".join(pins)


def dropin(called: PartSpec | None, candidate: PartSpec) -> DropIn:
    """Compare package and pin order of ``candidate`` with the called-for part."""
    if called is None:
        return DropIn(DropInVerdict.UNKNOWN, "no called-for part to compare the pins with")
    cp, kp = _pkg(called.package), _pkg(candidate.package)
    pkg_note = ""
    other_pkg = cp is not None and kp is not None and cp != kp
    if other_pkg:
        pkg_note = f"other package: {candidate.package} where the board has {called.package}"
    board, cand = (called.pinout or "").upper(), (candidate.pinout or "").upper()
    three_leads = candidate.kind in (Kind.BJT, Kind.FET) or len(board) > 2 or len(cand) > 2
    if not three_leads and not (board and cand and board != cand):
        # two leads (passives, diodes with A-K order): the package decides
        if other_pkg:
            return DropIn(DropInVerdict.OTHER_PACKAGE, pkg_note)
        if cp is None or kp is None:
            return DropIn(DropInVerdict.UNKNOWN, "package not recorded: check lead spacing "
                          "and size")
        return DropIn(DropInVerdict.DROP_IN, f"same package ({candidate.package})")
    if not board or not cand:
        which = "the called-for part's" if not board else "the candidate's"
        text = f"pin order unknown ({which} is not recorded): check the datasheet"
        if other_pkg:
            return DropIn(DropInVerdict.OTHER_PACKAGE, f"{pkg_note}; {text}")
        return DropIn(DropInVerdict.UNKNOWN, text)
    mapping = pin_mapping(board, cand)
    if mapping is None:
        return DropIn(DropInVerdict.UNKNOWN, f"pin letters {_dashed(cand)} do not match "
                      f"{_dashed(board)}: check the datasheet")
    if other_pkg:
        order = "same pin order" if board == cand else \
            f"pins {_dashed(cand)} for {_dashed(board)}"
        return DropIn(DropInVerdict.OTHER_PACKAGE, f"{pkg_note}; {order}", mapping)
    if board == cand:
        return DropIn(DropInVerdict.DROP_IN, f"same package and pin order ({_dashed(cand)})",
                      mapping)
    if board == cand[::-1]:
        return DropIn(DropInVerdict.REVERSED, f"mount reversed: pins {_dashed(cand)} where "
                      f"the board has {_dashed(board)}; turn the part round", mapping)
    moves = ", ".join(f"candidate pin {c} ({cand[c - 1]}) → board pad {b} ({board[b - 1]})"
                      for c, b in mapping)
    return DropIn(DropInVerdict.CROSS_LEADS, f"not drop-in: cross the leads ({_dashed(cand)} "
                  f"for {_dashed(board)}): {moves}", mapping)
