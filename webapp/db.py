"""One database session per request, taken from the app's workspace."""

from __future__ import annotations

from flask import current_app, g
from sqlalchemy.orm import Session

from stetline.workspace import Workspace


def workspace() -> Workspace:
    """The workspace the app serves."""
    return current_app.extensions["stetline_workspace"]


def session() -> Session:
    """The request's session (closed when the request ends)."""
    if "db" not in g:
        g.db = workspace().sessions()
    return g.db
