"""The recheck queue explains itself: why each statement waits (the reasons in words, and the
people's work it carries: text layer, notes, approval, latest comment), "conflict" only for
proposals with conflict regions, no empty diffs, and one name for approving on every page."""

from __future__ import annotations

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import CONFLICTED

from stetline import comments
from stetline.web import create_app
from stetline.workspace import Workspace

HERONSFORD = "blurb/heronsford/parks-satisfaction"  # a rewrite in recheck, numbers changed, clean proposal
GORSE = "blurb/gorse-point/recycling"  # a rewrite whose claims changed: a composed text, no conflict regions
HIGH_FERROW = "blurb/high-ferrow/bus-punctuality"  # an approval whose claims changed: no conflict
SAMPHIRE = "blurb/samphire-reach/recycling"  # an expert's note whose claims changed
NOTE = "A kerbside food-waste round started in Samphire Reach in September 2024."


@pytest.fixture
def client(demo_ws: Workspace) -> FlaskClient:
    app: Flask = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    return app.test_client()


def get(client: FlaskClient, url: str) -> str:
    response = client.get(url)
    assert response.status_code == 200, url
    return response.get_data(as_text=True)


def item(html: str, slot: str) -> str:
    """The queue's entry for one statement."""
    start = html.index(f'<code class="slot-id">{slot}</code>')
    return html[start: html.index("</article>", start)]


def test_each_entry_says_why_it_waits_and_whose_work_it_carries(client: FlaskClient) -> None:
    html = get(client, "/recheck")
    samphire = item(html, SAMPHIRE)
    assert "by <strong>expert</strong>" in samphire and f"“{NOTE}”" in samphire  # the note that put it there
    assert "what the statement says no longer holds with the new data" in samphire  # claim-changed, in words
    # the blurb's claims are namespaced by their part (change.better); people read the claim in words
    assert "<td>better or worse</td>" in samphire and "better: improved → worsened" in samphire
    assert ">change.better" not in samphire and "change.better:" not in samphire
    ferrow = item(html, HIGH_FERROW)
    assert '<span class="tag tag-approval">approval</span> by <strong>reviewer</strong>' in ferrow
    heronsford = item(html, HERONSFORD)
    assert '<span class="tag tag-rewrite">rewrite</span> by <strong>editor</strong>' in heronsford
    assert "numbers it shows changed; what it says still holds" in heronsford
    gone = item(html, "blurb/wrackhaven/paper-timetables")
    assert "it no longer applies to the current edition" in gone
    assert "Printed timetables were withdrawn from Wrackhaven" in gone


def test_the_latest_comment_shows_in_the_queue(client: FlaskClient, demo_ws: Workspace) -> None:
    with demo_ws.session() as s:
        comments.add_comment(s, HERONSFORD, "Check the 2023 figure against the annual return.", by="ann")
        comments.send_back(s, HERONSFORD, "Say *why* the rate rose before this goes out.", by="ben")
    heronsford = item(get(client, "/recheck"), HERONSFORD)
    assert '<span class="tag tag-sent-back">sent back</span> by <strong>ben</strong>' in heronsford
    assert "“Say *why* the rate rose before this goes out.”" in heronsford
    assert "annual return" not in heronsford  # only the latest; the whole thread is on the statement's page


def test_conflict_only_when_the_proposal_has_conflict_regions(client: FlaskClient, conflict_ws: Workspace) -> None:
    # a conflict needs a part kind's rewrite (composed statements keep the rewrite's words)
    conflicted = get(create_app(conflict_ws, {"TESTING": True}).test_client(), "/recheck")
    assert conflicted.count('class="merge merge-conflict"') == 1
    assert '<span class="merge merge-conflict">conflict</span>' in item(conflicted, CONFLICTED)
    assert "yours «climbed», new draft «went down by»" in item(conflicted, CONFLICTED)
    html = get(client, "/recheck")
    assert "merge-conflict" not in html
    for slot in (GORSE, HIGH_FERROW, SAMPHIRE, "roundup/broadband"):  # claims changed, no conflict regions
        entry = item(html, slot)
        assert '<span class="merge merge-person">needs a person</span>' in entry and "conflict" not in entry
        assert "the proposed text is not taken in one click" in entry
    assert '<span class="merge merge-clean">clean</span>' in item(html, HERONSFORD)
    page = get(client, f"/statements/{HIGH_FERROW}")
    assert '<span class="merge merge-person">needs a person</span>' in page and "merge-conflict" not in page


def test_empty_diffs_are_hidden(client: FlaskClient) -> None:
    html = get(client, "/recheck")
    samphire = item(html, SAMPHIRE)  # the note keeps the draft automatic: the proposal is the text itself
    assert "<dt>Changes" not in samphire and "The same as the text under review." in samphire
    heronsford = item(html, HERONSFORD)
    assert "<dt>Changes" in heronsford and "<del>68%</del><ins>67%</ins>" in heronsford
    page = get(client, f"/statements/{SAMPHIRE}")
    assert "Changes from the text under review" not in page and "The same as the text under review." in page


def test_approving_has_one_name_on_every_page(client: FlaskClient) -> None:
    html = get(client, "/recheck")
    assert "Approve as is" not in html
    # every statement in the queue: 18 on the demo (`stetline list --status recheck`)
    assert html.count(">Approve as it reads</button>") == 18
    assert f'aria-label="Approve as it reads: {HERONSFORD}"' in html  # the visible name starts the spoken one
    assert "Approve all 18 shown as they read</button>" in html
    assert ">Approve as it reads</button>" in get(client, f"/statements/{HERONSFORD}")
    response = client.post("/bulk/confirm", data={"scope": "recheck", "action": "approve"})
    assert response.status_code == 200
    assert "as they read</button>" in response.get_data(as_text=True)
    # Heronsford's 13 statements: a blurb for each of 12 topics (11 yearly, one quarterly) and the profile
    assert "Approve all 13 shown as they read</button>" in get(client, "/entities/heronsford")
