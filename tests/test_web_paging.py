"""Long lists come a page at a time: the entity, topic and recheck pages ask the database for one
page (LIMIT/OFFSET on an indexed order) and link to the others, keeping their filters."""

from __future__ import annotations

import re

import pytest
from flask import Flask
from flask.testing import FlaskClient

from stetline import actions
from stetline.reconcile import REASONS
from stetline.store import ops
from stetline.web import create_app, paging
from stetline.workspace import Workspace

# a statement in a list (its id as the link) or the heading of a recheck queue entry (its title as the link)
SLOT_LINK = re.compile(r'<a href="/statements/([^"]+)"><code>|<h2 id="item-\d+"><a href="/statements/([^"]+)">')


@pytest.fixture
def client(demo_ws: Workspace, monkeypatch: pytest.MonkeyPatch) -> FlaskClient:
    monkeypatch.setattr(paging, "PAGE_SIZE", 10)  # the demo's lists are under the usual 50
    app: Flask = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    return app.test_client()


def listed(client: FlaskClient, url: str) -> tuple[list[str], str]:
    response = client.get(url)
    assert response.status_code == 200, url
    html = response.get_data(as_text=True)
    return [listed or queued for listed, queued in SLOT_LINK.findall(html)], html


def in_order(ws: Workspace, f: ops.SlotFilter, order: str) -> list[str]:
    with ws.reading() as s:
        return [v.slot.id for v in actions.views(s, f, order=order)]


def test_a_topic_page_lists_every_statement_once_across_its_pages(client: FlaskClient, demo_ws: Workspace,
                                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    size = 5  # the demo's recycling topic has a blurb per town and its roundup: 15 statements
    monkeypatch.setattr(paging, "PAGE_SIZE", size)
    every = in_order(demo_ws, ops.SlotFilter(topic="recycling"), "interest")
    pages = -(-len(every) // size)
    assert pages >= 3, "the demo's recycling topic spans several pages"
    seen: list[str] = []
    for n in range(1, pages + 1):
        slots, html = listed(client, f"/topics/recycling?page={n}")
        assert len(slots) == (size if n < pages else len(every) - size * (pages - 1))
        assert f"Page {n} of {pages}" in html
        assert f"showing {size * (n - 1) + 1}–{min(size * n, len(every))}" in html
        assert ('rel="next"' in html) == (n < pages) and ('rel="prev"' in html) == (n > 1)
        # each page is the next slice in interest order; the page arranges its rows under headings
        assert sorted(slots) == sorted(every[size * (n - 1): size * n])
        seen += slots
    assert sorted(seen) == sorted(every) and len(seen) == len(set(seen)), "the pages together are the whole list"
    assert f"Approve all {len(every)} listed, on every page" in html


def test_a_page_out_of_range_or_not_a_number_shows_the_nearest_page(client: FlaskClient) -> None:
    first, _ = listed(client, "/entities/north-quay")
    assert listed(client, "/entities/north-quay?page=abc")[0] == first
    assert listed(client, "/entities/north-quay?page=-4")[0] == first
    last, html = listed(client, "/entities/north-quay?page=999")
    assert last and last != first and 'rel="next"' not in html


def test_the_links_keep_the_filter(client: FlaskClient, demo_ws: Workspace) -> None:
    with demo_ws.session() as s:
        for slot in in_order(demo_ws, ops.SlotFilter(topic="recycling"), "interest")[:12]:
            actions.annotate(s, slot, "checked against the tonnage returns", by="expert")
    _, html = listed(client, "/topics/recycling?status=annotated")
    assert 'href="/topics/recycling?status=annotated&amp;page=2"' in html


def test_the_recheck_queue_pages_and_filters_by_reason_in_the_database(demo_ws: Workspace, client: FlaskClient) -> None:
    waiting = in_order(demo_ws, ops.SlotFilter(status="recheck"), "severity")
    assert waiting, "the demo leaves statements in recheck"
    slots, html = listed(client, "/recheck")
    assert slots[: min(10, len(waiting))] == waiting[:10]
    with demo_ws.reading() as s:
        rows = ops.list_slots(s, ops.SlotFilter(status="recheck"))
        for reason in REASONS:
            # the SQL match on the stored JSON agrees with reading each slot's reasons
            expected = sorted(slot.id for slot, _ in rows if reason in (slot.recheck or {}).get("reasons", []))
            got = sorted(slot.id for slot, _ in ops.list_slots(s, ops.SlotFilter(status="recheck", reason=reason)))
            assert got == expected, reason
            assert ops.count_slots(s, ops.SlotFilter(status="recheck", reason=reason)) == len(expected)
        assert ops.list_slots(s, ops.SlotFilter(status="recheck", reason='%" OR 1=1')) == []
