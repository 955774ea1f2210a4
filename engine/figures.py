"""Figures: numbers, counts, percentages, changes and ratios written in a house style.

What it must not do: no I/O of its own (no files, no network, no logging), no database, no
pandas, no Flask. Every public function is pure; the only module state is a cache of locale
data. Babel reads its own CLDR data files when a locale is first used.

Rules chosen here:

* Rounding is :func:`stetline.rounding.round_half_up`: half-up on the number as written, once,
  at the last step. A value that rounds to zero carries no sign.
* Negative numbers use ASCII "-", as Babel's ``format_decimal`` writes them.
* Number words ("one" to "nine") and unit words are English whatever the locale; the locale
  sets only the decimal sign, the group separator and the percent sign's placement.
* ``relative``: whole per cent when the exact size is 9.95% or more (that is, when its
  one-decimal rounding is 10.0% or more), otherwise one decimal.
* ``value``: a count (a topic shown with no decimals) of a million or more is scaled with the locale's CLDR long compact
  words and one decimal ("2.4 billion persons", "42,698 persons" below a million); a unit that
  is an ISO 4217 currency code ("USD", "GBP") is written as the locale places that currency
  ("$1,250", "US$1,250", "£2.4 billion"). The decimals stay fixed (one for every scaled number),
  so numbers of one statement read alike; a topic shown with decimals keeps its full figures.
* A unit holding a currency sign or code with a scale word ("US$", "million US$", "million GBP")
  is written with the currency before the figure and the scale word after it ("US$1,250 million",
  common practice in financial reporting).
* ``change``: a topic's ``change`` setting picks the size of a change: ``relative`` (per cent)
  or ``absolute`` (percentage points for percentages, else the topic's own unit: "0.6 years");
  with none, percentages change in points and everything else in per cent.
* ``ratio``: 2 or more reads "about N times"; below 10 it shows one decimal unless that
  decimal is 0 (2.5 -> "about 2.5 times", 3.02 -> "about 3 times"); 10 or more is whole.
  From 1 up to 2 it reads "N% higher" and below 1 "N% lower", both through ``relative``
  (so exactly 1 reads "0.0% higher": test for equality in the template if that matters).
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass
from decimal import Decimal, localcontext
from functools import lru_cache
from typing import Final

import numpy as np
from babel import Locale, UnknownLocaleError
from babel.numbers import format_decimal, get_currency_symbol, get_decimal_symbol, get_group_symbol, is_currency

from stetline.rounding import CONTEXT, as_whole, check_decimals, quantize, round_half_up_array, to_decimal

PERCENT_WORDS: Final[tuple[str, ...]] = ("%", "per cent", "percent")
POSSESSIVES: Final[tuple[str, ...]] = ("'", "'s")
_HUNDRED: Final = Decimal(100)
_WHOLE_PER_CENT_FROM: Final = Decimal("9.95")
_RATIO_WHOLE_FROM: Final = Decimal(10)
_SMALL_WORDS: Final[tuple[str, ...]] = (
    "zero", "one", "two", "three", "four", "five", "six", "seven", "eight", "nine",
)


@dataclass(frozen=True)
class _LocaleNumbers:
    """What number formatting needs to know about one locale, looked up once."""

    locale: Locale
    # Maps Python's "," and "." to the locale's group and decimal signs; None when the same.
    table: dict[int, str] | None
    # Integer part of a Babel pattern, set only when the locale does not group in threes.
    fallback_pattern: str | None
    # (prefix, suffix) around a positive and around a negative percentage.
    percent_positive: tuple[str, str]
    percent_negative: tuple[str, str]
    # (prefix, suffix) around a positive and a negative amount of money, "¤" for the symbol.
    currency_positive: tuple[str, str]
    currency_negative: tuple[str, str]
    # CLDR long compact patterns by magnitude (1000000 -> "0 million"), largest first, per plural form.
    compact: tuple[tuple[int, dict[str, str]], ...]


@lru_cache(maxsize=64)
def _locale_numbers(name: str) -> _LocaleNumbers:
    try:
        loc = Locale.parse(name.replace("-", "_"))
    except (UnknownLocaleError, ValueError, TypeError) as exc:
        raise ValueError(f"unknown locale {name!r}: Babel has no CLDR data for it") from exc
    decimal_sign = get_decimal_symbol(loc)
    group_sign = get_group_symbol(loc)
    table: dict[int, str] | None = None
    if (group_sign, decimal_sign) != (",", "."):
        table = {ord(","): group_sign, ord("."): decimal_sign}
    pattern = loc.decimal_formats[None]
    primary, secondary = pattern.grouping
    fallback: str | None = None
    if (primary, secondary) != (3, 3):
        if primary >= 1000:  # the locale does not group digits at all
            fallback = "0"
        else:
            fallback = "#," + "#" * secondary + "," + "#" * (primary - 1) + "0"
    pct = loc.percent_formats[None]
    cur = loc.currency_formats["standard"]
    long_forms = loc.compact_decimal_formats.get("long", {})
    magnitudes: dict[int, dict[str, str]] = {}
    for form, patterns in long_forms.items():
        for size, pattern in patterns.items():
            magnitudes.setdefault(int(size), {})[form] = pattern.pattern
    return _LocaleNumbers(
        locale=loc,
        table=table,
        fallback_pattern=fallback,
        percent_positive=(pct.prefix[0], pct.suffix[0]),
        percent_negative=(pct.prefix[1], pct.suffix[1]),
        currency_positive=(cur.prefix[0], cur.suffix[0]),
        currency_negative=(cur.prefix[1], cur.suffix[1]),
        compact=tuple(sorted(magnitudes.items(), reverse=True)),
    )


@dataclass(frozen=True)
class HouseStyle:
    """How figures and names are written: locale, serial comma, percent word, small numbers in words, possessives."""

    locale: str = "en_GB"
    serial_comma: bool = False
    percent_word: str = "%"
    small_numbers_in_words: bool = True
    possessive_after_s: str = "'"

    def __post_init__(self) -> None:
        if self.possessive_after_s not in POSSESSIVES:
            raise ValueError(f"possessive_after_s must be \"'\" or \"'s\"; got {self.possessive_after_s!r}")
        if self.percent_word not in PERCENT_WORDS:
            raise ValueError(
                f"percent_word must be one of {', '.join(repr(w) for w in PERCENT_WORDS)}; "
                f"got {self.percent_word!r}"
            )
        _locale_numbers(self.locale)  # raises ValueError for a locale Babel does not know


DEFAULT: Final = HouseStyle()


def _format_rounded(q: Decimal, decimals: int, locale: str) -> str:
    nums = _locale_numbers(locale)
    if nums.fallback_pattern is None:
        text = f"{q:,f}"
        return text if nums.table is None else text.translate(nums.table)
    pattern = nums.fallback_pattern
    if decimals:
        pattern += "." + "0" * decimals
    with localcontext(CONTEXT):
        return str(format_decimal(q, format=pattern, locale=nums.locale))


def number(x: float | Decimal, decimals: int, style: HouseStyle = DEFAULT) -> str:
    """Write x rounded half-up to `decimals` places with the locale's grouping and decimal sign."""
    check_decimals(decimals)
    locale = style.locale
    return _format_rounded(quantize(to_decimal(x), decimals), decimals, locale)


def count(n: int, style: HouseStyle = DEFAULT) -> str:
    """Write a count: one to nine in words when the style says so, otherwise grouped figures."""
    k = as_whole(n, "count()")
    if style.small_numbers_in_words and 1 <= k <= 9:
        return _SMALL_WORDS[k]
    return _format_rounded(Decimal(k), 0, style.locale)


def _percent_rounded(q: Decimal, decimals: int, style: HouseStyle) -> str:
    if style.percent_word != "%":
        return f"{_format_rounded(q, decimals, style.locale)} {style.percent_word}"
    nums = _locale_numbers(style.locale)
    if q < 0:
        prefix, suffix = nums.percent_negative
        return prefix + _format_rounded(q.copy_abs(), decimals, style.locale) + suffix
    prefix, suffix = nums.percent_positive
    return prefix + _format_rounded(q, decimals, style.locale) + suffix


def percent(x: float | Decimal, decimals: int, style: HouseStyle = DEFAULT) -> str:
    """Write x, already in per cent, as "45.2%" or "45.2 per cent" following the style."""
    check_decimals(decimals)
    return _percent_rounded(quantize(to_decimal(x), decimals), decimals, style)


SCALE_FROM: Final = Decimal(1_000_000)
_ZEROS: Final = re.compile(r"0+(?:\.0+)?")


#: the smallest figure scaled beside a larger scaled one of the same statement ("45.7 thousand")
WIDE_FROM: Final = Decimal(1000)


def _compact(q: Decimal, style: HouseStyle, scale_from: Decimal = SCALE_FROM) -> str | None:
    """The unsigned size of q in the locale's long compact words with one decimal, or None below scale_from."""
    size = q.copy_abs()
    if size < scale_from:
        return None
    nums = _locale_numbers(style.locale)
    for magnitude, forms in reversed(nums.compact):  # smallest first: the last that fits wins
        if magnitude > size:
            break
        chosen = (magnitude, forms)
    else:
        chosen = nums.compact[0] if nums.compact else (0, {})
    magnitude, forms = chosen
    pattern = forms.get("other") or next(iter(forms.values()), "")
    zeros = _ZEROS.search(pattern)
    if zeros is None:
        return None
    divisor = Decimal(magnitude) / Decimal(10) ** (len(zeros.group(0)) - 1)
    mantissa = quantize(CONTEXT.divide(size, divisor), 1)
    if mantissa >= 1000 and magnitude < nums.compact[0][0]:
        return _compact(Decimal(1000) * divisor, style, scale_from)  # 999.96 million reads "1.0 billion"
    pattern = forms.get(nums.locale.plural_form(float(mantissa)), pattern)
    zeros = _ZEROS.search(pattern)
    if zeros is None:
        return None
    return pattern[: zeros.start()] + _format_rounded(mantissa, 1, style.locale) + pattern[zeros.end():]


def scaled(x: float | Decimal, decimals: int, style: HouseStyle = DEFAULT, wide: bool = False) -> str:
    """Write x plainly below a million, else scaled in CLDR words: "42,698", "2.4 billion".

    ``wide``: the statement holds a scaled figure of the same topic, so a figure from a thousand up
    is scaled too ("45.7 thousand" beside "2.4 million", never "45,678"): one form in one statement.
    """
    check_decimals(decimals)
    d = to_decimal(x)
    big = _compact(d, style, WIDE_FROM if wide else SCALE_FROM)
    if big is None:
        return number(d, decimals, style)
    return f"-{big}" if d < 0 and quantize(d, 1) != 0 else big


def is_currency_unit(unit: str) -> bool:
    """Tell whether a unit names a currency by its ISO 4217 code (CLDR knows it): "USD", "GBP"."""
    return len(unit) == 3 and unit.isalpha() and unit.isupper() and is_currency(unit)


def money(x: float | Decimal, code: str, decimals: int, style: HouseStyle = DEFAULT, wide: bool = False) -> str:
    """Write an amount of money as the locale places the currency: "$1,250", "£2.4 billion"."""
    check_decimals(decimals)
    nums = _locale_numbers(style.locale)
    d = to_decimal(x)
    scale_from = WIDE_FROM if wide else SCALE_FROM
    size = (_compact(d, style, scale_from) if decimals == 0 else None) or number(d.copy_abs(), decimals, style)
    negative = d < 0 and size.strip("0.,\u00a0 ") != ""
    prefix, suffix = nums.currency_negative if negative else nums.currency_positive
    symbol = str(get_currency_symbol(code, nums.locale))
    return (prefix + size + suffix).replace("\u00a4", symbol)


def value(
    x: float | Decimal, unit: str, decimals: int, style: HouseStyle = DEFAULT, wide: bool = False
) -> str:
    """Write x with its unit: a percentage, money ("$1,250"), bare, or "12.5 tonnes", scaled when large."""
    if unit in ("percent", "%"):
        return percent(x, decimals, style)
    if is_currency_unit(unit):
        return money(x, unit, decimals, style, wide)
    symbol, rest = currency_in(unit)
    if symbol:  # "US$", "million US$": the sign before the figure, the scale word after it
        d = to_decimal(x)
        plain = number(d.copy_abs(), decimals, style)
        iso = is_currency_unit(symbol)
        sign_text = str(get_currency_symbol(symbol, _locale_numbers(style.locale).locale)) if iso else symbol
        if rest.lower() in _SCALE_WORDS:  # already in millions: not scaled again
            size = sign_text + plain
        elif iso:
            size = money(d.copy_abs(), symbol, decimals, style, wide)
        else:
            size = sign_text + (scaled(d.copy_abs(), 0, style, wide) if decimals == 0 else plain)
        sign = "-" if d < 0 and size.strip("0.,\u00a0 ") != "" and quantize(d, decimals) != 0 else ""
        return f"{sign}{size} {rest}" if rest else f"{sign}{size}"
    in_scale = bool(unit.split()) and unit.split()[0].lower() in _SCALE_WORDS  # "million": not scaled again
    shown = scaled(x, 0, style, wide) if decimals == 0 and not in_scale else number(x, decimals, style)  # counts
    return f"{shown} {unit}" if unit else shown


_SCALE_WORDS: Final = frozenset({"thousand", "million", "billion", "trillion"})
#: a currency sign written as a unit: "$", "US$", "A$", "£", "€"
_CURRENCY_SIGN: Final = re.compile(r"^[A-Z]{0,3}[$£€¥₹]$")


def currency_in(unit: str) -> tuple[str, str]:
    """A unit's currency (a sign or an ISO 4217 code) and its other words: "million US$" -> ("US$", "million")."""
    words = str(unit).split()
    if not 1 <= len(words) <= 2:
        return "", unit
    signs = [w for w in words if _CURRENCY_SIGN.match(w) or (len(words) == 2 and is_currency_unit(w))]
    if len(signs) != 1:
        return "", unit
    return signs[0], " ".join(w for w in words if w != signs[0])


CHANGE_MODES: Final[tuple[str, ...]] = ("relative", "absolute")


def change_in(unit: str, mode: str = "") -> str:
    """How a topic's changes are measured: "points", "relative" or "unit" (its `change` setting or the default)."""
    if mode not in ("",) + CHANGE_MODES:
        raise ValueError(f"a change is 'relative' or 'absolute', not {mode!r}")
    percent_unit = unit in ("percent", "%")
    if mode == "relative":
        return "relative"
    if mode == "absolute" or percent_unit:
        return "points" if percent_unit else "unit"
    return "relative"


def change_size(
    d: float | Decimal, previous: float | Decimal | None, unit: str, decimals: int,
    mode: str = "", style: HouseStyle = DEFAULT,
) -> str:
    """Write the unsigned size of a change as the topic wants it: "2.1 percentage points", "12%", "0.6 years"."""
    how = change_in(unit, mode)
    if how == "points":
        return points(d, decimals, style)
    if how == "relative" and previous is not None and to_decimal(previous) != 0:
        return relative(CONTEXT.divide(to_decimal(d), to_decimal(previous).copy_abs()), style)
    return value(to_decimal(d).copy_abs(), unit, decimals, style)


def points(d: float | Decimal, decimals: int, style: HouseStyle = DEFAULT) -> str:
    """Write the unsigned size of a change between percentages in percentage points."""
    check_decimals(decimals)
    q = quantize(to_decimal(d), decimals).copy_abs()
    shown = _format_rounded(q, decimals, style.locale)
    unit = "percentage point" if decimals == 0 and q == 1 else "percentage points"
    return f"{shown} {unit}"


def _relative_size(rel: Decimal, style: HouseStyle) -> str:
    size = CONTEXT.multiply(rel.copy_abs(), _HUNDRED)
    decimals = 0 if size >= _WHOLE_PER_CENT_FROM else 1
    return _percent_rounded(quantize(size, decimals), decimals, style)


def relative(rel: float | Decimal, style: HouseStyle = DEFAULT) -> str:
    """Write the unsigned size of a relative change given as a fraction: 0.123 -> "12%"."""
    return _relative_size(to_decimal(rel), style)


def ratio(r: float | Decimal, style: HouseStyle = DEFAULT) -> str:
    """Compare two values by their ratio: "about 4 times", "3% higher" or "27% lower"."""
    d = to_decimal(r)
    if d < 0:
        raise ValueError(f"ratio() needs a ratio of two positive values, got {r!r}")
    if d >= 2:
        if d < _RATIO_WHOLE_FROM:
            one_place = quantize(d, 1)
            if one_place == one_place.to_integral_value():
                shown = _format_rounded(quantize(one_place, 0), 0, style.locale)
            else:
                shown = _format_rounded(one_place, 1, style.locale)
        else:
            shown = _format_rounded(quantize(d, 0), 0, style.locale)
        return f"about {shown} times"
    if d >= 1:
        return f"{_relative_size(d - 1, style)} higher"
    return f"{_relative_size(1 - d, style)} lower"


def values_shown(xs: Sequence[float], unit: str, decimals: int, style: HouseStyle = DEFAULT) -> list[str]:
    """Write a column of one topic's values, each exactly as :func:`value` writes it, at once.

    The topic's pattern (percent sign and its place, the locale's signs) is worked out once and the
    column rounded by :func:`stetline.rounding.round_half_up_array`, which gives round_half_up's
    numbers; values it cannot write so (money, a unit with a currency sign, counts scaled in words, a
    locale that does not group in threes, figures too long for a float to hold every digit) go through :func:`value`.
    """
    check_decimals(decimals)
    nums = _locale_numbers(style.locale)
    percent_unit = unit in ("percent", "%")
    money_unit = not percent_unit and (is_currency_unit(unit) or bool(currency_in(unit)[0]))  # "USD", "million US$"
    if nums.fallback_pattern is not None or money_unit or decimals > 15:
        return [value(x, unit, decimals, style) for x in xs]
    raw = np.asarray(xs, dtype="float64")
    rounded = round_half_up_array(raw, decimals).tolist()
    exact_below = 2.0**50 / 10.0**decimals  # every digit of a rounded figure below this is a float's own
    scale_words = not percent_unit and decimals == 0
    table = nums.table
    if percent_unit and style.percent_word == "%":
        (pos_pre, pos_suf), (neg_pre, neg_suf) = nums.percent_positive, nums.percent_negative
    else:
        after = f" {style.percent_word}" if percent_unit else (f" {unit}" if unit else "")
        pos_pre, pos_suf, neg_pre, neg_suf = "", after, "-", after
    spec = f",.{decimals}f"
    out: list[str] = []
    for x, r in zip(raw.tolist(), rounded):
        size = abs(x)
        if not size < exact_below or (scale_words and size >= 1_000_000):  # NaN, infinities and the rest too
            out.append(value(x, unit, decimals, style))
            continue
        text = format(abs(r), spec)
        if table is not None:
            text = text.translate(table)
        out.append(neg_pre + text + neg_suf if r < 0 else pos_pre + text + pos_suf)
    return out


def amounts_shown(xs: Sequence[float], unit: str, decimals: int, style: HouseStyle = DEFAULT) -> list[str]:
    """Write a column of unsigned sizes of one topic (points for percent, else the unit), as Context.amount does."""
    sizes = [abs(float(x)) for x in xs]
    if unit != "percent":
        return values_shown(sizes, unit, decimals, style)
    nums = _locale_numbers(style.locale)
    if nums.fallback_pattern is not None or decimals > 15:
        return [points(x, decimals, style) for x in sizes]
    rounded = round_half_up_array(sizes, decimals).tolist()
    exact_below = 2.0**50 / 10.0**decimals
    spec = f",.{decimals}f"
    out: list[str] = []
    for x, r in zip(sizes, rounded):
        if not x < exact_below:
            out.append(points(x, decimals, style))
            continue
        text = format(r, spec)
        if nums.table is not None:
            text = text.translate(nums.table)
        out.append(f"{text} percentage point" if decimals == 0 and r == 1 else f"{text} percentage points")
    return out
