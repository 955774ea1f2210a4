"""The template sandbox caps the work of a render, not only its output.

Each costly template goes through the rewrite preview and the rewrite form of the web app
(Flask test client): it is stopped within 3 seconds of wall time (the safety limit the hardening
issue sets; an upper bound, not a benchmark) with a message saying what was too much, and a
refused rewrite changes nothing. A normal rewrite with live fields still renders. A threaded
server keeps answering other pages while a costly preview runs.
"""

from __future__ import annotations

import threading
import time
import urllib.parse
import urllib.request
from collections.abc import Iterator
from pathlib import Path

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import signed_in
from werkzeug.serving import make_server

from stetline import actions
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

SLOT = "blurb/cairnbrook/recycling"
DOUBLING = "{% set a = 'xxxxxxxxxx' %}" + "{% set a = a ~ a %}" * 30 + "Cairnbrook."
DOUBLING_PLUS = "{% set a = 'xxxxxxxxxx' %}" + "{% set a = a + a %}" * 30 + "Cairnbrook."
SILENT_LOOPS = "{% for a in range(100000) %}{% for b in range(100000) %}{% endfor %}{% endfor %}Cairnbrook."
RECURSIVE = "{% macro deeper(n) %}{{ deeper(n + 1) }}{% endmacro %}{{ deeper(1) }}"
BRANCHING = "{% macro twice(n) %}{% if n %}{{ twice(n - 1) }}{{ twice(n - 1) }}{% endif %}{% endmacro %}{{ twice(40) }}"
PADDED = "{{ 'x'.center(1000000000) }}"
# every round splits a 160,000-character text into a list as long: few rounds, each slow, so the
# clock stops it rather than the count of rounds
SLOW = ("{% set s = 'xxxxxxxxxx' %}" + "{% set s = s ~ s %}" * 14
        + "{% for i in range(90000) %}{% if s.split('x') %}{% endif %}{% endfor %}Cairnbrook.")
COSTLY = {
    "doubling": (DOUBLING, "builds a text or list longer than 200,000"),
    "doubling-plus": (DOUBLING_PLUS, "builds a text or list longer than 200,000"),
    "silent-loops": (SILENT_LOOPS, "does too much work"),
    "recursive-macro": (RECURSIVE, "calls itself too deeply"),
    "branching-macro": (BRANCHING, "does too much work"),
    "padded": (PADDED, "the string method center is not allowed"),
    "slow": (SLOW, "took longer than 2 seconds"),
}


@pytest.fixture
def ws(demo_path: Path) -> Iterator[Workspace]:
    w = open_workspace(demo_path)
    yield w
    w.close()


@pytest.fixture
def app(ws: Workspace) -> Flask:
    return create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})


def version(ws: Workspace) -> int:
    with ws.reading() as s:
        return actions.view(s, SLOT).slot.version


@pytest.mark.parametrize(("template", "message"), COSTLY.values(), ids=list(COSTLY))
def test_a_costly_preview_is_stopped_in_time_with_a_message(app: Flask, template: str, message: str) -> None:
    client = app.test_client()
    started = time.monotonic()
    response = client.post(f"/statements/{SLOT}/preview", data={"text": template})
    assert time.monotonic() - started < 3.0
    assert response.status_code == 400
    assert message in response.get_data(as_text=True)


@pytest.mark.parametrize(("template", "message"), COSTLY.values(), ids=list(COSTLY))
def test_a_costly_rewrite_is_refused_and_changes_nothing(app: Flask, ws: Workspace, template: str,
                                                          message: str) -> None:
    client: FlaskClient = app.test_client()
    before = version(ws)
    started = time.monotonic()
    response = client.post(f"/statements/{SLOT}/rewrite", data={"text": template, "version": str(before)})
    assert time.monotonic() - started < 3.0
    assert response.status_code == 400 and message in response.get_data(as_text=True)
    with ws.reading() as s:
        v = actions.view(s, SLOT)
        assert v.slot.version == before and not v.layers


def test_a_normal_rewrite_still_renders(app: Flask, ws: Workspace) -> None:
    client = app.test_client()
    with ws.reading() as s:
        shown = actions.view(s, SLOT).draft.evidence["value"]["shown"]
    text = "{% for w in ['Cairnbrook', 'recycles'] %}{{ w }} {% endfor %}{{ value }}{% if value %}.{% endif %}"
    response = client.post(f"/statements/{SLOT}/preview", data={"text": text})
    assert response.status_code == 200 and f"Cairnbrook recycles {shown}." in response.get_data(as_text=True)
    saved = client.post(f"/statements/{SLOT}/rewrite", data={"text": text, "version": str(version(ws))})
    assert saved.status_code == 303
    assert f"Cairnbrook recycles {shown}." in client.get(f"/statements/{SLOT}").get_data(as_text=True)


def test_other_pages_answer_while_a_costly_preview_runs(app: Flask) -> None:
    server = make_server("127.0.0.1", 0, app, threaded=True)
    serving = threading.Thread(target=server.serve_forever, daemon=True)
    serving.start()
    base = f"http://127.0.0.1:{server.server_port}"
    finished: dict[str, float] = {}
    codes: dict[str, int] = {}

    def costly() -> None:
        data = urllib.parse.urlencode({"text": SLOW}).encode()
        try:
            urllib.request.urlopen(f"{base}/statements/{SLOT}/preview", data=data, timeout=30)
        except urllib.error.HTTPError as exc:
            codes["costly"] = exc.code
        finished["costly"] = time.monotonic()

    try:
        started = time.monotonic()
        worker = threading.Thread(target=costly)
        worker.start()
        time.sleep(0.3)  # the costly preview is rendering
        with urllib.request.urlopen(f"{base}/statements/{SLOT}", timeout=30) as page:
            codes["page"] = page.status
        finished["page"] = time.monotonic()
        worker.join(timeout=30)
    finally:
        server.shutdown()
    assert codes == {"page": 200, "costly": 400}
    assert finished["page"] < finished["costly"]  # the page did not wait for the costly preview
    assert finished["costly"] - started < 3.0


def test_preview_needs_the_rewrite_permission(team_path: Path) -> None:
    team = open_workspace(team_path)
    try:
        app = create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})
        for role in ("expert", "editor", "reviewer", "admin"):
            client = signed_in(app, role)
            response = client.post(f"/statements/{SLOT}/preview", data={"text": "Cairnbrook {{ value }}"})
            body = response.get_data(as_text=True)
            if role == "expert":
                assert response.status_code == 403 and "expert is an expert and may not rewrite" in body
            else:
                assert response.status_code == 200 and "Cairnbrook" in body, role
    finally:
        team.close()
