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
# editor changed "went up by" of the 2024 draft to "climbed", and the 2025 draft rewords the same words
# ("went down by"). Composed statements (blurbs, roundups) never conflict (their proposals keep the
# rewrite's words with the new numbers), so this needs the part kinds on.
CONFLICTED = "change/gorse-point/recycling"
CONFLICTED_REWRITE = (
    "The household recycling rate in Gorse Point climbed 1.4 percentage points between 2023 and 2024, from 40.1% "
    "to 41.5%, which is an improvement."
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
