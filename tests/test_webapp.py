"""The web app's overview page, served from the demo workspace."""

from __future__ import annotations

from stetline.web import create_app
from stetline.workspace import Workspace


def test_overview_shows_the_edition_and_the_counts(demo_ws: Workspace) -> None:
    app = create_app(demo_ws, {"TESTING": True})
    client = app.test_client()
    page = client.get("/")
    assert page.status_code == 200
    html = page.get_data(as_text=True)
    assert "Edition <strong>2025</strong>" in html
    assert "numbers-changed" in html and "claim-changed" in html
    assert "qualified person must check" in html
    assert 'class="badge badge-recheck">recheck<' in html  # status is a word, not colour alone


def test_empty_workspace_overview_says_how_to_load(ws: Workspace) -> None:
    html = create_app(ws, {"TESTING": True}).test_client().get("/").get_data(as_text=True)
    assert "No edition is loaded yet" in html
