"""`stetline backup` and `stetline restore`: a restore brings back exactly what the backup held.

A backup taken while someone is mid-edit holds only committed work; a refused file (not a
database, not Stetline's, damaged, from a newer schema) changes nothing; an existing backup
file is never overwritten without --force; the database a restore replaces is kept, so work
done after the backup can still be recovered.
"""

from __future__ import annotations

import sqlite3
import threading
import time
from pathlib import Path

import pytest
from helpers import Cli
from sqlalchemy import select

from stetline import actions, backup
from stetline.errors import StetlineError
from stetline.store import ops
from stetline.store.models import Event
from stetline.workspace import DB_FILE, Workspace, open_workspace

LATER = "A sentence written after the backup, which the restore must take away."
SLOT = "blurb/little-thrift/parks-satisfaction"  # the demo's editor rewrote it (with live fields)


def snapshot(path: Path) -> dict[str, object]:
    """What a person would miss if it vanished: layers, approvals, events, counts, texts."""
    ws = open_workspace(path)
    try:
        with ws.session() as s:
            return {
                "layers": [(x.id, x.slot_id, x.type, x.text, x.by) for x in ops.all_active_layers(s)],
                "approvals": [(a.id, a.slot_id, a.text, a.by) for a in ops.all_active_approvals(s)],
                "events": [(e.id, e.action, e.by, e.slot_id, e.after)
                           for e in s.scalars(select(Event).order_by(Event.id))],
                "counts": ops.table_counts(s),
                "text": actions.view(s, SLOT).to_json(s)["text"],
            }
    finally:
        ws.close()


def rewrite_later(path: Path, by: str = "late-editor") -> None:
    ws = open_workspace(path)
    try:
        with ws.session() as s:
            actions.rewrite(s, SLOT, LATER, by=by)
    finally:
        ws.close()


def folder_listing(path: Path) -> set[str]:
    return {p.name for p in path.iterdir()}


def test_restore_brings_back_every_layer_and_event_of_the_backup(
    demo_cli: Cli, demo_path: Path, tmp_path: Path,
) -> None:
    before = snapshot(demo_path)
    assert before["layers"], "the demo holds human work"
    file = tmp_path / "kept" / "scorecard.db"
    file.parent.mkdir()
    out = demo_cli("backup", str(file), "--by", "keeper").output
    assert "backed up the workspace" in out and str(file) in out
    assert file.is_file() and file.read_bytes()[:16] == b"SQLite format 3\x00"

    rewrite_later(demo_path)
    changed = snapshot(demo_path)
    assert changed["text"] == LATER
    assert any(layer[3] == LATER for layer in changed["layers"])

    out = demo_cli("restore", str(file), "--by", "keeper").output
    assert "restored the workspace" in out
    after = snapshot(demo_path)
    # everything of the backup's time is back, identically
    assert after["layers"] == before["layers"]
    assert after["approvals"] == before["approvals"]
    assert after["text"] == before["text"] != LATER
    # the events: those of the backup's time, then the restore itself
    assert after["events"][:-1] == before["events"]
    assert after["events"][-1][1:3] == ("restore", "keeper")
    assert not any(e[4] == LATER for e in after["events"])
    assert {k: v for k, v in after["counts"].items() if k != "event"} == {
        k: v for k, v in before["counts"].items() if k != "event"
    }
    # the CLI sees the restored state too
    assert demo_cli.json("show", SLOT)["text"] == before["text"]
    assert demo_cli.json("status")["editions"] == before["counts"]["edition"]


def test_restore_keeps_the_replaced_database_so_later_work_is_not_lost(
    demo_cli: Cli, demo_path: Path, tmp_path: Path,
) -> None:
    file = tmp_path / "b.db"
    demo_cli("backup", str(file))
    rewrite_later(demo_path)
    out = demo_cli("restore", str(file)).output
    kept = [p for p in demo_path.iterdir() if p.name.startswith(backup.KEPT_PREFIX)]
    assert len(kept) == 1 and str(kept[0].name) in out
    # the kept file is itself a backup: restoring it brings the later rewrite back
    demo_cli("restore", str(kept[0]))
    assert demo_cli.json("show", SLOT)["text"] == LATER


def test_backup_holds_only_committed_work_while_someone_is_mid_edit(demo_path: Path, tmp_path: Path) -> None:
    editor = open_workspace(demo_path)
    keeper = open_workspace(demo_path)
    file = tmp_path / "during.db"
    done: list[backup.BackupResult] = []
    worker = threading.Thread(target=lambda: done.append(backup.backup(keeper, file, by="keeper")))
    try:
        with editor.session() as s:
            actions.rewrite(s, SLOT, LATER, by="editor")
            s.flush()  # the edit's write transaction is open and holds the write lock
            worker.start()
            deadline = time.monotonic() + 20
            while not file.exists() and time.monotonic() < deadline:
                time.sleep(0.02)
            # the copy did not wait for the edit to finish
            assert file.exists(), "the backup waited for an open write"
        worker.join(30)
        assert done and done[0].recorded  # recorded in the history once the edit committed
        with editor.session() as s:
            assert actions.view(s, SLOT).to_json(s)["text"] == LATER
            assert ops.recent_events(s, 1)[0].action == "backup"
    finally:
        editor.close()
        keeper.close()
    conn = sqlite3.connect(file)
    try:
        texts = [r[0] for r in conn.execute("SELECT text FROM layer WHERE slot_id = ?", (SLOT,))]
        assert conn.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "delete"  # one self-contained file
    finally:
        conn.close()
    assert LATER not in texts and texts, "the demo's own rewrite of the slot is in the backup"


def test_backup_records_who_took_it(demo_cli: Cli, demo_path: Path, tmp_path: Path) -> None:
    demo_cli("backup", str(tmp_path / "b.db"), "--by", "night-shift")
    ws = open_workspace(demo_path)
    try:
        with ws.session() as s:
            last = ops.recent_events(s, 1)[0]
            assert (last.action, last.by) == ("backup", "night-shift")
            assert last.detail["file"] == str((tmp_path / "b.db").resolve())
    finally:
        ws.close()


def test_backup_to_an_existing_file_is_refused_without_force(demo_cli: Cli, tmp_path: Path) -> None:
    file = tmp_path / "precious.db"
    file.write_bytes(b"someone's other file")
    result = demo_cli("backup", str(file), ok=False)
    assert result.exit_code == 1
    assert "already exists" in result.output and "--force" in result.output
    assert "Traceback" not in result.output
    assert file.read_bytes() == b"someone's other file"
    assert folder_listing(tmp_path) == {"precious.db", "demo"}  # no temporary file left behind
    demo_cli("backup", str(file), "--force")
    assert file.read_bytes()[:16] == b"SQLite format 3\x00"


def test_backup_onto_the_workspace_database_is_refused(demo_cli: Cli, demo_path: Path) -> None:
    live = demo_path / DB_FILE
    before = live.read_bytes()
    result = demo_cli("backup", str(live), "--force", ok=False)
    assert result.exit_code == 1 and "the workspace database itself" in result.output
    assert live.read_bytes() == before


def _not_stetline(path: Path) -> None:
    conn = sqlite3.connect(path)
    conn.execute("CREATE TABLE recipes (name TEXT)")
    conn.commit()
    conn.close()


def _future(path: Path, template: Path) -> None:
    path.write_bytes(template.read_bytes())
    conn = sqlite3.connect(path)
    conn.execute("UPDATE alembic_version SET version_num = '9999_from_the_future'")
    conn.commit()
    conn.close()


@pytest.mark.parametrize("kind, message", [
    ("text", "is not a Stetline backup: it is not a SQLite database"),
    ("random", "is not a Stetline backup: it is not a SQLite database"),
    ("other-sqlite", "lacks Stetline's table(s) slot, alembic_version"),
    ("truncated", "is not a Stetline backup"),
    ("future", "written by a newer version of Stetline"),
    ("missing", "does not exist"),
])
def test_restore_refuses_what_is_not_a_stetline_backup(
    demo_cli: Cli, demo_path: Path, tmp_path: Path, kind: str, message: str,
) -> None:
    good = tmp_path / "good.db"
    demo_cli("backup", str(good))
    bad = tmp_path / f"bad-{kind}.db"
    if kind == "text":
        bad.write_text("entity,topic,period,value\nnorth-quay,recycling,2024,50\n")
    elif kind == "random":
        bad.write_bytes(bytes(range(256)) * 40)
    elif kind == "other-sqlite":
        _not_stetline(bad)
    elif kind == "truncated":
        bad.write_bytes(good.read_bytes()[: good.stat().st_size // 3])
    elif kind == "future":
        _future(bad, good)
    rewrite_later(demo_path)  # work the refused restore must not take away
    before = snapshot(demo_path)
    live = (demo_path / DB_FILE).read_bytes()
    listing = folder_listing(demo_path)

    result = demo_cli("restore", str(bad), ok=False)
    assert result.exit_code == 1
    assert message in result.output, result.output
    assert result.output.startswith("Error:") and "Traceback" not in result.output
    if kind != "missing":
        assert "the workspace was not changed" in result.output
    assert (demo_path / DB_FILE).read_bytes() == live
    assert folder_listing(demo_path) == listing  # no temporary or kept copy left behind
    assert snapshot(demo_path) == before


def test_restored_database_is_at_the_newest_schema(demo_cli: Cli, demo_path: Path, tmp_path: Path) -> None:
    from alembic.script import ScriptDirectory

    from stetline.store.db import alembic_config, sqlite_url

    file = tmp_path / "b.db"
    demo_cli("backup", str(file))
    demo_cli("restore", str(file))
    head = ScriptDirectory.from_config(alembic_config(sqlite_url(demo_path / DB_FILE))).get_current_head()
    conn = sqlite3.connect(demo_path / DB_FILE)
    try:
        assert conn.execute("SELECT version_num FROM alembic_version").fetchall() == [(head,)]
        assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "wal"
    finally:
        conn.close()


def test_a_backup_from_an_older_schema_is_brought_up_to_date(demo_cli: Cli, demo_path: Path, tmp_path: Path) -> None:
    from alembic import command
    from alembic.script import ScriptDirectory

    from stetline.store.db import alembic_config, sqlite_url

    before = snapshot(demo_path)
    old = tmp_path / "old.db"
    demo_cli("backup", str(old))
    cfg = alembic_config(sqlite_url(old))
    first = ScriptDirectory.from_config(cfg).get_base()
    head = ScriptDirectory.from_config(cfg).get_current_head()
    assert first != head, "there is a later schema to upgrade to"
    command.downgrade(cfg, first)  # the backup as the first release of Stetline wrote it

    out = demo_cli("restore", str(old), "--by", "keeper").output
    assert f"({first} → {head})" in out
    after = snapshot(demo_path)
    assert after["layers"] == before["layers"] and after["approvals"] == before["approvals"]
    assert after["events"][:-1] == before["events"]
    conn = sqlite3.connect(demo_path / DB_FILE)
    try:
        assert conn.execute("SELECT version_num FROM alembic_version").fetchall() == [(head,)]
    finally:
        conn.close()
    demo_cli("rewrite", SLOT, LATER)  # the upgraded workspace works
    assert demo_cli.json("show", SLOT)["text"] == LATER


def test_with_accounts_only_an_admin_may_back_up_or_restore(demo_cli: Cli, demo_path: Path, tmp_path: Path) -> None:
    from stetline import accounts

    ws = open_workspace(demo_path)
    try:
        with ws.session() as s:
            accounts.add_account(s, "ada", "admin", "correct horse battery", by="ada")
            accounts.add_account(s, "ed", "editor", "another long phrase", by="ada")
    finally:
        ws.close()
    file = tmp_path / "b.db"
    result = demo_cli("backup", str(file), "--by", "ed", ok=False)
    assert result.exit_code == 1 and "may not backup" in result.output and "admin" in result.output
    assert not file.exists()
    demo_cli("backup", str(file), "--by", "ada")
    rewrite_later(demo_path, by="ed")
    before = snapshot(demo_path)
    result = demo_cli("restore", str(file), "--by", "ed", ok=False)
    assert result.exit_code == 1 and "may not restore" in result.output
    assert snapshot(demo_path) == before
    demo_cli("restore", str(file), "--by", "ada")
    assert snapshot(demo_path)["text"] != LATER


def test_postgresql_workspaces_are_pointed_to_pg_dump(
    demo_cli: Cli, tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    monkeypatch.setenv("STETLINE_DATABASE_URL", "postgresql://stetline@127.0.0.1:1/stetline")
    result = demo_cli("backup", str(tmp_path / "b.db"), ok=False)
    assert result.exit_code == 1 and "pg_dump" in result.output and "PostgreSQL" in result.output
    assert not (tmp_path / "b.db").exists()
    result = demo_cli("restore", str(tmp_path / "b.db"), ok=False)
    assert result.exit_code == 1 and "pg_restore" in result.output


def test_library_refuses_postgresql_before_touching_anything(tmp_path: Path) -> None:
    ws = Workspace(tmp_path, "postgresql://stetline@127.0.0.1:1/stetline", None, None)  # type: ignore[arg-type]
    with pytest.raises(StetlineError, match="pg_dump"):
        backup.backup(ws, tmp_path / "b.db", by="x")
    assert list(tmp_path.iterdir()) == []
