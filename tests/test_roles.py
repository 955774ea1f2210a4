"""Accounts and roles through the CLI: every role × every action, allowed or refused clearly."""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner
from helpers import Cli

from stetline import accounts, demo
from stetline.cli import main
from stetline.errors import StetlineError
from stetline.workspace import init_workspace, open_workspace

SLOT = "blurb/tidemere/population"
ROLES = ("editor", "expert", "reviewer", "admin")


def _commands(demo_files: Path, tmp: Path) -> dict[str, list[str]]:
    return {
        "rewrite": ["rewrite", SLOT, "Tidemere's population grew again."],
        "pin": ["pin", SLOT],
        "annotate": ["annotate", SLOT, "Checked with the planning team."],
        "suppress": ["suppress", SLOT],
        "approve": ["approve", SLOT],
        "load": ["load", str(demo_files / "observations-2025.csv")],
        "publish": ["publish", "--allow-recheck", "-o", str(tmp / "r.md")],
        "settings": ["settings", "serial_comma", "false"],
        "redraft": ["redraft"],
        "user add": ["user", "add", "newcomer", "--role", "expert", "--password-stdin"],
    }


ALLOWED = {
    "editor": {"rewrite", "pin", "annotate", "suppress"},
    "expert": {"annotate"},
    "reviewer": {"rewrite", "pin", "annotate", "suppress", "approve"},
    "admin": {"rewrite", "pin", "annotate", "suppress", "approve", "load", "publish", "settings", "redraft",
              "user add"},
}


@pytest.mark.parametrize("role", ROLES)
@pytest.mark.parametrize("action", sorted(ALLOWED["admin"]))
def test_role_matrix(team_cli: Cli, demo_files: Path, tmp_path: Path, role: str, action: str) -> None:
    args = _commands(demo_files, tmp_path)[action]
    before = team_cli.json("show", SLOT)
    result = team_cli(*args, "--by", role, ok=False, input="a-long-password\n")
    if action in ALLOWED[role]:
        assert result.exit_code == 0, result.output
    else:
        assert result.exit_code == 1
        assert f"{role} is an {role}" in result.stderr or f"{role} is a {role}" in result.stderr
        assert "may not" in result.stderr and "Traceback" not in result.output
        after = team_cli.json("show", SLOT)
        assert (after["version"], after["status"]) == (before["version"], before["status"])


def test_an_unknown_or_disabled_account_may_not_act(team_cli: Cli) -> None:
    result = team_cli("annotate", SLOT, "note", "--by", "stranger", ok=False)
    assert "there is no account 'stranger'" in result.stderr
    team_cli("user", "disable", "editor", "--by", "admin")
    result = team_cli("annotate", SLOT, "note", "--by", "editor", ok=False)
    assert "the account 'editor' is disabled" in result.stderr
    team_cli("user", "disable", "editor", "--enable", "--by", "admin")
    team_cli("annotate", SLOT, "note", "--by", "editor")


def test_read_commands_need_no_account(team_cli: Cli) -> None:
    assert team_cli.json("status")["editions"] == 2
    team_cli("list", "--kind", "headline")
    team_cli("audit", "--untraced")
    team_cli("changes")


def test_the_first_account_must_be_an_admin_and_only_admins_add_more(cli: Cli) -> None:
    cli("init")
    result = cli("user", "add", "eve", "--role", "editor", "--password-stdin", "--by", "eve",
                 input="a-long-password\n", ok=False)
    assert "the first account must be an admin" in result.stderr
    cli("user", "add", "max", "--role", "admin", "--password-stdin", "--by", "max", input="a-long-password\n")
    result = cli("user", "add", "eve", "--role", "editor", "--password-stdin", "--by", "nobody",
                 input="a-long-password\n", ok=False)
    assert "there is no account 'nobody'" in result.stderr
    cli("user", "add", "eve", "--role", "editor", "--password-stdin", "--by", "max", input="a-long-password\n")
    result = cli("user", "set-role", "max", "editor", "--by", "max", ok=False)
    assert "last admin" in result.stderr
    assert [u["name"] for u in cli.json("user", "list")] == ["eve", "max"]


def test_two_person_rule(team_cli: Cli) -> None:
    team_cli("rewrite", SLOT, "Tidemere keeps growing.", "--by", "reviewer")
    result = team_cli("approve", SLOT, "--by", "reviewer", ok=False)
    assert "two-person rule" in result.stderr
    team_cli("settings", "self_approval", "true", "--by", "admin")
    team_cli("approve", SLOT, "--by", "reviewer")
    assert team_cli.json("show", SLOT)["status"] == "approved"


def test_failed_logins_give_one_answer_and_never_lock_the_owner_out(team_path: Path) -> None:
    ws = open_workspace(team_path)
    password = demo.demo_passwords(team_path)["editor"]
    answers = set()
    with ws.session() as s:
        for _ in range(20):  # anyone's guesses: the web app slows them down per client instead
            with pytest.raises(StetlineError) as wrong:
                accounts.login(s, "editor", "guess-guess")
            answers.add(str(wrong.value))
        with pytest.raises(StetlineError) as unknown:
            accounts.login(s, "nobody-here", "guess-guess")
        answers.add(str(unknown.value))
        assert accounts.get_account(s, "editor").failed_logins == 20  # type: ignore[union-attr]
        assert accounts.login(s, "editor", password).name == "editor"  # the owner still gets in
        accounts.disable(s, "editor", by="admin")
        with pytest.raises(StetlineError) as disabled:
            accounts.login(s, "editor", password)  # the right password: the answer does not say "disabled"
        answers.add(str(disabled.value))
    assert answers == {accounts.REFUSED}
    ws.close()


def test_passwords_are_stored_hashed(team_path: Path) -> None:
    ws = open_workspace(team_path)
    password = demo.demo_passwords(team_path)["admin"]
    with ws.session() as s:
        account = accounts.get_account(s, "admin")
        assert account is not None and password not in account.password_hash
        assert account.password_hash.startswith(("scrypt:", "pbkdf2:"))
        assert accounts.login(s, "admin", password).name == "admin"
    ws.close()


def test_a_one_person_workspace_serves_only_on_loopback(tmp_path: Path) -> None:
    init_workspace(tmp_path / "solo").close()
    result = CliRunner().invoke(main, ["serve", "--host", "0.0.0.0", "-w", str(tmp_path / "solo")])
    assert result.exit_code == 1
    assert "has no accounts" in result.output and "127.0.0.1" in result.output


def test_the_demo_creates_one_account_per_role_and_prints_the_passwords(tmp_path: Path) -> None:
    result = CliRunner().invoke(main, ["demo", "--no-serve", "-w", str(tmp_path / "d")])
    assert result.exit_code == 0, result.output
    passwords = demo.demo_passwords(tmp_path / "d")
    assert sorted(passwords) == sorted(ROLES)
    for name, password in passwords.items():
        assert f"{name:<9} {password}" in result.output
    ws = open_workspace(tmp_path / "d")
    with ws.session() as s:
        assert {a.name: a.role for a in accounts.accounts(s)} == {r: r for r in ROLES}
    ws.close()
