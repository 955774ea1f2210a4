"""What an editor corrected on reading 30 drafts of each open dataset of the sweeps, checked on tiny panels.

Each test names the slip it guards against as the editor found it (tests/test_drafts_sweep.py names the
datasets). References: the ONS style guide (one to nine in words; articles), common practice for the rest.
"""

from __future__ import annotations

import pandas as pd
import pytest
from test_kinds import ENTITIES, draft_texts, topic
from test_periods_compare import RATE, draft

from stetline.words import join_names, name_in_sentence, with_the, without_the


def _ranked(n: int) -> tuple[list[tuple], pd.DataFrame]:
    """n towns on one topic, town k the k-th best in 2025 (values 100 - k), each a point up on 2024."""
    ents = pd.DataFrame({"entity": [f"t{k}" for k in range(1, n + 1)], "name": [f"Town {k}" for k in range(1, n + 1)],
                         "group": "", "position": range(n)})
    rows = [(f"t{k}", "recycling", y, 100.0 - k - (2025 - y)) for k in range(1, n + 1) for y in (2024, 2025)]
    return rows, ents


# --- placings ---------------------------------------------------------------------------------------

def test_a_placing_after_was_takes_the_and_after_ranks_does_not() -> None:
    # "It was second highest of five companies" beside "the highest of five": one form, with the article
    assert with_the("fourth worst of 50 countries") == "the fourth worst of 50 countries"
    assert with_the("the best of 11 firms") == "the best of 11 firms"
    assert without_the("the best of 11 firms") == "best of 11 firms"  # "ranks best of 11 firms"
    texts = draft_texts(*_ranked(6)[:1], [topic("recycling")], _ranked(6)[1])
    assert "the second best of six towns" in texts["standing/t2/recycling"][0]
    assert "the fifth worst" not in texts["standing/t2/recycling"][0]
    blurb = texts["blurb/t3/recycling"][0]
    assert "the third best of six towns" in blurb or "the fourth worst of six towns" in blurb


def test_a_profile_says_ranks_best_and_is_the_second_lowest() -> None:
    # "ranks the best of 11 firms" and "is 0 out of 100, second lowest of 11 firms" were both corrected
    topics = [topic("p"), topic("q")]
    rows = [(e, k, y, base + (y - 2024)) for k in ("p", "q") for e, base in
            {"a": 40.0, "b": 30.0, "c": 20.0, "d": 10.0}.items() for y in (2024, 2025)]
    texts = {slot: t for slot, (t, _e, _c) in draft_texts(rows, topics).items() if slot.startswith("profile/")}
    assert texts
    for text in texts.values():
        assert "ranks the " not in text, text
        assert "out of 100, second" not in text and "out of 100, third" not in text, text
    said = " ".join(texts.values())
    assert any(w in said for w in ("ranks best of four towns", "ranks highest of four towns",
                                   "out of 100, the highest of four towns", "the best of four towns"))


@pytest.mark.parametrize(("rank", "band"), [(5, False), (6, True), (12, True)])
def test_no_quarter_band_beside_a_placing_in_the_first_tenth(rank: int, band: bool) -> None:
    # "sixth worst of 142 countries (in the bottom quarter)": the placing says it already
    rows, ents = _ranked(50)
    text = draft_texts(rows, [topic("recycling")], ents)[f"standing/t{rank}/recycling"][0]
    assert ("(in the top quarter)" in text) is band, text


# --- records of a season -------------------------------------------------------------------------

def _quarters(third: dict[int, float], last: dict[str, float]) -> list[tuple]:
    """A quarterly rate: third quarters by year, every other quarter at 60.0, then the quarters in ``last``."""
    rows = [("a", "rate", f"{y}-Q{q}", third[y] if q == 3 else 60.0) for y in sorted(third) for q in range(1, 5)]
    return [r for r in rows if r[2] not in last] + [("a", "rate", p, v) for p, v in last.items()]


def test_a_seasons_record_is_a_figure_not_a_quarter() -> None:
    # "the highest March on record", "the lowest third quarter since 2007": the quarter itself was not lowest
    out = draft(_quarters({2019: 70.0, 2020: 60.0, 2021: 61.0, 2022: 62.0, 2023: 63.0},
                          {"2023-Q4": 60.0, "2024-Q1": 60.0, "2024-Q2": 60.0, "2024-Q3": 66.0}), RATE, "quarter")
    for slot in ("trend/a/rate", "blurb/a/rate"):
        assert "the highest third-quarter figure since 2019" in out[slot].text or (
            "its highest third-quarter figure since 2019" in out[slot].text), out[slot].text


def test_a_run_one_way_that_ends_on_a_seasons_low_says_though() -> None:
    # "has risen for three quarters in a row, to 216.39 points …, the lowest third quarter since 2007"
    third = {2019: 40.0, 2020: 60.0, 2021: 60.0, 2022: 60.0, 2023: 60.0, 2024: 60.0}
    # counted quarter on quarter (compare_with=previous): against a year earlier the run would be a fall
    out = draft(_quarters(third, {"2024-Q4": 42.0, "2025-Q1": 44.0, "2025-Q2": 47.0, "2025-Q3": 50.0}),
                RATE, "quarter", compare_with="previous")
    trend = out["trend/a/rate"]
    assert trend.claims["streak"] == "improved:3" and trend.claims["record"] == "lowest-since:2019-Q3"
    assert ", though that was the lowest third-quarter figure since 2019" in trend.text
    blurb = out["blurb/a/rate"].text
    assert "though that was the lowest third-quarter figure since 2019" in blurb or (
        "though it was the lowest third-quarter figure since 2019" in blurb), blurb
    assert ", the lowest third" not in blurb and "to its lowest" not in blurb


def test_a_run_of_readings_says_since_once_without_last() -> None:
    # "has improved at each of the last 11 readings, since 1952, to 79.44 years": "last" and "since" said it twice
    rows = [(f"e{i}", "recycling", y, 50.0 + i + k) for i in range(3) for k, y in enumerate(range(1990, 2011, 5))]
    ents = ENTITIES.iloc[:3].assign(entity=["e0", "e1", "e2"])
    out = draft_texts(rows, [topic("recycling")], ents)
    for slot in ("trend/e0/recycling", "blurb/e0/recycling"):
        text = out[slot][0]
        assert "at each of the four readings since 1990" in text and "last" not in text, text


# --- names ------------------------------------------------------------------------------------------

@pytest.mark.parametrize(("name", "article", "said"), [
    ("Gambia, The", "", "the Gambia"), ("Bahamas, The", "", "the Bahamas"), ("Gambia, the", "", "the Gambia"),
    ("Gambia, The", "none", "Gambia"), ("Korea, Rep.", "", "Korea, Rep."), ("Theale", "", "Theale"),
])
def test_a_name_listed_with_its_article_last_is_said_in_running_order(name: str, article: str, said: str) -> None:
    assert name_in_sentence(name, article) == said


def test_a_listed_name_reads_in_running_order_in_every_kind() -> None:
    ents = ENTITIES.assign(name=["Gambia, The", "Brill", "Colne", "Dunmere"])
    rows = [(e, "recycling", y, v + (y - 2023)) for e, v in zip("abcd", (40.0, 30.0, 20.0, 10.0))
            for y in (2023, 2024, 2025)]
    texts = [t for t, _e, _c in draft_texts(rows, [topic("recycling")], ents).values()]
    assert not any("Gambia, The" in t for t in texts)
    assert any("in the Gambia" in t for t in texts) and any(t.startswith("The Gambia") for t in texts)


def test_a_trend_puts_no_possessive_after_a_name_holding_a_comma() -> None:
    # "Korea, Rep.'s fertility rate fell in each of the last 12 years"
    ents = ENTITIES.assign(name=["Korea, Rep.", "Congo, Dem. Rep.", "Micronesia, Fed. Sts.", "Venezuela, RB"])
    rows = [(e, "recycling", y, 50.0 - (y - 2020) * (k + 1)) for k, e in enumerate("abcd") for y in range(2020, 2026)]
    trends = [t for slot, (t, _e, _c) in draft_texts(rows, [topic("recycling")], ents).items()
              if slot.startswith(("trend/", "blurb/", "standing/", "profile/"))]
    assert trends and not any(".'s" in t or "RB's" in t for t in trends)


# --- roundups ---------------------------------------------------------------------------------------

def test_a_capped_list_says_a_small_count_of_others_in_words() -> None:
    # "… Eritrea and 7 others" (ONS style guide: one to nine in words)
    assert join_names([f"Town {i}" for i in range(12)]).endswith("Town 4 and seven others")
    assert join_names([f"Town {i}" for i in range(30)]).endswith("and 25 others")


def test_a_roundup_names_its_exceptions_in_a_sentence_of_their_own_in_name_order() -> None:
    # "improved in 130 and worsened in 12 of 142 countries, Burundi, the Central African Republic, … being the
    # exceptions" read as if it listed the countries; and the names came in the order of their keys
    n = 16
    ents = pd.DataFrame({"entity": [f"k{i:02d}" for i in range(n)], "name": [f"Town {chr(90 - i)}" for i in range(n)],
                         "group": "", "position": range(n)})
    rows = [(f"k{i:02d}", "recycling", y, 50.0 + i + (y - 2024) * (-1 if i < 3 else 1)) for i in range(n)
            for y in (2024, 2025)]
    text = draft_texts(rows, [topic("recycling")], ents, noun="town")["roundup/recycling"][0]
    assert "being the exception" not in text
    assert "The three that worsened were Town X, Town Y and Town Z." in text
    assert "the biggest deterioration" in text


def test_a_lone_mover_is_the_only_one_not_the_biggest() -> None:
    # "the biggest deterioration in Brill (1.0 percentage points)" when Brill alone worsened
    rows = [(e, "recycling", y, v + (y - 2024) * (-1 if e == "b" else 2)) for e, v in
            zip("abcd", (40.0, 30.0, 20.0, 10.0)) for y in (2024, 2025)]
    text = draft_texts(rows, [topic("recycling")])["roundup/recycling"][0]
    assert "the only deterioration in Brill" in text or "the only deterioration was in Brill" in text
    assert "Only Brill" not in text and "biggest deterioration" not in text


def test_a_leader_whose_name_holds_a_comma_comes_last_in_its_clause() -> None:
    # "Niger had the highest figure (7.58) and Macao SAR, China the lowest (1.03)"
    ents = ENTITIES.assign(name=["Ashby", "Brill", "Colne", "Macao SAR, China"])
    rows = [(e, "recycling", y, v + (y - 2024)) for e, v in zip("abcd", (40.0, 30.0, 20.0, 10.0))
            for y in (2024, 2025)]
    text = draft_texts(rows, [topic("recycling")], ents)["roundup/recycling"][0]
    assert "Macao SAR, China the" not in text and "Macao SAR, China, the" not in text
    assert "in Macao SAR, China (10.0%)" in text or "in Macao SAR, China (11.0%)" in text


def test_the_average_of_all_is_said_in_more_than_one_wording() -> None:
    # "below the average of all 202 countries, 2.85 births per woman" closed every one of 210 blurbs
    rows, ents = _ranked(30)
    texts = [t for slot, (t, _e, _c) in draft_texts(rows, [topic("recycling")], ents).items()
             if slot.startswith("standing/")]
    forms = {"comma": ", 84.5%", "brackets": "(84.5%)", "gap": "percentage points above the average of all 30"}
    found = {name for name, said in forms.items() for t in texts if said in t}
    assert found == set(forms), found
    assert all("the average of all 30 towns" in t for t in texts)
