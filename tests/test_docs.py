"""The README documents every command and every setting (a test fails when one is missing)."""

from __future__ import annotations

from pathlib import Path

import click
import pytest

from stetline.cli import main
from stetline.settings import SETTINGS

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


def test_the_readme_opens_with_the_job_and_gives_two_set_up_commands() -> None:
    text = README.read_text(encoding="utf-8")
    assert text.split("\n\n")[1].startswith("Teams that publish a recurring data report")
    quick = text.split("## Quick start")[1].split("##")[0]
    assert quick.count("python3.11 -m venv .venv") == 2
    ci = (README.parent / ".ci" / "run").read_text(encoding="utf-8")
    test_command = [line for line in quick.splitlines() if "pytest" in line][0].strip()
    assert test_command in ci
