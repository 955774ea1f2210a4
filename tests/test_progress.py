"""Progress of long work: the stage and count a load reports, on a terminal and on the data page.

The CLI shows a one-line stage and count on stderr only when both stdout and stderr are
terminals, never with --json; the web app records a running load in the workspace folder, and
the data page shows it to anyone who opens it while the load runs.
"""

from __future__ import annotations

import io
import json
import threading
from pathlib import Path
from typing import Any

import pytest
from flask import Flask
from test_web_pages import form_fields, revised_2025, upload

from stetline import loading, progress
from stetline.cli.common import shown_progress
from stetline.web import create_app
from stetline.workspace import Workspace


class Terminal(io.StringIO):
    """A stream that says it is a terminal."""

    def isatty(self) -> bool:
        return True


def test_a_load_reports_each_stage_in_order(demo_ws: Workspace, demo_files: Path) -> None:
    heard: list[tuple[str, int, int | None]] = []
    loading.load_edition(demo_ws, demo_files / "observations-2025.csv", by="Ada", label="again",
                         progress=lambda *report: heard.append(report))
    stages = list(dict.fromkeys(stage for stage, _done, _total in heard))
    # a refresh writes the observations before it drafts (their frames are let go before the workers start)
    assert stages == ["reading files", "computing facts", "writing observations", "drafting statements",
                      "reconciling", "writing statements"]
    drafted = max(done for stage, done, _total in heard if stage == "drafting statements")
    assert ("reconciling", 0, drafted) in heard and drafted > 100


def test_the_terminal_line_shows_stage_and_count_and_is_cleared(monkeypatch: pytest.MonkeyPatch) -> None:
    out, err = Terminal(), Terminal()
    monkeypatch.setattr("sys.stdout", out)
    monkeypatch.setattr("sys.stderr", err)
    with shown_progress("load") as show:
        show("drafting statements", 12000, None)
        show("writing statements", 0, 30301)
    shown = err.getvalue()
    assert "\rload: drafting statements: 12,000" in shown
    assert "\rload: writing statements: 0 of 30,301" in shown
    assert shown.endswith("\r")  # the line is blanked before the command prints its result
    assert out.getvalue() == ""


@pytest.mark.parametrize("stdout_tty, as_json", [(False, False), (True, True)])
def test_nothing_is_shown_off_a_terminal_or_with_json(monkeypatch: pytest.MonkeyPatch, stdout_tty: bool,
                                                      as_json: bool) -> None:
    out, err = (Terminal() if stdout_tty else io.StringIO()), Terminal()
    monkeypatch.setattr("sys.stdout", out)
    monkeypatch.setattr("sys.stderr", err)
    with shown_progress("load", as_json) as show:
        show("drafting statements", 12000, None)
    assert err.getvalue() == "" and out.getvalue() == ""


def test_the_cli_load_with_json_prints_only_json(demo_cli: Any, demo_files: Path) -> None:
    result = demo_cli("load", str(demo_files / "observations-2025.csv"), "--edition", "again", "--json")
    assert json.loads(result.output)["edition"] == "again"


def test_the_data_page_shows_the_running_load_and_stays_usable(demo_ws: Workspace, monkeypatch: pytest.MonkeyPatch
                                                               ) -> None:
    app: Flask = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False})
    loader, watcher = app.test_client(), app.test_client()
    seen: dict[str, Any] = {}
    original = loading.draft_each_kind

    def drafting_while_someone_looks(*args: Any, **kwargs: Any) -> Any:
        drafts = list(original(*args, **kwargs))  # every kind drafted, none written yet

        def look() -> None:  # another person's request, served while the load runs
            page = watcher.get("/data")
            seen.update(status=page.status_code, html=page.get_data(as_text=True),
                        other=watcher.get("/recheck").status_code)

        thread = threading.Thread(target=look)
        thread.start()
        thread.join(timeout=60)
        return drafts

    monkeypatch.setattr(loading, "draft_each_kind", drafting_while_someone_looks)
    html = upload(loader, {"observations": (revised_2025(), "observations-2025-revised.csv")}, by="Ada").get_data(
        as_text=True)
    token = dict(form_fields(html, "/data/load"))["token"]
    assert loader.post("/data/load", data={"token": token}).status_code == 303
    assert seen["status"] == 200 and seen["other"] == 200
    assert "A load started by Ada is running: drafting statements: " in seen["html"]
    assert not (demo_ws.path / progress.PROGRESS_FILE).exists()  # gone when the load ends
    assert "is running" not in loader.get("/data").get_data(as_text=True)


def test_a_record_left_by_work_that_died_long_ago_is_not_shown(tmp_path: Path) -> None:
    record = progress.ProgressFile(tmp_path, "load", "Ada")
    record("writing statements", 0, 10)
    now = json.loads((tmp_path / progress.PROGRESS_FILE).read_text())["updated"]
    assert progress.running(tmp_path, now)["line"] == "writing statements: 0 of 10"
    assert progress.running(tmp_path, now + progress.STALE_SECONDS + 1) is None
