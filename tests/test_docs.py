"""The README documents every command and every setting: its two tables are generated from the click
commands and ``SETTINGS`` (``python -m stetline.cli.docs --write README.md``) and must match them."""

from __future__ import annotations

from pathlib import Path

import click
import pytest

import stetline.settings
from stetline.cli import main
from stetline.cli.docs import command_table, section, settings_table, usage
from stetline.settings import SETTINGS, SettingSpec

README = Path(__file__).resolve().parent.parent / "README.md"


def _commands(group: click.Group, prefix: str = "") -> list[str]:
    names = []
    for name, command in sorted(group.commands.items()):
        if isinstance(command, click.Group):
            names += _commands(command, f"{prefix}{name} ")
        else:
            names.append(f"{prefix}{name}")
    return names


@pytest.mark.parametrize("command", _commands(main))
def test_every_command_is_in_the_readme(command: str) -> None:
    assert f"`stetline {command}" in README.read_text(encoding="utf-8"), f"README lacks `stetline {command}`"


@pytest.mark.parametrize("key", [s.key for s in SETTINGS])
def test_every_setting_is_in_the_readme(key: str) -> None:
    assert f"`{key}`" in README.read_text(encoding="utf-8"), f"README lacks the setting `{key}`"


def test_the_readme_command_table_matches_the_commands() -> None:
    fresh = command_table(main)
    assert section(README.read_text(encoding="utf-8"), "commands") == fresh, (
        "README's command table differs from the commands; run `python -m stetline.cli.docs --write README.md`. "
        f"The fresh table:\n{fresh}")


def test_the_readme_settings_table_matches_the_declaration() -> None:
    fresh = settings_table()
    assert section(README.read_text(encoding="utf-8"), "settings") == fresh, (
        "README's settings table differs from SETTINGS; run `python -m stetline.cli.docs --write README.md`. "
        f"The fresh table:\n{fresh}")


def test_a_command_row_shows_its_arguments_options_defaults_and_help() -> None:
    table = command_table(main)
    serve_row = next(line for line in table.splitlines() if line.startswith("| `stetline serve "))
    assert serve_row == ("| `stetline serve [--host HOST] [--port PORT]` | Serve the web app for the workspace "
                         "(with waitress). Default: --host 127.0.0.1, --port 5000. |")
    # a required option stays bare, the role names come from the accounts' declaration
    assert usage("user add", main.commands["user"].commands["add"]) == (  # type: ignore[attr-defined]
        "stetline user add NAME --role editor|expert|reviewer|admin [--password-stdin]")
    assert "| `stetline show SLOT [--json]` |" in table


def test_a_changed_setting_changes_the_settings_table(monkeypatch: pytest.MonkeyPatch) -> None:
    # the README check above can fail: a default or a help text edited in SETTINGS shows in the table
    before = settings_table()
    changed = tuple(SettingSpec(s.key, s.label, "Annual report" if s.key == "title" else s.default,
                                s.help, s.choices) for s in SETTINGS)
    monkeypatch.setattr(stetline.settings, "SETTINGS", changed)
    after = settings_table()
    assert after != before
    assert ("| `title` | Publication title | `Annual report` | text | The publication's title, printed on its "
            "title block. |") in after.splitlines()


def test_the_readme_opens_with_the_job_and_gives_two_set_up_commands() -> None:
    text = README.read_text(encoding="utf-8")
    assert text.split("\n\n")[1].startswith("Teams that publish a recurring data report")
    quick = text.split("## Quick start")[1].split("##")[0]
    assert quick.count("python3.11 -m venv .venv") == 2
    ci = (README.parent / ".ci" / "run").read_text(encoding="utf-8")
    test_command = [line for line in quick.splitlines() if "pytest" in line][0].strip()
    assert test_command in ci
