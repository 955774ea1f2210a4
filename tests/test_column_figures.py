"""Figures written a column at a time give, byte for byte, the text the one-value functions give.

A load writes each topic's values and gaps column by column (figures.values_shown and
amounts_shown) before the kinds draft; a statement's evidence must not change by a character for
it. Each property compares a whole column with the one-value function applied cell by cell:
value() for values and, for the sizes of differences, points() for a percentage and value() of
the size otherwise (what Context.amount writes). The locales include one grouping digits other
than in threes (hi_IN, Babel/CLDR: 1,23,45,678) and ones writing the decimal sign and percent
sign differently (de_DE, fr_FR, per CLDR), so every path of the column writer is taken.
"""

from __future__ import annotations

import math

from hypothesis import example, given, settings
from hypothesis import strategies as st

from stetline import figures
from stetline.figures import HouseStyle

LOCALES = ("en_GB", "en_US", "de_DE", "fr_FR", "hi_IN", "tr_TR")
# units with a currency sign ("million US$", "€") are written sign first (figures.value): the column must match
UNITS = ("percent", "%", "", "tonnes", "years", "USD", "GBP", "million US$", "€")

styles = st.builds(
    HouseStyle, locale=st.sampled_from(LOCALES), percent_word=st.sampled_from(figures.PERCENT_WORDS),
)
# round figures, halfway points at each precision (0.125, 2.5 …), very large and tiny magnitudes, signs
halfway = st.builds(lambda n, d: (n + 0.5) / 10**d, st.integers(-10**7, 10**7), st.integers(0, 4))
numbers = st.one_of(
    st.floats(allow_nan=False, allow_infinity=False, min_value=-1e18, max_value=1e18),
    st.floats(allow_nan=False, allow_infinity=False, min_value=-2000, max_value=2000),
    halfway,
    st.integers(-3_000_000, 3_000_000).map(float),
)
columns = st.lists(numbers, min_size=1, max_size=30)


@settings(max_examples=400, deadline=None, database=None, derandomize=True)
@given(columns, st.sampled_from(UNITS), st.integers(0, 4), styles)
@example([0.125, -0.125, 2.5, -2.5, 999_999.5, 1_000_000.0, -0.0, 5000000.015], "percent", 2, HouseStyle())
@example([999_999.4, 999_999.5, 1_234_567.0, -0.4], "people", 0, HouseStyle())
@example([1_234_567.891, -0.05], "", 1, HouseStyle(locale="hi_IN"))
def test_a_column_of_values_reads_as_each_value_does(xs: list[float], unit: str, decimals: int,
                                                     style: HouseStyle) -> None:
    assert figures.values_shown(xs, unit, decimals, style) == [figures.value(x, unit, decimals, style) for x in xs]


@settings(max_examples=400, deadline=None, database=None, derandomize=True)
@given(columns, st.sampled_from(UNITS), st.integers(0, 4), styles)
@example([1.0, -1.0, 0.5, 1.4, -0.0], "percent", 0, HouseStyle())
def test_a_column_of_differences_reads_as_each_difference_does(xs: list[float], unit: str, decimals: int,
                                                               style: HouseStyle) -> None:
    def one(x: float) -> str:  # what Context.amount writes for one difference
        if unit == "percent":
            return figures.points(abs(x), decimals, style)
        return figures.value(abs(x), unit, decimals, style)

    assert figures.amounts_shown(xs, unit, decimals, style) == [one(x) for x in xs]


def test_a_missing_value_is_refused_as_the_one_value_function_refuses_it() -> None:
    for write in (figures.values_shown, figures.amounts_shown):
        try:
            write([1.0, math.nan], "percent", 1, HouseStyle())
        except ValueError as exc:
            assert "not finite" in str(exc)
        else:
            raise AssertionError(f"{write.__name__} wrote a missing value")
