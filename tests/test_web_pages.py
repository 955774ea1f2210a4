"""The web editor's working pages on the demo workspace: loading data (dry run, load, refusals,
uploads kept and removed), publishing, settings and redraft, search, the discussion thread and
send-back, restoring an earlier rewrite, bulk work with its confirmation, and the charts."""

from __future__ import annotations

import base64
import hashlib
import html as html_mod
import io
import os
import re
import time
from pathlib import Path
from typing import Any

import pytest
from alembic import command
from flask import Flask
from flask.testing import FlaskClient
from helpers import every_kind
from markupsafe import escape
from sqlalchemy import inspect

from stetline import actions, comments, demo
from stetline.errors import NotFound, StetlineError
from stetline.store import ops
from stetline.store.db import alembic_config
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

HERONSFORD = "blurb/heronsford/parks-satisfaction"
GORSE = "blurb/gorse-point/recycling"


@pytest.fixture
def app(demo_ws: Workspace) -> Flask:
    return create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})


@pytest.fixture
def client(app: Flask) -> FlaskClient:
    return app.test_client()


def state(ws: Workspace, slot: str) -> dict[str, Any]:
    with ws.session() as s:
        return actions.view(s, slot).to_json(s)


def get(client: FlaskClient, url: str, status: int = 200) -> str:
    response = client.get(url)
    assert response.status_code == status, (url, response.status_code)
    return response.get_data(as_text=True)


def form_fields(html: str, action: str) -> list[tuple[str, str]]:
    """The named inputs of the first form posting to ``action``, in order (values unescaped)."""
    start = html.index(f'action="{action}"')
    form = html[start: html.index("</form>", start)]
    return [(html_mod.unescape(n), html_mod.unescape(v))
            for n, v in re.findall(r'<input[^>]*name="([^"]+)"[^>]*value="([^"]*)"', form)]


def demo_bytes(name: str) -> bytes:
    return demo.data_file(name).read_bytes()


def revised_2025() -> bytes:
    """The 2025 observations with Heronsford's 2025 recycling rate revised (59.3 → 61.0)."""
    text = demo_bytes("observations-2025.csv").decode()
    assert "heronsford,recycling,2025,59.3," in text
    return text.replace("heronsford,recycling,2025,59.3,", "heronsford,recycling,2025,61.0,").encode()


def upload(client: FlaskClient, files: dict[str, tuple[bytes, str]], **form: str) -> Any:
    data: dict[str, Any] = {role: (io.BytesIO(content), name) for role, (content, name) in files.items()}
    data.update(form)
    return client.post("/data", data=data, content_type="multipart/form-data")


def edition_labels(ws: Workspace) -> list[str]:
    with ws.session() as s:
        return [e.label for e in ops.editions(s)]


# -- the data page --------------------------------------------------------------------------

def test_data_page_shows_the_form_and_the_editions(client: FlaskClient) -> None:
    html = get(client, "/data")
    assert 'enctype="multipart/form-data"' in html
    for field, label in (("obs-file", "Observations"), ("topics-file", "Topics"), ("entities-file", "Entities"),
                         ("edition-label", "Edition label")):
        assert f'<label for="{field}">{label}' in html
    assert "Check these files" in html and "<td>observations-2025.csv</td>" in html
    assert 'data-busy="Checking the files…"' in html and "/static/busy.js" in html


def test_dry_run_previews_then_load_commits_and_removes_the_upload(client: FlaskClient, demo_ws: Workspace) -> None:
    before = edition_labels(demo_ws)
    response = upload(client, {"observations": (revised_2025(), "observations-2025-revised.csv")}, by="Ada")
    assert response.status_code == 200
    html = response.get_data(as_text=True)
    assert "Check before loading: edition 2025-r2" in html and "This is a dry run" in html
    assert "Sent to recheck" in html and "Updated silently" in html and "Load this edition" in html
    assert edition_labels(demo_ws) == before  # nothing written
    token = dict(form_fields(html, "/data/load"))["token"]
    folder = demo_ws.path / "uploads" / token
    assert (folder / "observations" / "observations-2025-revised.csv").is_file()
    assert 'data-busy="Loading the edition' in html

    response = client.post("/data/load", data={"token": token})
    assert response.status_code == 303 and response.headers["Location"].endswith("/data?loaded=2025-r2")
    assert edition_labels(demo_ws) == before + ["2025-r2"]
    assert not folder.exists() and not any((demo_ws.path / "uploads").iterdir())
    html = get(client, "/data?loaded=2025-r2")
    assert "Edition 2025-r2" in html and "What the load did" in html and "Open the recheck queue" in html
    with demo_ws.session() as s:
        assert ops.current_edition(s).loaded_by == "Ada"  # the name given on the form
    # the same token cannot load twice
    response = client.post("/data/load", data={"token": token})
    assert response.status_code == 400 and "no longer here" in response.get_data(as_text=True)
    assert edition_labels(demo_ws) == before + ["2025-r2"]


def test_a_bad_file_shows_every_problem_in_a_table_and_writes_nothing(client: FlaskClient, demo_ws: Workspace) -> None:
    bad = b"entity,topic,period,value\nheronsford,recycling,2026,abc\natlantis,recycling,2026,4\n"
    response = upload(client, {"observations": (bad, "bad.csv")})
    assert response.status_code == 400
    html = response.get_data(as_text=True)
    assert "nothing was loaded" in html
    assert "<th scope=\"col\">File</th><th scope=\"col\">Row</th><th scope=\"col\">Column</th>" in html
    assert "<td>bad.csv</td><td>2</td><td>value</td><td>the value is not a number: &#39;abc&#39;</td>" in html
    assert edition_labels(demo_ws) == ["2024", "2025"]
    assert not any((demo_ws.path / "uploads").iterdir())


def test_one_upload_lists_bad_values_periods_and_unknown_names_together(client: FlaskClient,
                                                                         demo_ws: Workspace) -> None:
    bad = (b"entity,topic,period,value\nheronsford,recycling,2025,lots\ngorse-point,recycling,last year,41\n"
           b"atlantis,recycling,2025,40\ngorse-point,fly-tipping,2025,3\n")
    response = upload(client, {"observations": (bad, "four.csv")})
    assert response.status_code == 400
    html = response.get_data(as_text=True)
    assert "4 problems in the files: nothing was loaded" in html
    for row, column in ((2, "value"), (3, "period"), (4, "entity"), (5, "topic")):
        assert f"<td>four.csv</td><td>{row}</td><td>{column}</td>" in html, (row, column)
    assert "&#39;atlantis&#39; is not in the entity metadata" in html
    assert edition_labels(demo_ws) == ["2024", "2025"]


def test_an_upload_identical_to_the_current_edition_says_so(client: FlaskClient, demo_ws: Workspace) -> None:
    same = "This file holds the same data as the current edition (2025); loading it would change nothing."
    html = upload(client, {"observations": (demo_bytes("observations-2025.csv"), "again.csv")}).get_data(as_text=True)
    assert same in html
    assert html.index(same) < html.index("Check before loading: edition 2025-r2")  # before the new label
    assert "Load it anyway as edition 2025-r2" in html
    with_metadata = {"observations": (demo_bytes("observations-2025.csv"), "again.csv"),
                     "topics": (demo_bytes("topics.csv"), "topics.csv"),
                     "entities": (demo_bytes("entities.csv"), "entities.csv")}
    assert same in upload(client, with_metadata).get_data(as_text=True)  # the same metadata too
    changed = upload(client, {"observations": (revised_2025(), "revised.csv")}).get_data(as_text=True)
    assert "holds the same data" not in changed and "Load this edition" in changed
    assert edition_labels(demo_ws) == ["2024", "2025"]


def test_only_csv_and_xlsx_are_taken_and_names_are_cleaned(client: FlaskClient, demo_ws: Workspace) -> None:
    response = upload(client, {"observations": (b"\x89PNG\r\n", "chart.png")})
    assert response.status_code == 400 and "Stetline reads CSV files" in response.get_data(as_text=True)
    response = upload(client, {"observations": (revised_2025(), "../../../outside.csv")})
    assert response.status_code == 200
    assert not (demo_ws.path.parent / "outside.csv").exists() and not Path("/outside.csv").exists()
    stored = list((demo_ws.path / "uploads").glob("*/observations/*"))
    assert [p.name for p in stored] == ["outside.csv"]


def test_an_xlsx_workbook_is_read(client: FlaskClient) -> None:
    import csv

    from openpyxl import Workbook

    book = Workbook()
    sheet = book.active
    sheet.title = "observations"
    for row in csv.reader(io.StringIO(revised_2025().decode())):
        sheet.append(row)
    buf = io.BytesIO()
    book.save(buf)
    response = upload(client, {"observations": (buf.getvalue(), "edition 2025 (revised).xlsx")})
    html = response.get_data(as_text=True)
    assert response.status_code == 200, html
    assert "Check before loading: edition 2025-r2" in html and "<code>edition_2025_revised.xlsx</code>" in html


def test_the_observations_file_is_required(client: FlaskClient) -> None:
    response = upload(client, {"topics": (demo_bytes("topics.csv"), "topics.csv")})
    assert response.status_code == 400 and "Choose the observations file" in response.get_data(as_text=True)


def test_a_taken_label_is_refused_before_anything_is_kept(client: FlaskClient, demo_ws: Workspace) -> None:
    response = upload(client, {"observations": (revised_2025(), "o.csv")}, label="2024")
    assert response.status_code == 400 and "already exists" in response.get_data(as_text=True)
    assert not any((demo_ws.path / "uploads").iterdir())


def test_an_unknown_token_is_refused(client: FlaskClient) -> None:
    for token in ("../../etc", "0" * 32, ""):
        response = client.post("/data/load", data={"token": token})
        assert response.status_code == 400 and "Upload them again" in response.get_data(as_text=True)


def test_uploads_older_than_an_hour_are_removed(client: FlaskClient, demo_ws: Workspace) -> None:
    old, fresh = demo_ws.path / "uploads" / ("a" * 32), demo_ws.path / "uploads" / ("b" * 32)
    for folder in (old, fresh):
        (folder / "observations").mkdir(parents=True)
    past = time.time() - 2 * 3600
    os.utime(old, (past, past))
    get(client, "/data")
    assert not old.exists() and fresh.exists()


def test_an_upload_above_the_limit_gets_a_413_page(demo_ws: Workspace) -> None:
    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False,
                                  "MAX_CONTENT_LENGTH": 2048}).test_client()
    response = upload(client, {"observations": (b"x" * 10_000, "big.csv")})
    assert response.status_code == 413
    html = response.get_data(as_text=True)
    assert "Upload too large" in html and "2 KB" in html and "Nothing was loaded" in html


def test_the_first_edition_loads_into_an_empty_workspace(ws: Workspace) -> None:
    client = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    response = upload(client, {"observations": (demo_bytes("observations-2024.csv"), "obs.csv")})
    assert response.status_code == 400 and "no topic metadata" in response.get_data(as_text=True)
    response = upload(client, {"observations": (demo_bytes("observations-2024.csv"), "obs.csv"),
                               "topics": (demo_bytes("topics.csv"), "topics.csv"),
                               "entities": (demo_bytes("entities.csv"), "entities.csv")})
    html = response.get_data(as_text=True)
    assert response.status_code == 200 and "New, drafted" in html
    token = dict(form_fields(html, "/data/load"))["token"]
    assert client.post("/data/load", data={"token": token}).status_code == 303
    with ws.session() as s:
        assert ops.current_edition(s).label == "2024" and ops.count_slots(s, ops.SlotFilter()) > 100


# -- publishing -----------------------------------------------------------------------------

def test_publish_page_shows_the_blocks_the_untraced_numbers_and_the_caution(client: FlaskClient,
                                                                           demo_ws: Workspace) -> None:
    with demo_ws.session() as s:  # a typed number no fact backs, in a statement that would be printed
        actions.rewrite(s, "blurb/cairnbrook/recycling", "Cairnbrook recycled 61.2% of its waste.", by="editor")
    html = get(client, "/publish")
    # the demo's 18 (`stetline list --status recheck`), the approved quarterly blurb among them
    assert "18 statements wait in recheck" in html and f'href="/statements/{HERONSFORD}"' in html
    assert "Numbers no fact backs" in html and "61.2%" in html
    # the stale rewrite of a statement in recheck is not printed, so its old figure is not audited
    assert "68%" not in html
    assert "drafts computed from the loaded data" in html and "qualified person must check" in html
    assert "release policy or code of practice comes first" in html
    for fmt in ("md", "html", "json", "csv", "docx"):
        assert f'<input type="radio" id="fmt-{fmt}" name="format" value="{fmt}"' in html
        assert f'<label for="fmt-{fmt}">' in html
    assert '<label for="allow-recheck">' in html and '<label for="sec-topic">' in html


def test_publishing_is_refused_while_statements_wait_in_recheck(client: FlaskClient, demo_ws: Workspace) -> None:
    response = client.post("/publish/download", data={"format": "md", "sections": "entity"})
    assert response.status_code == 409
    html = response.get_data(as_text=True)
    assert "Nothing was published" in html and "wait in recheck" in html
    # the refusal names the page's tick box, not the command-line option (the CLI keeps its wording)
    assert "--allow-recheck" not in html
    assert "Resolve them, or tick “Publish even though statements wait in recheck” on the publish page." in html
    with demo_ws.session() as s:
        assert ops.events_by_action(s, "publish") == []


def test_markdown_download_is_recorded_with_its_checksum(client: FlaskClient, demo_ws: Workspace) -> None:
    response = client.post("/publish/download", data={"format": "md", "sections": "topic", "allow_recheck": "1",
                                                     "by": "Grace"})
    assert response.status_code == 200
    assert response.headers["Content-Type"] == "text/markdown; charset=utf-8"
    assert response.headers["Content-Disposition"] == (
        'attachment; filename="kestrel-sound-regional-council-service-scorecard-2025.md"')
    body = response.get_data()
    assert body.startswith(b"# Kestrel Sound Regional Council") and b"qualified person must check" in body
    with demo_ws.session() as s:
        [event] = ops.events_by_action(s, "publish")
        assert event.by == "Grace" and event.detail["format"] == "md"
        assert event.detail["sha256"] == hashlib.sha256(body).hexdigest()
    assert hashlib.sha256(body).hexdigest() in get(client, "/publish")  # recent publications


def test_word_download_is_binary_with_its_media_type(client: FlaskClient) -> None:
    response = client.post("/publish/download", data={"format": "docx", "sections": "entity", "allow_recheck": "1"})
    assert response.status_code == 200
    assert response.headers["Content-Type"].startswith("application/vnd.openxmlformats-officedocument")
    assert response.headers["Content-Disposition"].endswith('.docx"') and response.get_data()[:2] == b"PK"


def test_an_unknown_format_is_refused(client: FlaskClient) -> None:
    response = client.post("/publish/download", data={"format": "pdf", "sections": "entity"})
    assert response.status_code == 400 and "Choose one of the formats" in response.get_data(as_text=True)


# -- settings -------------------------------------------------------------------------------

def test_settings_page_has_a_labelled_control_and_help_for_every_setting(client: FlaskClient) -> None:
    from stetline.settings import SETTINGS

    html = get(client, "/settings")
    for spec in SETTINGS:
        assert f'<label for="set-{spec.key}">' in html and str(escape(spec.help)) in html
        assert f'<label for="set-{spec.key}">{escape(spec.label)} <code' in html  # the declared label
        kind = "checkbox" if isinstance(spec.default, bool) else None
        if kind:
            assert f'<input type="checkbox" id="set-{spec.key}" name="{spec.key}"' in html
        elif spec.choices:
            assert f'<select id="set-{spec.key}" name="{spec.key}"' in html
        else:
            assert f'<input type="text" id="set-{spec.key}" name="{spec.key}"' in html
    assert "Redraft now" not in html  # the demo's drafts follow its house style


def test_the_kinds_drafted_have_their_own_group_on_the_settings_page(client: FlaskClient) -> None:
    html = get(client, "/settings")
    sections = {re.search(r"<legend>([^<]+)</legend>", part).group(1): part  # type: ignore[union-attr]
                for part in html.split('<fieldset class="settings-group">')[1:]}
    assert "What is drafted" in sections
    assert 'id="set-kinds"' in sections["What is drafted"]
    assert 'id="set-kinds"' not in sections["House style: the wording of drafts"]
    assert 'id="set-serial_comma"' in sections["House style: the wording of drafts"]


def _settings_form(client: FlaskClient) -> dict[str, str]:
    html = get(client, "/settings")
    start = html.index('action="/settings"')
    form = html[start: html.index("</form>", start)]
    texts = re.findall(r'<input type="text" id="[^"]+" name="([^"]+)" value="([^"]*)"', form)
    out = {n: html_mod.unescape(v) for n, v in texts}
    checked = re.findall(r'<input type="checkbox" id="[^"]+" name="([^"]+)" value="true" checked', form)
    out.update({n: "true" for n in checked})
    for name, body in re.findall(r'<select id="[^"]+" name="([^"]+)"[^>]*>(.*?)</select>', form, re.S):
        out[name] = html_mod.unescape(re.search(r'<option value="([^"]*)" selected>', body).group(1))  # type: ignore[union-attr]
    return out


def test_a_style_change_is_saved_recorded_and_offers_a_redraft(client: FlaskClient, demo_ws: Workspace) -> None:
    form = _settings_form(client)
    assert form["serial_comma"] == "true" and form["entity_noun"] == "town"
    del form["serial_comma"]  # untick the box
    response = client.post("/settings", data={**form, "by": "Ada"})
    assert response.status_code == 303
    with demo_ws.session() as s:
        assert ops.get_settings(s)["serial_comma"] is False
        [event] = ops.events_by_action(s, "setting")
        assert event.by == "Ada" and event.detail == {"key": "serial_comma", "old": True, "new": False}
    html = get(client, "/settings")
    assert "Saved serial_comma: True → False" in html
    assert "Redraft now" in html and "<code>serial_comma</code>" in html
    response = client.post("/settings/redraft")
    assert response.status_code == 303
    html = get(client, "/settings")
    assert "Redrafted edition 2025" in html and "Redraft now" not in html
    with demo_ws.session() as s:
        assert ops.latest_event(s, ("redraft",)).by == "Ada"


def test_changing_a_style_setting_back_needs_no_redraft(client: FlaskClient) -> None:
    form = _settings_form(client)
    client.post("/settings", data={**form, "locale": "en_US"})
    assert "Redraft now" in get(client, "/settings")
    client.post("/settings", data={**form, "locale": "en_GB"})
    assert "Redraft now" not in get(client, "/settings")


def test_an_invalid_setting_saves_nothing(client: FlaskClient, demo_ws: Workspace) -> None:
    form = _settings_form(client)
    response = client.post("/settings", data={**form, "title": "A new title", "entity_noun": "  ", "locale": "xx_XX"})
    assert response.status_code == 400
    html = response.get_data(as_text=True)
    assert "Nothing was saved" in html and 'id="err-entity_noun"' in html and 'id="err-locale"' in html
    assert 'value="A new title"' in html  # the typed values are kept
    with demo_ws.session() as s:
        assert ops.get_settings(s)["title"] == demo.TITLE and ops.events_by_action(s, "setting") == []


def test_a_title_change_needs_no_redraft(client: FlaskClient) -> None:
    form = _settings_form(client)
    client.post("/settings", data={**form, "title": "Scorecard 2025"})
    html = get(client, "/settings")
    assert "Saved title" in html and "Redraft now" not in html and 'value="Scorecard 2025"' in html


def test_nothing_changed_says_so(client: FlaskClient) -> None:
    client.post("/settings", data=_settings_form(client))
    assert "Nothing changed." in get(client, "/settings")


# -- search ---------------------------------------------------------------------------------

def test_search_finds_notes_and_marks_the_words(client: FlaskClient) -> None:
    html = get(client, "/search?q=Food-Waste+kerbside")
    assert "1 result for" in html and 'href="/statements/blurb/samphire-reach/recycling"' in html
    assert '<span class="tag tag-note">note</span>' in html and "by expert" in html
    assert "<mark>kerbside</mark> <mark>food-waste</mark>" in html


def test_search_finds_rewrites_pins_and_comments(client: FlaskClient, demo_ws: Workspace) -> None:
    html = get(client, "/search?q=most+satisfied+with+their+parks")
    assert '<span class="tag tag-rewrite">rewrite</span>' in html and HERONSFORD in html
    with demo_ws.session() as s:
        comments.add_comment(s, GORSE, "Ask the waste team about the glass round", "Ada")
    html = get(client, "/search?q=glass+round")
    assert "1 result for" in html and '<span class="tag tag-comment">comment</span>' in html and "by Ada" in html


def test_search_pages_fifty_at_a_time(client: FlaskClient, demo_ws: Workspace) -> None:
    with demo_ws.session() as s:
        total = ops.search(s, "2025").total
    assert total > 100
    html = get(client, "/search?q=2025")
    assert f"{total} results" in html and "showing 1–50" in html
    assert len(re.findall(r'<p class="result-head">', html)) == 50
    assert 'href="/search?q=2025&amp;page=2" rel="next"' in html
    html = get(client, "/search?q=2025&page=2")
    assert "showing 51–100" in html and 'rel="prev"' in html


def test_search_takes_wildcards_literally_and_an_empty_query_shows_the_form(client: FlaskClient) -> None:
    assert "Nothing holds all of" in get(client, "/search?q=%25%25_%25")
    html = get(client, "/search?q=")
    assert '<label for="search-q">' in html and "result" not in html.split("</form>", 2)[-1]


# -- the discussion thread ------------------------------------------------------------------

def test_comments_form_a_thread_in_markdown_without_scripts(client: FlaskClient, demo_ws: Workspace) -> None:
    before = state(demo_ws, HERONSFORD)
    response = client.post(f"/statements/{HERONSFORD}/comment", data={
        "version": str(before["version"]), "text": "Is **59.3%** final? <script>alert(1)</script>", "by": "Ada"})
    assert response.status_code == 303
    html = get(client, f"/statements/{HERONSFORD}")
    assert "Comment added" in html and "Is <strong>59.3%</strong> final?" in html
    assert "<script>alert" not in html and "<strong>Ada</strong>" in html
    after = state(demo_ws, HERONSFORD)
    assert after["status"] == before["status"] and after["version"] == before["version"]
    assert '<label for="comment-text">Comment</label>' in html


def test_send_back_records_an_event_and_keeps_the_status(client: FlaskClient, demo_ws: Workspace) -> None:
    slot = "blurb/larkholt-vale/recycling"  # Larkholt is renamed at the demo's second load
    before = state(demo_ws, slot)
    response = client.post(f"/statements/{slot}/send-back", data={
        "version": str(before["version"]), "text": "Say which year the rank is for.", "by": "reviewer"})
    assert response.status_code == 303
    assert state(demo_ws, slot)["status"] == before["status"]
    with demo_ws.session() as s:
        [event] = [e for e in ops.events_for(s, slot) if e.action == "send-back"]
        assert event.by == "reviewer" and event.after == "Say which year the rank is for."
        [c] = ops.comments_for(s, slot)
        assert c.kind == "send-back"
    html = get(client, f"/statements/{slot}")
    assert '<span class="tag tag-send-back">sent back</span> by <strong>reviewer</strong>' in html
    assert "<td>reviewer</td><td>send-back</td>" in html


def test_an_empty_comment_is_refused_next_to_its_field(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, HERONSFORD)["version"]
    for action in ("comment", "send-back"):
        response = client.post(f"/statements/{HERONSFORD}/{action}", data={"version": str(v), "text": " "})
        assert response.status_code == 400 and 'id="comment-error"' in response.get_data(as_text=True)
    with demo_ws.session() as s:
        assert ops.comments_for(s, HERONSFORD) == []


def test_the_engine_refuses_comments_on_unknown_statements(demo_ws: Workspace) -> None:
    with demo_ws.session() as s:
        with pytest.raises(NotFound):
            comments.add_comment(s, "blurb/atlantis/recycling", "hello", "Ada")
        with pytest.raises(StetlineError, match="limit"):
            comments.send_back(s, HERONSFORD, "x" * 6000, "Ada")
        entry = comments.add_comment(s, HERONSFORD, "  fine  ", "Ada")
        assert entry.text == "fine" and comments.thread(s, HERONSFORD)[0].to_json()["kind"] == "comment"


# -- restoring an earlier rewrite -----------------------------------------------------------

def test_an_earlier_rewrite_can_be_restored(client: FlaskClient, demo_ws: Workspace) -> None:
    slot = GORSE
    first = state(demo_ws, slot)["layer"]["text"]
    v = state(demo_ws, slot)["version"]
    client.post(f"/statements/{slot}/rewrite", data={"version": str(v), "text": "Gorse Point recycled {{ value }}."})
    html = get(client, f"/statements/{slot}")
    buttons = re.findall(r'<form class="restore".*?name="text" value="([^"]*)"', html, re.S)
    assert [html_mod.unescape(b) for b in buttons] == [first]  # not the current text
    assert 'aria-label="Restore the version of' in html
    response = client.post(f"/statements/{slot}/restore", data={"version": str(v + 1), "text": first})
    assert response.status_code == 303
    after = state(demo_ws, slot)
    assert after["layer"]["text"] == first and after["version"] == v + 2
    with demo_ws.session() as s:
        assert [e.action for e in ops.events_for(s, slot)][-2:] == ["rewrite", "rewrite"]
    assert "Earlier version restored" in get(client, f"/statements/{slot}")


def test_restoring_from_a_stale_page_is_a_conflict(client: FlaskClient, demo_ws: Workspace) -> None:
    v = state(demo_ws, GORSE)["version"]
    response = client.post(f"/statements/{GORSE}/restore", data={"version": str(v - 1), "text": "Old text."})
    assert response.status_code == 409 and 'id="restore-error"' in response.get_data(as_text=True)


# -- bulk work ------------------------------------------------------------------------------

def test_entity_page_filters_by_status_and_offers_bulk_work(client: FlaskClient) -> None:
    html = get(client, "/entities/heronsford")
    assert "Approve all 13 shown" in html and "Suppress all 13 shown" in html and "Annotate all 13 shown" in html
    # a blurb for each of its 12 topics (seed_data/topics.csv: 11 yearly still reported, one quarterly) and the profile
    assert '<label for="bulk-note">Note for all 13 shown</label>' in html and '<label for="f-status">' in html
    html = get(client, "/entities/heronsford?status=recheck")
    # the parks rewrite whose numbers changed, and the approved quarterly blurb (stetline.demo, seed_data/README.md)
    assert "2 of 13 statements" in html and "Approve all 2 shown" in html
    assert sorted(re.findall(r'<a href="/statements/([^"]+)"><code>', html)) == sorted(
        [HERONSFORD, "blurb/heronsford/library-visits"])
    assert "Approve all 1 shown" in get(client, "/topics/parks-satisfaction?status=edited")  # Little Thrift's
    # the renamed town's rewrite, whose quarterly run grew (stetline.demo), beside Heronsford's approval
    assert "Approve all 2 shown" in get(client, "/topics/library-visits?status=recheck")


def test_bulk_approve_confirms_the_count_then_approves_exactly_those(client: FlaskClient, demo_ws: Workspace) -> None:
    response = client.post("/bulk/confirm", data={"action": "approve", "scope": "entity", "key": "heronsford",
                                                  "status": "draft"})
    assert response.status_code == 200
    html = response.get_data(as_text=True)
    # Heronsford's 13 statements but the 2 in recheck (test_entity_page_filters_by_status_and_offers_bulk_work)
    assert "<h1>Approve 11 statements?</h1>" in html and "Yes, approve all 11" in html
    assert "Proposed texts in recheck" not in html  # none of these is in recheck
    fields = form_fields(html, "/bulk/apply")
    slots = [v for n, v in fields if n == "slot"]
    assert len(slots) == 11 and HERONSFORD not in slots
    with demo_ws.session() as s:
        assert all(v.slot.status == "draft"
                   for v in actions.views(s, ops.SlotFilter(entity="heronsford", status="draft")))
    response = client.post("/bulk/apply", data=_multi([(n, "reviewer" if n == "by" else v) for n, v in fields]))
    assert response.status_code == 303 and response.headers["Location"].endswith("/entities/heronsford?status=draft")
    html = get(client, "/entities/heronsford?status=draft")
    assert "Approved 11 statements." in html and "No statements with this filter" in html
    with demo_ws.session() as s:
        assert ops.status_counts_by(s, "entity")["heronsford"] == {"approved": 11, "recheck": 2}
        assert sorted(e.slot_id for e in ops.recent_events(s, 200) if e.action == "approve" and e.by == "reviewer"
                      and e.slot_id in slots) == sorted(slots)


def _multi(pairs: list[tuple[str, str]]) -> Any:
    from werkzeug.datastructures import MultiDict

    return MultiDict(pairs)


def test_bulk_annotate_on_the_recheck_queue(client: FlaskClient, demo_ws: Workspace) -> None:
    html = get(client, "/recheck?reason=slot-gone")
    assert "Annotate all 2 shown" in html
    response = client.post("/bulk/confirm", data={"action": "annotate", "scope": "recheck", "reason": "slot-gone",
                                                  "text": "Indicator discontinued in 2025."})
    html = response.get_data(as_text=True)
    assert "<h1>Annotate 2 statements?</h1>" in html and "Indicator discontinued in 2025." in html
    response = client.post("/bulk/apply", data=_multi(form_fields(html, "/bulk/apply")))
    assert response.status_code == 303 and response.headers["Location"].endswith("/recheck?reason=slot-gone")
    for slot in ("roundup/paper-timetables", "blurb/wrackhaven/paper-timetables"):
        assert "Indicator discontinued in 2025." in [n["text"] for n in state(demo_ws, slot)["notes"]]


def test_bulk_approve_in_the_recheck_queue_says_proposals_are_not_taken(client: FlaskClient) -> None:
    html = client.post("/bulk/confirm", data={"action": "approve", "scope": "recheck", "reason": "numbers-changed"}
                       ).get_data(as_text=True)
    # of the 15 whose numbers changed (`stetline list --status recheck` on the demo), the 11 whose claims the new
    # data also contradict are left alone (the renamed town's quarterly rewrite and Tidemere's breakdown among them)
    assert "<h1>Approve 4 statements?</h1>" in html and "Proposed texts in recheck are <em>not</em> taken" in html
    assert "Left as they are (11)" in html and html.count("the new data contradict its claims") == 11


def test_bulk_annotate_needs_a_note(client: FlaskClient) -> None:
    response = client.post("/bulk/confirm", data={"action": "annotate", "scope": "topic", "key": "recycling",
                                                  "text": "   "})
    assert response.status_code == 400 and "Write the note first" in response.get_data(as_text=True)
    assert "/bulk/apply" not in response.get_data(as_text=True)


def test_bulk_suppress_leaves_out_the_already_suppressed(client: FlaskClient, demo_ws: Workspace) -> None:
    response = client.post("/bulk/confirm", data={"action": "suppress", "scope": "entity", "key": "puffin-holm"})
    html = response.get_data(as_text=True)
    n = len(re.findall(r'name="slot"', html))
    assert f"<h1>Suppress {n} statements?</h1>" in html and "Left as they are (1)" in html
    assert "already suppressed" in html


def test_bulk_apply_changes_nothing_when_a_statement_changed_since(client: FlaskClient, demo_ws: Workspace) -> None:
    html = client.post("/bulk/confirm", data={"action": "approve", "scope": "topic", "key": "recycling"}).get_data(
        as_text=True)
    fields = form_fields(html, "/bulk/apply")
    with demo_ws.session() as s:
        actions.pin(s, "blurb/heronsford/recycling", by="someone")
    before = {slot: state(demo_ws, slot)["status"] for n, slot in fields if n == "slot"}
    response = client.post("/bulk/apply", data=_multi(fields))
    assert response.status_code == 409
    assert "Nothing was changed" in response.get_data(as_text=True)
    assert {slot: state(demo_ws, slot)["status"] for slot in before} == before


def test_bulk_forms_refuse_unknown_selections(client: FlaskClient) -> None:
    assert client.post("/bulk/confirm", data={"action": "approve", "scope": "galaxy"}).status_code == 400
    assert client.post("/bulk/confirm", data={"action": "delete", "scope": "recheck"}).status_code == 400
    unknown = {"action": "approve", "scope": "entity", "key": "atlantis"}
    assert client.post("/bulk/confirm", data=unknown).status_code == 404
    response = client.post("/bulk/apply", data=_multi([("action", "approve"), ("scope", "recheck"),
                                                      ("slot", HERONSFORD), ("version", "x")]))
    assert response.status_code == 400


# -- the charts -----------------------------------------------------------------------------
# on blurb and roundup slots: drafted with every kind and with the default kinds alike
BLURB = "blurb/heronsford/recycling"

def test_statement_page_charts_the_series_and_every_entity_with_text_alternatives(client: FlaskClient) -> None:
    html = get(client, f"/statements/{BLURB}")
    series = re.search(r'<img id="series-chart" src="data:image/svg\+xml;base64,([^"]+)" alt="([^"]+)">', html)
    assert series is not None
    svg = base64.b64decode(series.group(1)).decode("utf-8")
    assert svg.startswith("<svg") and "<title>Household recycling rate in Heronsford, 2020 to 2025</title>" in svg
    assert "<script" not in svg
    assert series.group(2).startswith("Household recycling rate in Heronsford: 59.3% in 2025, up from 54.4% in 2020.")
    assert "The other 13 towns ranged from" in series.group(2)
    assert "<td>2024</td><td>59.0%</td>" in html  # the figures as a table
    ranking = re.search(r'<img id="ranking-chart" src="data:image/svg\+xml;base64,[^"]+" alt="([^"]+)">', html)
    assert ranking is not None
    assert "best Heronsford (59.3%)" in ranking.group(1) and "Heronsford: 59.3%, 1st of 14." in ranking.group(1)
    assert "<td>Heronsford <strong>(this statement)</strong></td><td>59.3%</td>" in html
    assert html.count("<figcaption>") == 2


def test_a_statement_page_shown_again_draws_no_chart(client: FlaskClient, monkeypatch: pytest.MonkeyPatch) -> None:
    from stetline import charts

    charts._cache.clear()  # drawn by this test's workspace, not found from an earlier test
    first = get(client, f"/statements/{BLURB}")
    drawn: list[str] = []
    real = charts._save
    monkeypatch.setattr(charts, "_save", lambda spec, fmt: drawn.append(spec.title) or real(spec, fmt))
    assert get(client, f"/statements/{BLURB}") == first
    assert drawn == []  # cached by the statement's digest: nothing drawn again
    charts._cache.clear()  # as after a restart: the drawings are read from the workspace's chart folder
    assert get(client, f"/statements/{BLURB}") == first
    assert drawn == []


def test_a_topic_statement_shows_the_ranking_only_and_the_headline_none(client: FlaskClient) -> None:
    html = get(client, "/statements/roundup/recycling")
    assert 'id="ranking-chart"' in html and 'id="series-chart"' not in html and "(this statement)" not in html
    assert "14 towns ranked: best Heronsford (59.3%), worst Gorse Point (40.4%)." in html
    assert "<figure" not in get(client, "/statements/headline")


# -- a workspace made before the comment threads ----------------------------------------------

def test_the_app_brings_an_older_workspace_up_to_date(demo_ws: Workspace) -> None:
    command.downgrade(alembic_config(demo_ws.url), "0001")
    assert not inspect(demo_ws.engine).has_table("comment")
    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    assert inspect(demo_ws.engine).has_table("comment")
    assert "Discussion" in get(client, f"/statements/{HERONSFORD}")


# -- every form carries a CSRF token, every control a label -----------------------------------

PAGES = ("/", "/entities", "/entities/heronsford", "/topics/recycling", f"/statements/{HERONSFORD}",
         "/statements/roundup/recycling", "/recheck", "/publish", "/data", "/settings", "/search?q=recycling")


def test_every_post_form_carries_a_csrf_token(demo_ws: Workspace) -> None:
    client = create_app(demo_ws, {"TESTING": True}).test_client()
    seen = 0
    for url in PAGES:
        html = get(client, url)
        forms = re.findall(r'<form[^>]*method="post".*?</form>', html, re.S)
        seen += len(forms)
        for form in forms:
            assert 'name="csrf_token" value="' in form, (url, form[:120])
    assert seen > 40


def test_every_control_has_a_label(client: FlaskClient) -> None:
    seen: dict[str, int] = {}
    for url in PAGES:
        html = get(client, url)
        labelled = set(re.findall(r'<label for="([^"]+)"', html))
        for tag in re.findall(r"<(?:input|select|textarea)\b[^>]*>", html):
            if 'type="hidden"' in tag:
                continue
            ident = re.search(r'id="([^"]+)"', tag)
            assert ident and ident.group(1) in labelled or "aria-label=" in tag, (url, tag)
            seen[url] = seen.get(url, 0) + 1
    # every page showed controls (at least the search box), 56 in all today
    assert set(seen) == set(PAGES)
    assert sum(seen.values()) > 50


@pytest.mark.parametrize("slot", [
    "headline", "profile/north-quay", "roundup/recycling", "roundup/paper-timetables",  # gone, in recheck
    "blurb/puffin-holm/new-business",  # suppressed
    "blurb/heronsford/relet-days", "blurb/wrackhaven/paper-timetables",
])
def test_every_kind_of_statement_page_renders(client: FlaskClient, slot: str) -> None:
    html = get(client, f"/statements/{slot}")
    assert "What the next publication prints</h2>" in html and 'id="thread-h"' in html and 'id="history-h"' in html


def test_every_part_kind_of_statement_page_renders(demo_path: Path) -> None:
    every_kind(demo_path)  # the part kinds are drafted only when the kinds setting names them
    ws = open_workspace(demo_path)
    try:
        client = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
        for slot in ("standing/heronsford/recycling", "change/heronsford/recycling", "trend/heronsford/relet-days",
                     "leaders/recycling", "movement/recycling"):
            html = get(client, f"/statements/{slot}")
            assert "What the next publication prints</h2>" in html and 'id="history-h"' in html, slot
    finally:
        ws.close()
