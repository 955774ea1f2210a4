"""Attacks on the web app and its files, repeated through the real interface (the Flask test
client, the CLI as a separate process), each refused with nothing changed."""

from __future__ import annotations

import os
import stat
import subprocess
import sys
import time
from pathlib import Path
from types import SimpleNamespace

import pytest
from flask import Flask
from flask.testing import FlaskClient

from stetline import accounts, actions, passwords
from stetline.web import auth as web_auth
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

SLOT = "blurb/gorse-point/recycling"
PASSWORDS = {"max": "max-password-1", "eve": "eve-password-1"}
LONG = ("lou-" * 50)[:passwords.MAX_PASSWORD]  # the longest password accepted
STETLINE = str(Path(sys.executable).with_name("stetline"))  # the installed command, run as its own process


@pytest.fixture
def team(demo_ws: Workspace) -> Workspace:
    """The demo workspace with an admin (max), an editor (eve) and an editor with the longest password (lou)."""
    with demo_ws.session() as s:
        accounts.add_account(s, "max", "admin", PASSWORDS["max"], by="max")
        accounts.add_account(s, "eve", "editor", PASSWORDS["eve"], by="max")
        accounts.add_account(s, "lou", "editor", LONG, by="max")
    return demo_ws


@pytest.fixture
def app(team: Workspace) -> Flask:
    return create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})


def sign_in(app: Flask, name: str) -> FlaskClient:
    client = app.test_client()
    response = client.post("/login", data={"name": name, "password": PASSWORDS[name]})
    assert response.status_code == 303, response.get_data(as_text=True)
    return client


def stetline(ws: Workspace, *args: str, input: str = "") -> subprocess.CompletedProcess[str]:
    """Run the CLI as its own process on the workspace."""
    env = {**os.environ, "STETLINE_DATABASE_URL": ws.url}
    return subprocess.run([STETLINE, *args, "-w", str(ws.path)], input=input,
                          capture_output=True, text=True, env=env, timeout=120)


def version(ws: Workspace, slot: str = SLOT) -> int:
    with ws.reading() as s:
        return actions.view(s, slot).slot.version


def names(ws: Workspace) -> list[str]:
    with ws.reading() as s:
        return [a.name for a in accounts.accounts(s)]


# 4. open redirect after signing in ---------------------------------------------------------------

#: addresses that lead off-site in a browser, or break the Location header (common practice: the
#: usual bypass list for redirect checks: protocol-relative, back-slashes, tabs and line breaks
#: that browsers drop, schemes, leading white space)
OFF_SITE = ["//evil.example/x", "/\t/evil.example/x", "/\n/x", "/\r\n/evil.example", "/\\evil.example",
            "\\\\evil.example", "/\\/evil.example", "///evil.example", "https://evil.example/",
            "http:evil.example", "javascript:alert(1)", " //evil.example", "/\x00/x", "/\u2028/evil.example",
            "evil.example", "/ /evil.example"]


@pytest.mark.parametrize("target", OFF_SITE)
def test_signing_in_never_redirects_off_site(app: Flask, target: str) -> None:
    client = app.test_client()
    page = client.get("/login", query_string={"next": target})
    assert page.status_code == 200 and 'name="next"' not in page.get_data(as_text=True)
    response = client.post("/login", data={"name": "eve", "password": PASSWORDS["eve"], "next": target})
    assert response.status_code == 303 and response.headers["Location"] == "/"


@pytest.mark.parametrize("target", OFF_SITE)
def test_forms_never_redirect_off_site(demo_ws: Workspace, target: str) -> None:
    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    response = client.post("/name", data={"by": "Ada", "next": target})
    assert response.status_code == 303 and response.headers["Location"] == "/"


def test_a_path_on_the_site_is_still_followed(app: Flask) -> None:
    response = app.test_client().post("/login", data={"name": "eve", "password": PASSWORDS["eve"],
                                                       "next": "/statements/blurb/gorse-point/recycling?x=1"})
    assert response.headers["Location"] == "/statements/blurb/gorse-point/recycling?x=1"


# 5. sessions end ---------------------------------------------------------------------------------

def saved_cookie(client: FlaskClient) -> str:
    cookie = client.get_cookie("session")
    assert cookie is not None
    return cookie.value


def replay(app: Flask, cookie: str) -> int:
    """The status of the overview for a browser that kept a copy of the session cookie."""
    other = app.test_client()
    other.set_cookie("session", cookie)
    return other.get("/").status_code


def test_a_saved_cookie_no_longer_works_after_signing_out(app: Flask) -> None:
    eve = sign_in(app, "eve")
    cookie = saved_cookie(eve)
    elsewhere = sign_in(app, "eve")  # the same account on another computer
    assert replay(app, cookie) == 200
    assert eve.post("/logout").status_code == 303
    assert replay(app, cookie) == 303  # sent to the sign-in page
    assert elsewhere.get("/").status_code == 303  # signing out ends every session of the account


@pytest.mark.parametrize("change", [
    ("user", "password", "eve", "--password-stdin", "--by", "max"),
    ("user", "set-role", "eve", "reviewer", "--by", "max"),
    ("user", "disable", "eve", "--by", "max"),
])
def test_a_saved_cookie_no_longer_works_after_an_account_change(app: Flask, team: Workspace,
                                                                 change: tuple[str, ...]) -> None:
    cookie = saved_cookie(sign_in(app, "eve"))
    done = stetline(team, *change, input="a-new-long-phrase\n")
    assert done.returncode == 0, done.stderr
    if change[1] == "disable":
        assert stetline(team, "user", "disable", "eve", "--enable", "--by", "max").returncode == 0
    assert replay(app, cookie) == 303


def test_sessions_end_when_idle_and_after_their_hours(app: Flask, monkeypatch: pytest.MonkeyPatch) -> None:
    start = time.time()
    clock = SimpleNamespace(now=start)
    monkeypatch.setattr(web_auth, "time", SimpleNamespace(time=lambda: clock.now))
    idle = sign_in(app, "eve")
    clock.now = start + 61 * 60  # the default allows 60 idle minutes
    assert idle.get("/").status_code == 303
    clock.now = start
    busy = sign_in(app, "eve")
    while clock.now < start + 12 * 3600 - 50 * 60:  # a request every 50 minutes, for 12 hours
        clock.now += 50 * 60
        assert busy.get("/").status_code == 200
    clock.now = start + 12 * 3600 + 1
    assert busy.get("/").status_code == 303


def test_session_lifetimes_are_settings_with_a_floor(team: Workspace) -> None:
    done = stetline(team, "settings", "session_idle_minutes", "0", "--by", "max")
    assert done.returncode != 0 and "at least 1" in done.stderr


# 8. DNS rebinding: Host and Origin -------------------------------------------------------------

@pytest.fixture
def one_person(demo_ws: Workspace) -> Flask:
    return create_app(demo_ws, {"TESTING": True})  # CSRF on


def token(client: FlaskClient, host: str = "localhost") -> str:
    html = client.get(f"/statements/{SLOT}", headers={"Host": host}).get_data(as_text=True)
    return html.split('name="csrf-token" content="', 1)[1].split('"', 1)[0]


def rewrite(client: FlaskClient, ws: Workspace, csrf: str, headers: dict[str, str]) -> int:
    form = {"version": str(version(ws)), "text": "Rewritten by a stranger.", "csrf_token": csrf}
    return client.post(f"/statements/{SLOT}/rewrite", data=form, headers=headers).status_code


def test_a_foreign_host_gets_no_page_no_token_and_saves_nothing(one_person: Flask, demo_ws: Workspace) -> None:
    client = one_person.test_client()
    page = client.get(f"/statements/{SLOT}", headers={"Host": "evil.example"})
    assert page.status_code == 400 and "csrf" not in page.get_data(as_text=True).lower()
    before = version(demo_ws)
    csrf = token(client)
    status = rewrite(client, demo_ws, csrf, {"Host": "evil.example:5000", "Origin": "http://evil.example:5000"})
    assert status == 400 and version(demo_ws) == before


@pytest.mark.parametrize("headers", [{"Origin": "http://evil.example"}, {"Origin": "null"},
                                     {"Referer": "http://evil.example/page"},
                                     {"Origin": "http://evil.example", "Referer": "http://localhost/"}])
def test_a_form_from_another_site_is_refused(one_person: Flask, demo_ws: Workspace, headers: dict[str, str]) -> None:
    client = one_person.test_client()
    before = version(demo_ws)
    assert rewrite(client, demo_ws, token(client), headers) == 400
    assert version(demo_ws) == before


def test_a_form_from_this_site_or_with_no_origin_is_judged_by_its_token(one_person: Flask, demo_ws: Workspace) -> None:
    client = one_person.test_client()
    before = version(demo_ws)
    assert rewrite(client, demo_ws, "not-a-token", {}) == 400 and version(demo_ws) == before
    assert rewrite(client, demo_ws, token(client), {}) == 303 and version(demo_ws) == before + 1
    assert rewrite(client, demo_ws, token(client), {"Origin": "http://localhost"}) == 303


def test_the_host_names_given_at_start_are_the_ones_answered(demo_ws: Workspace) -> None:
    client = create_app(demo_ws, {"TESTING": True}, hosts=["stet.example", "localhost"]).test_client()
    assert client.get("/", headers={"Host": "stet.example:8080"}).status_code == 200
    assert client.get("/", headers={"Host": "127.0.0.1"}).status_code == 400


def test_more_host_names_come_from_the_environment(demo_ws: Workspace, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("STETLINE_HOSTS", "stet.example, reports.example")
    client = create_app(demo_ws, {"TESTING": True}).test_client()
    for host in ("reports.example", "stet.example:443", "localhost:5000", "[::1]:5000"):
        assert client.get("/", headers={"Host": host}).status_code == 200, host
    assert client.get("/", headers={"Host": "evil.example"}).status_code == 400


# 10. signing in --------------------------------------------------------------------------------

def test_every_failed_sign_in_gives_the_same_answer_after_one_hash_check(
    app: Flask, team: Workspace, monkeypatch: pytest.MonkeyPatch,
) -> None:
    with team.session() as s:
        accounts.disable(s, "eve", by="max")
    checks: list[str] = []
    real = passwords.check_password_hash
    monkeypatch.setattr(passwords, "check_password_hash", lambda h, p: checks.append(p) or real(h, p))
    bodies = set()
    for name, password in (("nobody", "some-guess-1"), ("max", "some-guess-1"), ("eve", PASSWORDS["eve"])):
        checks.clear()
        response = app.test_client().post("/login", data={"name": name, "password": password})
        assert response.status_code == 401 and len(checks) == 1, name  # unknown names cost a hash check too
        html = response.get_data(as_text=True)
        bodies.add(html.split('<p id="login-error">', 1)[1].split("</p>", 1)[0])
    assert len(bodies) == 1 and "disabled" in bodies.pop()  # one message, naming no account


def test_guessing_slows_the_guesser_down_but_not_the_owner(app: Flask) -> None:
    guesser = app.test_client()
    guesser.environ_base["REMOTE_ADDR"] = "203.0.113.9"  # documentation addresses (RFC 5737)
    for _ in range(5):
        assert guesser.post("/login", data={"name": "max", "password": "guess-guess"}).status_code == 401
    waiting = guesser.post("/login", data={"name": "max", "password": PASSWORDS["max"]})
    assert waiting.status_code == 429 and "try again in 1 minute" in waiting.get_data(as_text=True)
    assert guesser.get("/").status_code == 303  # not signed in
    owner = app.test_client()
    owner.environ_base["REMOTE_ADDR"] = "198.51.100.4"
    assert owner.post("/login", data={"name": "max", "password": PASSWORDS["max"]}).status_code == 303
    for _ in range(5):  # an unknown name is slowed down the same way: the wait names no account
        guesser.post("/login", data={"name": "maxx", "password": "guess-guess"})
    assert guesser.post("/login", data={"name": "maxx", "password": "guess-guess"}).status_code == 429


@pytest.mark.parametrize("weak", ["password123", "qwertyuiop", "aaaaaaaaaa", "newcomer", "remocwen", "short"])
def test_the_weakest_passwords_are_refused(team: Workspace, weak: str) -> None:
    done = stetline(team, "user", "add", "newcomer", "--role", "editor", "--password-stdin", "--by", "max",
                    input=weak + "\n")
    assert done.returncode != 0 and "password" in done.stderr
    assert "newcomer" not in names(team)


# 11. headers and files -------------------------------------------------------------------------

def test_every_response_carries_the_browser_protections(app: Flask) -> None:
    client = sign_in(app, "eve")
    for url in ("/", "/login", f"/statements/{SLOT}", "/static/stetline.css", "/no-such-page"):
        response = client.get(url)
        policy = response.headers.get("Content-Security-Policy", "")
        assert "script-src 'self';" in policy and "unsafe-inline" not in policy, url
        assert "img-src 'self' data:;" in policy and "frame-ancestors 'none'" in policy, url
        assert response.headers.get("X-Frame-Options") == "DENY", url
        assert response.headers.get("X-Content-Type-Options") == "nosniff", url
        body = response.get_data(as_text=True)
        response.close()
        if url.startswith("/static"):
            continue
        assert "<script>" not in body and " style=" not in body and " onclick=" not in body, url


def test_images_from_other_sites_are_dropped_from_user_markdown(one_person: Flask, demo_ws: Workspace) -> None:
    client = one_person.test_client()
    text = "Read this. ![seen](http://tracker.example/p.png) ![also](//tracker.example/q.png) ![ok](/static/x.png)"
    form = {"version": str(version(demo_ws)), "text": text, "csrf_token": token(client)}
    assert client.post(f"/statements/{SLOT}/rewrite", data=form).status_code == 303
    page = client.get(f"/statements/{SLOT}").get_data(as_text=True)
    preview = client.post(f"/statements/{SLOT}/preview", data={"text": text},
                          headers={"X-CSRFToken": token(client)}).get_data(as_text=True)
    for html in (page, preview):
        assert 'src="/static/x.png"' in html
        assert 'src="http://tracker.example' not in html and 'src="//tracker.example' not in html


def mode(path: Path) -> int:
    return stat.S_IMODE(path.stat().st_mode)


@pytest.mark.sqlite_only("the file modes of a SQLite workspace")
def test_the_database_its_log_the_key_and_backups_are_private(tmp_path: Path) -> None:
    path = tmp_path / "new"
    env = {k: v for k, v in os.environ.items() if k != "STETLINE_DATABASE_URL"}
    old = os.umask(0o022)  # the usual umask: files 0644 unless created otherwise
    try:
        done = subprocess.run([STETLINE, "init", "-w", str(path)],
                              capture_output=True, text=True, env=env, timeout=120)
        assert done.returncode == 0, done.stderr
        ws = open_workspace(path)
        create_app(ws, {"TESTING": True}).test_client().get("/")
        assert mode(path / "secret_key") == 0o600
        for name in ("stetline.db", "stetline.db-wal", "stetline.db-shm"):
            assert mode(path / name) == 0o600, name
        backup = tmp_path / "copy.db"
        done = subprocess.run([STETLINE, "backup", str(backup), "-w", str(path)],
                              capture_output=True, text=True, env=env, timeout=120)
        assert done.returncode == 0, done.stderr
        assert mode(backup) == 0o600
        ws.close()
    finally:
        os.umask(old)


# 13. small ones --------------------------------------------------------------------------------

@pytest.mark.parametrize("name", ["two\nlines", "tab\there", "bell\x07", "zero\u200bwidth"])
def test_account_names_with_control_characters_are_refused(team: Workspace, name: str) -> None:
    done = stetline(team, "user", "add", name, "--role", "editor", "--password-stdin", "--by", "max",
                    input="a-long-phrase-1\n")
    assert done.returncode != 0 and "printable" in done.stderr
    assert names(team) == ["eve", "lou", "max"]


def test_a_password_is_never_cut_short(app: Flask, team: Workspace) -> None:
    client = app.test_client()
    response = client.post("/login", data={"name": "lou", "password": LONG + "extra"})
    assert response.status_code == 401 and client.get("/").status_code == 303
    assert client.post("/login", data={"name": "lou", "password": LONG}).status_code == 303
    done = stetline(team, "user", "password", "lou", "--password-stdin", "--by", "max", input=LONG + "x\n")
    assert done.returncode != 0 and f"at most {passwords.MAX_PASSWORD} characters" in done.stderr
