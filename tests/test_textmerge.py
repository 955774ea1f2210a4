"""Word-level three-way merge: the editor's words kept, the new draft's numbers taken, conflicts shown."""

from __future__ import annotations

import pytest

from stetline.textmerge import merge3, word_diff

BASE = "Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024."


@pytest.mark.parametrize("mine, theirs, expected, clean", [
    # no edits at all: the new draft
    (BASE, "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025.",
     "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025.", True),
    # edit at the start
    ("Household recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024.",
     "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025.",
     "Household recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025.", True),
    # edit in the middle
    ("Recycling in Eelbridge climbed steadily from 44.0% in 2023 to 45.0% in 2024.",
     "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025.",
     "Recycling in Eelbridge climbed steadily from 45.0% in 2024 to 46.1% in 2025.", True),
    # edit at the end (punctuation is its own token, so ", a record" slots in before the stop)
    ("Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024, a record.",
     "Recycling in Eelbridge rose from 44.0% in 2023 to 45.5% in 2024.",
     "Recycling in Eelbridge rose from 44.0% in 2023 to 45.5% in 2024, a record.", True),
    # the same change on both sides is no conflict
    ("Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024!",
     "Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024!",
     "Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024!", True),
])
def test_clean_merges(mine: str, theirs: str, expected: str, clean: bool) -> None:
    result = merge3(BASE, mine, theirs)
    assert result.text == expected
    assert result.clean is clean


def test_overlapping_edits_are_a_conflict_showing_both_sides() -> None:
    mine = "Recycling in Eelbridge climbed from 44.0% in 2023 to 45.0% in 2024."
    theirs = "Recycling in Eelbridge fell from 45.0% in 2024 to 43.9% in 2025."
    result = merge3(BASE, mine, theirs)
    assert not result.clean
    assert result.conflicts[0] == ("climbed", "fell")
    assert "yours «climbed» / new draft «fell»" in result.text
    assert "from 45.0% in 2024 to 43.9% in 2025." in result.text


def test_word_diff_marks_added_and_deleted_words() -> None:
    ops = word_diff("rose by 2.4 points", "rose by 0.3 points")
    assert ("del", "2.4") in ops and ("add", "0.3") in ops
    assert ops[0] == ("same", "rose by ")


def test_a_proposal_updates_numbers_before_merging_so_shifted_years_do_not_conflict() -> None:
    """A year moving on (2024 → 2025) shifts every number; the typed numbers are updated first."""
    from stetline.drafting import Draft
    from stetline.reconcile import Basis, HumanWork, propose

    old = {"value": {"value": 45.0, "shown": "45.0%"}, "previous": {"value": 44.0, "shown": "44.0%"},
           "period": {"value": "2024", "shown": "2024"}, "previous_period": {"value": "2023", "shown": "2023"}}
    new = {"value": {"value": 46.1, "shown": "46.1%"}, "previous": {"value": 45.0, "shown": "45.0%"},
           "period": {"value": "2025", "shown": "2025"}, "previous_period": {"value": "2024", "shown": "2024"}}
    mine = "Recycling in Eelbridge rose from 44.0% in 2023 to 45.0% in 2024, a record."
    work = HumanWork(1, "rewrite", mine, BASE, Basis(old, {}, BASE))
    theirs = "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025."
    draft = Draft("change/eelbridge/recycling", "change", "eelbridge", "recycling", theirs, new, {}, 0.5, 0)
    result = propose(work, draft)
    assert result["clean"] is True
    assert result["proposed"] == "Recycling in Eelbridge rose from 45.0% in 2024 to 46.1% in 2025, a record."
