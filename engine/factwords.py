"""Fact and claim names as words for people: one declaration the web pages and the CLI's ``show`` share.

A statement's evidence and claims are keyed by short names (``all_gap``, ``rank_band``) that live
fields and the JSON output use; screens show these words instead, with the key kept beside them
where a person may type it into a live field. A key not declared here reads as its words
(``record_since`` → "record since"), so a new fact never shows as a bare identifier.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

FACT_WORDS: dict[str, str] = {
    "value": "value this period",
    "period": "period",
    "previous": "value the period before",
    "previous_period": "previous period",
    "change": "change since the period before",
    "change_abs": "size of the change",
    "year_earlier_period": "same period a year earlier",
    "year_earlier": "value a year earlier",
    "year_earlier_change": "change on a year earlier",
    "margin_of_change": "margin of error of the change",
    "yearly_change": "average change a year",
    "yearly_growth": "average growth a year",
    "first_period": "first period in the series",
    "first_value": "first value in the series",
    "record_since": "record since",
    "revised_from": "value before the revision",
    "value_revised_from": "this period's value before the revision",
    "mean_change": "average change of all",
    "status": "status of the figure",
    "target": "target",
    "target_gap": "gap to the target",
    "all_mean": "average of all",
    "all_gap": "gap to the overall average",
    "group_mean": "group average",
    "group_gap": "gap to the group average",
    "rank": "rank",
    "rank_of": "number ranked",
    "best_value": "best value",
    "worst_value": "worst value",
    "spread": "spread from best to worst",
    "compared": "number compared",
    "reporting": "number reporting",
    "rose": "number that rose",
    "fell": "number that fell",
    "steady": "number that held steady",
    "improved": "number that improved",
    "worsened": "number that worsened",
    "improving": "topics improving",
    "worsening": "topics worsening",
    "improvement_change": "biggest improvement",
    "setback_change": "biggest setback",
    "biggest_up": "biggest rise",
    "biggest_down": "biggest fall",
    "biggest_shift": "biggest shift",
    "streak": "periods in a row",
    "composite": "overall score",
    "composite_of": "number given an overall score",
    "composite_rank": "place on the overall score",
    "composite_topics": "topics in the overall score",
    "leader_composite": "leader's overall score",
    "strongest_rank": "place on the strongest topic",
    "weakest_rank": "place on the weakest topic",
    "topics": "topics counted",
    "exception_topics": "indicators where it went against most",
    "topics_compared": "indicators compared",
    "gap": "gap between the best and worst groups",
    "margin_of_gap": "margin of error of the gap",
    "subgroups": "groups compared",
    "best_share": "share of the best group",
    "worst_share": "share of the worst group",
    "widest_gap": "widest gap between groups",
    "narrowest_gap": "narrowest gap between groups",
}

CLAIM_WORDS: dict[str, str] = {
    "better": "better or worse",
    "direction": "direction of the change",
    "significant": "change beyond the margin of error",
    "year_earlier.direction": "direction of the change on a year earlier",
    "year_earlier.better": "better or worse than a year earlier",
    "year_earlier.significant": "change on a year earlier beyond the margin of error",
    "target": "target met or missed",
    "vs_group": "against the group average",
    "rank_band": "place in the ranking",
    "record": "record",
    "streak": "run of changes",
    "leader": "leader",
    "laggard": "last place",
    "majority": "what most did",
    "exceptions": "exceptions",
    "improving": "topics improving",
    "worsening": "topics worsening",
    "strongest": "strongest topic",
    "weakest": "weakest topic",
    "biggest_shift": "topic with the biggest shift",
    "composite_band": "place on the overall score",
    "composite_leader": "leader on the overall score",
    "data_check": "worth a data check: against most on most indicators",
    "exceptions_group": "group of every exception",
    "best": "best group",
    "worst": "worst group",
    "difference": "difference between groups",
    "largest": "largest group",
    "widest": "widest gap between groups",
    "narrowest": "narrowest gap between groups",
}


def _as_words(key: str) -> str:
    """A key's own words: underscores and hyphens become spaces."""
    return key.replace("_", " ").replace("-", " ").strip() or key


def fact_words(key: str) -> str:
    """The words for one evidence fact, e.g. "gap to the group average" for ``group_gap``."""
    return FACT_WORDS.get(key) or _as_words(key)


def claim_name(key: str) -> str:
    """A claim's own name without the part that states it: ``better`` for ``change.better``.

    Blurbs and roundups compose parts and namespace each part's claims by its kind (``change.better``,
    ``trend.record``); people read the claim itself, so its words are those of the part's own claim.
    """
    return key.rsplit(".", 1)[-1] if "." in key else key


def claim_words(key: str) -> str:
    """The words for one claim, e.g. "place in the ranking" for ``rank_band`` or ``standing.rank_band``."""
    name = claim_name(key)
    return CLAIM_WORDS.get(name) or _as_words(name)


def claim_value(value: Any, names: Mapping[str, str] | None = None) -> str:
    """A claim's value as people read it: entity and topic keys as their names, lists joined, none as a dash."""
    names = names or {}
    if value is None:
        return "—"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (list, tuple)):
        return ", ".join(claim_value(v, names) for v in value) if value else "none"
    text = str(value)
    return names.get(text) or _as_words(text)


def change_words(key: str) -> str:
    """The words for a key in a list of changes, which names facts and claims alike."""
    if key in FACT_WORDS:
        return FACT_WORDS[key]
    return claim_words(key)


def change_value(value: Any, names: Mapping[str, str] | None = None) -> str:
    """One side of a change as people read it: a shown text as it is, a claim's keys as names."""
    names = names or {}
    if value is None:
        return "—"
    if isinstance(value, (list, tuple)):
        return ", ".join(names.get(str(v), str(v)) for v in value) if value else "none"
    return names.get(str(value), str(value))
