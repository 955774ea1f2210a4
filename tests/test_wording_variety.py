"""Wording a page of statements can carry: varied rise and fall clauses with the same facts, a headline
that speaks of majorities only where there is one and of its biggest shift in the topic's change unit,
and the pattern of an entity that goes against the others said in plain prose.

References: a change between percentages is in percentage points (ONS Service Manual, "Percentages");
other units change in per cent unless the topic's ``change`` column says absolute (DESIGN, the project's
own rule); the average of the relative changes is recomputed here with Python's ``statistics.mean``
(common practice). A majority of one or two entities is no majority (common practice).
"""

from __future__ import annotations

import random
import re
import statistics

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_claims_properties import ZERO_COUNT, ZERO_MOVE, expected_change
from test_kinds import ENTITIES, draft_texts, topic
from test_kinds_patterns import PLACES, TOPICS
from test_kinds_patterns import rows as against_rows

#: the wordings of a change statement's rise or fall clause, told apart by their shape
CHANGE_SHAPES = {
    "judged from…to": re.compile(r" (improved|worsened|rose|fell) from .+ to .+, a (rise|fall) of "),
    "possessive by": re.compile(r"'s? .+ (rose|fell) by .+ to .+, from "),
    "in period, was": re.compile(r"^(In|Fortunately, in|Unfortunately, in) .+, .+ was .+, (up|down) "),
    "went between": re.compile(r" went (up|down) by .+ between "),
}
#: the wordings of a blurb's change clause, as the lead or as a later part
BLURB_SHAPES = {
    "rose by…to": re.compile(r" (rose|fell) by [^,]+ to "),
    "in period, was": re.compile(r"^In .+, .+ was .+, (up|down) "),
    "went between": re.compile(r" went (up|down) by .+ between "),
    "judged from…to": re.compile(r" (improved|worsened|rose|fell) from .+ to .+, a (rise|fall) of "),
    "it rose by…from": re.compile(r"\b[Ii]t (rose|fell) by [^,]+ from "),
    "it was up": re.compile(r"\b[Ii]t was (up|down) [^,]+ from "),
    "on the figure": re.compile(r"\b[Ii]t (rose|fell) by .+ on the \S+ figure of "),
    "against, it was": re.compile(r"\b[Aa]gainst .+, it was (up|down) "),
}
SETTINGS = settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
#: a majority spoken of: "most towns", "most other towns", "where most improved"
MOST = re.compile(r"\bmost (other )?towns\b|\bwhere most\b")
UP_WORDS = re.compile(r"\b(rise|rose|up)\b")
DOWN_WORDS = re.compile(r"\b(fall|fell|down)\b")


def panel(seed: int, n: int) -> tuple[list[tuple], list[dict]]:
    """n towns, two topics (a percent one, higher is better; tonnes, lower is better), two years."""
    rnd = random.Random(seed)
    topics = [topic("recycling"), topic("waste", unit="tonnes", better="lower")]
    out = []
    for i in range(n):
        for t in ("recycling", "waste"):
            before = round(rnd.uniform(20, 80), 1)
            step = rnd.choice([0.0, 0.04, 0.1, rnd.uniform(-6, 6), -rnd.uniform(0.1, 6), rnd.uniform(0.1, 6)])
            out += [(f"e{i}", t, 2024, before), (f"e{i}", t, 2025, round(before + step, 2))]
    return out, topics


def places(n: int) -> pd.DataFrame:
    return pd.DataFrame({"entity": [f"e{i}" for i in range(n)], "name": [f"Town {i}" for i in range(n)],
                         "group": ["North" if i % 2 else "South" for i in range(n)], "position": range(n)})


def first_sentence(text: str) -> str:
    return re.split(r"\.\s", text, maxsplit=1)[0]


def test_a_page_of_change_statements_uses_every_wording_of_the_rise_and_fall_clause() -> None:
    rows, topics = panel(7, 40)
    drafts = draft_texts(rows, topics, places(40))
    shapes = set()
    for slot, (text, evidence, claims) in drafts.items():
        if not slot.startswith("change/") or claims["direction"] not in ("up", "down"):
            continue
        lead = first_sentence(text)
        found = [name for name, shape in CHANGE_SHAPES.items() if shape.search(lead)]
        assert len(found) == 1, lead  # each statement takes exactly one wording
        shapes.update(found)
        # every wording states the same figures: the value, the previous value and the change
        for key in ("value", "previous", "change"):
            assert evidence[key]["shown"] in lead, (key, lead)
        words = UP_WORDS if claims["direction"] == "up" else DOWN_WORDS
        wrong = DOWN_WORDS if claims["direction"] == "up" else UP_WORDS
        assert words.search(lead) and not wrong.search(lead), lead
        judged = {"improved": "improve", "worsened": "worse|deterioration"}.get(claims["better"])
        assert judged is None or re.search(judged, lead), lead
    assert shapes == set(CHANGE_SHAPES)


def test_the_wording_of_a_slot_keeps_from_one_drafting_to_the_next() -> None:
    rows, topics = panel(11, 12)
    first = draft_texts(rows, topics, places(12))
    again = draft_texts(rows, topics, places(12))
    assert {s: t for s, (t, _e, _c) in first.items()} == {s: t for s, (t, _e, _c) in again.items()}


def test_a_page_of_blurbs_varies_the_change_clause_and_keeps_its_figures() -> None:
    rows, topics = panel(3, 40)
    drafts = draft_texts(rows, topics, places(40))
    shapes = set()
    for slot, (text, evidence, claims) in drafts.items():
        if not slot.startswith("blurb/") or claims.get("change.direction") not in ("up", "down"):
            continue
        found = {name for name, shape in BLURB_SHAPES.items() if shape.search(text)}
        assert found, text
        shapes |= found
        for key in ("change", "previous"):
            assert evidence[key]["shown"] in text, (key, text)
    assert len(shapes) >= 6, shapes  # four for the lead, four for a later part


@SETTINGS
@given(st.integers(0, 2**32 - 1), st.integers(1, 12))
def test_no_wording_says_a_zero_change_as_a_rise_or_a_fall(seed: int, n: int) -> None:
    rows, topics = panel(seed, n)
    drafts = draft_texts(rows, topics, places(n))
    metas = {t["topic"]: t for t in topics}
    for slot, (text, _e, claims) in drafts.items():
        assert not ZERO_MOVE.search(text) and not ZERO_COUNT.search(text), text
        if slot.startswith("change/"):
            _kind, entity, t = slot.split("/")
            series = [(str(y), float(y), v, float("nan"), "") for e, k, y, v in rows if (e, k) == (entity, t)]
            expected = expected_change(series, 2025.0, metas[t])
            assert expected is not None and claims["direction"] == expected[0], text


@SETTINGS
@given(st.integers(0, 2**32 - 1), st.integers(1, 4))
def test_a_headline_speaks_of_most_only_where_there_is_a_majority(seed: int, n: int) -> None:
    rows, topics = panel(seed, n)
    entities = places(n)
    text, _e, claims = draft_texts(rows, topics, entities)["headline"]
    metas = {t["topic"]: t for t in topics}
    assert not ZERO_COUNT.search(text) and "They include" not in text and " 0 of " not in text, text
    assert bool(MOST.search(text)) <= (n >= 3), text
    if n == 1:  # the one town by name, what it did recomputed here, and no "highest" of one
        assert text.startswith("In 2025, Town 0 "), text
        assert "composite" not in text and claims["composite_leader"] is None
        better = {t: expected_change([(str(y), float(y), v, float("nan"), "") for e, k, y, v in rows if k == t],
                                     2025.0, metas[t])[1] for t in metas}
        assert claims["improving"] == sorted(t for t, b in better.items() if b == "improved")
        assert claims["worsening"] == sorted(t for t, b in better.items() if b == "worsened")
        if claims["improving"] and len(claims["improving"]) < len(metas):
            assert "improved on one of two indicators" in text


def shift_rows(unit_topic: dict) -> list[tuple]:
    """Four towns; the topic moves a lot against its spread, a second topic barely moves."""
    rows = []
    for i, (before, after) in enumerate([(40.0, 44.0), (42.0, 45.0), (44.0, 49.0), (46.0, 48.0)]):
        rows += [(ENTITIES.entity[i], unit_topic["topic"], 2024, before),
                 (ENTITIES.entity[i], unit_topic["topic"], 2025, after),
                 (ENTITIES.entity[i], "other", 2024, 10.0 + 10 * i), (ENTITIES.entity[i], "other", 2025, 10.1 + 10 * i)]
    return rows


@pytest.mark.parametrize("unit, change, expected", [
    # percent: the mean of the changes, in percentage points (ONS Service Manual, "Percentages")
    ("percent", "", "rose by 3.5 percentage points on average"),
    # another unit, relative by default: the mean of the relative changes, recomputed here
    ("tonnes", "", f"rose by {statistics.mean([4 / 40, 3 / 42, 5 / 44, 2 / 46]) * 100:.1f}% on average"),
    # the topic's change column says absolute: the mean change in its own unit
    ("tonnes", "absolute", "rose by 3.5 tonnes on average"),
])
def test_the_biggest_shift_is_said_in_the_topics_change_unit(unit: str, change: str, expected: str) -> None:
    moving = {**topic("moving", unit=unit), "label": "Moving share", "change": change}
    other = {**topic("other", unit="tonnes"), "change": ""}
    text, evidence, claims = draft_texts(shift_rows(moving), [moving, other])["headline"]
    assert claims["biggest_shift"] == "moving"
    assert "the gap between its best and worst towns, the moving share moved most" in text.lower()
    assert expected in text and evidence["biggest_shift"]["shown"] in expected


def test_one_or_two_entities_are_not_spoken_of_as_most() -> None:
    rows = [(e, t, y, 40.0 + (y - 2024) * (2 if t == "alpha" else 0)) for e in "ab" for t in ("alpha", "beta")
            for y in (2024, 2025)]
    topics = [topic("alpha"), topic("beta")]
    one = draft_texts([r for r in rows if r[0] == "a"], topics, ENTITIES.iloc[:1])["headline"][0]
    assert one.startswith("In 2025, Ashby improved on one of two indicators and worsened on none.")
    assert "The indicator where it improved is the Alpha rate." in one and not MOST.search(one)
    two = draft_texts(rows, topics, ENTITIES.iloc[:2])["headline"][0]
    assert two.startswith("In 2025, one or both of the two towns improved, and neither worsened, on one of two "
                          "indicators; the reverse held on none.")
    assert not MOST.search(two)


def test_the_pattern_of_going_against_the_others_is_said_in_plain_prose() -> None:
    # two towns, each against the others on two of three indicators
    out = draft_texts(against_rows({"alpha": {"e5", "e6"}, "beta": {"e5"}, "gamma": {"e6"}}), TOPICS, PLACES)
    headline = out["headline"][0]
    assert ("Colne and Dunmere each moved the opposite way to most other towns on two of the three indicators "
            "compared.") in headline
    assert "On two of the three indicators compared, it moved the opposite way to most other towns." in (
        out["profile/e5"][0])
    # one on all three, one on two: "at least" the fewer
    out = draft_texts(against_rows({"alpha": {"e5", "e6"}, "beta": {"e5", "e6"}, "gamma": {"e6"}}), TOPICS, PLACES)
    assert ("Colne and Dunmere each moved the opposite way to most other towns on at least two of the three "
            "indicators compared.") in out["headline"][0]
    for text, _e, _c in out.values():
        assert "went against most" not in text and "on most of the" not in text, text
