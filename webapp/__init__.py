"""Stetline's web app: a Flask application factory around a workspace.

Views parse the request, call the engine and the store, and render templates; they hold no
business rules and no SQL.
"""

from __future__ import annotations

from typing import Any

from flask import Flask, g

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

    from webapp import overview

    app.register_blueprint(overview.bp)

    @app.teardown_appcontext
    def _close(_exc: BaseException | None) -> None:
        session = g.pop("db", None)
        if session is not None:
            session.close()

    return app
