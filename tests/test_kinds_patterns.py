"""Context said once, patterns across statements, revisions, names and scaled figures in the kinds."""

from __future__ import annotations

import pandas as pd
from test_kinds import draft_texts, topic

#: eight places: the first four in the Coast group; "the Netherlands" and "the Czech Republic" need "the"
PLACES = pd.DataFrame({
    "entity": [f"e{i}" for i in range(8)],
    "name": ["Netherlands", "Czech Republic", "Union Oil", "Ashby", "Brill", "Colne", "Dunmere", "Eske"],
    "group": ["Coast"] * 4 + ["Hills"] * 4, "position": range(8),
})
TOPICS = [topic("alpha"), topic("beta"), topic("gamma")]


def rows(fallers: dict[str, set[str]], base: float = 50.0) -> list[tuple]:
    """Every place rises by 2 points on every topic, except those named to fall by 2 on a topic."""
    out = []
    for t in ("alpha", "beta", "gamma"):
        for i in range(8):
            key = f"e{i}"
            start = base + i
            out += [(key, t, 2024, start), (key, t, 2025, start + (-2.0 if key in fallers.get(t, set()) else 2.0))]
    return out


def test_the_average_is_said_once_for_the_topic_and_where_a_place_went_against_it() -> None:
    out = draft_texts(rows({"alpha": {"e5"}}), TOPICS, PLACES)
    # with the average: no sentence about it
    assert "average" not in out["change/e4/alpha"][0] and "mean_change" not in out["change/e4/alpha"][1]
    # against it: said, in the unit of the place's own change ((7 * 2 - 2) / 8 = 1.5 points)
    text, evidence, _c = out["change/e5/alpha"]
    assert "the average change was a rise of 1.5 percentage points" in text
    assert evidence["mean_change"]["value"] == 1.5
    assert "1.5 percentage points" in out["movement/alpha"][0]


def test_an_exception_on_most_topics_is_said_and_flagged_for_a_data_check() -> None:
    out = draft_texts(rows({"alpha": {"e5"}, "beta": {"e5"}, "gamma": {"e5"}}), TOPICS, PLACES)
    text, evidence, claims = out["profile/e5"]
    assert ("On all three indicators compared, it moved the opposite way to most other towns, and it was the only "
            "one to do so.") in text
    assert claims["data_check"] == ["alpha", "beta", "gamma"] and evidence["topics_compared"]["value"] == 3
    headline, _e, top = out["headline"]
    assert "On all three indicators compared, Colne moved the opposite way to most other towns." in headline
    assert top["data_check"] == ["e5"]
    # an exception on one topic of three is no pattern
    out = draft_texts(rows({"alpha": {"e5"}}), TOPICS, PLACES)
    assert "data_check" not in out["profile/e5"][2] and "data_check" not in out["headline"][2]
    assert "opposite way" not in out["headline"][0]


def test_exceptions_all_in_one_group_are_said_to_be() -> None:
    out = draft_texts(rows({"alpha": {"e0", "e1"}}), TOPICS, PLACES)
    text, _e, claims = out["movement/alpha"]
    assert claims["exceptions"] == ["e0", "e1"] and claims["exceptions_group"] == "Coast"
    # named in the order of their names (Czech Republic, Netherlands), not of their keys (e0, e1)
    assert "The exceptions were the Czech Republic and the Netherlands, all in the Coast group." in text
    assert "The two that worsened, all in the Coast group, were the Czech Republic and the Netherlands." in (
        out["roundup/alpha"][0])
    out = draft_texts(rows({"alpha": {"e0", "e7"}}), TOPICS, PLACES)
    assert "exceptions_group" not in out["movement/alpha"][2] and "group" not in out["movement/alpha"][0]


def test_names_needing_the_get_it_mid_sentence_and_a_capital_at_the_start() -> None:
    out = draft_texts(rows({}), TOPICS, PLACES)
    texts = [t for t, _e, _c in out.values()]
    assert any("in the Netherlands" in t for t in texts) and any("the Czech Republic" in t for t in texts)
    assert not any(t.startswith("the ") or " in Netherlands" in t for t in texts)
    assert not any("the Union Oil" in t for t in texts)  # a firm's name takes none


def test_the_preposition_follows_the_entity_noun_in_change_and_trend() -> None:
    data = [(f"e{i}", "alpha", y, 50.0 + i + y - 2022) for i in range(8) for y in (2022, 2023, 2024, 2025)]
    out = draft_texts(data, [topic("alpha")], PLACES, noun="firm")
    for kind in ("change", "trend", "standing"):
        text = out[f"{kind}/e3/alpha"][0]
        assert " in Ashby" not in text, text
    assert any(" at Ashby" in out[f"{k}/e3/alpha"][0] for k in ("change", "trend"))


def test_a_revised_current_value_is_said_in_standing_and_blurb() -> None:
    earlier = pd.DataFrame({"entity": ["e3"], "topic": ["alpha"], "period": ["2025"], "value": [51.2]})
    out = draft_texts(rows({}), TOPICS, PLACES, earlier=earlier)
    for kind in ("standing", "blurb"):
        text, evidence, _c = out[f"{kind}/e3/alpha"]
        assert "55.0% (revised from 51.2%)" in text, text
        assert evidence["value_revised_from"]["value"] == 51.2


def test_one_statement_never_mixes_scaled_and_plain_figures() -> None:
    people = {**topic("people", unit="persons", better="neutral", decimals=0), "label": "Population"}
    data = [(f"e{i}", "people", y, v * (1.01 if y == 2025 else 1)) for i, v in
            enumerate([1_300_000_000, 199_579, 45_000_000, 2_000, 900_000, 3_000_000, 12_345, 640])
            for y in (2024, 2025)]
    out = draft_texts(data, [people], PLACES)
    leaders = out["leaders/people"][0]
    # the largest prints in words (CLDR long compact form): the others from a thousand up follow it
    assert "1.3 billion persons" in leaders and "646 persons" in leaders
    standing = out["standing/e1/people"][0]  # beside the Coast average of hundreds of millions
    assert "201.6 thousand persons" in standing and "201,575" not in standing


def test_an_entity_article_column_overrides_the_guess(tmp_path) -> None:
    places = PLACES.assign(article=["none", "", "", "the", "", "", "", ""])
    out = draft_texts(rows({}), TOPICS, places)
    texts = " ".join(t for t, _e, _c in out.values())
    assert " in Netherlands" in texts and "the Netherlands" not in texts.replace("The Netherlands", "")
    assert " in the Ashby" in texts and "the Czech Republic" in texts
    # a value the column does not know is refused with its file, row and column, and nothing is loaded
    from stetline.dataset import load_dataset
    from stetline.errors import ValidationError

    (tmp_path / "obs.csv").write_text("entity,topic,period,value\na,t,2025,1\n", encoding="utf-8")
    (tmp_path / "topics.csv").write_text("topic,label,unit,better,decimals,category,target\nt,T,,higher,0,,\n",
                                         encoding="utf-8")
    (tmp_path / "entities.csv").write_text("entity,name,group,article\na,Ashby,,an\n", encoding="utf-8")
    try:
        load_dataset(tmp_path / "obs.csv", tmp_path / "topics.csv", tmp_path / "entities.csv")
    except ValidationError as exc:
        message = str(exc)
    else:
        raise AssertionError("an unknown article was accepted")
    assert "entities.csv" in message and "article" in message and "'article' must be the, none or empty" in message
