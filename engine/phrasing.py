"""Phrasing: turn numbers into the words and figures of a plain-language statement.

This module formats numbers, counts, percentages, changes in percentage points, relative
changes and ratios in a house style, picks "a" or "an" as the phrase is spoken, agrees nouns
with counts, joins lists, and tidies rendered text. It also builds the Jinja2 filter table
that statement templates use.

What it must not do: no I/O of its own (no files, no network, no logging), no database, no
pandas, no Flask. Every public function is pure; the only module state is caches of locale
data and of inflect answers, plus the lock that guards inflect. Babel reads its own CLDR
data files when a locale is first used; this module never opens a file.

Rules chosen here:

* Rounding is half-up on the number as written: ``Decimal(str(x))`` is quantized with
  ROUND_HALF_UP, once, at the last step. A value that rounds to zero carries no sign.
* Negative numbers use ASCII "-", as Babel's ``format_decimal`` writes them.
* Number words ("one" to "nine") and unit words are English whatever the locale; the locale
  sets only the decimal sign, the group separator and the percent sign's placement.
* ``relative``: whole per cent when the exact size is 9.95% or more (that is, when its
  one-decimal rounding is 10.0% or more), otherwise one decimal.
* ``ratio``: 2 or more reads "about N times"; below 10 it shows one decimal unless that
  decimal is 0 (2.5 -> "about 2.5 times", 3.02 -> "about 3 times"); 10 or more is whole.
  From 1 up to 2 it reads "N% higher" and below 1 "N% lower", both through ``relative``
  (so exactly 1 reads "0.0% higher": test for equality in the template if that matters).
"""

from __future__ import annotations

import re
import threading
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from decimal import ROUND_HALF_UP, Context, Decimal, InvalidOperation, localcontext
from functools import lru_cache
from numbers import Integral, Number, Real
from typing import Any, Final, cast

from babel import Locale, UnknownLocaleError
from babel.numbers import format_decimal, get_decimal_symbol, get_group_symbol

__all__ = [
    "DEFAULT",
    "PERCENT_WORDS",
    "HouseStyle",
    "article",
    "capitalise",
    "count",
    "join",
    "make_filters",
    "noun_plural",
    "number",
    "ordinal",
    "percent",
    "plural",
    "points",
    "ratio",
    "relative",
    "round_half_up",
    "sentences",
    "starts_with_figure",
    "tidy",
    "value",
]

PERCENT_WORDS: Final[tuple[str, ...]] = ("%", "per cent", "percent")


# --------------------------------------------------------------------------- numbers

# Enough digits for any float written out in full (about 310) plus the decimals asked for.
_CONTEXT: Final = Context(prec=1000, rounding=ROUND_HALF_UP, traps=[InvalidOperation])
_QUANTA: Final[tuple[Decimal, ...]] = tuple(Decimal(1).scaleb(-i) for i in range(16))
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
    return _LocaleNumbers(
        locale=loc,
        table=table,
        fallback_pattern=fallback,
        percent_positive=(pct.prefix[0], pct.suffix[0]),
        percent_negative=(pct.prefix[1], pct.suffix[1]),
    )


@dataclass(frozen=True)
class HouseStyle:
    """How figures are written: locale, serial comma, percent word, small numbers in words."""

    locale: str = "en_GB"
    serial_comma: bool = False
    percent_word: str = "%"
    small_numbers_in_words: bool = True

    def __post_init__(self) -> None:
        if self.percent_word not in PERCENT_WORDS:
            raise ValueError(
                f"percent_word must be one of {', '.join(repr(w) for w in PERCENT_WORDS)}; "
                f"got {self.percent_word!r}"
            )
        _locale_numbers(self.locale)  # raises ValueError for a locale Babel does not know


DEFAULT: Final = HouseStyle()


def _to_decimal(x: float | Decimal) -> Decimal:
    kind = type(x)
    if kind is float:
        d = Decimal(repr(x))
    elif kind is Decimal:
        d = x  # type: ignore[assignment]
    elif kind is int:
        d = Decimal(x)
    elif isinstance(x, bool) or isinstance(x, (str, bytes)):
        raise TypeError(f"expected a number, got {type(x).__name__} {x!r}")
    elif isinstance(x, Decimal):
        d = x
    elif isinstance(x, Integral):
        d = Decimal(int(x))
    elif isinstance(x, Real):
        d = Decimal(float.__repr__(float(x)))
    else:
        raise TypeError(f"expected a number, got {type(x).__name__} {x!r}")
    if not d.is_finite():
        raise ValueError(f"cannot phrase a number that is not finite: {x!r}")
    return d


def _check_decimals(decimals: int) -> None:
    if isinstance(decimals, bool) or not isinstance(decimals, int) or decimals < 0:
        raise ValueError(f"decimals must be a whole number 0 or more, got {decimals!r}")


def _quantize(d: Decimal, decimals: int) -> Decimal:
    quantum = _QUANTA[decimals] if decimals < len(_QUANTA) else Decimal(1).scaleb(-decimals)
    try:
        q = d.quantize(quantum, context=_CONTEXT)
    except InvalidOperation as exc:
        raise ValueError(f"{d} is too large to show with {decimals} decimals") from exc
    return q if q else q.copy_abs()


def round_half_up(x: float | Decimal, decimals: int) -> Decimal:
    """Round x as written (Decimal(str(x))) half-up to `decimals` places; zero has no sign."""
    _check_decimals(decimals)
    return _quantize(_to_decimal(x), decimals)


def _format_rounded(q: Decimal, decimals: int, locale: str) -> str:
    nums = _locale_numbers(locale)
    if nums.fallback_pattern is None:
        text = f"{q:,f}"
        return text if nums.table is None else text.translate(nums.table)
    pattern = nums.fallback_pattern
    if decimals:
        pattern += "." + "0" * decimals
    with localcontext(_CONTEXT):
        return str(format_decimal(q, format=pattern, locale=nums.locale))


def number(x: float | Decimal, decimals: int, style: HouseStyle = DEFAULT) -> str:
    """Write x rounded half-up to `decimals` places with the locale's grouping and decimal sign."""
    _check_decimals(decimals)
    locale = style.locale
    return _format_rounded(_quantize(_to_decimal(x), decimals), decimals, locale)


def _as_int(n: int, what: str) -> int:
    if type(n) is int:
        return n
    if isinstance(n, bool):
        raise TypeError(f"{what} needs a whole number, got {n!r}")
    if isinstance(n, Integral):
        return int(n)
    d = _to_decimal(n)
    if d != d.to_integral_value():
        raise ValueError(f"{what} needs a whole number, got {n!r}")
    return int(d)


def count(n: int, style: HouseStyle = DEFAULT) -> str:
    """Write a count: one to nine in words when the style says so, otherwise grouped figures."""
    k = _as_int(n, "count()")
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
    _check_decimals(decimals)
    return _percent_rounded(_quantize(_to_decimal(x), decimals), decimals, style)


def value(
    x: float | Decimal, unit: str, decimals: int, style: HouseStyle = DEFAULT
) -> str:
    """Write x with its unit: "percent" (or "%") as a percentage, "" bare, else "12.5 tonnes"."""
    if unit in ("percent", "%"):
        return percent(x, decimals, style)
    shown = number(x, decimals, style)
    return f"{shown} {unit}" if unit else shown


def points(d: float | Decimal, decimals: int, style: HouseStyle = DEFAULT) -> str:
    """Write the unsigned size of a change between percentages in percentage points."""
    _check_decimals(decimals)
    q = _quantize(_to_decimal(d), decimals).copy_abs()
    shown = _format_rounded(q, decimals, style.locale)
    unit = "percentage point" if decimals == 0 and q == 1 else "percentage points"
    return f"{shown} {unit}"


def _relative_size(rel: Decimal, style: HouseStyle) -> str:
    size = _CONTEXT.multiply(rel.copy_abs(), _HUNDRED)
    decimals = 0 if size >= _WHOLE_PER_CENT_FROM else 1
    return _percent_rounded(_quantize(size, decimals), decimals, style)


def relative(rel: float | Decimal, style: HouseStyle = DEFAULT) -> str:
    """Write the unsigned size of a relative change given as a fraction: 0.123 -> "12%"."""
    return _relative_size(_to_decimal(rel), style)


def ratio(r: float | Decimal, style: HouseStyle = DEFAULT) -> str:
    """Compare two values by their ratio: "about 4 times", "3% higher" or "27% lower"."""
    d = _to_decimal(r)
    if d < 0:
        raise ValueError(f"ratio() needs a ratio of two positive values, got {r!r}")
    if d >= 2:
        if d < _RATIO_WHOLE_FROM:
            one_place = _quantize(d, 1)
            if one_place == one_place.to_integral_value():
                shown = _format_rounded(_quantize(one_place, 0), 0, style.locale)
            else:
                shown = _format_rounded(one_place, 1, style.locale)
        else:
            shown = _format_rounded(_quantize(d, 0), 0, style.locale)
        return f"about {shown} times"
    if d >= 1:
        return f"{_relative_size(d - 1, style)} higher"
    return f"{_relative_size(1 - d, style)} lower"


# --------------------------------------------------------------------------- words

_INFLECT_LOCK: Final = threading.Lock()  # inflect keeps per-call state on its engine


@lru_cache(maxsize=1)
def _inflect() -> Any:
    """The inflect engine, made on first use.

    inflect wraps its methods in typeguard's run-time type checks, which rewrite and recompile
    each method as the module is imported: about two seconds of every command's start. Our
    wrappers check their arguments themselves, so inflect is imported with those checks off
    (the decorator is swapped for the identity while it imports, then put back). The words it
    gives are the same; tests/test_phrasing.py checks them.
    """
    import sys

    if "inflect" in sys.modules:
        return sys.modules["inflect"].engine()
    import typeguard

    checked = typeguard.typechecked
    typeguard.typechecked = _unchecked  # type: ignore[assignment]
    try:
        import inflect
    finally:
        typeguard.typechecked = checked
    return inflect.engine()


def _unchecked(target: Any = None, **_options: Any) -> Any:
    """typeguard.typechecked without the checks: @_unchecked and @_unchecked(...) give the target."""
    return target if target is not None else (lambda fn: fn)


@lru_cache(maxsize=16384)  # ranks run to the number of entities: keep them all
def _ordinal(k: int) -> str:
    with _INFLECT_LOCK:
        return str(_inflect().ordinal(cast(Number, k)))  # inflect types it as numbers.Number


def ordinal(n: int) -> str:
    """Write n as an ordinal in figures: 1st, 2nd, 3rd, 11th, 112th."""
    return _ordinal(_as_int(n, "ordinal()"))


@lru_cache(maxsize=4096)
def _plural_noun(word: str) -> str:
    with _INFLECT_LOCK:
        return str(_inflect().plural_noun(word))


def noun_plural(word: str, n: int) -> str:
    """Give the noun alone, singular when n is 1 and plural otherwise."""
    if not isinstance(word, str) or not word.strip():
        raise ValueError(f"noun_plural() needs a noun, got {word!r}")
    return word if _as_int(n, "noun_plural()") == 1 else _plural_noun(word)


def plural(n: int, word: str, style: HouseStyle = DEFAULT) -> str:
    """Write a count with its noun agreeing: "one town", "3 towns", "1,200 households"."""
    if not isinstance(word, str) or not word.strip():
        raise ValueError(f"plural() needs a noun to go with the count {n!r}, got {word!r}")
    return f"{count(n, style)} {noun_plural(word, n)}"


def join(
    items: Iterable[str], style: HouseStyle = DEFAULT, conj: str = "and"
) -> str:
    """Join items as a list: "A", "A and B", "A, B and C" (or "A, B, and C" with serial comma)."""
    if isinstance(items, str):
        raise TypeError(f"join() needs a list of phrases, not the single string {items!r}")
    parts = [str(item) for item in items]
    if len(parts) < 2:
        return parts[0] if parts else ""
    if len(parts) == 2:
        return f"{parts[0]} {conj} {parts[1]}"
    last_sep = ", " if style.serial_comma else " "
    return f"{', '.join(parts[:-1])}{last_sep}{conj} {parts[-1]}"


# A figure at the start of a phrase, perhaps after a currency sign: its leading digits.
_LEADING_FIGURE: Final = re.compile(r"(?:[£$€¥]\s?)?([0-9]+)")
_SIGN_OR_POINT: Final = frozenset("+-\u2212.")
_DIGITS: Final = frozenset("0123456789")


def _figure_takes_an(digits: str) -> bool:
    # The spoken number starts with its leading group of three: "eleven thousand",
    # "eight hundred", "eighteen", "eighty". Only eight..., eleven and eighteen open
    # with a vowel sound; every other leading word ("one", "hundred", "zero"...) does not.
    digits = digits.lstrip("0")
    if not digits:
        return False  # "zero"
    lead = digits[: len(digits) % 3 or 3]
    if len(lead) == 3:
        return lead[0] == "8"
    if len(lead) == 2:
        return lead[0] == "8" or lead in ("11", "18")
    return lead == "8"


@lru_cache(maxsize=4096)
def _article_for_word(word: str) -> str:
    with _INFLECT_LOCK:
        spoken = str(_inflect().a(word))
    return spoken.split(" ", 1)[0]


def article(phrase: str) -> str:
    """Put "a" or "an" before the phrase, chosen by how it is spoken: "an 8% rise", "a rise"."""
    text = str(phrase).lstrip()
    if not text.strip():
        raise ValueError("article() needs a phrase to go after 'a' or 'an', got an empty one")
    figure = _LEADING_FIGURE.match(text)
    if figure:
        word = "an" if _figure_takes_an(figure.group(1)) else "a"
    elif text[0] in _SIGN_OR_POINT and text[1:2] in _DIGITS:
        word = "a"  # "plus ...", "minus ...", "point ..."
    else:
        word = _article_for_word(text.split(None, 1)[0])
    return f"{word} {text}"


def capitalise(text: str) -> str:
    """Upper-case the first letter and leave the rest alone; a leading figure stays as it is."""
    text = str(text)
    for i, ch in enumerate(text):
        if ch.isalpha():
            return text[:i] + ch.upper() + text[i + 1 :]
        if ch.isdigit():
            return text
    return text


def starts_with_figure(sentence: str) -> bool:
    """Tell whether the first non-space character is a digit, or a sign followed by a digit."""
    text = sentence.lstrip()
    if not text:
        return False
    if text[0] in _DIGITS:
        return True
    return text[0] in "+-\u2212" and text[1:2] in _DIGITS


_ASCII_SPACE_RUN: Final = re.compile(r"[ \t\r\n\f\v]+")
_SPLIT_ALSO_AT: Final = re.compile("[\x1c-\x1f]")  # str.split() takes these for whitespace too
_SPACE_BEFORE_PUNCT: Final = re.compile(r" (?=[,.;:!?)])")
_SPACE_AFTER_OPEN: Final = re.compile(r"(?<=\() ")
_SENTENCE_BREAK: Final = re.compile(r"(?<=[.?!])[ \t\r\n\f\v]+")


def sentences(text: str) -> list[str]:
    """Split text into sentences at ". ", "? " and "! " (naive; for checking, not for parsing)."""
    return [s.strip() for s in _SENTENCE_BREAK.split(str(text)) if s.strip()]


def tidy(text: str) -> str:
    """Collapse whitespace runs to one space and drop spaces before , . ; : ! ? ) and after (."""
    # Only ASCII whitespace: the no-break spaces inside "12 345,7" or "45,2 %" must stay.
    text = str(text)
    if text.isascii() and _SPLIT_ALSO_AT.search(text) is None:
        # str.split() splits at exactly the ASCII whitespace here (and \x1c-\x1f, ruled out):
        # several times faster than the regex, on every drafted statement
        out = " ".join(text.split())
    else:
        out = _ASCII_SPACE_RUN.sub(" ", text)
    out = _SPACE_BEFORE_PUNCT.sub("", out)
    out = _SPACE_AFTER_OPEN.sub("", out)
    return out.strip(" ")


# --------------------------------------------------------------------------- filters


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
    }
