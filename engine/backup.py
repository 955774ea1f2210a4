"""Back up a workspace's SQLite database to one file, and restore a workspace from such a file.

A backup is taken with SQLite's online backup API, so it is a consistent snapshot even while
the web app or a load writes to the workspace; it is written to a temporary file next to the
target and renamed into place only when complete. A restore first checks that the file is a
Stetline database, keeps the database it replaces as a dated copy in the workspace folder (so
no work done since the backup is lost), swaps the new file in with one atomic rename and brings
its schema up to date. PostgreSQL workspaces are backed up with pg_dump instead.

This module handles files only; stetline.store.backup opens the SQLite databases. It holds no
business rules.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from sqlalchemy.exc import SQLAlchemyError

from stetline.accounts import authorize
from stetline.errors import StetlineError
from stetline.store import backup as sqlite_files
from stetline.store import db, ops
from stetline.workspace import DB_FILE, PRIVATE, Workspace, _url_for, is_workspace

SQLITE_MAGIC = b"SQLite format 3\x00"
REQUIRED_TABLES = ("slot", "alembic_version")
SIDE_FILES = ("-wal", "-shm", "-journal")
KEPT_PREFIX = "stetline-before-restore-"


@dataclass
class BackupResult:
    """What a backup wrote."""

    file: Path
    size: int
    counts: dict[str, int]
    recorded: bool = True


@dataclass
class RestoreResult:
    """What a restore did."""

    file: Path
    revision_before: str
    revision_now: str
    kept: Path | None
    counts: dict[str, int]
    recorded: bool = True


def _sqlite_file(ws: Workspace, action: str) -> Path:
    if not ws.url.startswith("sqlite"):
        how = ("back it up with pg_dump" if action == "backup"
               else "restore it with pg_restore (or psql for a plain dump)")
        raise StetlineError(
            f"this workspace keeps its data in PostgreSQL: {how}, as the README describes; "
            f"stetline {action} handles SQLite workspaces only"
        )
    return ws.path / DB_FILE


def _authorize(ws: Workspace, by: str, action: str) -> None:
    """Refuse a person whose account may not take the action (anyone may without accounts).

    A database that cannot be read, or predates accounts, has no accounts to ask: whoever can
    reach its file may act on it.
    """
    try:
        with ws.sessions() as session:  # a read: never waits for someone's open write
            authorize(session, by, action)
    except SQLAlchemyError:
        return


def _temp_beside(target: Path, prefix: str) -> Path:
    fd, name = tempfile.mkstemp(prefix=prefix, suffix=".tmp", dir=target.parent)
    os.close(fd)
    return Path(name)


def _remove(path: Path) -> None:
    for suffix in ("",) + SIDE_FILES:
        Path(str(path) + suffix).unlink(missing_ok=True)


def _fsync(path: Path) -> None:
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def _same_mode(path: Path, like: Path) -> None:
    if like.exists():
        os.chmod(path, like.stat().st_mode & 0o777)


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _copy_live(ws: Workspace, target: Path) -> None:
    """Copy the workspace database into ``target`` (a new file) with the online backup API."""
    sqlite_files.copy_live(ws.engine, target)
    _fsync(target)


def backup(ws: Workspace, target: Path, *, by: str, force: bool = False) -> BackupResult:
    """Write a consistent copy of the workspace database to ``target``; refuse to overwrite."""
    live = _sqlite_file(ws, "backup")
    if not live.is_file():
        raise StetlineError(f"the workspace {ws.path} has no database yet; nothing to back up")
    _authorize(ws, by, "backup")
    target = Path(target)
    if target.is_dir():
        raise StetlineError(f"{target} is a folder: give the name of the backup file to write")
    if not target.parent.is_dir():
        raise StetlineError(f"the folder {target.parent} does not exist; create it first")
    if target.resolve() in {Path(str(live) + s).resolve() for s in ("",) + SIDE_FILES}:
        raise StetlineError(f"{target} is the workspace database itself; write the backup to another file")
    if target.exists() and not force:
        raise StetlineError(f"{target} already exists; choose another file or give --force to replace it")
    temp = _temp_beside(target, ".stetline-backup-")
    try:
        _copy_live(ws, temp)
        os.chmod(temp, PRIVATE)  # it holds the password hashes: the owner's eyes only
        os.replace(temp, target)
        _fsync_dir(target.parent)
    except BaseException:
        _remove(temp)
        raise
    size = target.stat().st_size
    recorded = _record(ws, by, "backup", {"file": str(target.resolve()), "bytes": size})
    return BackupResult(target, size, sqlite_files.file_counts(target), recorded)


def _record(ws: Workspace, by: str, action: str, detail: dict[str, object]) -> bool:
    """Record the event in the workspace history; False when the database stayed busy."""
    try:
        with ws.session() as session:
            ops.add_event(session, by, action, detail=detail)
    except SQLAlchemyError:
        return False
    return True


def _refuse(source: Path, why: str) -> StetlineError:
    return StetlineError(f"{source} is not a Stetline backup: {why}; the workspace was not changed")


def _check_candidate(source: Path, candidate: Path, known: set[str]) -> str:
    """Check the copied file is a sound Stetline database; return its schema revision."""
    try:
        found = sqlite_files.check_file(candidate, REQUIRED_TABLES)
    except sqlite_files.UnreadableDatabase as exc:
        raise _refuse(source, f"SQLite cannot read it ({exc})") from None
    if found.integrity != "ok":
        raise _refuse(source, f"the database is damaged ({found.integrity or 'no result'})")
    missing = [t for t in REQUIRED_TABLES if t not in found.tables]
    if missing:
        raise _refuse(source, f"the database lacks Stetline's table(s) {', '.join(missing)}")
    revisions = found.revisions
    if len(revisions) != 1:
        raise _refuse(source, "its schema version is missing or ambiguous")
    if revisions[0] not in known:
        raise StetlineError(
            f"{source} was written by a newer version of Stetline (schema {revisions[0]!r}); "
            "upgrade Stetline, then restore it; the workspace was not changed"
        )
    return revisions[0]


def _known_revisions(url: str) -> set[str]:
    from alembic.script import ScriptDirectory

    return {s.revision for s in ScriptDirectory.from_config(db.alembic_config(url)).walk_revisions()}


def restore(ws: Workspace, source: Path, *, by: str) -> RestoreResult:
    """Replace the workspace database with a backup, keeping the replaced one beside it.

    The file is checked first (a SQLite database holding Stetline's tables at a schema this
    version knows); a refused file changes nothing. Stop the web app before restoring: a
    running server keeps the database it opened until it is restarted.
    """
    live = _sqlite_file(ws, "restore")
    source = Path(source)
    if not source.exists():
        raise StetlineError(f"{source} does not exist")
    if not source.is_file():
        raise StetlineError(f"{source} is not a file")
    if source.resolve() == live.resolve():
        raise StetlineError(f"{source} is the workspace database itself; give a backup file")
    with source.open("rb") as f:
        head = f.read(len(SQLITE_MAGIC))
    if head != SQLITE_MAGIC:
        raise _refuse(source, "it is not a SQLite database")
    known = _known_revisions(ws.url)
    if live.is_file():
        _authorize(ws, by, "restore")
    candidate = _temp_beside(live, ".stetline-restore-")
    try:
        # work on a private copy: the backup file itself is never opened for writing
        shutil.copyfile(source, candidate)
        wal = Path(str(source) + "-wal")
        if wal.is_file():  # a copy of a live database may hold recent commits in its log
            shutil.copyfile(wal, str(candidate) + "-wal")
        revision_before = _check_candidate(source, candidate, known)
        _remove_sides(candidate)
        _fsync(candidate)
        _same_mode(candidate, live)
        kept = _keep_current(ws, live)
        ws.close()  # no connection of ours may checkpoint an old log into the new file
        sqlite_files.checkpoint(live)  # fold the old file's write-ahead log into it before it goes
        os.replace(candidate, live)
        for suffix in SIDE_FILES:  # stale beside the new file: they belonged to the old one
            Path(str(live) + suffix).unlink(missing_ok=True)
        _fsync_dir(live.parent)
    except BaseException:
        _remove(candidate)
        raise
    try:
        db.upgrade(ws.url)
    except Exception as exc:  # the file is in place; say how to go back
        undo = f"; the replaced database is kept as {kept}" if kept else ""
        raise StetlineError(
            f"{source} was restored but its schema could not be brought up to date "
            f"({' '.join(str(exc).split())[:200]}){undo}"
        ) from None
    ws.engine.dispose()
    recorded = _record(ws, by, "restore", {
        "file": str(source.resolve()), "schema_before": revision_before, "kept": str(kept) if kept else None,
    })
    with ws.session() as session:
        counts = {**ops.table_counts(session), **ops.workspace_counts(session).totals()}
    return RestoreResult(source, revision_before, sqlite_files.revision_of(live), kept, counts, recorded)


def _remove_sides(path: Path) -> None:
    for suffix in SIDE_FILES:
        Path(str(path) + suffix).unlink(missing_ok=True)


def _keep_current(ws: Workspace, live: Path) -> Path | None:
    """Save the database about to be replaced as a dated copy in the workspace folder."""
    if not live.exists():
        return None
    stamp = datetime.now(UTC).strftime("%Y%m%dT%H%M%S%fZ")
    kept = live.with_name(f"{KEPT_PREFIX}{stamp}.db")
    temp = _temp_beside(live, ".stetline-keep-")
    try:
        # a damaged database cannot be read page by page: its bytes are kept as they are
        sqlite_files.copy_live_or_bytes(ws.engine, live, temp)
        _fsync(temp)
        _same_mode(temp, live)
        os.replace(temp, kept)
    except BaseException:
        _remove(temp)
        raise
    return kept


def attach(path: Path, url: str | None = None) -> Workspace:
    """A workspace opened without reading its database (which a restore may be replacing)."""
    if not is_workspace(path):
        raise StetlineError(f"{path} is not a workspace; create it with: stetline init -w {path}")
    url = _url_for(path, url)
    engine = db.make_engine(url)
    return Workspace(path, url, engine, db.session_factory(engine))
