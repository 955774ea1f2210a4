"""Wording shared by several kinds: ranks, caveats and the numbers that go with them."""

from __future__ import annotations

import math
from typing import Any

from stetline import phrasing

#: fewer entities than this reporting a topic: no ranking is stated (a rank of 2 says little)
MIN_RANKED = 3
BANDS = ("top", "upper", "lower", "bottom")


def missing(x: Any) -> bool:
    """True for None, NaN and pandas' missing markers."""
    if x is None:
        return True
    try:
        return bool(math.isnan(x))
    except TypeError:
        return str(x) in ("<NA>", "nan")


def band(rank: float, of: int) -> str | None:
    """The quarter of the ranking a rank falls in: top, upper, lower or bottom."""
    if missing(rank) or of < MIN_RANKED:
        return None
    return BANDS[min(3, int(4 * (rank - 1) // of))]


def best_word(better: str, top: bool) -> str:
    """'best'/'worst' for directed topics, 'highest'/'lowest' for neutral ones."""
    if better == "neutral":
        return "highest" if top else "lowest"
    return "best" if top else "worst"


def rank_phrase(rank: int, of: int, tied: bool, better: str, noun_phrase: str) -> str:
    """'the best of 14 towns', 'joint 3rd best of 14 towns', 'the worst of 14 towns'."""
    joint = "joint " if tied else ""
    if rank == 1:
        return f"{joint or 'the '}{best_word(better, True)} of {noun_phrase}"
    if rank == of and not tied:
        return f"the {best_word(better, False)} of {noun_phrase}"
    return f"{joint}{phrasing.ordinal(rank)} {best_word(better, True)} of {noun_phrase}"


def caveat(status: str) -> str:
    """A short caveat for a provisional or estimated value ('' otherwise)."""
    return f" ({status})" if status in ("provisional", "estimated") else ""


def status_shown(status: str) -> str:
    """How an observation's status is shown in evidence."""
    return status or "final"
