"""Keep a workspace's database on the newest schema: a workspace made by an older Stetline gets
the migrations it lacks when it is opened for serving."""

from __future__ import annotations

from alembic.runtime.migration import MigrationContext
from alembic.script import ScriptDirectory

from engine.store import db
from engine.workspace import Workspace


def is_current(ws: Workspace) -> bool:
    """True when the workspace's database is at the newest migration."""
    heads = set(ScriptDirectory.from_config(db.alembic_config(ws.url)).get_heads())
    with ws.engine.connect() as conn:
        return set(MigrationContext.configure(conn).get_current_heads()) == heads


def bring_up_to_date(ws: Workspace) -> bool:
    """Apply the migrations the database lacks; True when any were applied."""
    if is_current(ws):
        return False
    db.upgrade(ws.url)
    return True
