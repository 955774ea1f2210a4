"""The web editor on the demo workspace: browsing, the statement page and its forms, the recheck
queue, previews, and the refusals (unknown live fields, stale versions, missing CSRF tokens)."""

from __future__ import annotations

import re
from typing import Any

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import CONFLICTED

from stetline import actions
from stetline.store import ops
from stetline.web import create_app
from stetline.workspace import Workspace

HERONSFORD = "blurb/heronsford/parks-satisfaction"  # a rewrite in recheck with a clean proposal
GORSE = "blurb/gorse-point/recycling"  # a rewrite in recheck whose claims changed: no one-click accept


@pytest.fixture
def app(demo_ws: Workspace) -> Flask:
    return create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})


@pytest.fixture
def client(app: Flask) -> FlaskClient:
    return app.test_client()


def state(ws: Workspace, slot: str) -> dict[str, Any]:
    with ws.session() as s:
        return actions.view(s, slot).to_json(s)


def page(client: FlaskClient, url: str, status: int = 200) -> str:
    response = client.get(url)
    assert response.status_code == status, url
    return response.get_data(as_text=True)


# -- browsing -------------------------------------------------------------------------------

def test_nav_links_every_page_group(client: FlaskClient) -> None:
    html = page(client, "/")
    # the entity noun setting (the demo's "town") names the list, in the plural
    assert ">Entities</a>" not in html
    for href, label in (("/", "Overview"), ("/entities", "Towns"), ("/topics", "Topics"),
                        ("/recheck", "Recheck queue")):
        assert f'<a href="{href}"' in html and f">{label}</a>" in html


def test_entities_list_names_groups_and_status_counts(client: FlaskClient) -> None:
    html = page(client, "/entities")
    assert '<a href="/entities/heronsford">Heronsford</a>' in html
    assert "<td>Estuary</td>" in html
    assert '<span class="badge badge-recheck">recheck</span> 1' in html
    assert '<span class="badge badge-draft">draft</span>' in html


def test_topics_list_label_unit_better_category(client: FlaskClient) -> None:
    html = page(client, "/topics")
    assert '<a href="/topics/recycling">Household recycling rate</a>' in html
    assert "<td>percent</td>" in html and "<td>higher</td>" in html and "<td>Environment</td>" in html
    assert '<span class="badge badge-recheck">recheck</span>' in html


def test_entity_page_lists_its_statements_in_interest_order(client: FlaskClient, demo_ws: Workspace) -> None:
    html = page(client, "/entities/heronsford")
    assert "<h1>Heronsford</h1>" in html
    sections = html.split('<section class="statement-group"')[1:]  # one per topic category
    assert len(sections) > 1
    by_section = [re.findall(r'<a href="/statements/([^"]+)"><code>', section) for section in sections]
    listed = [slot for slots in by_section for slot in slots]
    assert HERONSFORD in listed
    with demo_ws.session() as s:
        expected = [v.slot.id for v in actions.views(s, ops.SlotFilter(entity="heronsford"), order="interest")]
    assert sorted(listed) == sorted(expected) and len(listed) == len(set(listed))  # each statement once
    for slots in by_section:  # interest order kept within each category
        assert slots == [slot for slot in expected if slot in slots]
    assert '<span class="badge badge-recheck">recheck</span>' in html
    assert "Heronsford residents remain among the most satisfied" in html  # the published text, not the draft


def test_topic_page_lists_its_statements(client: FlaskClient) -> None:
    html = page(client, "/topics/parks-satisfaction")
    assert "<h1>Share of residents satisfied with local parks</h1>" in html
    assert f'href="/statements/{HERONSFORD}"' in html and 'href="/statements/roundup/parks-satisfaction"' in html
    assert 'href="/statements/blurb/cairnbrook/parks-satisfaction"' in html


def test_unknown_keys_and_slots_are_404_pages(client: FlaskClient) -> None:
    assert "no entity &#39;atlantis&#39;" in page(client, "/entities/atlantis", 404)
    assert "There is no topic" in page(client, "/topics/nothing", 404)
    html = page(client, "/statements/blurb/atlantis/recycling", 404)
    assert "Not found" in html and "no statement" in html
    # the web names its own ways to find a statement, not a command to type
    assert "stetline list" not in html and "find it from the overview" in html
    assert client.post("/statements/blurb/atlantis/recycling/approve", data={"version": "1"}).status_code == 404
    assert client.post("/statements/nope/preview", data={"text": "x"}).status_code == 404


# -- the statement page ---------------------------------------------------------------------

def test_statement_page_shows_texts_evidence_claims_recheck_and_history(client: FlaskClient) -> None:
    html = page(client, f"/statements/{HERONSFORD}")
    assert '<span class="badge badge-recheck">recheck</span>' in html
    assert "What the next publication prints</h2>" in html and "<h2>Draft</h2>" in html
    assert "The share of residents satisfied with local parks in Heronsford was 81% in 2025" in html
    # evidence: the fact in words (its live-field key beside it) and the value as shown, never the raw float
    assert '<td>value this period <code class="slot-id">value</code></td><td>81%</td>' in html
    assert "<td>direction of the change</td><td>flat</td>" in html  # claims in words (change.direction)
    assert "<h1>Share of residents satisfied with local parks in Heronsford — blurb" in html  # names, not the id
    assert "numbers-changed" in html and "<td>82%</td><td>→ 81%</td>" in html  # facts old → new
    assert 'class="merge merge-clean">clean<' in html
    assert "<del>68%</del><ins>67%</ins>" in html  # proposed vs the rewrite, word by word
    assert "<td>editor</td><td>rewrite</td>" in html  # history
    assert "<code>{{ value }}</code> → 81%" in html  # live fields on offer
    for action in ("accept", "approve", "pin", "suppress", "revert", "rewrite", "annotate"):
        assert f'action="/statements/{HERONSFORD}/{action}"' in html
    assert html.count('name="version" value="5"') == 8  # the seven actions and the comment form
    assert '<label for="rewrite-text">Rewrite</label>' in html and '<label for="by-name">Your name</label>' in html


def test_conflicting_proposal_offers_no_accept(conflict_ws: Workspace) -> None:
    client = create_app(conflict_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    html = page(client, f"/statements/{CONFLICTED}")
    assert 'class="merge merge-conflict">conflict<' in html
    assert f"/statements/{CONFLICTED}/accept" not in html
    version = state(conflict_ws, CONFLICTED)["version"]
    assert client.post(f"/statements/{CONFLICTED}/accept", data={"version": str(version)}).status_code == 400
    assert state(conflict_ws, CONFLICTED)["status"] == "recheck"


def test_accepting_the_proposal_approves_it(client: FlaskClient, demo_ws: Workspace) -> None:
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/accept", data={"version": str(before["version"])})
    assert response.status_code == 303 and response.headers["Location"].endswith(f"/statements/{HERONSFORD}")
    after = state(demo_ws, HERONSFORD)
    assert after["status"] == "approved" and after["recheck"] is None
    assert after["text"] == before["recheck"]["proposed"] and "81%" in after["text"]
    html = page(client, f"/statements/{HERONSFORD}")
    assert "Proposed text accepted and approved" in html  # the flash message
    assert '<span class="badge badge-approved">approved</span>' in html
    assert "<td>web</td><td>accept" in html  # acted as the default name


def test_rewrite_with_an_unknown_live_field_is_refused_and_changes_nothing(
    client: FlaskClient, demo_ws: Workspace,
) -> None:
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/rewrite",
                           data={"version": str(before["version"]), "text": "Now {{ nosuchfact }} here."})
    assert response.status_code == 400
    html = response.get_data(as_text=True)
    assert "unknown live field" in html and 'id="rewrite-error"' in html
    assert "Now {{ nosuchfact }} here.</textarea>" in html  # the text is kept for fixing
    assert state(demo_ws, HERONSFORD) == before


def test_rewrite_with_live_fields_saves_and_redirects(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, GORSE)["version"]
    response = client.post(f"/statements/{GORSE}/rewrite", data={
        "version": str(v), "text": "Gorse Point's recycling rate fell to {{ value }} in {{ period }}.", "by": "Ada",
    })
    assert response.status_code == 303
    after = state(demo_ws, GORSE)
    assert after["text"] == "Gorse Point's recycling rate fell to 40.4% in 2025."
    assert after["layer"]["by"] == "Ada" and after["version"] == v + 1
    # the name is kept in the session: the next action is Ada's too
    client.post(f"/statements/{GORSE}/annotate", data={"version": str(v + 1), "text": "Checked with the council."})
    assert state(demo_ws, GORSE)["notes"][0]["by"] == "Ada"


def test_a_stale_version_is_a_conflict(client: FlaskClient, demo_ws: Workspace) -> None:
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/approve", data={"version": str(before["version"] - 1)})
    assert response.status_code == 409
    html = response.get_data(as_text=True)
    assert "changed since you opened it" in html and 'id="approve-error"' in html
    assert state(demo_ws, HERONSFORD) == before


def test_a_missing_version_is_refused(client: FlaskClient, demo_ws: Workspace) -> None:
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/pin", data={})
    assert response.status_code == 400 and "version" in response.get_data(as_text=True)
    assert state(demo_ws, HERONSFORD) == before


def test_suppress_lift_pin_and_revert(client: FlaskClient, demo_ws: Workspace) -> None:
    slot = "roundup/recycling"
    v = state(demo_ws, slot)["version"]
    assert client.post(f"/statements/{slot}/suppress", data={"version": str(v)}).status_code == 303
    assert state(demo_ws, slot)["suppressed"]
    html = page(client, f"/statements/{slot}")
    assert "Left out of the publication" in html and f"/statements/{slot}/lift" in html
    assert client.post(f"/statements/{slot}/suppress", data={"version": str(v + 1)}).status_code == 400
    assert client.post(f"/statements/{slot}/lift", data={"version": str(v + 1)}).status_code == 303
    assert not state(demo_ws, slot)["suppressed"]
    assert client.post(f"/statements/{slot}/pin", data={"version": str(v + 2)}).status_code == 303
    assert state(demo_ws, slot)["layer"]["type"] == "pin"
    assert client.post(f"/statements/{slot}/revert", data={"version": str(v + 3)}).status_code == 303
    assert state(demo_ws, slot)["layer"] is None
    response = client.post(f"/statements/{slot}/revert", data={"version": str(v + 4)})
    assert response.status_code == 400 and "no rewrite or pin to revert" in response.get_data(as_text=True)


def test_an_empty_note_is_refused_next_to_its_field(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, HERONSFORD)["version"]
    response = client.post(f"/statements/{HERONSFORD}/annotate", data={"version": str(v), "text": "  "})
    assert response.status_code == 400 and 'id="annotate-error"' in response.get_data(as_text=True)


def test_redirects_only_go_to_this_site(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, HERONSFORD)["version"]
    response = client.post(f"/statements/{HERONSFORD}/pin", data={"version": str(v), "next": "//elsewhere.example/"})
    assert response.headers["Location"].endswith(f"/statements/{HERONSFORD}")
    response = client.post("/name", data={"by": "Grace", "next": "/recheck?reason=claim-changed"})
    assert response.status_code == 303 and response.headers["Location"].endswith("/recheck?reason=claim-changed")
    assert 'value="Grace"' in page(client, "/recheck")


# -- previews -------------------------------------------------------------------------------

def test_preview_renders_markdown_and_live_fields_and_strips_scripts(client: FlaskClient) -> None:
    response = client.post(f"/statements/{HERONSFORD}/preview",
                           data={"text": "**bold** at {{ value }} <script>alert(1)</script>"})
    assert response.status_code == 200
    html = response.get_data(as_text=True)
    assert "<strong>bold</strong>" in html and "81%" in html
    assert "<script" not in html and "alert(1)" not in html


def test_preview_of_an_unknown_live_field_shows_the_error(client: FlaskClient) -> None:
    response = client.post(f"/statements/{HERONSFORD}/preview", data={"text": "{{ nosuchfact }}"})
    assert response.status_code == 400 and "unknown live field" in response.get_data(as_text=True)


def test_the_preview_script_sends_the_csrf_header(client: FlaskClient) -> None:
    script = client.get("/static/preview.js")
    assert script.status_code == 200 and "X-CSRFToken" in script.get_data(as_text=True)
    script.close()
    assert '<meta name="csrf-token"' in page(client, f"/statements/{HERONSFORD}")


# -- the recheck queue ----------------------------------------------------------------------

def test_recheck_queue_lists_statements_by_severity_with_proposals(client: FlaskClient) -> None:
    html = page(client, "/recheck")
    listed = re.findall(r'<h2 id="item-\d+"><a href="/statements/([^"]+)">', html)
    # 18 wait in recheck on the demo (`stetline list --status recheck`), the approved quarterly blurb and the
    # renamed town's rewrite among them
    assert HERONSFORD in listed and GORSE in listed and len(listed) == 18
    severities = [int(n) for n in re.findall(r"<p>Severity (\d+)\.", html)]
    assert severities == sorted(severities, reverse=True)
    item = html[html.index(f'<a href="/statements/{HERONSFORD}">'):]
    item = item[: item.index("</article>")]
    assert "81%" in item and "Proposed text" in item and "<del>68%</del><ins>67%</ins>" in item
    assert "<td>82%</td><td>→ 81%</td>" in item
    assert f'action="/statements/{HERONSFORD}/accept"' in item and f'action="/statements/{HERONSFORD}/revert"' in item
    gorse = html[html.index(f'<a href="/statements/{GORSE}">'):]
    gorse = gorse[: gorse.index("</article>")]
    assert f"/statements/{GORSE}/accept" not in gorse and "needs a person" in gorse  # its claims changed


def test_recheck_queue_filters(client: FlaskClient) -> None:
    html = page(client, "/recheck?reason=claim-changed")
    assert GORSE in html and f'<a href="/statements/{HERONSFORD}">' not in html
    assert '<option value="claim-changed" selected>' in html
    html = page(client, "/recheck?kind=roundup")
    listed = re.findall(r'<h2 id="item-\d+"><a href="/statements/([^"]+)">', html)
    assert listed and all(x.startswith("roundup/") for x in listed)
    listed = re.findall(r'<h2 id="item-\d+"><a href="/statements/([^"]+)">', page(client, "/recheck?topic=recycling"))
    assert GORSE in listed and "roundup/recycling" in listed and "blurb/north-quay/broadband" not in listed
    assert HERONSFORD not in listed
    assert "Nothing waits in recheck with these filters" in page(client, "/recheck?entity=heronsford&kind=profile")


def test_one_click_accept_from_the_queue_returns_to_the_queue(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, HERONSFORD)["version"]
    response = client.post(f"/statements/{HERONSFORD}/accept",
                           data={"version": str(v), "next": "/recheck?topic=parks-satisfaction"})
    assert response.status_code == 303 and response.headers["Location"].endswith("/recheck?topic=parks-satisfaction")
    html = page(client, "/recheck?topic=parks-satisfaction")
    assert '<a href="/statements/roundup/parks-satisfaction">' in html  # the queue it returned to
    assert f'<a href="/statements/{HERONSFORD}">' not in html
    assert state(demo_ws, HERONSFORD)["status"] == "approved"


# -- CSRF -----------------------------------------------------------------------------------

def test_a_post_without_a_csrf_token_is_refused(demo_ws: Workspace) -> None:
    client = create_app(demo_ws, {"TESTING": True}).test_client()
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/accept", data={"version": str(before["version"])})
    assert response.status_code == 400 and "Form refused" in response.get_data(as_text=True)
    assert state(demo_ws, HERONSFORD) == before
    # with the page's token the same form goes through
    html = page(client, f"/statements/{HERONSFORD}")
    token = re.search(r'name="csrf_token" value="([^"]+)"', html).group(1)  # type: ignore[union-attr]
    response = client.post(f"/statements/{HERONSFORD}/accept",
                           data={"version": str(before["version"]), "csrf_token": token})
    assert response.status_code == 303 and state(demo_ws, HERONSFORD)["status"] == "approved"


def test_entity_and_topic_lists_sort_and_filter(client) -> None:
    page = client.get("/entities?q=coast&sort=name").get_data(as_text=True)
    names = re.findall(r'<tr>\s*<td><a href="/entities/[^"]+">([^<]+)</a></td>', page)  # the Name column, not Within
    assert names == sorted(names) and "North Quay" in names and "Tidemere" not in names  # Coast towns only
    by_recheck = client.get("/entities?sort=recheck").get_data(as_text=True)
    first = re.findall(r'<td><a href="/entities/([^"]+)">', by_recheck)[0]
    assert first in ("north-quay", "gorse-point", "heronsford", "tidemere", "high-ferrow", "samphire-reach",
                     "wrackhaven")
    topics = client.get("/topics?q=percent").get_data(as_text=True)
    assert "Household recycling rate" in topics and "Median broadband download speed" not in topics
    assert "No topics match" in client.get("/topics?q=zzz").get_data(as_text=True)


def test_accept_every_clean_proposal_after_confirming_the_count(client, demo_ws) -> None:
    page = client.get("/recheck/accept-clean").get_data(as_text=True)
    # two rewrites, an approved roundup and an approved breakdown (tests/test_rechecks.py)
    assert "4 statements wait in recheck only because numbers changed" in page
    stale = client.post("/recheck/accept-clean", data={"count": "3"})
    assert stale.status_code == 409 and "changed since you confirmed" in stale.get_data(as_text=True)
    done = client.post("/recheck/accept-clean", data={"count": "4"})
    assert done.status_code == 303
    with demo_ws.session() as s:
        assert actions.view(s, "blurb/heronsford/parks-satisfaction").slot.status == "approved"
        assert actions.view(s, "blurb/gorse-point/recycling").slot.status == "recheck"  # claims changed: never in bulk
        assert actions.history(s, "blurb/heronsford/parks-satisfaction")[-1]["action"] == "accept"


def test_the_changelog_page(client) -> None:
    page = client.get("/changes").get_data(as_text=True)
    assert "From edition <strong>2024</strong> to <strong>2025</strong>" in page
    assert "blurb/gorse-point/recycling" in page and "direction of the change: up → down" in page
    assert "Household recycling rate in Gorse Point — blurb</a>" in page
    assert "roundup/paper-timetables" in page
    # Larkholt renamed Larkholt Vale: its statements are listed as moved, with the change in their value
    assert "<code class=\"slot-id\">blurb/larkholt/library-visits → blurb/larkholt-vale/library-visits</code> " \
           "(Larkholt → Larkholt Vale): value 1,214 per 1,000 residents → 1,236 per 1,000 residents" in page


def test_two_people_saving_the_same_statement_the_second_sees_the_conflict(app, demo_ws) -> None:
    slot = "blurb/tidemere/population"
    first, second = app.test_client(), app.test_client()
    for c, name in ((first, "ann"), (second, "ben")):
        c.post("/name", data={"by": name})
    with demo_ws.session() as s:
        view = actions.view(s, slot)
        version, shown = view.slot.version, view.draft.text
    ok = first.post(f"/statements/{slot}/rewrite", data={"text": "Tidemere grew again in 2025.", "version": version,
                                                         "started_from": shown})
    assert ok.status_code == 303
    clash = second.post(f"/statements/{slot}/rewrite", data={"text": "Tidemere's population rose in 2025.",
                                                             "version": version, "started_from": shown})
    page = clash.get_data(as_text=True)
    assert clash.status_code == 409
    assert "Someone else changed this statement" in page
    assert "Tidemere grew again in 2025." in page and "Tidemere&#39;s population rose in 2025." in page
    with demo_ws.session() as s:
        assert actions.view(s, slot).layers[-1].text == "Tidemere grew again in 2025."  # nothing overwritten
        events = [(e["action"], e["by"]) for e in actions.history(s, slot)]
        assert ("rewrite", "ann") in events and ("conflict", "ben") in events  # both attempts recorded
        new_version = actions.view(s, slot).slot.version
    kept = second.post(f"/statements/{slot}/rewrite", data={"text": "Tidemere's population rose in 2025.",
                                                            "version": new_version})
    assert kept.status_code == 303
    with demo_ws.session() as s:
        assert actions.view(s, slot).layers[-1].text == "Tidemere's population rose in 2025."


def test_every_page_writes_times_in_one_form(client: FlaskClient) -> None:
    import re

    for url in ("/", "/data", "/publish", f"/statements/{HERONSFORD}", "/recheck"):
        main = page(client, url).split("<main", 1)[1]
        assert not re.search(r"\d{4}-\d\d-\d\d[T ]\d\d:\d\d", main), url  # no ISO or numeric stamps
    history = page(client, f"/statements/{HERONSFORD}")
    assert re.search(r"<td>\d{1,2} (January|February|March|April|May|June|July|August|September|October|November"
                     r"|December) \d{4}, \d\d:\d\d UTC</td><td>editor</td><td>rewrite</td>", history)
