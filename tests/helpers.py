"""Helpers the test modules import: the database the suite runs on, a CLI runner, a reviewer's sweep.

Fixtures live in conftest.py; this module holds only plain code, so test modules import it by
name (``from helpers import Cli``) and never import conftest.
"""

from __future__ import annotations

import gc
import json
import os
import subprocess
import sys
import time
from pathlib import Path
from typing import Any

from click.testing import CliRunner, Result

from stetline.cli import main

TEST_URL_VARIABLE = "STETLINE_TEST_DATABASE_URL"
TEST_DATABASE_URL = os.environ.get(TEST_URL_VARIABLE)
ON_POSTGRES = bool(TEST_DATABASE_URL)

# A rewrite of a part-kind statement whose proposal after the second edition has a conflict region: the
# 2025 draft rewords the same words the editor changed. Composed statements (blurbs, roundups) never
# conflict (their proposals keep the rewrite's words with the new numbers), so this needs the part kinds on.
CONFLICTED = "change/gorse-point/recycling"
CONFLICTED_REWRITE = (
    "Gorse Point's recycling rate climbed 1.4 percentage points to 41.5% in 2024, its best year since 2020."
)


class Cli:
    """Runs stetline commands against one workspace and decodes JSON output."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.runner = CliRunner()

    def __call__(self, *args: str, ok: bool = True, input: str | None = None) -> Result:
        """Run one command on the workspace; with ok, assert it exited 0."""
        if ON_POSTGRES:
            gc.collect()  # earlier commands' engines, dropped unclosed, give their connections back
        result = self.runner.invoke(main, [*args, "-w", str(self.path)], input=input, catch_exceptions=False)
        if ok:
            assert result.exit_code == 0, result.output
        return result

    def json(self, *args: str) -> Any:
        """Run one command with --json and return its decoded output."""
        return json.loads(self(*args, "--json").stdout)


def every_kind(path: Path) -> None:
    """Turn every statement kind on in a workspace (the part kinds too) and redraft its current edition.

    A new workspace drafts only headline, profile, roundup and blurb; tests about the behaviour of a
    part kind (standing, change, trend, leaders, movement) on a workspace turn the part kinds on first.
    """
    from stetline import settings as declared

    cli = Cli(path)
    cli("settings", "kinds", ",".join(declared.ALL_KINDS), "--by", "admin")
    if cli.json("status").get("edition"):
        cli("redraft", "--by", "admin")


def resolve_every_recheck(cli: Cli) -> None:
    """Resolve every recheck as a reviewer would: accept clean proposals, approve the rest as they are
    (confirming the contradicted claims of claim-changed ones, as the reviewer who read them). A rewrite
    whose live fields no longer render cannot be approved: its editor reverts it to the draft first."""
    for item in cli.json("list", "--status", "recheck"):
        recheck = item["recheck"]
        if "render-failed" in recheck["reasons"]:
            cli("revert", item["slot"], "--by", "editor")
            cli("approve", item["slot"], "--confirm-claims", "--by", "reviewer")
        elif recheck["clean"] and recheck["proposed"]:
            cli("approve", item["slot"], "--accept-proposed", "--by", "reviewer")
        elif recheck["contradicted"]:
            cli("approve", item["slot"], "--confirm-claims", "--by", "reviewer")
        else:
            cli("approve", item["slot"], "--by", "reviewer")
    assert cli.json("status")["by_status"]["recheck"] == 0


def signed_in(app: Any, name: str) -> Any:
    """A test client signed in as the account ``name``, as the sign-in form leaves the cookie.

    The account goes into the session cookie directly rather than through the form (checking a
    password hash is slow by design); the sign-in form has its own tests.
    """
    from stetline import accounts

    client = app.test_client()
    ws = app.extensions["stetline_workspace"]
    with ws.reading() as s:
        account = accounts.get_account(s, name)
        generation = account.session_generation if account is not None else 0
    now = int(time.time())
    with client.session_transaction() as cookie:
        cookie.update({"account": name, "gen": generation, "since": now, "seen": now})
    return client


def run_stetline(path: Path, *args: str, timeout: int = 300) -> subprocess.CompletedProcess[str]:
    """Run the installed ``stetline`` command on a workspace folder, as a separate process.

    The process is pointed at the database this test process uses for the folder (its own
    PostgreSQL database when the suite runs there), so both sides see the same workspace.
    """
    command = str(Path(sys.executable).with_name("stetline"))
    return subprocess.run([command, *args, "-w", str(path)], capture_output=True, text=True, timeout=timeout,
                          env=stetline_env(path))


def stetline_env(path: Path) -> dict[str, str]:
    """The environment for a ``stetline`` process on a workspace folder: the test's database for it."""
    import stetline.workspace as workspace_module

    return {**os.environ, "STETLINE_DATABASE_URL": workspace_module._url_for(path, None)}


#: the towns and topics of a small built workspace in which one town may go against the others
PATTERN_TOWNS = ("ashby", "brill", "colne", "dunmere", "eske", "fordham", "garth", "holm")
PATTERN_TOPICS = "topic,label,unit,better,decimals,category,target\n" + "".join(
    f"{key},{label},percent,higher,1,,\n" for key, label in
    (("parks", "Parks satisfaction"), ("recycling", "Recycling rate"), ("broadband", "Broadband coverage")))


def pattern_workspace(path: Path, against: str | None = "colne") -> Cli:
    """A new workspace of eight towns and three topics over 2024-2025 in which every town rises by two
    points on every topic except ``against``, which falls by two on all three (None: nobody does)."""
    path.mkdir(parents=True, exist_ok=True)
    (path.parent / "pattern-topics.csv").write_text(PATTERN_TOPICS, encoding="utf-8")
    (path.parent / "pattern-entities.csv").write_text(
        "entity,name,group\n" + "".join(f"{k},{k.title()},Coast\n" for k in PATTERN_TOWNS), encoding="utf-8")
    rows = ["entity,topic,period,value"]
    for t in ("parks", "recycling", "broadband"):
        for i, town in enumerate(PATTERN_TOWNS):
            rows += [f"{town},{t},2024,{50 + i}", f"{town},{t},2025,{50 + i + (-2 if town == against else 2)}"]
    (path.parent / "pattern-obs.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    cli = Cli(path / "ws")
    cli("init")
    cli("load", str(path.parent / "pattern-obs.csv"), "--topics", str(path.parent / "pattern-topics.csv"),
        "--entities", str(path.parent / "pattern-entities.csv"), "--by", "admin")
    return cli
