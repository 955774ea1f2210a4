"""Entity and topic pages read as a report does: statements under topic-category headings, part
statements folded beneath their blurb; the changes page lists each changed value once per place."""

from __future__ import annotations

import re
from collections import Counter
from collections.abc import Iterator
from pathlib import Path

import pytest
from flask.testing import FlaskClient
from helpers import every_kind

from stetline.store import ops
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

ROW_LINK = re.compile(r'<td><a href="/statements/([^"]+)"><code>')  # a statement's own row
PARTS = re.compile(r'<details class="parts">(.*?)</details>', re.S)


@pytest.fixture
def client(demo_ws: Workspace) -> FlaskClient:
    return create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()


@pytest.fixture
def every_kind_client(demo_path: Path) -> Iterator[FlaskClient]:
    every_kind(demo_path)
    ws = open_workspace(demo_path)
    yield create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    ws.close()


def get(client: FlaskClient, url: str) -> str:
    response = client.get(url)
    assert response.status_code == 200, url
    return response.get_data(as_text=True)


def groups(html: str) -> dict[str, str]:
    """Each statement group of a page by its heading, in page order."""
    found = {}
    for part in html.split('<section class="statement-group"')[1:]:
        heading = re.search(r"<h2 id=\"group-\d+\">([^<]+)</h2>", part)
        assert heading, part[:200]
        found[heading.group(1)] = part[: part.index("</section>")]
    return found


def test_an_entity_page_groups_its_statements_by_topic_category(client: FlaskClient, demo_ws: Workspace) -> None:
    sections = groups(get(client, "/entities/heronsford"))
    with demo_ws.reading() as s:
        category = {t.key: t.category for t in ops.topic_rows(s)}
        order = list(dict.fromkeys(t.category for t in ops.topic_rows(s)))
    headings = list(sections)
    assert headings[0] == "Overall" and ROW_LINK.findall(sections["Overall"]) == ["profile/heronsford"]
    assert headings[1:] == [c for c in order if c in headings]  # categories in the order of topics.csv
    for heading, html in sections.items():
        for slot in ROW_LINK.findall(html):
            if slot.startswith("blurb/"):
                assert category[slot.split("/")[2]] == heading, (slot, heading)
    assert "blurb/heronsford/recycling" in ROW_LINK.findall(sections["Environment"])
    assert "blurb/heronsford/parks-satisfaction" in ROW_LINK.findall(sections["Culture"])


def test_a_topic_page_puts_the_topic_as_a_whole_before_its_towns(client: FlaskClient) -> None:
    sections = groups(get(client, "/topics/recycling"))
    # the demo's level nouns (district,town) in the plural: its three districts report recycling too
    # (seed_data/README.md), the top level first, as the towns' roundup and the districts' (level-1) lead
    assert list(sections) == ["The topic as a whole", "Districts", "Towns"]
    assert sorted(ROW_LINK.findall(sections["The topic as a whole"])) == ["roundup/level-1/recycling",
                                                                          "roundup/recycling"]
    towns = ROW_LINK.findall(sections["Towns"])
    assert len(towns) == 14 and all(slot.startswith("blurb/") for slot in towns)
    assert sorted(ROW_LINK.findall(sections["Districts"])) == [
        "blurb/eastmarch/recycling", "blurb/sound-isles/recycling", "blurb/westreach/recycling"]
    assert list(groups(get(client, "/topics/broadband"))) == ["The topic as a whole", "Towns"]  # towns only
    assert 'class="parts"' not in "".join(sections.values())  # no part kinds drafted: nothing to fold


def test_part_statements_fold_beneath_their_blurb_when_the_part_kinds_are_on(every_kind_client: FlaskClient) -> None:
    html = get(every_kind_client, "/entities/heronsford")
    rows = ROW_LINK.findall(html)
    assert "blurb/heronsford/recycling" in rows
    assert not [slot for slot in rows if slot.split("/")[0] in ("standing", "change", "trend")]  # none on its own
    link = html.index('<td><a href="/statements/blurb/heronsford/recycling">')
    row = html[html.rindex("<tr>", 0, link): html.index("</tr>", link)]
    folded = PARTS.search(row)
    assert folded and "3 part statements" in folded.group(1)
    listed = re.findall(r'<a href="/statements/([^"]+)"><code>', folded.group(1))
    assert sorted(listed) == ["change/heronsford/recycling", "standing/heronsford/recycling",
                              "trend/heronsford/recycling"]
    # the roundup folds the topic's own parts (leaders, movement) the same way
    html_topic = get(every_kind_client, "/topics/recycling")
    roundup_link = html_topic.index('<td><a href="/statements/roundup/recycling">')
    roundup = html_topic[html_topic.rindex("<tr>", 0, roundup_link): html_topic.index("</tr>", roundup_link)]
    assert 'href="/statements/leaders/recycling"' in roundup and 'href="/statements/movement/recycling"' in roundup


def test_the_changes_page_lists_each_changed_value_once_for_a_place_and_topic(conflict_ws: Workspace) -> None:
    # a workspace drafting every kind since its first edition: a town's value on a topic is shown by its
    # blurb and by the standing, change and trend statements, and each changed between the editions
    html = get(create_app(conflict_ws, {"TESTING": True}).test_client(), "/changes")
    by_place = html[html.index("<h2>Changes by town and topic</h2>"):]
    cells, valued = [], []
    for place in by_place.split('<section class="change-place"')[1:]:
        name = re.search(r"<h3[^>]*>([^<]+)</h3>", place).group(1)  # type: ignore[union-attr]
        for article in place.split('<article class="flip">')[1:]:
            label = re.search(r"<h4>([^<]+)</h4>", article).group(1)  # type: ignore[union-attr]
            cells.append((name, label))
            assert article.count("<strong>Value:</strong>") <= 1, (name, label)
            if "<strong>Value:</strong>" in article:
                valued.append(re.findall(r'<code class="slot-id">([^<]+)</code>', article))
    assert cells and [c for c, n in Counter(cells).items() if n > 1] == []  # each place and topic once
    assert valued, "the second edition changes values"
    # a cell whose value several statements show, listed with one value line and a link to each statement
    shared = [slots for slots in valued if len({slot.split("/")[0] for slot in slots}) > 1]
    assert shared, valued[:5]
