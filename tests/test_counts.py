"""The statement counts agree everywhere: the load summary, `status --json`, the overview page and
the backup message all count the same things (statements listed, slots including the gone ones,
recheck reasons per statement) with one function."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest
from helpers import ON_POSTGRES, Cli

from stetline.loadsummary import LoadSummary
from stetline.store import ops
from stetline.web import create_app
from stetline.workspace import Workspace


def test_counts_agree_across_load_summary_status_overview_and_backup(demo_cli: Cli, demo_ws: Workspace,
                                                                      tmp_path: Path) -> None:
    status = demo_cli.json("status")
    phrase = ops.describe_totals(status)
    # what is counted: the listed statements are the current ones plus the gone ones waiting in recheck
    assert status["slots"] == status["statements"] == sum(status["by_status"].values())
    waiting_gone = status["recheck_reasons"]["slot-gone"]
    assert waiting_gone > 0 and status["statements"] == status["current"] + waiting_gone
    assert status["all_slots"] == status["current"] + status["gone"]
    assert f"{status['statements']} statements ({status['current']} current, {waiting_gone} that no" in phrase

    with demo_ws.session() as s:
        loads = [e.detail for e in ops.events_by_action(s, "load", 5)]
    second = loads[0]  # newest first: the load of 2025, where every gone slot left the data
    names = {f.name for f in dataclasses.fields(LoadSummary)}
    lines = LoadSummary(**{k: v for k, v in second.items() if k in names}).lines()
    assert f"workspace now: {phrase}" in lines
    assert any(line.strip().startswith("no longer apply:") and f" {status['gone']} " in line
               and f"{waiting_gone} of them wait in recheck" in line for line in lines)
    assert any("a statement may have several" in line for line in lines)
    assert second["sent_to_recheck"] < sum(second["recheck"].values())  # several reasons per statement

    status_text = demo_cli("status").stdout
    assert phrase in status_text and "a statement may have several" in status_text

    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    overview = client.get("/").get_data(as_text=True)
    assert f'<p class="counts-summary" id="counts-summary">{phrase}.</p>' in overview
    assert f"{status['by_status']['recheck']} of {status['statements']} statements wait in recheck" in overview

    if ON_POSTGRES:
        pytest.skip("file backups are for SQLite workspaces")
    backup = demo_cli("backup", str(tmp_path / "copy.db"), "--by", "admin").stdout
    assert phrase in backup
