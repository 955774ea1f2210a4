"""Phrasing: the numbers and words of a plain-language statement, and the filters of its templates.

The work is split by concern: :mod:`stetline.rounding` (the one rounding rule),
:mod:`stetline.figures` (numbers, percentages, changes and ratios in a house style) and
:mod:`stetline.words` (ordinals, plurals, lists, articles, tidy spacing). This module gathers
their public names, which callers import from here, and builds the Jinja2 filter table that
statement templates use.

What it must not do: no I/O, no database, no pandas, no Flask.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable
from decimal import Decimal
from typing import Any

from stetline.figures import (
    DEFAULT,
    PERCENT_WORDS,
    HouseStyle,
    change_in,
    change_size,
    count,
    number,
    percent,
    points,
    ratio,
    relative,
    scaled,
    value,
)
from stetline.rounding import round_half_up
from stetline.words import (
    article,
    capitalise,
    in_sentence,
    join,
    join_names,
    name_in_sentence,
    needs_the,
    noun_plural,
    ordinal,
    ordinal_word,
    plural,
    possessive,
    preposition_for,
    sentences,
    starts_with_figure,
    tidy,
)

__all__ = [
    "DEFAULT",
    "PERCENT_WORDS",
    "HouseStyle",
    "article",
    "capitalise",
    "change_in",
    "change_size",
    "count",
    "in_sentence",
    "join",
    "join_names",
    "name_in_sentence",
    "needs_the",
    "make_filters",
    "noun_plural",
    "number",
    "ordinal",
    "ordinal_word",
    "percent",
    "plural",
    "possessive",
    "preposition_for",
    "points",
    "ratio",
    "relative",
    "round_half_up",
    "scaled",
    "sentences",
    "starts_with_figure",
    "tidy",
    "value",
]


def make_filters(style: HouseStyle) -> dict[str, Callable[..., Any]]:
    """Build the Jinja2 filter table with the house style bound; every filter returns str."""

    def number_filter(x: float | Decimal, decimals: int) -> str:
        return number(x, decimals, style)

    def count_filter(n: int) -> str:
        return count(n, style)

    def percent_filter(x: float | Decimal, decimals: int) -> str:
        return percent(x, decimals, style)

    def value_filter(x: float | Decimal, unit: str, decimals: int) -> str:
        return value(x, unit, decimals, style)

    def points_filter(d: float | Decimal, decimals: int) -> str:
        return points(d, decimals, style)

    def relative_filter(rel: float | Decimal) -> str:
        return relative(rel, style)

    def ratio_filter(r: float | Decimal) -> str:
        return ratio(r, style)

    def plural_filter(n: int, word: str) -> str:
        return plural(n, word, style)

    def join_filter(items: Iterable[str], conj: str = "and") -> str:
        return join(items, style, conj)

    def possessive_filter(name: str) -> str:
        return possessive(name, style)

    def ordinal_word_filter(n: int) -> str:
        return ordinal_word(n, style)

    return {
        "number": number_filter,
        "count": count_filter,
        "percent": percent_filter,
        "value": value_filter,
        "points": points_filter,
        "relative": relative_filter,
        "ratio": ratio_filter,
        "ordinal": ordinal,
        "plural": plural_filter,
        "join": join_filter,
        "article": article,
        "capitalise": capitalise,
        "possessive": possessive_filter,
        "ordinal_word": ordinal_word_filter,
    }
