"""Wording shared by several kinds: ranks, caveats and the numbers that go with them."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import pandas as pd

from stetline import phrasing
from stetline.rounding import to_decimal
from stetline.seasons import leading_changes

if TYPE_CHECKING:
    from stetline.drafting import Context

#: fewer entities than this reporting a topic: no ranking is stated (a rank of 2 says little)
MIN_RANKED = 3
#: fewer entities ranked than this: no quarter of the ranking is stated (three a quarter at least)
MIN_QUARTERS = 12
#: a place this near an end says where it stands by itself: no quarter beside it (common practice)
BAND_FROM_PLACE = 5
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
    """The quarter of the ranking a rank falls in: top, upper, lower or bottom (a claim; text says it from 12)."""
    if missing(rank) or of < MIN_RANKED:
        return None
    return BANDS[min(3, int(4 * (rank - 1) // of))]


def best_word(better: str, top: bool) -> str:
    """'best'/'worst' for directed topics, 'highest'/'lowest' for neutral ones."""
    if better == "neutral":
        return "highest" if top else "lowest"
    return "best" if top else "worst"


def place(rank: int, of: int, tied: int = 1) -> tuple[bool, int]:
    """Where a rank stands counted from the nearer end: (from the top?, place), ties taking their best place.

    Rank 47 of 50 is the fourth from the bottom: (False, 4). ``tied`` is how many share the rank.
    """
    from_bottom = of - (rank + tied - 1) + 1
    if rank - 1 <= from_bottom - 1:
        return True, rank
    return False, from_bottom


def rank_phrase(rank: int, of: int, tied: bool | int, better: str, noun_phrase: str,
                style: phrasing.HouseStyle = phrasing.DEFAULT) -> str:
    """'the best of 14 towns', 'joint third best of 14 towns', 'fourth worst of 50 countries'."""
    shared = int(tied) if not isinstance(tied, bool) else (2 if tied else 1)
    top, where = place(rank, of, shared)
    word = best_word(better, top)
    joint = "joint " if shared > 1 else ""
    of_text = f" of {noun_phrase}" if noun_phrase else ""  # "" when the sentence has said it already
    if where == 1:
        return f"{joint or 'the '}{word}{of_text}"
    return f"{joint}{phrasing.ordinal_word(where, style)} {word}{of_text}"


def band_note(rank: int, of: int, tied: int = 1) -> str:
    """' (in the top quarter)' beside a rank, only where quarters mean something and the rank does not say it."""
    quarter = band(rank, of)
    if of < MIN_QUARTERS or quarter not in ("top", "bottom"):
        return ""
    _top, where = place(rank, of, tied)
    return f" (in the {quarter} quarter)" if where >= BAND_FROM_PLACE else ""


def prints_as_zero(ctx: Context, topic: str, x: float, relative: bool) -> bool:
    """True when a change (a fraction when ``relative``, else in the topic's own terms) prints as zero.

    A relative change prints as a per cent with one decimal below 10%; any other prints at the
    topic's decimals. Decided on the number, not on the text (a unit can hold digits: "per 1,000").
    """
    if relative:
        return phrasing.round_half_up(to_decimal(x).copy_abs() * 100, 1) == 0  # as figures.relative multiplies
    return phrasing.round_half_up(abs(x), int(ctx.topics[topic]["decimals"])) == 0


def caveat(status: str) -> str:
    """A short caveat for a provisional or estimated value ('' otherwise)."""
    return f" ({status})" if status in ("provisional", "estimated") else ""


def status_shown(status: str) -> str:
    """How an observation's status is shown in evidence."""
    return status or "final"


def cell_wide(c: Any) -> bool:
    """True when the statements of a cell print a figure scaled in words: all its figures from a thousand scale."""
    figures = [getattr(c, name, None) for name in ("value", "prev_value", "group_mean", "all_mean", "target",
                                                    "value_revised_from", "revised_from")]
    return any(x is not None and not missing(x) and abs(float(x)) >= 1_000_000 for x in figures)


def with_leading_changes(ctx: Context) -> pd.DataFrame:
    """The edition's cells with their change columns for the comparison that leads (the
    ``compare_with`` setting for quarters and months; see seasons.leading_changes)."""
    cells = ctx.facts.cells
    lead = leading_changes(cells, ctx.facts.series, ctx.compare_with)
    columns = [c for c in lead.columns if c != "topic"]
    return cells.drop(columns=[c for c in columns if c in cells.columns]).join(lead[columns])
