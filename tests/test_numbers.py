"""Typed numbers: spotted in many formats, traced to facts, updated from new evidence."""

from __future__ import annotations

import pytest

from stetline.numbers import find_numbers, substitute, trace

EVIDENCE = {
    "value": {"value": 45.21, "shown": "45.2%"},
    "rank": {"value": 3, "shown": "3rd"},
    "rank_of": {"value": 14, "shown": "14"},
    "population": {"value": 18898.0, "shown": "18,898 persons"},
    "period": {"value": "2024", "shown": "2024"},
}
NEW = {
    "value": {"value": 46.04, "shown": "46.0%"},
    "rank": {"value": 5, "shown": "5th"},
    "rank_of": {"value": 14, "shown": "14"},
    "population": {"value": 19021.0, "shown": "19,021 persons"},
    "period": {"value": "2025", "shown": "2025"},
}


@pytest.mark.parametrize("text, found", [
    ("45.2%", [("45.2", "%")]),
    ("18,898 people", [("18,898", "")]),
    ("the 3rd best", [("3", "rd")]),
    ("£1,250.50 a head", [("1,250.50", "")]),
    ("a rise of 0.3 points", [("0.3", "")]),
    ("between 2023 and 2024", [("2023", ""), ("2024", "")]),
    ("{{ value }} and {{ rank | ordinal }}", []),  # live fields are not typed numbers
    ("north-quay2", []),
])
def test_find_numbers(text: str, found: list[tuple[str, str]]) -> None:
    assert [(n.digits, n.suffix) for n in find_numbers(text)] == found


def test_trace_by_display_then_by_value() -> None:
    n = find_numbers("45.2%")[0]
    assert trace(n, EVIDENCE) == ["value"]
    rounded = find_numbers("about 45%")[0]
    assert trace(rounded, EVIDENCE) == ["value"]  # 45.21 rounds to 45 at the typed precision
    assert trace(find_numbers("17 towns")[0], EVIDENCE) == []


def test_substitute_updates_typed_numbers_at_their_typed_precision() -> None:
    text = "Recycling reached 45.2% (about 45%) in 2024, 3rd of 14; population 18,898."
    out = substitute(text, EVIDENCE, NEW)
    assert out.text == "Recycling reached 46.0% (about 46%) in 2025, 5th of 14; population 19,021."
    assert out.untraced == []


def test_untraced_numbers_are_reported_and_left_alone() -> None:
    out = substitute("Since 2020 it has grown.", EVIDENCE, NEW)
    assert out.text == "Since 2020 it has grown."
    assert out.untraced == ["2020"]
