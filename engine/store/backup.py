"""The SQLite side of backup and restore: the online backup API, checks of a database file, its
schema revision and row counts, and folding a write-ahead log into its file.

Files are opened with the standard library's sqlite3 driver, apart from the workspace's own
engine; the rules (what to refuse, where files go) live in stetline.backup.
"""

from __future__ import annotations

import shutil
import sqlite3
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from sqlalchemy import Engine, create_engine
from sqlalchemy.exc import SQLAlchemyError
from sqlalchemy.orm import Session

from stetline.store import db, ops


class UnreadableDatabase(Exception):
    """SQLite cannot read the file as a database (the message is SQLite's)."""


@dataclass
class FileCheck:
    """What a database file holds, read by check_file."""

    integrity: str | None  # "ok", the first problem SQLite's quick check found, or None (no answer)
    tables: set[str]
    revisions: list[str]  # the schema revisions recorded (read only when every required table is there)


def copy_live(engine: Engine, target: Path) -> None:
    """Copy the database of a SQLite engine into ``target`` (a new file) with the online backup API.

    The copy is one self-contained file, with no write-ahead log beside it.
    """
    raw = engine.raw_connection()
    try:
        source = raw.driver_connection
        assert isinstance(source, sqlite3.Connection)
        dest = sqlite3.connect(target)
        try:
            source.backup(dest)
            dest.execute("PRAGMA journal_mode=DELETE")
        finally:
            dest.close()
    finally:
        raw.close()


def copy_live_or_bytes(engine: Engine, live: Path, target: Path) -> None:
    """Copy the database with copy_live; a database too damaged to read page by page is copied
    byte for byte from its file ``live``."""
    try:
        copy_live(engine, target)
    except (sqlite3.DatabaseError, SQLAlchemyError):
        shutil.copyfile(live, target)


def check_file(path: Path, required: Sequence[str]) -> FileCheck:
    """Check a database file with SQLite's quick check and read its tables and schema revisions.

    A copied write-ahead log beside the file is folded into it first. The tables are read only
    when the check passes, the revisions only when every ``required`` table (alembic_version
    among them) is there. Raises UnreadableDatabase when SQLite cannot read the file.
    """
    try:
        conn = sqlite3.connect(path)
        try:
            conn.execute("PRAGMA journal_mode=DELETE")  # folds in a copied write-ahead log
            row = conn.execute("PRAGMA quick_check").fetchone()
            integrity = str(row[0]) if row else None
            if integrity != "ok":
                return FileCheck(integrity, set(), [])
            tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type = 'table'")}
            revisions: list[str] = []
            if all(t in tables for t in required):
                revisions = [r[0] for r in conn.execute("SELECT version_num FROM alembic_version")]
        finally:
            conn.close()
    except sqlite3.DatabaseError as exc:
        raise UnreadableDatabase(str(exc)) from None
    return FileCheck(integrity, tables, revisions)


def revision_of(path: Path) -> str:
    """The schema revision recorded in a database file ("" when none is)."""
    conn = sqlite3.connect(path)
    try:
        row = conn.execute("SELECT version_num FROM alembic_version").fetchone()
    finally:
        conn.close()
    return str(row[0]) if row else ""


def file_counts(path: Path) -> dict[str, int]:
    """The row counts of a database file, read without changing it."""
    engine = create_engine(db.sqlite_url(path))
    try:
        with Session(engine) as session:
            return {**ops.table_counts(session), **ops.workspace_counts(session).totals()}
    finally:
        engine.dispose()


def checkpoint(path: Path) -> None:
    """Fold the write-ahead log into a database file; a damaged database is left as it is."""
    try:
        conn = sqlite3.connect(path)
        try:
            conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        finally:
            conn.close()
    except sqlite3.DatabaseError:
        pass
