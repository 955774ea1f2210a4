"""Every draft of the demo reads cleanly: no leaked placeholders, spacing slips or figure openings."""

from __future__ import annotations

import re

import pytest

from engine.phrasing import sentences, starts_with_figure
from conftest import Cli

BAD = [
    (re.compile(r"\bnan\b|\bNone\b|\binf\b|<NA>"), "a missing value leaked into the text"),
    (re.compile(r"\{\{|\}\}|\{%"), "template syntax leaked into the text"),
    (re.compile(r"  "), "doubled space"),
    (re.compile(r" [,.;:!?]"), "space before punctuation"),
    (re.compile(r"\b(\w+) \1\b", re.I), "doubled word"),
    (re.compile(r"\.\."), "doubled full stop"),
]


@pytest.fixture(scope="module")
def demo_drafts(demo_template) -> list[dict]:
    return Cli(demo_template).json("list")


def test_every_demo_draft_reads_cleanly(demo_drafts: list[dict]) -> None:
    problems = []
    for item in demo_drafts:
        text = item["draft"]
        for pattern, what in BAD:
            if pattern.search(text):
                problems.append(f"{item['slot']}: {what}: {text}")
        for sentence in sentences(text):
            # ONS style guide (numbers): no sentence starts with a figure
            if starts_with_figure(sentence):
                problems.append(f"{item['slot']}: sentence starts with a figure: {sentence}")
        if not text.endswith("."):
            problems.append(f"{item['slot']}: does not end with a full stop: {text}")
    assert problems == []


def test_every_kind_appears_in_the_demo(demo_drafts: list[dict]) -> None:
    assert {i["kind"] for i in demo_drafts} == {"standing", "change", "profile", "leaders", "movement", "headline", "trend"}


def test_shown_evidence_appears_in_the_text(demo_drafts: list[dict]) -> None:
    """The value a standing or change statement shows is the one its evidence holds."""
    for item in demo_drafts:
        if item["kind"] in ("standing", "change") and item["evidence"]["value"]["value"] is not None:
            assert item["evidence"]["value"]["shown"] in item["draft"], item["slot"]
