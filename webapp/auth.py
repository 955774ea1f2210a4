"""Signing in: once a workspace has accounts, every page asks who you are.

A workspace without accounts is a one-person workspace: anyone may act, under the name typed in
the "Your name" field. Once it has accounts, every page but the sign-in page needs a signed-in,
enabled account; the actions then run under that account, and the engine checks its role. The
session cookie holds the account's name only; its role and whether it is enabled are read from
the workspace on every request.
"""

from __future__ import annotations

from typing import Any
from urllib.parse import urlsplit

from flask import Blueprint, g, redirect, render_template, request, url_for
from flask import session as cookie
from werkzeug.wrappers import Response

from stetline import accounts, demo
from stetline.errors import StetlineError
from stetline.web.db import session, workspace

bp = Blueprint("auth", __name__)

OPEN = frozenset({"auth.login", "auth.login_form", "static"})
MAX_FIELD = 200


def accounts_on() -> bool:
    """True when the workspace has accounts (and so every action needs a signed-in account)."""
    if "accounts_on" not in g:
        g.accounts_on = accounts.has_accounts(session())
    return bool(g.accounts_on)


def signed_in() -> tuple[str, str] | None:
    """The signed-in account's name and role, when it still exists and is enabled."""
    if "signed_in" not in g:
        name = cookie.get("account")
        role = accounts.role_of(session(), name) if isinstance(name, str) and accounts_on() else None
        g.signed_in = (name, role) if role is not None else None
    return g.signed_in  # type: ignore[no-any-return]


def _next_target(default: str) -> str:
    target = (request.values.get("next") or "").strip()
    if target.startswith("/") and not target.startswith("//") and "\\" not in target:
        return target
    return default


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
                           is_demo=(workspace().path / demo.ACCOUNTS_FILE).is_file()), status


@bp.get("/login")
def login_form() -> tuple[str, int]:
    """The sign-in form."""
    return _page()


@bp.post("/login")
def login() -> Response | tuple[str, int]:
    """Check the name and password; a failed attempt counts towards locking the account."""
    name = (request.form.get("name") or "").strip()[:MAX_FIELD]
    password = (request.form.get("password") or "")[:MAX_FIELD]
    error = None
    with workspace().session() as s:  # committed either way: failed attempts are counted
        try:
            account = accounts.login(s, name, password)
            name = account.name
        except StetlineError as exc:
            error = str(exc)
    if error is not None:
        return _page(error=f"Not signed in: {error}.", name=name, status=401)
    cookie.clear()
    cookie["account"] = name
    return redirect(_next_target(url_for("overview.index")), code=303)


@bp.post("/logout")
def logout() -> Response:
    """Forget who is signed in."""
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
