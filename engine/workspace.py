"""A workspace: a folder holding one publication project, its database and its settings.

The database is ``stetline.db`` inside the folder unless ``STETLINE_DATABASE_URL`` names another
(PostgreSQL for a team). Copied phrasing templates live in ``phrasing/``, copied report layouts
in ``layouts/``; the web app's secret key is ``secret_key``, created on first use.

The database and the secret key are created readable by their owner only (0600): they hold the
password hashes and the key that signs session cookies. SQLite gives its -wal and -shm files the
database file's permissions.
"""

from __future__ import annotations

import os
import secrets
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from sqlalchemy import Engine
from sqlalchemy.orm import Session, sessionmaker

from stetline.errors import StetlineError
from stetline.store import db

DB_FILE = "stetline.db"
URL_VARIABLE = "STETLINE_DATABASE_URL"
WORKSPACE_VARIABLE = "STETLINE_WORKSPACE"
MARKER = "stetline-workspace"
#: the permissions of the files that hold secrets: the owner reads and writes, nobody else
PRIVATE = 0o600


def default_path() -> Path:
    """The workspace folder used when none is given: $STETLINE_WORKSPACE or ./workspace."""
    return Path(os.environ.get(WORKSPACE_VARIABLE) or "workspace")


@dataclass
class Workspace:
    """An open workspace: its folder, database engine and session factory."""

    path: Path
    url: str
    engine: Engine
    sessions: sessionmaker[Session] = field(repr=False)

    def bring_up_to_date(self) -> bool:
        """Apply the migrations the database lacks (a workspace made by an older Stetline)."""
        return db.bring_up_to_date(self.url, self.engine)

    @property
    def phrasing_dir(self) -> Path:
        """Where copied phrasing templates live."""
        return self.path / "phrasing"

    @property
    def layouts_dir(self) -> Path:
        """Where copied report layouts live."""
        return self.path / "layouts"

    @property
    def chart_dir(self) -> Path:
        """Where publishing keeps the charts it drew, named by their digest (safe to delete)."""
        return self.path / "chart-cache"

    @contextmanager
    def session(self) -> Iterator[Session]:
        """A writing session in one transaction: committed on success, rolled back on any error.

        On SQLite the transaction takes the write lock when it begins, so concurrent writers queue
        (up to the busy timeout) instead of failing halfway.
        """
        token = db.WRITING.set(True)
        try:
            with self.sessions() as session:
                with session.begin():
                    yield session
        finally:
            db.WRITING.reset(token)

    @contextmanager
    def reading(self) -> Iterator[Session]:
        """A session for reading: it sees a consistent snapshot and never waits for a writer."""
        with self.sessions() as session:
            with session.begin():
                yield session
                session.rollback()

    def secret_key(self) -> str:
        """The web app's secret key, generated once per workspace and kept in its folder."""
        key_file = self.path / "secret_key"
        try:
            fd = os.open(key_file, os.O_WRONLY | os.O_CREAT | os.O_EXCL, PRIVATE)
        except FileExistsError:
            return key_file.read_text().strip()
        with os.fdopen(fd, "w") as out:
            out.write(secrets.token_hex(32))
        return key_file.read_text().strip()

    def close(self) -> None:
        """Release the database connections."""
        self.engine.dispose()


def _url_for(path: Path, url: str | None) -> str:
    return url or os.environ.get(URL_VARIABLE) or db.sqlite_url(path / DB_FILE)


def create_private(file: Path) -> None:
    """Create an empty file readable by its owner only, unless it exists already."""
    try:
        os.close(os.open(file, os.O_WRONLY | os.O_CREAT | os.O_EXCL, PRIVATE))
    except FileExistsError:
        pass


def is_workspace(path: Path) -> bool:
    """True when the folder was initialised as a workspace."""
    return (path / MARKER).exists()


def init_workspace(path: Path, url: str | None = None) -> Workspace:
    """Create (or upgrade) a workspace in a folder and bring its database to the newest schema."""
    path.mkdir(parents=True, exist_ok=True)
    url = _url_for(path, url)
    if url == db.sqlite_url(path / DB_FILE):
        create_private(path / DB_FILE)  # before SQLite creates it with the usual 0644
    db.upgrade(url)
    (path / MARKER).write_text("This folder is a Stetline workspace.\n")
    engine = db.make_engine(url)
    return Workspace(path, url, engine, db.session_factory(engine))


def open_workspace(path: Path, url: str | None = None) -> Workspace:
    """Open an initialised workspace; raise StetlineError saying how to create one otherwise."""
    if not is_workspace(path):
        raise StetlineError(f"{path} is not a workspace; create it with: stetline init -w {path}")
    url = _url_for(path, url)
    engine = db.make_engine(url)
    ws = Workspace(path, url, engine, db.session_factory(engine))
    ws.bring_up_to_date()  # a workspace made by an older Stetline gets the migrations it lacks
    return ws


def copy_builtin(source: Path, folder: Path, *, force: bool = False) -> Path:
    """Copy a built-in template into a workspace folder for the team to edit; never overwrite silently."""
    target = folder / source.name
    if target.exists() and not force:
        raise StetlineError(f"{target} exists already; edit it, or give --force to start again from the built-in one")
    folder.mkdir(parents=True, exist_ok=True)
    target.write_text(source.read_text(encoding="utf-8"), encoding="utf-8")
    return target
