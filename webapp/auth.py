"""Signing in: once a workspace has accounts, every page asks who you are.

A workspace without accounts is a one-person workspace: anyone may act, under the name typed in
the "Your name" field. Once it has accounts, every page but the sign-in page needs a signed-in,
enabled account; the actions then run under that account, and the engine checks its role. The
session cookie holds the account's name, its session generation and when the session began and
was last used; its role, whether it is enabled and whether the generation is still current are
read from the workspace on every request. Signing out, a new password or role, and disabling or
enabling the account raise the generation and so end every existing session. A session also ends
after ``session_idle_minutes`` without a request and ``session_hours`` after signing in.
"""

from __future__ import annotations

import time
from typing import Any
from urllib.parse import urlsplit

from flask import Blueprint, current_app, g, redirect, render_template, request, url_for
from flask import session as cookie
from werkzeug.wrappers import Response

from stetline import accounts, demo, passwords
from stetline import settings as settings_mod
from stetline.errors import StetlineError
from stetline.store import ops
from stetline.web.db import session, workspace
from stetline.web.guard import site_path
from stetline.web.throttle import Throttle
from stetline.web.wording import web_message

bp = Blueprint("auth", __name__)

OPEN = frozenset({"auth.login", "auth.login_form", "static"})
MAX_FIELD = 200
#: the last-used time in the cookie is renewed at most this often (seconds), not on every request
SEEN_EVERY = 60


def accounts_on() -> bool:
    """True when the workspace has accounts (and so every action needs a signed-in account)."""
    if "accounts_on" not in g:
        g.accounts_on = accounts.has_accounts(session())
    return bool(g.accounts_on)


def signed_in() -> tuple[str, str] | None:
    """The signed-in account's name and role, when it still exists and is enabled."""
    if "signed_in" not in g:
        g.signed_in = _from_cookie()
    return g.signed_in  # type: ignore[no-any-return]


def _from_cookie() -> tuple[str, str] | None:
    """The account the session cookie names, while its session is current; a stale one is dropped."""
    name = cookie.get("account")
    if not isinstance(name, str) or not accounts_on():
        return None
    since, seen, now = cookie.get("since"), cookie.get("seen"), int(time.time())
    if not isinstance(since, int) or not isinstance(seen, int):
        cookie.clear()
        return None
    values = settings_mod.with_defaults(ops.get_settings(session()))
    fresh = (now - since <= int(values["session_hours"]) * 3600
             and now - seen <= int(values["session_idle_minutes"]) * 60)
    role = accounts.session_role(session(), name, cookie.get("gen")) if fresh else None
    if role is None:
        cookie.clear()
        return None
    if now - seen >= SEEN_EVERY:
        cookie["seen"] = now
    return name, role


def _next_target(default: str) -> str:
    return site_path(request.values.get("next") or "") or default


def _referrer_path() -> str:
    """The path of the page a form was sent from, when it is on this site."""
    parts = urlsplit(request.referrer or "")
    if parts.netloc != request.host or not parts.path.startswith("/"):
        return url_for("overview.index")
    return parts.path + (f"?{parts.query}" if parts.query else "")


@bp.before_app_request
def _require_sign_in() -> Response | None:
    """Send anyone not signed in to the sign-in page, once the workspace has accounts."""
    if request.endpoint in OPEN or request.endpoint is None or not accounts_on():
        return None
    if signed_in() is None:
        here = request.full_path.rstrip("?") if request.method == "GET" else _referrer_path()
        return redirect(url_for("auth.login_form", next=here), code=303)
    return None


def _page(error: str | None = None, name: str = "", status: int = 200) -> tuple[str, int]:
    return render_template("auth/login.html", error=error, name=name, next_url=_next_target(""),
                           max_password=passwords.MAX_PASSWORD,
                           is_demo=(workspace().path / demo.ACCOUNTS_FILE).is_file()), status


@bp.get("/login")
def login_form() -> tuple[str, int]:
    """The sign-in form."""
    return _page()


@bp.post("/login")
def login() -> Response | tuple[str, int]:
    """Check the name and password; repeated failures from one client for one name must wait."""
    name = (request.form.get("name") or "").strip()[:MAX_FIELD]
    password = request.form.get("password") or ""  # never cut: a long one is refused whole
    client = request.remote_addr or ""
    throttle: Throttle = current_app.extensions["stetline_throttle"]
    wait = throttle.wait(name, client)
    if wait > 0:
        minutes = int(wait // 60) + 1
        return _page(error=f"Not signed in: too many failed attempts for this name from here; try again in "
                           f"{minutes} minute{'s' if minutes > 1 else ''}.", name=name, status=429)
    error = None
    with workspace().session() as s:  # committed either way: failed attempts are counted
        try:
            account = accounts.login(s, name, password)
            name, generation = account.name, account.session_generation
        except StetlineError as exc:
            error = web_message(exc)
    if error is not None:
        throttle.failed(name, client)
        return _page(error=f"Not signed in: {error}.", name=name, status=401)
    throttle.succeeded(name, client)
    now = int(time.time())
    cookie.clear()
    cookie.update({"account": name, "gen": generation, "since": now, "seen": now})
    return redirect(_next_target(url_for("overview.index")), code=303)


@bp.post("/logout")
def logout() -> Response:
    """End the account's sessions (here and on every other device) and forget who is signed in."""
    who = signed_in()
    if who is not None:
        with workspace().session() as s:
            accounts.end_sessions(s, who[0])
    cookie.clear()
    return redirect(url_for("auth.login_form") if accounts_on() else url_for("overview.index"), code=303)


@bp.app_template_global("may")
def may(action: str) -> bool:
    """Whether the acting account's role allows an action (anyone may, without accounts).

    Pages use it to offer only the controls a role can use; the server still checks every
    action when it is posted, whatever the page offered.
    """
    if not accounts_on():
        return True
    who = signed_in()
    return who is not None and who[1] in accounts.PERMISSIONS[action]


@bp.app_context_processor
def _who() -> dict[str, Any]:
    if request.endpoint == "static":
        return {}
    on = accounts_on()
    return {"accounts_on": on, "signed_in": signed_in() if on else None}
