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


def test_claim_values_name_entities_and_topics_and_join_lists() -> None:
    names = {"heronsford": "Heronsford", "recycling": "Household recycling rate"}
    assert factwords.claim_value("heronsford", names) == "Heronsford"
    assert factwords.claim_value(["recycling", "heronsford"], names) == "Household recycling rate, Heronsford"
    assert factwords.claim_value("highest-on-record", names) == "highest on record"
    assert factwords.claim_value(None, names) == "—" and factwords.claim_value([], names) == "none"


def test_a_shown_change_is_kept_as_shown() -> None:
    assert factwords.change_value("2025-Q1", {}) == "2025-Q1"  # a period keeps its hyphen
    assert factwords.change_value("59.3%", {}) == "59.3%"
