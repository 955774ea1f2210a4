"""A data load while people edit: a save made during a load is never lost and never attached to
the wrong edition.

Each test pauses a real load right after it has read the human work it will reconcile (the
moment a save slipped in beside it would be missed), makes the save from a separate workspace
session, as another process would, then lets the load finish. The save either waits for the
load and lands on the new edition, or is refused with a message saying why; the database is
checked afterwards.
"""

from __future__ import annotations

import html
import threading
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import click
import pytest
import waitress
from click.testing import CliRunner
from helpers import ON_POSTGRES
from sqlalchemy import event

import stetline.backup
import stetline.cli
import stetline.cli.common
import stetline.demo
from stetline import actions, demo, loading
from stetline.store import db, ops
from stetline.web import create_app
from stetline.workspace import Workspace, open_workspace

SLOT = "blurb/cairnbrook/recycling"  # a draft nobody worked on; the new edition revises its value
REWRITE = "Cairnbrook recycles {{ value }} of its household waste."
LABEL = "2025-r2"
WAIT = 20.0  # seconds: only reached when something is broken


@pytest.fixture
def revised(tmp_path: Path) -> Path:
    """The demo's 2025 observations with Cairnbrook's 2025 recycling rate revised (52.5 → 53.4)."""
    text = demo.data_file("observations-2025.csv").read_text()
    assert "cairnbrook,recycling,2025,52.5," in text
    path = tmp_path / "observations-2025-revised.csv"
    path.write_text(text.replace("cairnbrook,recycling,2025,52.5,", "cairnbrook,recycling,2025,53.4,"))
    return path


@dataclass
class PausedLoad:
    """A load running in a thread, held after it read the workspace's human work."""

    paused: threading.Event = field(default_factory=threading.Event)
    release: threading.Event = field(default_factory=threading.Event)
    outcome: dict[str, Any] = field(default_factory=dict)


@contextmanager
def load_held(ws: Workspace, observations: Path, monkeypatch: pytest.MonkeyPatch) -> Iterator[PausedLoad]:
    """Start loading ``observations`` as a new edition and hold it inside its transaction.

    The load stops right after reading every slot's human work (``ops.slot_states``), with its
    writing transaction open; it goes on when ``release`` is set (at the latest when the block
    ends), and the block waits for it to finish.
    """
    held = PausedLoad()
    read_states = ops.slot_states

    def slot_states_then_wait(session: Any) -> Any:
        states = read_states(session)
        if threading.current_thread() is loader:
            held.paused.set()
            held.release.wait(WAIT)
        return states

    def run() -> None:
        try:
            held.outcome["summary"] = loading.load_edition(ws, observations, label=LABEL, by="admin")
        except BaseException as exc:
            held.outcome["error"] = exc

    monkeypatch.setattr(ops, "slot_states", slot_states_then_wait)
    loader = threading.Thread(target=run, name="load", daemon=True)
    loader.start()
    try:
        assert held.paused.wait(WAIT), f"the load never reached the point it pauses at: {held.outcome}"
        yield held
    finally:
        held.release.set()
        loader.join(WAIT)
    assert not loader.is_alive(), "the load did not finish"
    assert "error" not in held.outcome, held.outcome.get("error")
    assert held.outcome["summary"].edition == LABEL


def in_thread(fn: Callable[[], Any]) -> tuple[threading.Thread, dict[str, Any]]:
    """Run ``fn`` in a thread; its result or error lands in the returned dict."""
    out: dict[str, Any] = {}

    def run() -> None:
        try:
            out["result"] = fn()
        except BaseException as exc:
            out["error"] = exc

    thread = threading.Thread(target=run, daemon=True)
    thread.start()
    return thread, out


def saved_while_held(load: PausedLoad, other: Workspace, save: Callable[[], Any]) -> dict[str, Any]:
    """Start a save from ``other`` while the load is held, check that it waits for the load,
    release the load, and give the save's outcome once it has finished."""
    saving = began(other)
    saver, saved = in_thread(save)
    assert saving.wait(WAIT)
    saver.join(0.5)
    assert saver.is_alive(), f"the save went ahead beside the load: {saved}"
    load.release.set()
    saver.join(WAIT)
    assert not saver.is_alive() and "error" not in saved, saved.get("error")
    return saved


@pytest.fixture
def other(demo_ws: Workspace) -> Iterator[Workspace]:
    """The same workspace opened a second time: its own engine and connections, as another process."""
    ws = open_workspace(demo_ws.path)
    yield ws
    ws.close()


def began(ws: Workspace) -> threading.Event:
    """Set when this workspace's engine sends its next statement (the save reached the database)."""
    flag = threading.Event()
    event.listen(ws.engine, "before_cursor_execute", lambda *_args: flag.set())
    return flag


@dataclass(frozen=True)
class Outcome:
    """What the database holds for the slot once the load and the save are done."""

    rewrites: list[tuple[str, str | None]]
    conflicts: list[tuple[str, str | None]]
    layer: tuple[str, str | None, str | None, dict[str, Any]] | None
    draft_edition: str
    draft_text: str
    draft_evidence: dict[str, Any]
    status: str
    version: int
    text: str | None


def outcome(ws: Workspace) -> Outcome:
    with ws.reading() as s:
        v = actions.view(s, SLOT)
        events = ops.events_for(s, SLOT)
        layer = next(((x.by, x.text, x.base_text, x.basis) for x in v.layers if x.type == "rewrite"), None)
        labels = {e.id: e.label for e in ops.editions(s)}
        current = ops.current_edition(s)
        assert current is not None and current.label == LABEL
        return Outcome(
            rewrites=[(e.by, e.after) for e in events if e.action == "rewrite"],
            conflicts=[(e.by, e.after) for e in events if e.action == "conflict"],
            layer=layer, draft_edition=labels[v.draft.edition_id], draft_text=v.draft.text,
            draft_evidence=v.draft.evidence, status=v.slot.status, version=v.slot.version,
            text=v.to_json(s)["text"],
        )


def test_a_save_during_a_load_waits_and_lands_on_the_new_edition(
    demo_ws: Workspace, other: Workspace, revised: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    """A rewrite sent while a load writes (as ``stetline rewrite`` does: no version) waits for the
    load, then is made against the new edition's draft."""
    def save() -> str:
        with other.session() as s:
            return actions.rewrite(s, SLOT, REWRITE, by="eve").status

    with load_held(demo_ws, revised, monkeypatch) as load:
        saved = saved_while_held(load, other, save)

    after = outcome(demo_ws)
    assert after.rewrites == [("eve", REWRITE)]  # recorded exactly once
    assert after.draft_edition == LABEL  # the slot's draft is the new edition's
    assert after.layer is not None
    by, text, base_text, basis = after.layer
    assert (by, text) == ("eve", REWRITE)
    assert base_text == after.draft_text and basis["evidence"] == after.draft_evidence  # made against it
    assert after.status == saved["result"] == "edited"  # not sent to recheck against the old edition
    assert after.text == "Cairnbrook recycles 53.4% of its household waste."  # the revised value


def test_a_web_save_from_a_page_opened_before_the_load_is_refused_as_a_conflict(
    demo_ws: Workspace, other: Workspace, revised: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    """The editor opened the statement before the load; their save waits for the load, then is
    refused because the statement changed, with their text kept on the page to save again."""
    client = create_app(other, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    page = client.get(f"/statements/{SLOT}").get_data(as_text=True)
    with demo_ws.reading() as s:
        opened = actions.view(s, SLOT)
        seen_version, seen_draft = opened.slot.version, opened.draft.text
    assert f'name="version" value="{seen_version}"' in page
    form = {"version": str(seen_version), "text": REWRITE, "started_from": seen_draft, "by": "eve"}

    with load_held(demo_ws, revised, monkeypatch) as load:
        saved = saved_while_held(load, other, lambda: client.post(f"/statements/{SLOT}/rewrite", data=form))

    response = saved["result"]
    body = html.unescape(response.get_data(as_text=True))
    assert response.status_code == 409, body[:2000]
    assert "Your text was not saved; nothing is lost" in body and REWRITE in body
    assert "<h1>A data load changed this statement</h1>" in body and f"the load of edition {LABEL} by admin" in body
    after = outcome(demo_ws)
    assert after.rewrites == [] and after.layer is None  # nothing attached to the old edition
    assert after.conflicts == [("eve", REWRITE)]  # the refused attempt is in the history
    assert after.draft_edition == LABEL and after.version > seen_version

    # saving again from the conflict page puts the rewrite on the new edition
    assert f'name="version" value="{after.version}"' in body
    again = client.post(f"/statements/{SLOT}/rewrite", data={**form, "version": str(after.version)})
    assert again.status_code == 303
    final = outcome(demo_ws)
    assert final.rewrites == [("eve", REWRITE)] and final.layer is not None
    assert final.layer[2] == final.draft_text and final.status == "edited"


@pytest.mark.sqlite_only("SQLite's busy timeout: a writer gives up waiting for the write lock")
def test_a_web_save_that_cannot_wait_for_the_load_is_refused_with_a_clear_message(
    demo_ws: Workspace, tmp_path: Path, revised: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    """When a load holds the workspace longer than a writer waits, the save is refused with a
    page saying that the workspace is busy and nothing was saved; no error page, no half save."""
    monkeypatch.setattr(db, "BUSY_TIMEOUT_MS", 100)  # the web app's own engine waits 0.1 s
    impatient = open_workspace(demo_ws.path)
    try:
        client = create_app(impatient, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
        with demo_ws.reading() as s:
            seen_version = actions.view(s, SLOT).slot.version
        form = {"version": str(seen_version), "text": REWRITE, "by": "eve"}
        with load_held(demo_ws, revised, monkeypatch):
            response = client.post(f"/statements/{SLOT}/rewrite", data=form)
            body = html.unescape(response.get_data(as_text=True))
            assert response.status_code == 503, body[:2000]
            assert "busy" in body and "Nothing was saved" in body and "try again" in body
            assert response.headers.get("Retry-After")
    finally:
        impatient.close()
    after = outcome(demo_ws)
    assert after.rewrites == [] and after.conflicts == [] and after.layer is None
    assert after.draft_edition == LABEL


# -- every command gives its connections back -------------------------------------------------

def cli_commands(group: click.Group, prefix: str = "") -> list[str]:
    """Every command of the CLI by its full name ("status", "user add")."""
    names: list[str] = []
    for name, command in group.commands.items():
        if isinstance(command, click.Group):
            names += cli_commands(command, f"{prefix}{name} ")
        else:
            names.append(f"{prefix}{name}")
    return names


def test_every_cli_command_closes_the_workspace_it_opens(
    demo_path: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
) -> None:
    """A team's PostgreSQL server gets its connections back when each command ends."""
    opened: list[Workspace] = []
    closed: set[int] = set()
    real_close = Workspace.close

    def close(self: Workspace) -> None:
        closed.add(id(self))
        real_close(self)

    def recording(factory: Callable[..., Workspace]) -> Callable[..., Workspace]:
        def make(*args: Any, **kwargs: Any) -> Workspace:
            ws = factory(*args, **kwargs)
            opened.append(ws)  # kept, so no other object takes its id
            return ws
        return make

    monkeypatch.setattr(Workspace, "close", close)
    for module, name in ((stetline.cli.common, "open_workspace"), (stetline.cli.common, "init_workspace"),
                         (stetline.demo, "init_workspace"), (stetline.backup, "attach")):
        monkeypatch.setattr(module, name, recording(getattr(module, name)))
    monkeypatch.setattr(waitress, "serve", lambda *_a, **_k: None)  # serve returns at once

    observations = str(demo.data_file("observations-2025.csv"))
    sheet, copy = str(tmp_path / "sheet.xlsx"), str(tmp_path / "copy.db")
    by = ("--by", "boss")
    runs: list[tuple[str, list[str], str | None]] = [
        ("init", ["init", "-w", str(tmp_path / "fresh")], None),
        ("load", ["load", observations, "--dry-run"], None),
        ("redraft", ["redraft"], None),
        ("status", ["status"], None),
        ("list", ["list", "--kind", "headline"], None),
        ("show", ["show", "headline"], None),
        ("history", ["history", "headline"], None),
        ("rewrite", ["rewrite", SLOT, REWRITE], None),
        ("revert", ["revert", SLOT], None),
        ("choose", ["choose", "headline", "--draft"], None),
        ("pin", ["pin", SLOT], None),
        ("annotate", ["annotate", SLOT, "The depot reopened in May."], None),
        ("suppress", ["suppress", "roundup/recycling"], None),
        ("approve", ["approve", "headline"], None),
        ("audit", ["audit", "--untraced"], None),
        ("changes", ["changes"], None),
        ("publish", ["publish", "--allow-recheck"], None),
        ("settings", ["settings", "title"], None),
        ("worksheet", ["worksheet", "-o", sheet, "--kind", "headline"], None),
        ("apply-worksheet", ["apply-worksheet", sheet], None),
        ("layout copy", ["layout", "copy", "md"], None),
        ("phrasing copy", ["phrasing", "copy", "headline"], None),
        ("serve", ["serve"], None),
        ("backup", ["backup", copy], None),
        ("restore", ["restore", copy], None),
        ("demo", ["demo", "--no-serve", "-w", str(tmp_path / "another-demo")], None),
        ("user add", ["user", "add", "boss", "--role", "admin", "--password-stdin"], "boss-password-1\n"),
        ("user list", ["user", "list"], None),
        ("user assign", ["user", "assign", "boss", "--entity", "cairnbrook", *by], None),
        ("user password", ["user", "password", "boss", "--password-stdin", *by], "boss-password-2\n"),
        ("user set-role", ["user", "set-role", "boss", "admin", *by], None),
        ("user disable", ["user", "disable", "boss", "--enable", *by], None),
    ]
    assert sorted(name for name, _args, _input in runs) == sorted(cli_commands(stetline.cli.main)), \
        "add the new command to this list"
    runner = CliRunner()
    sqlite_only = {"backup", "restore"}  # PostgreSQL workspaces are pointed to pg_dump: a clear refusal
    refused = {"choose"}  # the demo merges no entities: a clear refusal, which must close the workspace too
    for name, args, given in runs:
        if "-w" not in args:
            args = [*args, "-w", str(demo_path)]
        result = runner.invoke(stetline.cli.main, args, input=given, catch_exceptions=False)
        if name in refused:
            assert result.exit_code == 1 and "holds no merged texts" in result.output, f"{name}: {result.output}"
        elif not (ON_POSTGRES and name in sqlite_only):
            assert result.exit_code == 0, f"{name}: {result.output}"
        assert opened, name
        left_open = [ws.path for ws in opened if id(ws) not in closed]
        assert left_open == [], f"`stetline {name}` left its workspace open"
