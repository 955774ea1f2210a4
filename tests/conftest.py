"""Shared fixtures: a fresh workspace, the demo workspace, and a CLI runner bound to a workspace.

With ``STETLINE_TEST_DATABASE_URL`` set (a PostgreSQL server URL, e.g.
``postgresql+psycopg://postgres@/stetline_test?host=/var/run/postgresql``) the whole suite runs
against PostgreSQL: every workspace folder a test opens gets its own database, created on first
use, and a copied folder gets a copy of its source's database (``CREATE DATABASE ... TEMPLATE``).
All of them are dropped when the session ends. Without it, workspaces use SQLite files.
"""

from __future__ import annotations

import gc
import shutil
import uuid
from pathlib import Path

import pytest
from helpers import CONFLICTED, CONFLICTED_REWRITE, ON_POSTGRES, TEST_DATABASE_URL, Cli
from sqlalchemy import Engine, create_engine, delete, text
from sqlalchemy.engine import make_url

import stetline.backup
import stetline.workspace
from stetline import demo
from stetline.store.models import Account
from stetline.workspace import Workspace, init_workspace, open_workspace

DATABASE_NOTE = ".stetline-test-database"  # in a workspace folder: the name of its test database

# Tests about SQLite files, processes and pragmas, which have no PostgreSQL counterpart.
SQLITE_ONLY = {
    "tests/test_kill.py": "kills processes writing a SQLite file and checks its WAL",
    "tests/test_backup.py": "backup and restore copy the SQLite file (PostgreSQL uses pg_dump)",
}
BOTH_DATABASES = {  # tests in the files above that are about PostgreSQL too
    "tests/test_backup.py::test_postgresql_workspaces_are_pointed_to_pg_dump",
    "tests/test_backup.py::test_library_refuses_postgresql_before_touching_anything",
}


def pytest_configure(config: pytest.Config) -> None:
    config.addinivalue_line("markers", "sqlite_only(reason): runs only on the SQLite default")


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    if not ON_POSTGRES:
        return
    for item in items:
        path = item.path.resolve().relative_to(Path(__file__).resolve().parent.parent).as_posix()
        marker = item.get_closest_marker("sqlite_only")
        if item.nodeid.split("[")[0] in BOTH_DATABASES:
            continue
        reason = SQLITE_ONLY.get(path) or SQLITE_ONLY.get(item.nodeid) or (
            marker and (marker.args[0] if marker.args else "SQLite only"))
        if reason:
            item.add_marker(pytest.mark.skip(reason=f"SQLite only: {reason}"))


class TestDatabases:
    """Creates, copies and drops the PostgreSQL databases of the workspaces a test session opens."""

    def __init__(self, url: str) -> None:
        self.server = make_url(url)
        self.admin: Engine = create_engine(self.server, isolation_level="AUTOCOMMIT")
        self.prefix = f"stl_{uuid.uuid4().hex[:8]}"
        self.created: list[str] = []
        self.by_folder: dict[Path, str] = {}

    def url(self, name: str) -> str:
        return self.server.set(database=name).render_as_string(hide_password=False)

    def create(self, template: str | None = None) -> str:
        name = f"{self.prefix}_{len(self.created)}"
        with self.admin.connect() as conn:
            if template:
                # a database can only be copied while nobody is connected to it; pools reconnect
                conn.execute(text("SELECT pg_terminate_backend(pid) FROM pg_stat_activity "
                                  "WHERE datname = :d AND pid <> pg_backend_pid()"), {"d": template})
                conn.exec_driver_sql(f'CREATE DATABASE "{name}" TEMPLATE "{template}"')
            else:
                conn.exec_driver_sql(f'CREATE DATABASE "{name}"')
        self.created.append(name)
        return name

    def url_for(self, path: Path, url: str | None = None) -> str:
        """The database URL of a workspace folder (the patched ``stetline.workspace._url_for``)."""
        if url:
            return url
        folder = path.resolve()
        name = self.by_folder.get(folder)
        if name is None:
            note = folder / DATABASE_NOTE
            source = note.read_text().strip() if note.exists() else None  # a copied folder
            name = self.create(template=source if source in self.created else None)
            self.by_folder[folder] = name
            folder.mkdir(parents=True, exist_ok=True)
            note.write_text(name + "\n")
        return self.url(name)

    def release(self, path: Path) -> None:
        """Close every connection to a folder's database (before it is copied)."""
        name = self.by_folder.get(path.resolve())
        if name:
            with self.admin.connect() as conn:
                conn.execute(text("SELECT pg_terminate_backend(pid) FROM pg_stat_activity "
                                  "WHERE datname = :d AND pid <> pg_backend_pid()"), {"d": name})

    def drop_all(self) -> None:
        with self.admin.connect() as conn:
            for name in self.created:
                conn.exec_driver_sql(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)')
        self.admin.dispose()


@pytest.fixture(scope="session", autouse=True)
def test_databases() -> TestDatabases | None:
    """On PostgreSQL, gives each workspace folder its own database for the session; else nothing."""
    if not TEST_DATABASE_URL:
        yield None
        return
    databases = TestDatabases(TEST_DATABASE_URL)
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(stetline.workspace, "_url_for", databases.url_for)
        mp.setattr(stetline.backup, "_url_for", databases.url_for)
        try:
            yield databases
        finally:
            databases.drop_all()


@pytest.fixture(autouse=True)
def _close_dropped_connections(test_databases: TestDatabases | None) -> None:
    """On PostgreSQL, closes the server connections of engines a test dropped without closing."""
    yield
    if test_databases is not None:
        gc.collect()  # engine.store.db closes a collected engine's pool


@pytest.fixture(scope="session")
def demo_template(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The demo workspace, built once per test session (copy it before changing it)."""
    path = tmp_path_factory.mktemp("demo-template") / "ws"
    demo.build(path, echo=lambda _line: None).close()
    return path


@pytest.fixture(scope="session")
def conflict_template(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """A workspace drafting every kind, with an editor's rewrite whose proposal conflicts (copy it first)."""
    from stetline import actions, loading
    from stetline import settings as declared
    from stetline.store import ops

    path = tmp_path_factory.mktemp("conflict-template") / "ws"
    ws = init_workspace(path)
    with ws.session() as s:
        ops.put_setting(s, "kinds", ",".join(declared.ALL_KINDS))
        ops.put_setting(s, "entity_noun", "town")
    loading.load_edition(ws, demo.data_file("observations-2024.csv"), demo.data_file("topics.csv"),
                         demo.data_file("entities.csv"), by="admin")
    with ws.session() as s:
        actions.rewrite(s, CONFLICTED, CONFLICTED_REWRITE, by="editor")
    loading.load_edition(ws, demo.data_file("observations-2025.csv"), by="admin")
    ws.close()
    return path


@pytest.fixture
def conflict_ws(conflict_template: Path, tmp_path: Path) -> Workspace:
    """A private copy of the conflict workspace, open: ``CONFLICTED`` waits in recheck with a conflict."""
    path = tmp_path / "conflict"
    shutil.copytree(conflict_template, path)
    ws = open_workspace(path)
    yield ws
    ws.close()


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
def team_cli(team_path: Path) -> Cli:
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


@pytest.fixture
def demo_cli(demo_path: Path) -> Cli:
    """A CLI runner on a copy of the demo workspace."""
    return Cli(demo_path)


@pytest.fixture
def cli(tmp_path: Path) -> Cli:
    """A CLI runner on a new workspace folder (not yet initialised)."""
    return Cli(tmp_path / "ws")


@pytest.fixture(scope="session")
def demo_files() -> Path:
    """The folder of the shipped demo data files."""
    return demo.data_file("topics.csv").parent

