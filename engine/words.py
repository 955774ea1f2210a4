"""Words: ordinals, plurals, lists, articles as spoken, capitals and tidy spacing.

What it must not do: no I/O of its own, no database, no pandas, no Flask. Every public function
is pure; the only module state is caches of inflect answers and the lock that guards inflect.
"""

from __future__ import annotations

import re
import threading
from collections.abc import Iterable
from functools import lru_cache
from numbers import Number
from typing import Any, Final, cast

from stetline.figures import DEFAULT, HouseStyle, count
from stetline.rounding import as_whole

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
    return _ordinal(as_whole(n, "ordinal()"))


@lru_cache(maxsize=4096)
def _plural_noun(word: str) -> str:
    with _INFLECT_LOCK:
        return str(_inflect().plural_noun(word))


def noun_plural(word: str, n: int) -> str:
    """Give the noun alone, singular when n is 1 and plural otherwise."""
    if not isinstance(word, str) or not word.strip():
        raise ValueError(f"noun_plural() needs a noun, got {word!r}")
    return word if as_whole(n, "noun_plural()") == 1 else _plural_noun(word)


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
