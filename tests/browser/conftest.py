"""Browser tests: Python Playwright drives Debian's Chromium against the web app, served by a
real threaded server on a copy of the demo workspace (a file database).

These tests are never skipped: without Chromium at /usr/bin/chromium they fail, saying how to
install it (.ci/run installs it).
"""

from __future__ import annotations

import os
import shutil
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import pytest
from helpers import pattern_workspace
from werkzeug.serving import make_server

from browser.livesite import Live, QuietHandler
from stetline.web import create_app
from stetline.workspace import open_workspace

CHROMIUM = Path("/usr/bin/chromium")
CHROMIUM_ARGS = [
    "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--no-first-run", "--disable-quic",
]


@pytest.fixture(scope="session")
def browser_type_launch_args(browser_type_launch_args: dict[str, Any]) -> dict[str, Any]:
    """Launch Debian's Chromium (never a browser build of Playwright's own)."""
    if not CHROMIUM.is_file():
        pytest.fail(
            f"Chromium is missing ({CHROMIUM} not found): the browser tests need Debian's Chromium. "
            "Install it with: apt-get update && apt-get install -y chromium (.ci/run does this).",
            pytrace=False,
        )
    return {**browser_type_launch_args, "executable_path": str(CHROMIUM), "args": CHROMIUM_ARGS}


@contextmanager
def served(path: Path) -> Iterator[Live]:
    """The web app on the workspace at ``path``, served in a daemon thread until the block ends."""
    ws = open_workspace(path)
    server = make_server("127.0.0.1", 0, create_app(ws), threaded=True, request_handler=QuietHandler)
    thread = threading.Thread(target=server.serve_forever, name="stetline-web", daemon=True)
    thread.start()
    try:
        yield Live(f"http://127.0.0.1:{server.server_port}", ws)
    finally:
        server.shutdown()
        thread.join(timeout=10)
        ws.close()


@pytest.fixture
def live(demo_template: Path, tmp_path: Path) -> Iterator[Live]:
    """The web app on a private copy of the demo workspace, served in a daemon thread."""
    path = tmp_path / "workspace"
    shutil.copytree(demo_template, path)
    with served(path) as site:
        yield site


@pytest.fixture
def pattern_live(tmp_path: Path) -> Iterator[Live]:
    """The web app on a small one-person workspace in which one town went against the others on every
    topic (helpers.pattern_workspace), with an editor's rewrite waiting in recheck after a second load."""
    cli = pattern_workspace(tmp_path / "pattern")
    cli("rewrite", "blurb/ashby/parks", "Ashby's parks satisfaction rose to 52.0% in 2025.", "--by", "editor")
    obs = tmp_path / "obs2.csv"
    obs.write_text((tmp_path / "pattern-obs.csv").read_text(encoding="utf-8")
                   .replace("ashby,parks,2025,52", "ashby,parks,2025,53.5"), encoding="utf-8")
    cli("load", str(obs), "--by", "admin")
    with served(cli.path) as site:
        yield site


@pytest.fixture(scope="session")
def screens(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The folder the screenshots go to ($STETLINE_SCREENS, else a temporary folder); printed."""
    chosen = os.environ.get("STETLINE_SCREENS")
    folder = Path(chosen) if chosen else tmp_path_factory.mktemp("screens")
    folder.mkdir(parents=True, exist_ok=True)
    print(f"\nscreenshots: {folder}")
    return folder


def sign_in(page: Any, live: Live, name: str) -> None:
    """Sign in through the sign-in page as one of the demo's accounts."""
    from stetline import demo

    page.goto(live("/login"))
    page.get_by_label("Account name").fill(name)
    page.get_by_label("Password").fill(demo.demo_passwords(live.ws.path)[name])
    page.get_by_role("button", name="Sign in").click()
    page.wait_for_url(lambda url: "/login" not in url)


@pytest.fixture
def page(page: Any, live: Live) -> Any:
    """pytest-playwright's page, signed in as the demo's admin (the demo workspace has accounts)."""
    sign_in(page, live, "admin")
    return page
