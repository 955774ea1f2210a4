"""Shared fixtures: a fresh workspace, the demo workspace, and a CLI runner bound to a workspace."""

from __future__ import annotations

import json
import shutil
from pathlib import Path
from typing import Any

import pytest
from click.testing import CliRunner, Result

from sqlalchemy import delete

from engine import demo
from engine.store.models import Account
from engine.cli import main
from engine.workspace import Workspace, init_workspace, open_workspace


@pytest.fixture(scope="session")
def demo_template(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The demo workspace, built once per test session (copy it before changing it)."""
    path = tmp_path_factory.mktemp("demo-template") / "ws"
    demo.build(path, echo=lambda _line: None).close()
    return path


@pytest.fixture
def demo_path(demo_template: Path, tmp_path: Path) -> Path:
    """A private copy of the demo workspace for one test, as a one-person workspace (no accounts).

    Most tests exercise statements, not roles; the role tests use ``team_path``, the demo as
    built, with its four accounts.
    """
    path = tmp_path / "demo"
    shutil.copytree(demo_template, path)
    ws = open_workspace(path)
    with ws.session() as s:
        s.execute(delete(Account))  # test set-up only: the product never deletes an account
    ws.close()
    (path / demo.ACCOUNTS_FILE).unlink()
    return path


@pytest.fixture
def team_path(demo_template: Path, tmp_path: Path) -> Path:
    """A private copy of the demo workspace as built, with its accounts admin, editor, expert, reviewer."""
    path = tmp_path / "team"
    shutil.copytree(demo_template, path)
    return path


@pytest.fixture
def team_cli(team_path: Path) -> "Cli":
    """A CLI runner on the demo workspace with its accounts."""
    return Cli(team_path)


@pytest.fixture
def demo_ws(demo_path: Path) -> Workspace:
    """The demo workspace, open."""
    ws = open_workspace(demo_path)
    yield ws
    ws.close()


@pytest.fixture
def ws(tmp_path: Path) -> Workspace:
    """A fresh, empty workspace."""
    w = init_workspace(tmp_path / "ws")
    yield w
    w.close()


class Cli:
    """Runs stetline commands against one workspace and decodes JSON output."""

    def __init__(self, path: Path) -> None:
        self.path = path
        self.runner = CliRunner()

    def __call__(self, *args: str, ok: bool = True, input: str | None = None) -> Result:
        result = self.runner.invoke(main, [*args, "-w", str(self.path)], input=input, catch_exceptions=False)
        if ok:
            assert result.exit_code == 0, result.output
        return result

    def json(self, *args: str) -> Any:
        return json.loads(self(*args, "--json").stdout)


@pytest.fixture
def demo_cli(demo_path: Path) -> Cli:
    """A CLI runner on a copy of the demo workspace."""
    return Cli(demo_path)


@pytest.fixture
def cli(tmp_path: Path) -> Cli:
    """A CLI runner on a new workspace folder (not yet initialised)."""
    return Cli(tmp_path / "ws")


@pytest.fixture(scope="session")
def seed() -> Path:
    """The folder of the shipped demo data files."""
    return demo.data_file("topics.csv").parent
