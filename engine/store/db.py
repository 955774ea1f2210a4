"""Database engines, sessions and migrations for a workspace.

SQLite (the embedded default) gets WAL mode, foreign keys and a busy timeout on every connection
of *its* engine; PostgreSQL is used as configured. Migrations run from code, with no alembic.ini.
"""

from __future__ import annotations

import ast
import re
import sqlite3
import weakref
from contextvars import ContextVar
from importlib import resources
from pathlib import Path
from typing import TYPE_CHECKING

from sqlalchemy import Engine, create_engine, event, text
from sqlalchemy.exc import SQLAlchemyError
from sqlalchemy.orm import Session, sessionmaker

if TYPE_CHECKING:  # Alembic is imported where migrations are read: `stetline --help` starts without it
    from alembic.config import Config

BUSY_TIMEOUT_MS = 30_000
#: set while a writing transaction is open in this thread or task (see Workspace.session)
WRITING: ContextVar[bool] = ContextVar("stetline_writing", default=False)


def sqlite_url(path: Path) -> str:
    """The SQLAlchemy URL of a SQLite file."""
    return f"sqlite:///{path.resolve()}"


def _on_sqlite_connect(dbapi_connection: sqlite3.Connection, _record: object) -> None:
    # autocommit handling is left to SQLAlchemy; these pragmas hold for the connection's life
    cursor = dbapi_connection.cursor()
    cursor.execute("PRAGMA journal_mode=WAL")
    cursor.execute("PRAGMA foreign_keys=ON")
    cursor.execute(f"PRAGMA busy_timeout={BUSY_TIMEOUT_MS}")
    cursor.execute("PRAGMA synchronous=NORMAL")
    cursor.close()


def make_engine(url: str) -> Engine:
    """Create an engine for a workspace database URL, with SQLite's pragmas when it is SQLite."""
    if url.startswith("sqlite"):
        engine = create_engine(url, connect_args={"timeout": BUSY_TIMEOUT_MS / 1000, "check_same_thread": False})
        event.listen(engine, "connect", _on_sqlite_connect)
        # SQLAlchemy's pysqlite driver defers BEGIN; emit it ourselves so a load is one transaction.
        # Writing transactions (Workspace.session) begin IMMEDIATE: they take the write lock at once
        # and wait their turn (busy_timeout) instead of failing when two writers meet mid-transaction.
        @event.listens_for(engine, "begin")
        def _begin(conn):  # type: ignore[no-untyped-def]
            conn.exec_driver_sql("BEGIN IMMEDIATE" if WRITING.get() else "BEGIN")

        @event.listens_for(engine, "connect")
        def _no_implicit(dbapi_connection, _record):  # type: ignore[no-untyped-def]
            dbapi_connection.isolation_level = None
        return engine
    if url.startswith("postgresql://"):
        url = "postgresql+psycopg://" + url[len("postgresql://"):]
    engine = create_engine(url, pool_pre_ping=True)
    _close_connections_when_dropped(engine)
    return engine


def _close_connections_when_dropped(engine: Engine) -> None:
    """An engine dropped without dispose() (a short CLI command, a test) still closes its server
    connections, instead of holding them open until the garbage collector finds them."""
    live: set[object] = set()  # the pool's open DBAPI connections; nothing here refers to the engine

    def opened(dbapi_connection, _record):  # type: ignore[no-untyped-def]
        live.add(dbapi_connection)

    def closed(dbapi_connection, *_rest):  # type: ignore[no-untyped-def]
        live.discard(dbapi_connection)

    event.listen(engine, "connect", opened)
    event.listen(engine.pool, "close", closed)
    event.listen(engine.pool, "close_detached", closed)
    weakref.finalize(engine, _close_all, live)


def _close_all(connections: set[object]) -> None:
    for connection in list(connections):
        try:
            connection.close()  # type: ignore[attr-defined]
        except Exception:
            pass
    connections.clear()


def session_factory(engine: Engine) -> sessionmaker[Session]:
    """A session factory bound to an engine; sessions keep loaded objects usable after commit."""
    return sessionmaker(bind=engine, expire_on_commit=False)


def alembic_config(url: str) -> Config:
    """An Alembic configuration pointing at the shipped migrations, with no alembic.ini."""
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(resources.files("stetline.migrations")))
    cfg.set_main_option("sqlalchemy.url", url.replace("%", "%%"))
    return cfg


def upgrade(url: str) -> None:
    """Bring a database to the newest schema."""
    from alembic import command

    command.upgrade(alembic_config(url), "head")


def is_current(url: str, engine: Engine) -> bool:
    """True when the database is at the newest migration.

    The newest revisions are first read from the migration files themselves (their ``revision``
    and ``down_revision`` lines), which is quick; only when they differ from the database's does
    Alembic read the migrations in full to decide.
    """
    with engine.connect() as conn:
        try:
            stored = {row[0] for row in conn.execute(text("SELECT version_num FROM alembic_version"))}
        except SQLAlchemyError:
            stored = set()
        conn.rollback()
    if stored and stored == _file_heads():
        return True
    from alembic.runtime.migration import MigrationContext
    from alembic.script import ScriptDirectory

    heads = set(ScriptDirectory.from_config(alembic_config(url)).get_heads())
    with engine.connect() as conn:
        return set(MigrationContext.configure(conn).get_current_heads()) == heads


_REVISION_LINE = re.compile(r"^(revision|down_revision)\s*(?::[^=]*)?=\s*(.+)$", re.M)


def _file_heads() -> set[str]:
    """The revisions no migration file names as its down revision (empty when a file cannot be read so)."""
    revisions: set[str] = set()
    below: set[str] = set()
    for path in (resources.files("stetline.migrations") / "versions").iterdir():
        if not path.name.endswith(".py"):
            continue
        found = dict(_REVISION_LINE.findall(path.read_text(encoding="utf-8")))
        try:
            revision, down = ast.literal_eval(found["revision"]), ast.literal_eval(found.get("down_revision", "None"))
        except (KeyError, ValueError, SyntaxError):
            return set()
        if not isinstance(revision, str):
            return set()
        revisions.add(revision)
        below.update([down] if isinstance(down, str) else list(down or ()))
    return revisions - below


def bring_up_to_date(url: str, engine: Engine) -> bool:
    """Apply the migrations the database lacks; True when any were applied."""
    if is_current(url, engine):
        return False
    upgrade(url)
    return True
