"""Stetline's web app: a Flask application factory around a workspace.

Views parse the request, call the engine and the store, and render templates; they hold no
business rules and no SQL.
"""

from __future__ import annotations

from typing import Any

from flask import Flask, g, render_template
from werkzeug.exceptions import HTTPException

from engine.workspace import Workspace


def create_app(ws: Workspace, test_config: dict[str, Any] | None = None) -> Flask:
    """Create the web app for an open workspace."""
    app = Flask(__name__)
    app.config.update(
        SECRET_KEY=ws.secret_key(),
        SESSION_COOKIE_HTTPONLY=True,
        SESSION_COOKIE_SAMESITE="Lax",
        MAX_CONTENT_LENGTH=50 * 1024 * 1024,
    )
    if test_config:
        app.config.update(test_config)
    app.extensions["stetline_workspace"] = ws

    from flask_wtf import CSRFProtect

    CSRFProtect(app)

    from webapp import browse, overview, recheck, statement

    for module in (overview, browse, statement, recheck):
        app.register_blueprint(module.bp)
    _error_pages(app)

    @app.teardown_appcontext
    def _close(_exc: BaseException | None) -> None:
        session = g.pop("db", None)
        if session is not None:
            session.close()

    return app


def _error_pages(app: Flask) -> None:
    """Render HTTP errors (unknown pages, refused forms) as pages in the app's own look."""
    from flask_wtf.csrf import CSRFError

    def page(exc: HTTPException, heading: str) -> tuple[str, int]:
        return render_template("error.html", heading=heading, message=exc.description), exc.code or 500

    @app.errorhandler(404)
    def _not_found(exc: HTTPException) -> tuple[str, int]:
        return page(exc, "Not found")

    @app.errorhandler(CSRFError)
    def _csrf(exc: CSRFError) -> tuple[str, int]:
        exc.description = f"The form was refused ({exc.description}); reload the page and try again."
        return page(exc, "Form refused")
