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


_ORDINAL_WORDS: Final[tuple[str, ...]] = (
    "zeroth", "first", "second", "third", "fourth", "fifth", "sixth", "seventh", "eighth", "ninth",
)


def ordinal_word(n: int, style: HouseStyle = DEFAULT) -> str:
    """Write an ordinal: "second" to "ninth" in words when the style says so, else "12th"."""
    k = as_whole(n, "ordinal_word()")
    if style.small_numbers_in_words and 1 <= k <= 9:
        return _ORDINAL_WORDS[k]
    return ordinal(k)


def possessive(name: str, style: HouseStyle = DEFAULT) -> str:
    """The possessive of a name: "North Quay's"; after a final s as the style says ("Harris's" or "Harris'")."""
    name = str(name)
    if name.endswith(("s", "S")) and style.possessive_after_s == "'":
        return f"{name}'"
    return f"{name}'s"


#: how many names a list shows before it ends "… and N others"
NAMES_SHOWN: Final = 6


def others_count(n: int, limit: int = NAMES_SHOWN) -> int:
    """How many names a capped list of ``n`` folds into "and N others" (0 when it shows them all)."""
    return n - limit + 1 if limit >= 2 and n > limit else 0


def join_names(
    names: Iterable[str], style: HouseStyle = DEFAULT, conj: str = "and", limit: int = NAMES_SHOWN,
) -> str:
    """List names: with semicolons when a name holds a comma, and capped ("A, B and 28 others")."""
    parts = [str(n) for n in names]
    folded = others_count(len(parts), limit)
    if folded:
        parts = parts[: limit - 1] + [plural(folded, "other", style)]  # "and seven others" (ONS: one to nine)
    if any("," in p for p in parts) and len(parts) > 1:
        last_sep = "; " if style.serial_comma or len(parts) > 2 else " "
        return f"{'; '.join(parts[:-1])}{last_sep}{conj} {parts[-1]}"
    return join(parts, style, conj)


# Nouns for places one is "at" rather than "in" (common practice; any other noun takes "in").
_AT_NOUNS: Final = frozenset({
    "school", "academy", "college", "university", "campus", "firm", "company", "business", "employer",
    "hospital", "clinic", "practice", "surgery", "pharmacy", "station", "airport", "port", "site", "plant",
    "factory", "office", "branch", "store", "shop", "library", "prison", "club", "court", "centre", "center",
    "depot", "hotel", "museum", "theatre", "venue", "stadium", "farm", "mine", "trust",
})


def preposition_for(noun: str) -> str:
    """The preposition before an entity of this kind: "in" a town or a district, "at" a school or a firm."""
    words = str(noun).strip().lower().split()
    return "at" if words and words[-1] in _AT_NOUNS else "in"


# Words that plainly open an ordinary label ("Household recycling rate"): their capital is only
# the sentence's, so mid-sentence they are lowered. Any other first word (a name, an abbreviation,
# an acronym, a word with digits) keeps its capitals. Common practice; a topic's `label_in_sentence`
# column overrides the guess.
_ORDINARY_OPENERS: Final = frozenset("""
a an the all any each every no one some total average mean median annual monthly weekly daily yearly
new old net gross adult adults child children people persons person resident residents household households
home homes house housing local public private national regional rural urban young older elderly
share proportion percentage percent rate ratio number count level levels index score time times speed
length distance age life birth births death deaths mortality infant maternal population pupils pupil
student students school schools primary secondary higher further early late long short full part
employment unemployment economic income earnings wages wage pay poverty crime crimes road roads traffic
bus buses rail train trains waste water air energy electricity gas fuel carbon emissions recycling
household library libraries park parks green open planning council social health healthy hospital
emergency waiting wait response median broadband internet digital demand supply access attendance
satisfaction satisfied visits visitors tourism jobs job business businesses firms companies new gdp
affordable overall per gender female male women men girls boys working work workers self smoking obesity
physical mental teenage teen under over domestic foreign exports imports trade tax taxes spending
budget debt cost costs price prices rent rents house average fixed mobile paper demand bathing library
dwelling dwellings vacant vacancy vacancies empty fuel child's people's borrowing loans loan
real nominal consumer producer retail wholesale
recorded reported registered estimated expected planned completed delayed missed cancelled employed
unemployed qualified insured vaccinated immunised immunized enrolled eligible active inactive fly-tipping
fly tipping litter noise anti-social antisocial violent serious minor fatal road-traffic accidents
casualties injuries admissions discharges referrals appointments patients beds staff teachers nurses
doctors police fire ambulance calls complaints claims benefit benefits pension pensions universal free
school-age working-age pupil-teacher teacher-pupil class classes exam exams exclusions absence absences
persistent overall gross median mean modal typical proportion proportions rates shares numbers counts
electric renewable solar wind cycling walking journeys journey trips passengers visits visitor users
customer customers tenants tenancies arrears evictions homeless homelessness temporary rough sleeping
births deaths marriages migration migrants net-migration households' library's council's total
market stock stocks value values capital investment investments sales revenue revenues profit profits
assets output production yield yields growth consumption expenditure inflation interest savings land
area crop crops harvest height weight size volume amount quantity sum capacity usage use deposits
""".split())
_ORDINARY_ENDINGS: Final = ("tion", "sion", "ment", "ness", "ity", "ance", "ence", "ship")


def opens_with_ordinary_word(label: str) -> bool:
    """Tell whether a label's first word is plainly an ordinary word, capitalised only for the sentence."""
    text = str(label).strip()
    first = text.split(None, 1)[0] if text else ""
    core = first.rstrip(",;:")
    letters = core.replace("'", "").replace("-", "")
    if not core or not core[0].isupper() or not core[1:].islower() or not letters.isalpha():
        return False  # "GDP", "No.", "A1", "iPhone", "Redwing's"… are written as they are
    low = core.lower()
    return low in _ORDINARY_OPENERS or (len(low) > 6 and low.endswith(_ORDINARY_ENDINGS))


def in_sentence(label: str) -> str:
    """A label for the middle of a sentence: its first letter lowered only when the word is ordinary."""
    text = str(label).strip()
    return text[0].lower() + text[1:] if opens_with_ordinary_word(text) else text


# Count-noun heads that take "the" before them ("the vacancy rate"); mass nouns such as life
# expectancy or punctuality do not. Common practice.
_COUNT_HEADS: Final = frozenset("""
rate rates share proportion percentage number count speed time times ratio level score index gap
average mean median total length distance age price cost value amount density size volume
period duration wait delay figure income wage budget balance margin frequency
""".split())
_PHRASE_BREAKS: Final = re.compile(
    r"\s(?:of|per|in|for|with|at|by|on|to|from|among|between|across|under|over|who|that|which)\s|\s?\(|,"
)


def head_noun(label: str) -> str:
    """The head noun of a label: the last word before "of", "per", "in" … ("rate" of "Vacancy rate")."""
    first_part = _PHRASE_BREAKS.split(str(label).strip(), maxsplit=1)[0]
    words = first_part.split()
    return words[-1].lower().strip(".,;:") if words else ""


def needs_the(label: str) -> bool:
    """Tell whether a label reads with "the" before it: a count-noun head, unless it opens with a determiner."""
    text = str(label).strip()
    first = text.split(None, 1)[0].lower() if text else ""
    if first in ("the", "a", "an", "its", "their", "each", "every", "all", "no", "any"):
        return False
    return head_noun(text) in _COUNT_HEADS


# Proper names read with "the" mid-sentence: those naming a union of parts or a plural ("the United
# Kingdom", "the Czech Republic", "the Netherlands"). Common practice (as in the style guides of
# the big news agencies), when the word ends the name; an entity's `article` column overrides the guess.
_THE_NAME_WORDS: Final = frozenset({
    "republic", "kingdom", "states", "islands", "union", "federation", "emirates", "territories",
    "isles", "antilles", "netherlands", "philippines", "bahamas", "maldives", "seychelles", "comoros",
    "grenadines",
})


def name_needs_the(name: str) -> bool:
    """Tell whether a proper name reads with "the" mid-sentence: "the Netherlands", "the Czech Republic"."""
    words = [w.strip(".,;:()").lower() for w in str(name).split()]
    if not words or words[0] in ("the", "a", "an") or "," in str(name):  # "Korea, Rep." is a listing form
        return False
    # the word ends the name ("the Soviet Union"), or opens it before "of" ("the Republic of Korea"):
    # a firm such as "Union Oil" takes none
    return words[-1] in _THE_NAME_WORDS or (len(words) > 2 and words[0] in _THE_NAME_WORDS and words[1] == "of")


#: a name in listing order with its article put last ("Gambia, The"): common practice in catalogues
_INVERTED_THE: Final = re.compile(r"^(?P<name>.+?),\s*the$", re.IGNORECASE)


def name_in_sentence(name: str, article: str = "") -> str:
    """A proper name mid-sentence, with "the" where it needs one (``article``: "the", "none" or "" to guess).

    A name listed with its article last ("Gambia, The") is said in running order: "the Gambia".
    """
    text = str(name).strip()
    chosen = str(article or "").strip().lower()
    inverted = _INVERTED_THE.match(text)
    if inverted:
        text = inverted.group("name").strip()
        return text if chosen == "none" else f"the {text}"
    wants = chosen == "the" if chosen else name_needs_the(text)
    return f"the {text}" if wants else text


def with_the(placing: str) -> str:
    """A placing said after "was" or a comma: "the fourth worst of 50 countries", "the joint best"."""
    return placing if placing.startswith("the ") else f"the {placing}"


def without_the(placing: str) -> str:
    """A placing said after "ranks" or in brackets: "ranks best of 11 firms", "(fourth worst)"."""
    return placing[4:] if placing.startswith("the ") else placing
