"""The web editor on a workspace with accounts: every page needs a signed-in account, actions run
under it and the engine checks its role; without accounts, anyone acts under a typed name."""

from __future__ import annotations

import re
from typing import Any

import pytest
from flask import Flask
from flask.testing import FlaskClient

from stetline import accounts, actions
from stetline.store import ops
from stetline.web import create_app
from stetline.workspace import Workspace

HERONSFORD = "blurb/heronsford/parks-satisfaction"
GORSE = "blurb/gorse-point/recycling"
PASSWORDS = {"ada": "ada-password-1", "eve": "eve-password-1", "rex": "rex-password-1", "max": "max-password-1"}


@pytest.fixture
def team(demo_ws: Workspace) -> Workspace:
    """The demo workspace with an admin (max), an editor (eve), an expert (ada) and a reviewer (rex)."""
    with demo_ws.session() as s:
        accounts.add_account(s, "max", "admin", PASSWORDS["max"], by="max")
        for name, role in (("eve", "editor"), ("ada", "expert"), ("rex", "reviewer")):
            accounts.add_account(s, name, role, PASSWORDS[name], by="max")
    return demo_ws


@pytest.fixture
def app(team: Workspace) -> Flask:
    return create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})


def signed_in(app: Flask, name: str) -> FlaskClient:
    client = app.test_client()
    response = client.post("/login", data={"name": name, "password": PASSWORDS[name]})
    assert response.status_code == 303, response.get_data(as_text=True)
    return client


def version(ws: Workspace, slot: str) -> int:
    with ws.session() as s:
        return actions.view(s, slot).slot.version


def test_every_page_asks_to_sign_in_first(app: Flask) -> None:
    client = app.test_client()
    for url in ("/", "/recheck?reason=claim-changed", f"/statements/{HERONSFORD}", "/data", "/search?q=x"):
        response = client.get(url)
        assert response.status_code == 303 and "/login?next=" in response.headers["Location"], url
    response = client.post(f"/statements/{HERONSFORD}/approve", data={"version": "5"},
                           headers={"Referer": f"http://localhost/statements/{HERONSFORD}"})
    assert response.status_code == 303 and response.headers["Location"].endswith(
        f"/login?next=/statements/{HERONSFORD}")
    html = client.get("/login").get_data(as_text=True)
    assert '<label for="login-name">Account name</label>' in html and 'type="password"' in html
    assert 'aria-label="Main"' not in html  # no navigation before signing in
    css = client.get("/static/stetline.css")
    assert css.status_code == 200
    css.close()


def test_signing_in_goes_on_to_the_page_asked_for(app: Flask) -> None:
    client = app.test_client()
    response = client.post("/login", data={"name": "rex", "password": PASSWORDS["rex"],
                                           "next": "/recheck?reason=claim-changed"})
    assert response.status_code == 303 and response.headers["Location"].endswith("/recheck?reason=claim-changed")
    html = client.get("/recheck").get_data(as_text=True)
    assert "Signed in as <strong>rex</strong>" in html and "(reviewer)" in html
    assert 'id="by-name"' not in html  # the acting name is the account, not a typed name
    response = client.post("/login", data={"name": "rex", "password": PASSWORDS["rex"], "next": "//elsewhere.example/"})
    assert response.headers["Location"].endswith("/")


def test_a_wrong_password_is_refused_and_counted(app: Flask, team: Workspace) -> None:
    client = app.test_client()
    response = client.post("/login", data={"name": "eve", "password": "wrong"})
    assert response.status_code == 401 and "the name or the password is wrong" in response.get_data(as_text=True)
    with team.session() as s:
        assert accounts.get_account(s, "eve").failed_logins == 1
    assert client.get("/").status_code == 303


def test_actions_run_under_the_account_and_its_role(app: Flask, team: Workspace) -> None:
    eve = signed_in(app, "eve")
    v = version(team, GORSE)
    response = eve.post(f"/statements/{GORSE}/rewrite", data={"version": str(v), "text": "Gorse Point: {{ value }}.",
                                                               "by": "max"})
    assert response.status_code == 303
    with team.session() as s:
        assert actions.view(s, GORSE).to_json(s)["layer"]["by"] == "eve"  # not the typed name
    ada = signed_in(app, "ada")
    response = ada.post(f"/statements/{GORSE}/comment", data={"version": str(v + 1), "text": "Ask the depot."})
    assert response.status_code == 303
    response = ada.post(f"/statements/{GORSE}/send-back", data={"version": str(v + 1), "text": "No."})
    assert response.status_code == 403 and "may not send-back" in response.get_data(as_text=True)
    rex = signed_in(app, "rex")
    response = rex.post(f"/statements/{GORSE}/send-back", data={"version": str(v + 1), "text": "Say which year."})
    assert response.status_code == 303
    with team.session() as s:
        # after the demo's own thread on this statement, the two that went through, under their accounts
        assert [(c.by, c.kind) for c in ops.comments_for(s, GORSE)][-2:] == [("ada", "comment"), ("rex", "send-back")]


def test_settings_are_refused_to_other_roles(app: Flask, team: Workspace) -> None:
    rex = signed_in(app, "rex")
    response = rex.post("/settings", data={"title": "Mine now", "entity_noun": "town", "locale": "en_GB",
                                           "percent_word": "%", "untraced_numbers": "warn"})
    assert response.status_code == 403 and "may not settings" in response.get_data(as_text=True)
    with team.session() as s:
        assert ops.get_settings(s)["title"] != "Mine now"
    max_ = signed_in(app, "max")
    response = max_.post("/publish/download", data={"format": "md", "sections": "entity", "allow_recheck": "1"})
    assert response.status_code == 200
    with team.session() as s:
        assert ops.events_by_action(s, "publish")[0].by == "max"


def test_bulk_work_runs_under_the_account(app: Flask, team: Workspace) -> None:
    rex = signed_in(app, "rex")
    html = rex.post("/bulk/confirm", data={"action": "approve", "scope": "entity", "key": "cairnbrook",
                                           "status": "draft"}).get_data(as_text=True)
    assert 'id="confirm-by"' not in html
    pairs: list[Any] = re.findall(r'<input type="hidden" name="([^"]+)" value="([^"]*)"',
                                  html[html.index('action="/bulk/apply"'):])
    from werkzeug.datastructures import MultiDict

    assert rex.post("/bulk/apply", data=MultiDict(pairs)).status_code == 303
    with team.session() as s:
        approvals = [e for e in ops.recent_events(s, 100) if e.action == "approve"]
        slots = [v for n, v in pairs if n == "slot"]
    assert slots and sorted(e.slot_id for e in approvals if e.by == "rex") == sorted(slots)


def test_signing_out_and_a_disabled_account(app: Flask, team: Workspace) -> None:
    eve = signed_in(app, "eve")
    assert eve.get("/").status_code == 200
    assert eve.post("/logout").headers["Location"].endswith("/login")
    assert eve.get("/").status_code == 303
    eve = signed_in(app, "eve")
    with team.session() as s:
        accounts.disable(s, "eve", by="max")
    assert eve.get("/").status_code == 303  # read on every request


def test_without_accounts_anyone_acts_under_the_typed_name(demo_ws: Workspace) -> None:
    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    html = client.get("/").get_data(as_text=True)
    assert "Signed in as" not in html and 'aria-label="Main"' in html
    assert 'id="by-name"' in client.get(f"/statements/{HERONSFORD}").get_data(as_text=True)


def test_my_statements_lists_what_is_assigned_and_waits(app: Flask, team: Workspace) -> None:
    with team.session() as s:
        accounts.assign(s, "eve", entity="tidemere", by="max")
    page = signed_in(app, "eve").get("/mine").get_data(as_text=True)
    assert "Tidemere" in page and "blurb/tidemere/recycling" in page
    assert "blurb/north-quay/recycling" not in page
    assert "Nothing is assigned to rex" in signed_in(app, "rex").get("/mine").get_data(as_text=True)
