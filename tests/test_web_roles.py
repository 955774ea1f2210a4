"""The web app's role matrix: every POST route, tried by each of the four roles with a
well-formed request sent straight to the route (no form rendered first, as a crafted request
would be).

A role the permission table allows sees the action take effect; any other role gets a 403 page
naming its role and the roles the action needs, and the workspace is exactly as it was. The
rewrite preview renders a person's template, so it needs the rewrite permission. Routes that
read or only concern the signer themselves (signing in and out, the acting name, the bulk
confirmation page) are open to every role and change nothing in the workspace. The matrix is
checked against the app's URL map, so a new POST route fails here until it is added. Also
here: CSRF tokens with accounts, and the session cookie's flags.
"""

from __future__ import annotations

import html as html_mod
import io
import re
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pytest
from flask import Flask
from flask.testing import FlaskClient
from helpers import signed_in
from sqlalchemy import func, select
from werkzeug.datastructures import MultiDict

from stetline import actions, demo
from stetline import settings as settings_mod
from stetline.accounts import PERMISSIONS, ROLES
from stetline.store import ops
from stetline.store.models import Base, Comment, Event, Setting, Slot
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

PLAIN = "blurb/cairnbrook/recycling"  # a draft nobody worked on
REWRITTEN = "blurb/gorse-point/recycling"  # the editor's rewrite, now in recheck
SUPPRESSED = "blurb/puffin-holm/new-business"
CLEAN = "roundup/bathing-water"  # in recheck with a clean proposal, no layer
BULK_ENTITY = "cairnbrook"


# -- fixtures and helpers -------------------------------------------------------------------

@pytest.fixture
def team(team_path: Path) -> Iterator[Workspace]:
    """The demo workspace with its four accounts; each account is named after its role."""
    ws = open_workspace(team_path)
    yield ws
    ws.close()


@pytest.fixture
def app(team: Workspace) -> Flask:
    return create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})


@dataclass(frozen=True)
class Snapshot:
    """Everything a POST could change: row counts, slot versions and statuses, settings, uploads."""

    rows: dict[str, int]
    slots: dict[str, tuple[int, str]]
    settings: dict[str, Any]
    uploads: tuple[str, ...]
    last_event: int


def snapshot(ws: Workspace) -> Snapshot:
    with ws.reading() as s:
        rows = {t.name: int(s.scalar(select(func.count()).select_from(t)) or 0) for t in Base.metadata.sorted_tables}
        slots = {sid: (v, st) for sid, v, st in s.execute(select(Slot.id, Slot.version, Slot.status))}
        settings = {k: v for k, v in s.execute(select(Setting.key, Setting.value))}
        last_event = int(s.scalar(select(func.max(Event.id))) or 0)
    uploads = tuple(sorted(str(p.relative_to(ws.path)) for p in (ws.path / "uploads").rglob("*"))) \
        if (ws.path / "uploads").is_dir() else ()
    return Snapshot(rows, slots, settings, uploads, last_event)


def new_events(ws: Workspace, before: Snapshot) -> list[tuple[str, str, str | None]]:
    """The (by, action, slot) of every event recorded after the snapshot, oldest first."""
    with ws.reading() as s:
        return [(e.by, e.action, e.slot_id) for e in s.scalars(select(Event).where(Event.id > before.last_event)
                                                                 .order_by(Event.id))]


def version(ws: Workspace, slot: str) -> int:
    with ws.reading() as s:
        return actions.view(s, slot).slot.version


def text_layer(ws: Workspace, slot: str) -> tuple[str, str | None, str] | None:
    """The type, text and author of a statement's rewrite or pin, if it has one."""
    with ws.reading() as s:
        return next(((x.type, x.text, x.by) for x in ops.active_layers(s, slot) if x.type in ("rewrite", "pin")), None)


def revised_2025() -> bytes:
    """The demo's 2025 observations with Cairnbrook's 2025 recycling rate revised (52.5 → 53.4)."""
    text = demo.data_file("observations-2025.csv").read_text()
    assert "cairnbrook,recycling,2025,52.5," in text
    return text.replace("cairnbrook,recycling,2025,52.5,", "cairnbrook,recycling,2025,53.4,").encode()


def upload_form() -> dict[str, Any]:
    return {"observations": (io.BytesIO(revised_2025()), "observations-2025-revised.csv")}


def dry_run_token(app: Flask) -> str:
    """An upload checked by the admin, waiting to be loaded (its token, as the load form carries it)."""
    response = signed_in(app, "admin").post("/data", data=upload_form(), content_type="multipart/form-data")
    assert response.status_code == 200, response.get_data(as_text=True)
    found = re.search(r'name="token" value="([0-9a-f]{32})"', response.get_data(as_text=True))
    assert found, "the dry run offered no load form"
    return found.group(1)


def bulk_items(ws: Workspace) -> list[tuple[str, int]]:
    """Two draft statements of one entity with their versions, as the bulk confirmation carries them."""
    with ws.reading() as s:
        views = actions.views(s, ops.SlotFilter(entity=BULK_ENTITY, status="draft"))
        items = [(v.slot.id, v.slot.version) for v in views][:2]
    assert len(items) == 2
    return items


def bulk_form(ws: Workspace, action: str) -> MultiDict[str, str]:
    pairs = [("action", action), ("scope", "entity"), ("key", BULK_ENTITY), ("status", "draft")]
    for slot, v in bulk_items(ws):
        pairs += [("slot", slot), ("version", str(v))]
    return MultiDict(pairs)


def settings_form(ws: Workspace, **changed: str) -> dict[str, str]:
    """The settings form as the page would post it (checkboxes present only when ticked)."""
    with ws.reading() as s:
        values = settings_mod.with_defaults(ops.get_settings(s))
    form: dict[str, str] = {}
    for spec in settings_mod.SETTINGS:
        if isinstance(spec.default, bool):
            if values[spec.key]:
                form[spec.key] = "true"
        else:
            form[spec.key] = str(values[spec.key])
    form.update(changed)
    return form


# -- what each route does when allowed --------------------------------------------------------

Check = Callable[[Workspace, Snapshot, str, Any, Any], None]
"""(workspace, snapshot before, the acting account, the response, the form posted)"""


def event_on(action: str, slot: str | None = None, times: int = 1) -> Check:
    """The route recorded ``times`` events of ``action`` (on ``slot``) by the signed-in account."""
    def check(ws: Workspace, before: Snapshot, name: str, _response: Any, _form: Any) -> None:
        done = [e for e in new_events(ws, before) if e[1] == action and (slot is None or e[2] == slot)]
        assert len(done) == times and all(by == name for by, _a, _s in done), new_events(ws, before)
    return check


def rewritten(slot: str, text: str, action: str = "rewrite") -> Check:
    def check(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
        event_on(action, slot)(ws, before, name, response, form)
        layer = text_layer(ws, slot)
        assert layer == ("rewrite", text, name)
    return check


def pinned(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    event_on("pin", PLAIN)(ws, before, name, response, form)
    layer = text_layer(ws, PLAIN)
    assert layer is not None and layer[0] == "pin" and layer[2] == name


def reverted(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    event_on("revert", REWRITTEN)(ws, before, name, response, form)
    assert text_layer(ws, REWRITTEN) is None


def commented(kind: str) -> Check:
    def check(ws: Workspace, before: Snapshot, name: str, _response: Any, _form: Any) -> None:
        with ws.reading() as s:
            rows = list(s.execute(select(Comment.by, Comment.kind).where(Comment.slot_id == PLAIN)))
        assert [tuple(r) for r in rows] == [(name, kind)]
    return check


def clean_count(ws: Workspace) -> int:
    with ws.reading() as s:
        return len(actions.clean_proposals(s))


def accepted_all_clean(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    assert int(form["count"]) > 0
    event_on("accept", times=int(form["count"]))(ws, before, name, response, form)
    assert clean_count(ws) == 0


def bulk_done(action: str) -> Check:
    def check(ws: Workspace, before: Snapshot, name: str, _response: Any, form: Any) -> None:
        done = sorted(str(sid) for by, a, sid in new_events(ws, before) if a == action and by == name)
        assert done == sorted(form.getlist("slot")) and len(done) == 2
    return check


def checked(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    html = response.get_data(as_text=True)
    assert "Check before loading: edition 2025-r2" in html and "This is a dry run" in html
    assert snapshot(ws).uploads != before.uploads  # the files wait for the load
    assert snapshot(ws).rows == before.rows  # and nothing else was written


def loaded(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    assert response.headers["Location"].endswith("/data?loaded=2025-r2")
    with ws.reading() as s:
        edition = ops.current_edition(s)
        assert edition is not None and edition.label == "2025-r2" and edition.loaded_by == name
    event_on("load")(ws, before, name, response, form)


def published(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    assert "attachment;" in response.headers["Content-Disposition"]
    assert "Cairnbrook" in response.get_data(as_text=True)
    event_on("publish")(ws, before, name, response, form)


def settings_saved(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    with ws.reading() as s:
        assert ops.get_settings(s)["title"] == "Kestrel Sound scorecard, second edition"
    assert [(a, by) for by, a, _s in new_events(ws, before)] == [("setting", name)]  # only the title changed


# -- what each route does for everyone: nothing in the workspace ------------------------------

def previewed(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    with ws.reading() as s:
        shown = actions.view(s, PLAIN).draft.evidence["value"]["shown"]
    assert response.status_code == 200 and f"Cairnbrook recycles {shown}." in response.get_data(as_text=True)
    assert snapshot(ws) == before


def unchanged(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    assert response.status_code in (200, 303), response.get_data(as_text=True)[:500]
    assert snapshot(ws) == before


def confirmed(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    with ws.reading() as s:
        n = len(actions.views(s, ops.SlotFilter(entity=BULK_ENTITY, status="draft")))
    assert response.status_code == 200 and f"Approve {n} statements?" in response.get_data(as_text=True)
    assert snapshot(ws) == before  # the confirmation page only asks


def signed_out(ws: Workspace, before: Snapshot, name: str, response: Any, form: Any) -> None:
    assert response.status_code == 303 and response.headers["Location"].endswith("/login")
    assert snapshot(ws) == before


# -- the matrix -----------------------------------------------------------------------------

Form = Callable[[Workspace, Flask, str], Any]
"""(workspace, app, the role trying the route) → the form to post"""


@dataclass(frozen=True)
class Route:
    """One POST route: its endpoint, an address and a well-formed form, and what it needs.

    ``needs`` is the action of the permission table the route takes, or None when the route is
    open to every role (it reads, or concerns only the signer's own session). ``signed_in`` is
    False for the one route tried before signing in.
    """

    label: str
    endpoint: str
    url: str
    needs: str | None
    form: Form
    done: Check
    multipart: bool = False
    signed_in: bool = True


GORSE_TEXT = demo.REWRITES[REWRITTEN]
NEW_TEXT = "Cairnbrook recycles {{ value }} of its household waste."
MERGED_TEXT = "Cairnbrook and its old neighbour together recycled {{ value }} of their household waste."


def merged_form(ws: Workspace) -> dict[str, str]:
    """Put PLAIN in recheck as a load merging two areas does (stetline.renames.mark_merged), then choose text 1.

    The demo merges no town (seed_data/renames-2025.csv only renames one), so the merged recheck is set here."""
    with ws.session() as s:
        slot = ops.get_slot(s, PLAIN, lock=True)
        assert slot is not None
        slot.status = "recheck"
        slot.recheck = {"reasons": ["merged"], "changes": [], "proposed": None, "conflicts": [], "clean": False,
                        "severity": 2, "merged": [{"slot": "blurb/old-cairnbrook/recycling", "type": "rewrite",
                                                   "text": MERGED_TEXT, "by": "editor", "author": "editor",
                                                   "approved": False}]}
        slot.version += 1
        return {"version": str(slot.version), "pick": "1"}

ROUTES: tuple[Route, ...] = (
    Route("rewrite", "statement.rewrite", f"/statements/{PLAIN}/rewrite", "rewrite",
          lambda ws, _a, _r: {"version": version(ws, PLAIN), "text": NEW_TEXT, "started_from": ""},
          rewritten(PLAIN, NEW_TEXT)),
    Route("pin", "statement.pin", f"/statements/{PLAIN}/pin", "pin",
          lambda ws, _a, _r: {"version": version(ws, PLAIN)}, pinned),
    Route("annotate", "statement.annotate", f"/statements/{PLAIN}/annotate", "annotate",
          lambda ws, _a, _r: {"version": version(ws, PLAIN), "text": "The depot reopened in May."},
          event_on("annotate", PLAIN)),
    Route("suppress", "statement.suppress", f"/statements/{PLAIN}/suppress", "suppress",
          lambda ws, _a, _r: {"version": version(ws, PLAIN)}, event_on("suppress", PLAIN)),
    Route("lift", "statement.lift", f"/statements/{SUPPRESSED}/lift", "suppress",
          lambda ws, _a, _r: {"version": version(ws, SUPPRESSED)}, event_on("unsuppress", SUPPRESSED)),
    Route("revert", "statement.revert", f"/statements/{REWRITTEN}/revert", "revert",
          lambda ws, _a, _r: {"version": version(ws, REWRITTEN)}, reverted),
    Route("approve", "statement.approve", f"/statements/{PLAIN}/approve", "approve",
          lambda ws, _a, _r: {"version": version(ws, PLAIN)}, event_on("approve", PLAIN)),
    Route("accept", "statement.accept", f"/statements/{CLEAN}/accept", "accept",
          lambda ws, _a, _r: {"version": version(ws, CLEAN)}, event_on("accept", CLEAN)),
    Route("restore", "statement.restore", f"/statements/{REWRITTEN}/restore", "rewrite",
          lambda ws, _a, _r: {"version": version(ws, REWRITTEN), "text": GORSE_TEXT},
          rewritten(REWRITTEN, GORSE_TEXT)),
    Route("choose", "statement.choose", f"/statements/{PLAIN}/choose", "rewrite",
          lambda ws, _a, _r: merged_form(ws), rewritten(PLAIN, MERGED_TEXT)),
    Route("comment", "statement.comment", f"/statements/{PLAIN}/comment", "comment",
          lambda ws, _a, _r: {"version": version(ws, PLAIN), "text": "Which year does the depot figure cover?"},
          commented("comment")),
    Route("send-back", "statement.send_back", f"/statements/{PLAIN}/send-back", "send-back",
          lambda ws, _a, _r: {"version": version(ws, PLAIN), "text": "Say which towns are compared."},
          commented("send-back")),
    Route("accept-clean", "recheck.accept_clean", "/recheck/accept-clean", "accept",
          lambda ws, _a, _r: {"count": str(clean_count(ws))}, accepted_all_clean),
    Route("bulk-approve", "bulk.apply", "/bulk/apply", "approve",
          lambda ws, _a, _r: bulk_form(ws, "approve"), bulk_done("approve")),
    Route("bulk-suppress", "bulk.apply", "/bulk/apply", "suppress",
          lambda ws, _a, _r: bulk_form(ws, "suppress"), bulk_done("suppress")),
    Route("data-check", "data.check", "/data", "load", lambda _ws, _a, _r: upload_form(), checked, multipart=True),
    Route("data-load", "data.load", "/data/load", "load", lambda _ws, a, _r: {"token": dry_run_token(a)}, loaded),
    Route("publish", "publishing.download", "/publish/download", "publish",
          lambda _ws, _a, _r: {"format": "md", "sections": "entity", "allow_recheck": "1"}, published),
    Route("settings", "settings.save", "/settings", "settings",
          lambda ws, _a, _r: settings_form(ws, title="Kestrel Sound scorecard, second edition"), settings_saved),
    Route("redraft", "settings.redraft", "/settings/redraft", "redraft", lambda _ws, _a, _r: {}, event_on("redraft")),
    Route("preview", "statement.preview", f"/statements/{PLAIN}/preview", "rewrite",
          lambda _ws, _a, _r: {"text": "Cairnbrook recycles {{ value }}."}, previewed),
    # open to every role: they read, or concern only the signer's own session
    Route("login", "auth.login", "/login", None,
          lambda ws, _a, role: {"name": role, "password": demo.demo_passwords(ws.path)[role]}, unchanged,
          signed_in=False),
    Route("logout", "auth.logout", "/logout", None, lambda _ws, _a, _r: {}, signed_out),
    Route("name", "statement.name", "/name", None, lambda _ws, _a, _r: {"by": "someone else", "next": "/"}, unchanged),
    Route("bulk-confirm", "bulk.confirm", "/bulk/confirm", None,
          lambda ws, _a, _r: {"action": "approve", "scope": "entity", "key": BULK_ENTITY, "status": "draft"},
          confirmed),
)
CASES = [pytest.param(route, role, id=f"{route.label}-{role}") for route in ROUTES for role in ROLES]


def test_the_matrix_covers_every_post_route(ws: Workspace) -> None:
    app = create_app(ws, {"TESTING": True})
    posted = {rule.endpoint for rule in app.url_map.iter_rules() if "POST" in (rule.methods or ())}
    covered = {route.endpoint for route in ROUTES}
    assert posted - covered == set(), "add these POST routes to the role matrix"
    assert covered - posted == set(), "these routes of the matrix no longer exist"
    assert all(r.needs is None or r.needs in PERMISSIONS for r in ROUTES)


@pytest.mark.parametrize(("route", "role"), CASES)
def test_each_role_on_each_post_route(app: Flask, team: Workspace, route: Route, role: str) -> None:
    form = route.form(team, app, role)
    client = signed_in(app, role) if route.signed_in else app.test_client()
    before = snapshot(team)
    kwargs: dict[str, Any] = {"content_type": "multipart/form-data"} if route.multipart else {}
    response = client.post(route.url, data=form, **kwargs)
    body = response.get_data(as_text=True)
    if route.needs is None or role in PERMISSIONS[route.needs]:
        assert response.status_code in (200, 303), body[:2000]
        route.done(team, before, role, response, form)
        return
    assert response.status_code == 403, body[:2000]
    needed = ", ".join(r for r in ROLES if r in PERMISSIONS[route.needs])
    message = html_mod.unescape(body)
    assert f"{role} is {'an' if role[0] in 'aeiou' else 'a'} {role} and may not {route.needs}" in message, body[:3000]
    assert f"that needs: {needed}" in message
    assert snapshot(team) == before, f"a refused {route.label} changed the workspace"


def test_a_refused_expert_sees_nothing_saved_on_the_statement(app: Flask, team: Workspace) -> None:
    """A crafted rewrite by the expert comes back to the statement's page, the text kept in the form."""
    expert = signed_in(app, "expert")
    response = expert.post(f"/statements/{PLAIN}/rewrite", data={"version": version(team, PLAIN), "text": NEW_TEXT})
    html = html_mod.unescape(response.get_data(as_text=True))
    assert response.status_code == 403 and NEW_TEXT in html and 'id="rewrite-error"' in html
    assert text_layer(team, PLAIN) is None


# -- CSRF with accounts -----------------------------------------------------------------------

def csrf_token(client: FlaskClient, url: str) -> str:
    found = re.search(r'name="csrf_token" value="([^"]+)"', client.get(url).get_data(as_text=True))
    assert found, f"{url} shows no form with a CSRF token"
    return found.group(1)


@pytest.fixture
def guarded(team: Workspace) -> Flask:
    return create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": True})


def sign_in_with_token(app: Flask, name: str) -> FlaskClient:
    client = app.test_client()
    password = demo.demo_passwords(app.extensions["stetline_workspace"].path)[name]
    token = csrf_token(client, "/login")
    assert client.post("/login", data={"name": name, "password": password}).status_code == 400  # no token
    response = client.post("/login", data={"name": name, "password": password, "csrf_token": token})
    assert response.status_code == 303
    return client


def test_a_rewrite_without_a_csrf_token_is_refused_and_changes_nothing(guarded: Flask, team: Workspace) -> None:
    editor = sign_in_with_token(guarded, "editor")
    before = snapshot(team)
    response = editor.post(f"/statements/{PLAIN}/rewrite", data={"version": version(team, PLAIN), "text": NEW_TEXT})
    assert response.status_code == 400 and "The form was refused" in response.get_data(as_text=True)
    assert snapshot(team) == before
    token = csrf_token(editor, f"/statements/{PLAIN}")
    response = editor.post(f"/statements/{PLAIN}/rewrite",
                           data={"version": version(team, PLAIN), "text": NEW_TEXT, "csrf_token": token})
    assert response.status_code == 303  # the same form with its token is saved
    assert text_layer(team, PLAIN) is not None


def test_a_load_without_a_csrf_token_is_refused_and_changes_nothing(guarded: Flask, team: Workspace) -> None:
    admin = sign_in_with_token(guarded, "admin")
    before = snapshot(team)
    response = admin.post("/data", data=upload_form(), content_type="multipart/form-data")
    assert response.status_code == 400 and "The form was refused" in response.get_data(as_text=True)
    assert snapshot(team) == before  # not even the upload was kept
    token = csrf_token(admin, "/data")
    response = admin.post("/data", data={**upload_form(), "csrf_token": token}, content_type="multipart/form-data")
    assert response.status_code == 200
    upload = re.search(r'name="token" value="([0-9a-f]{32})"', response.get_data(as_text=True))
    assert upload
    waiting = snapshot(team)
    response = admin.post("/data/load", data={"token": upload.group(1)})
    assert response.status_code == 400 and "The form was refused" in response.get_data(as_text=True)
    assert snapshot(team) == waiting  # no edition, and the upload still waits
    response = admin.post("/data/load", data={"token": upload.group(1), "csrf_token": token})
    assert response.status_code == 303
    with team.reading() as s:
        edition = ops.current_edition(s)
        assert edition is not None and edition.label == "2025-r2"


# -- the session cookie -----------------------------------------------------------------------

def session_cookie(app: Flask) -> str:
    client = app.test_client()
    password = demo.demo_passwords(app.extensions["stetline_workspace"].path)["editor"]
    response = client.post("/login", data={"name": "editor", "password": password})
    assert response.status_code == 303
    cookies = [c for c in response.headers.getlist("Set-Cookie") if c.startswith("session=")]
    assert len(cookies) == 1, response.headers.getlist("Set-Cookie")
    return cookies[0]


def cookie_flags(cookie: str) -> set[str]:
    """The attributes of a Set-Cookie header, lower case, with SameSite's value (``samesite=lax``)."""
    flags = set()
    for part in cookie.split(";")[1:]:
        key, _eq, value = part.strip().partition("=")
        flags.add(f"samesite={value.lower()}" if key.lower() == "samesite" else key.lower())
    return flags


def test_the_session_cookie_is_http_only_and_same_site(app: Flask) -> None:
    flags = cookie_flags(session_cookie(app))
    assert "httponly" in flags and ("samesite=lax" in flags or "samesite=strict" in flags)
    assert "secure" not in flags  # served over plain HTTP by default (stetline serve on 127.0.0.1)


def test_the_https_setting_marks_the_session_cookie_secure(team: Workspace) -> None:
    with team.session() as s:
        ops.put_setting(s, "https", True)
    flags = cookie_flags(session_cookie(create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})))
    assert {"secure", "httponly"} <= flags and ("samesite=lax" in flags or "samesite=strict" in flags)


def test_the_https_setting_saved_on_the_settings_page_applies_at_the_next_start(app: Flask, team: Workspace) -> None:
    admin = signed_in(app, "admin")
    response = admin.post("/settings", data=settings_form(team, https="true"))
    assert response.status_code == 303
    assert "secure" not in cookie_flags(session_cookie(app))  # this running app keeps its cookie flags
    restarted = create_app(team, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    assert "secure" in cookie_flags(session_cookie(restarted))


# -- pages offer only what the role may do ------------------------------------------------------

def forms_on(html: str) -> set[str]:
    """The actions of the forms a page offers (their last path segment), and formaction buttons."""
    found = re.findall(r'(?:action|formaction)="([^"]+)"', html)
    return {url.rstrip("/").rsplit("/", 1)[-1] for url in found}


def test_a_statement_page_offers_each_role_only_its_own_actions(app: Flask) -> None:
    # the server refuses the rest anyway (the matrix above); the page does not offer them
    offered = {role: forms_on(signed_in(app, role).get(f"/statements/{REWRITTEN}").get_data(as_text=True))
               for role in ROLES}
    assert {"annotate", "comment"} <= offered["expert"]
    assert not offered["expert"] & {"rewrite", "pin", "suppress", "revert", "approve", "accept", "send-back"}
    assert {"rewrite", "pin", "suppress", "revert", "annotate", "comment"} <= offered["editor"]
    assert not offered["editor"] & {"approve", "accept", "send-back"}
    for role in ("reviewer", "admin"):
        assert {"rewrite", "pin", "suppress", "revert", "approve", "annotate", "comment", "send-back"} <= offered[role]
    html = signed_in(app, "expert").get(f"/statements/{REWRITTEN}").get_data(as_text=True)
    assert "Signed in as expert (expert): you may add notes and comments here" in html


def test_the_data_settings_and_publish_pages_offer_their_forms_to_an_admin_only(app: Flask) -> None:
    for role in ROLES:
        client = signed_in(app, role)
        data = client.get("/data").get_data(as_text=True)
        settings_page = client.get("/settings").get_data(as_text=True)
        publish = client.get("/publish").get_data(as_text=True)
        admin = role == "admin"
        assert ('action="/data"' in data) == admin, role
        assert ("Loading data is for an admin" in data) == (not admin), role
        assert ("Save settings</button>" in settings_page) == admin, role
        # no field the account cannot save: the others read the settings as text
        main = settings_page.split("<main", 1)[1]
        assert ('name="title"' in main) == admin and ("<input" in main) == admin, role
        assert ("<dt>Publication title</dt>" in settings_page) == (not admin), role
        assert ('action="/publish/download"' in publish) == admin, role
