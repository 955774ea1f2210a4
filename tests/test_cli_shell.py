"""The CLI as a shell: it starts without the heavy libraries, never prints a traceback, refuses
unknown choices by naming the valid ones, ends quietly on a closed pipe, and serves with waitress."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
import waitress
from click.testing import CliRunner
from helpers import Cli, stetline_env

import stetline.summary
from stetline.cli import main
from stetline.kinds import BY_NAME

HEAVY = ("pandas", "jinja2", "babel", "inflect", "flask", "stetline.web")
PROBE = """
import sys
{before}
from stetline.cli import main
try:
    main(["--help"], prog_name="stetline", standalone_mode=False)
except SystemExit:
    pass
print("heavy:" + ",".join(m for m in {heavy!r} if m in sys.modules))
"""


def _probe(before: str = "") -> list[str]:
    """The heavy modules a fresh interpreter holds after `stetline --help`."""
    done = subprocess.run([sys.executable, "-c", PROBE.format(before=before, heavy=HEAVY)],
                          capture_output=True, text=True, check=True, timeout=120)
    assert "Usage: stetline" in done.stdout
    return [m for m in done.stdout.strip().splitlines()[-1].removeprefix("heavy:").split(",") if m]


def test_help_starts_without_pandas_jinja2_babel_inflect_or_the_web_app() -> None:
    assert _probe() == []


def test_the_import_probe_sees_a_heavy_module_when_one_is_loaded() -> None:
    # the check above must be able to fail
    assert "pandas" in _probe(before="import stetline.facts")


def test_an_unexpected_error_is_one_line_and_exit_code_1(demo_cli: Cli, monkeypatch: pytest.MonkeyPatch) -> None:
    def broken(_session: Any) -> None:
        raise RecursionError("maximum recursion depth exceeded")

    monkeypatch.setattr(stetline.summary, "status_summary", broken)
    result = demo_cli("status", ok=False)
    assert result.exit_code == 1
    assert result.stderr == "Error: unexpected error (RecursionError): maximum recursion depth exceeded\n"
    assert "Traceback" not in result.output


def test_an_engine_error_keeps_its_message(demo_cli: Cli) -> None:
    result = demo_cli("show", "blurb/nowhere/recycling", ok=False)
    assert result.exit_code == 1
    assert result.stderr.startswith("Error: ") and result.stderr.count("\n") == 1
    assert "unexpected" not in result.stderr


def test_an_unknown_kind_is_refused_naming_the_kinds(demo_cli: Cli) -> None:
    result = demo_cli("list", "--kind", "nosuch", ok=False)
    assert result.exit_code == 2 and result.stdout == ""
    assert "'nosuch' is not one of" in result.stderr
    for kind in BY_NAME:
        assert f"'{kind}'" in result.stderr


def test_a_suppressed_statement_says_so(demo_cli: Cli) -> None:
    out = demo_cli("show", "blurb/puffin-holm/new-business").stdout
    assert "[suppressed]" in out
    assert "suppressed: left out of the publication" in out
    assert "None" not in out
    assert "draft: The new business registration rate in Puffin Holm was" in out  # the text it would have


def test_evidence_shows_a_status_as_a_word(demo_cli: Cli) -> None:
    out = demo_cli("show", "blurb/heronsford/recycling").stdout
    assert "    status of the figure (status): final\n" in out and "()" not in out
    # a fact in words with its live-field name, and its value as shown, never the raw float
    assert "    value this period (value): 59.3%\n" in out
    assert "    change since the period before (change): 0.3 percentage points\n" in out
    # claims in words too, without the part that states them (change.direction, standing.vs_group)
    assert "    direction of the change: up\n" in out and "    against the group average: above\n" in out
    assert "change." not in out and "standing." not in out


def test_settings_are_checked_like_the_web_app(demo_cli: Cli) -> None:
    before = demo_cli("settings", "title").stdout
    refused = demo_cli("settings", "title", "   ", ok=False)
    assert refused.exit_code == 1 and "title cannot be empty" in refused.stderr
    assert demo_cli("settings", "title").stdout == before  # nothing was saved
    assert demo_cli("settings", "title", "  Annual scorecard ").stdout == 'title = "Annual scorecard"\n'
    assert demo_cli("settings", "title", "Annual scorecard").stdout == 'title = "Annual scorecard" (unchanged)\n'


@pytest.mark.sqlite_only("runs the command in a separate process")
def test_a_closed_pipe_ends_quietly(demo_path: Path) -> None:
    command = Path(sys.executable).parent / "stetline"
    with subprocess.Popen([str(command), "list", "-w", str(demo_path)], stdout=subprocess.PIPE,
                          stderr=subprocess.PIPE, text=True, env=stetline_env(demo_path)) as proc:
        assert proc.stdout is not None and proc.stderr is not None
        first = proc.stdout.readline()
        proc.stdout.close()  # like `stetline list | head -1`
        errors = proc.stderr.read()
        proc.wait(timeout=120)
    assert first.strip()
    assert errors == ""


@pytest.fixture
def served(monkeypatch: pytest.MonkeyPatch) -> list[dict[str, Any]]:
    """The calls `stetline serve` makes to waitress (which then returns at once)."""
    calls: list[dict[str, Any]] = []
    monkeypatch.setattr(waitress, "serve", lambda app, **kw: calls.append({"app": app, **kw}))
    return calls


def test_a_team_is_served_by_waitress_with_a_warning_without_https(
    team_path: Path, served: list[dict[str, Any]],
) -> None:
    result = CliRunner().invoke(main, ["serve", "--host", "0.0.0.0", "--port", "8123", "-w", str(team_path)])
    assert result.exit_code == 0, result.output
    assert [(c["host"], c["port"]) for c in served] == [("0.0.0.0", 8123)]
    assert "warning: the https setting is off" in result.stderr
    on_this_machine = CliRunner().invoke(main, ["serve", "-w", str(team_path)])
    assert on_this_machine.exit_code == 0 and on_this_machine.stderr == ""  # loopback: nobody else reaches it
    assert [c["host"] for c in served] == ["0.0.0.0", "127.0.0.1"]


def test_no_https_warning_once_the_setting_is_on(team_cli: Cli, served: list[dict[str, Any]]) -> None:
    team_cli("settings", "https", "true", "--by", "admin")
    result = team_cli("serve", "--host", "0.0.0.0")
    assert len(served) == 1 and result.stderr == ""
