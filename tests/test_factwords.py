"""Fact and claim names as words: the declared words, and a readable fallback for an undeclared key."""

from __future__ import annotations

from stetline import factwords


def test_declared_facts_and_claims_read_as_words() -> None:
    assert factwords.fact_words("group_gap") == "gap to the group average"
    assert factwords.fact_words("all_gap") == "gap to the overall average"
    assert factwords.claim_words("rank_band") == "place in the ranking"


def test_an_undeclared_key_reads_as_its_words_not_as_an_identifier() -> None:
    assert factwords.fact_words("seasonal_low_point") == "seasonal low point"
    assert factwords.claim_words("first-time") == "first time"


def test_a_claim_namespaced_by_its_part_reads_as_the_parts_own_claim() -> None:
    # blurbs and roundups namespace each part's claims by its kind (change.better, leaders.leader)
    assert factwords.claim_words("change.better") == factwords.claim_words("better") == "better or worse"
    assert factwords.claim_words("standing.rank_band") == "place in the ranking"
    assert factwords.change_words("trend.record") == "record"  # a list of changes names claims alike
    assert factwords.claim_words("leaders.first_time") == "first time"  # undeclared: still words, no prefix


def test_a_contradicted_namespaced_claim_is_said_without_its_part() -> None:
    from stetline.claimcheck import claim_words

    assert claim_words({"fact": "change.better", "old": "worsened", "new": "steady"}) == "better: worsened → steady"
    assert claim_words({"fact": "standing.vs_group", "old": "above", "new": "below"}) == "vs group: above → below"
    assert claim_words({"fact": "direction", "old": "up", "new": "down"}) == "direction: up → down"


def test_claim_values_name_entities_and_topics_and_join_lists() -> None:
    names = {"heronsford": "Heronsford", "recycling": "Household recycling rate"}
    assert factwords.claim_value("heronsford", names) == "Heronsford"
    assert factwords.claim_value(["recycling", "heronsford"], names) == "Household recycling rate, Heronsford"
    assert factwords.claim_value("highest-on-record", names) == "highest on record"
    assert factwords.claim_value(None, names) == "—" and factwords.claim_value([], names) == "none"


def test_a_shown_change_is_kept_as_shown() -> None:
    assert factwords.change_value("2025-Q1", {}) == "2025-Q1"  # a period keeps its hyphen
    assert factwords.change_value("59.3%", {}) == "59.3%"


def test_web_messages_name_the_pages_buttons_and_boxes_not_command_line_options() -> None:
    from stetline.web.wording import web_message

    said = {
        "no statement 'x/y'; list them with: stetline list": "find it from the overview",
        "3 statement(s) wait in recheck. Resolve them, or publish with --allow-recheck.":
            "tick “Publish even though statements wait in recheck” on the publish page",
        "confirm each claim to approve it as it reads (stetline approve --confirm-claims, or tick each claim on "
        "the web page), or rewrite it": "(tick each claim above the button)",
        "edition '2025' already exists; choose another label with --edition": "“Edition label” box",
        "the proposed text of x has a conflict; edit it (stetline rewrite) before approving": "“Rewrite” box",
        "--from must name an edition older than --to": "“From” must name an edition older than “To”",
    }
    for engine_words, web_words in said.items():
        shown = web_message(engine_words)
        assert web_words in shown and "stetline " not in shown and "--" not in shown, shown


def test_times_read_the_same_whether_stored_as_text_or_as_a_time() -> None:
    from datetime import datetime

    from stetline.web.wording import when

    assert when("2026-12-02T10:31:05Z") == "2 December 2026, 10:31 UTC"
    assert when(datetime(2026, 12, 2, 10, 31, 5)) == "2 December 2026, 10:31 UTC"
    assert when(None) == "" and when("not a time") == "not a time"
