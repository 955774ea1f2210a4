"""Stetline's web app: a Flask application factory around a workspace.

Views parse the request, call the engine and the store, and render templates; they hold no
business rules and no SQL.
"""

from __future__ import annotations

from collections.abc import Iterable
from datetime import timedelta
from typing import Any

from flask import Flask, g, render_template
from sqlalchemy.exc import OperationalError
from werkzeug.exceptions import HTTPException

from stetline.workspace import Workspace

MAX_UPLOAD_MB = 50


def create_app(ws: Workspace, test_config: dict[str, Any] | None = None,
               hosts: Iterable[str] | None = None) -> Flask:
    """Create the web app for an open workspace, answering to the given host names (loopback by default)."""
    _schema_current(ws)
    app = Flask(__name__)
    https, session_hours = _startup_settings(ws)
    app.config.update(
        SECRET_KEY=ws.secret_key(),
        SESSION_COOKIE_HTTPONLY=True,
        SESSION_COOKIE_SAMESITE="Lax",
        SESSION_COOKIE_SECURE=https,
        PERMANENT_SESSION_LIFETIME=timedelta(hours=session_hours),  # no signed cookie outlives it
        MAX_CONTENT_LENGTH=MAX_UPLOAD_MB * 1024 * 1024,
    )
    if test_config:
        app.config.update(test_config)
    app.extensions["stetline_workspace"] = ws

    from flask_wtf import CSRFProtect

    from stetline.web import guard, throttle

    app.extensions["stetline_throttle"] = throttle.Throttle()
    guard.install(app, hosts)  # before CSRF: a foreign Host or a form from another site is refused first
    CSRFProtect(app)

    from stetline.web import auth, browse, bulk, data, mine, overview, publishing, recheck, search, settings, statement

    for module in (auth, overview, browse, statement, recheck, bulk, search, data, publishing, settings, mine):
        app.register_blueprint(module.bp)
    from stetline.web import wording

    wording.install(app)
    _error_pages(app)

    @app.teardown_appcontext
    def _close(_exc: BaseException | None) -> None:
        session = g.pop("db", None)
        if session is not None:
            session.close()

    return app


def _schema_current(ws: Workspace) -> None:
    """Bring a workspace made by an older Stetline up to the newest schema."""
    ws.bring_up_to_date()


def _startup_settings(ws: Workspace) -> tuple[bool, int]:
    """The ``https`` setting (session cookies then go over HTTPS only) and ``session_hours``."""
    from stetline import settings
    from stetline.store import ops

    with ws.session() as s:
        values = settings.with_defaults(ops.get_settings(s))
    return bool(values["https"]), int(values["session_hours"])


def _error_pages(app: Flask) -> None:
    """Render HTTP errors (unknown pages, refused forms) as pages in the app's own look."""
    from flask_wtf.csrf import CSRFError

    def page(exc: HTTPException, heading: str) -> tuple[str, int]:
        from stetline.web.wording import web_message

        message = web_message(exc.description)
        return render_template("error.html", heading=heading, message=message), exc.code or 500

    @app.errorhandler(404)
    def _not_found(exc: HTTPException) -> tuple[str, int]:
        return page(exc, "Not found")

    @app.errorhandler(405)
    def _not_allowed(exc: HTTPException) -> tuple[str, int]:
        exc.description = "This address does not take that kind of request; use the page's own forms."
        return page(exc, "Not allowed")

    @app.errorhandler(413)
    def _too_large(exc: HTTPException) -> tuple[str, int]:
        limit = app.config.get("MAX_CONTENT_LENGTH") or 0
        exc.description = (
            f"The upload is larger than this server accepts ({_size(limit)} in all). Nothing was "
            "loaded. Split the data into smaller files, or load it from the command line with "
            "stetline load."
        )
        return page(exc, "Upload too large")

    @app.errorhandler(CSRFError)
    def _csrf(exc: CSRFError) -> tuple[str, int]:
        exc.description = f"The form was refused ({exc.description}); reload the page and try again."
        return page(exc, "Form refused")

    @app.errorhandler(OperationalError)
    def _busy(exc: OperationalError) -> tuple[str, int, dict[str, str]]:
        if not _is_busy(exc):
            raise exc
        message = ("The workspace is busy: another change, such as a data load, is being written. "
                   "Nothing was saved; try again in a minute.")
        return render_template("error.html", heading="Workspace busy", message=message), 503, \
            {"Retry-After": str(BUSY_RETRY_SECONDS)}


#: SQLite's messages and PostgreSQL's SQLSTATEs for a writer that gave up waiting for a lock
_SQLITE_BUSY = ("database is locked", "database table is locked", "database is busy")
_POSTGRES_BUSY = frozenset({"55P03", "40P01", "40001"})  # lock not available, deadlock, serialization
BUSY_RETRY_SECONDS = 30


def _is_busy(exc: OperationalError) -> bool:
    """True when the database refused a write because another transaction held its lock."""
    orig = exc.orig
    if getattr(orig, "sqlstate", None) in _POSTGRES_BUSY:
        return True
    return any(text in str(orig).lower() for text in _SQLITE_BUSY)


def _size(n: int) -> str:
    if n >= 1024 * 1024:
        return f"{n / (1024 * 1024):g} MB"
    if n >= 1024:
        return f"{n / 1024:g} KB"
    return f"{n} bytes"
