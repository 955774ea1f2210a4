"""The statement page says what the next publication prints, and the published file agrees word for word."""

from __future__ import annotations

import html as html_mod
import re

import pytest
from flask import Flask
from flask.testing import FlaskClient

from stetline.publication import RECHECK_MARK
from stetline.web import create_app
from stetline.workspace import Workspace

CLAIMS = "blurb/high-ferrow/bus-punctuality"  # claim-changed: the reviewer's approved text is contradicted
NUMBERS = "blurb/heronsford/parks-satisfaction"  # numbers-changed: a rewrite with a clean proposed update
GONE = "blurb/wrackhaven/paper-timetables"  # slot-gone


@pytest.fixture
def client(demo_ws: Workspace) -> FlaskClient:
    app: Flask = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    return app.test_client()


def card(client: FlaskClient, slot: str) -> dict[str, str | None]:
    """The 'what the next publication prints' card of a statement page, as a reader sees it."""
    page = client.get(f"/statements/{slot}").get_data(as_text=True)
    box = page[page.index('id="printed"'):]
    box = box[:box.index('<div class="text-box text-draft">')] if 'text-draft' in box else box
    text = re.search(r'<div class="published">(.*?)</div>', box, re.S)
    reason = re.search(r'<p class="printed-reason">(.*?)</p>', box, re.S)
    held = re.search(r'<details class="printed-held">.*?<p>(.*?)</p>', box, re.S)

    def plain(m: re.Match[str] | None) -> str | None:
        return None if m is None else html_mod.unescape(re.sub(r"<[^>]+>", "", m.group(1))).strip()

    return {"text": plain(text), "reason": plain(reason), "held": plain(held), "box": box}


def test_the_page_of_a_statement_in_recheck_shows_what_will_be_printed(client: FlaskClient) -> None:
    cards = {slot: card(client, slot) for slot in (CLAIMS, NUMBERS, GONE)}
    for c in cards.values():
        assert "Publishing is refused while this statement waits in recheck" in str(c["box"])
        assert "Never printed: no publication has been made since it first appeared" in str(c["box"])
    assert "the current data contradict the earlier text, so it prints the new draft" in str(cards[CLAIMS]["reason"])
    assert "prints the proposed update with the new numbers" in str(cards[NUMBERS]["reason"])
    assert cards[NUMBERS]["held"] and cards[NUMBERS]["held"] != cards[NUMBERS]["text"]  # the stale rewrite
    assert cards[GONE]["text"] is None and "so nothing is printed" in str(cards[GONE]["reason"])
    assert "does not count for this edition" in str(cards[CLAIMS]["box"])  # the earlier approval

    response = client.post("/publish/download", data={"format": "md", "sections": "entity", "allow_recheck": "1"})
    assert response.status_code == 200
    md = response.get_data(as_text=True)
    for slot in (CLAIMS, NUMBERS):
        assert f"\n**{RECHECK_MARK}** {cards[slot]['text']}\n" in md, slot
        assert f"- `{slot}`: {cards[slot]['reason']}" in md
        assert str(cards[slot]["held"] or "\0") not in md
    assert f"- `{GONE}`: {cards[GONE]['reason']}" in md
    after = card(client, CLAIMS)
    assert "Never printed" not in str(after["box"]) and "The last publication (" in str(after["box"])
    assert after["text"] == cards[CLAIMS]["text"]


def test_a_statement_nobody_approved_says_so(client: FlaskClient) -> None:
    c = card(client, "blurb/cairnbrook/recycling")
    assert "Never approved: nobody has signed it off yet." in str(c["box"])
    assert c["reason"] == "Prints the draft of the current edition, not approved."
    assert "Publishing is refused" not in str(c["box"])


def test_every_statement_in_the_queue_prints_what_its_page_says(client: FlaskClient) -> None:
    # web only: the reviewer reads the queue's links, then each statement's card, then the file
    queue = client.get("/recheck").get_data(as_text=True)
    slots = sorted(set(re.findall(r'href="/statements/([^"?#]+)"', queue)))
    assert len(slots) >= 10  # the demo's second edition leaves more than ten waiting
    cards = {slot: card(client, slot) for slot in slots}
    md = client.post("/publish/download", data={"format": "md", "sections": "entity", "allow_recheck": "1"}
                     ).get_data(as_text=True)
    for slot, c in cards.items():
        assert f"- `{slot}`: {c['reason']}" in md, slot
        if c["text"] is not None:
            assert f"\n**{RECHECK_MARK}** {c['text']}\n" in md, slot
