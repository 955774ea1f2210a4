"""A stored rewrite that stops rendering never takes a page or a command down.

The rewrite hides a macro that calls itself behind a condition that is false when it is saved
(the percent filter prints "%" then). Switching the house style to "per cent" makes it true: the
statement goes to recheck with the reason render-failed, every page that shows it answers 200
(the statement's page says why it shows the text as written), the CLI's show, publish, revert
and suppress end with a message, never a traceback, and revert and suppress work.
"""

from __future__ import annotations

import json
import subprocess
from collections.abc import Iterator
from pathlib import Path

import pytest
from flask import Flask
from helpers import run_stetline

from stetline import actions
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

SLOT = "blurb/cairnbrook/recycling"
TRAP = ("{% macro deeper(n) %}{{ deeper(n + 1) }}{% endmacro %}"
        "{% if 'per cent' in (value | percent(0)) %}{{ deeper(1) }}{% endif %}Cairnbrook recycles {{ value }}.")


def stetline(path: Path, *args: str) -> subprocess.CompletedProcess[str]:
    return run_stetline(path, *args)


@pytest.fixture
def trapped(demo_path: Path) -> Iterator[Path]:
    saved = stetline(demo_path, "rewrite", SLOT, TRAP, "--by", "ed")
    assert saved.returncode == 0, saved.stderr  # the failing branch does not run when it is saved
    changed = stetline(demo_path, "settings", "percent_word", "per cent", "--by", "ed")
    assert changed.returncode == 0, changed.stderr
    yield demo_path


@pytest.fixture
def ws(trapped: Path) -> Iterator[Workspace]:
    w = open_workspace(trapped)
    yield w
    w.close()


def test_the_statement_waits_in_recheck_with_the_reason(trapped: Path) -> None:
    shown = stetline(trapped, "show", SLOT, "--json")
    assert shown.returncode == 0 and "Traceback" not in shown.stderr, shown.stderr
    data = json.loads(shown.stdout)
    assert data["status"] == "recheck" and "render-failed" in data["recheck"]["reasons"]
    assert data["current"] == TRAP  # the stored text as written
    assert data["text"] == data["draft"]  # a publication would print the new draft, never the broken text
    assert "calls itself too deeply" in data["render_error"]
    status = json.loads(stetline(trapped, "status", "--json").stdout)
    assert status["recheck_reasons"].get("render-failed") == 2  # this one and the demo's Puffin Holm rewrite


def test_every_page_that_shows_it_answers(ws: Workspace) -> None:
    app: Flask = create_app(ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    client = app.test_client()
    page = client.get(f"/statements/{SLOT}")
    assert page.status_code == 200
    body = page.get_data(as_text=True)
    assert 'id="render-warning"' in body and "cannot be rendered, so it is shown as written" in body
    for url in ("/entities/cairnbrook", "/topics/recycling", "/recheck", "/publish", "/", "/changes"):
        assert client.get(url).status_code == 200, url


def test_publish_refuses_with_a_message_and_show_works(trapped: Path) -> None:
    published = stetline(trapped, "publish", "--by", "ed")
    assert published.returncode == 1 and "Traceback" not in published.stderr
    assert SLOT in published.stderr and "recheck" in published.stderr
    shown = stetline(trapped, "show", SLOT)
    assert shown.returncode == 0 and "Traceback" not in shown.stderr, shown.stderr


def test_revert_needs_no_rendering(trapped: Path, ws: Workspace) -> None:
    done = stetline(trapped, "revert", SLOT, "--by", "ed")
    assert done.returncode == 0 and "Traceback" not in done.stderr, done.stderr
    with ws.reading() as s:
        v = actions.view(s, SLOT)
        assert v.slot.status == "draft" and not v.layers
        assert actions.published_text(s, v.slot, v.draft, v.layers) == v.draft.text


def test_suppress_needs_no_rendering_and_the_rewrite_is_kept(trapped: Path, ws: Workspace) -> None:
    done = stetline(trapped, "suppress", SLOT, "--by", "ed")
    assert done.returncode == 0 and "Traceback" not in done.stderr, done.stderr
    with ws.reading() as s:
        v = actions.view(s, SLOT)
        assert v.slot.status == "suppressed"
        assert [x.text for x in v.layers if x.type == "rewrite"] == [TRAP]  # nothing a person wrote is lost
    published = stetline(trapped, "publish", "--by", "ed", "--allow-recheck")
    assert published.returncode == 0, published.stderr
