"""Commands about the workspace's accounts and settings: ``user ...`` and ``settings``.

Settings are saved through the same engine path as the web app's settings page
(``stetline.configure.save``): the same checks, the same recorded events.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import click

from stetline.cli.common import ROLE, by_option, echo_json, json_option, open_ws, workspace_option


@click.command(name="settings")
@click.argument("key", required=False)
@click.argument("value", required=False)
@workspace_option
@by_option
def settings_(key: str | None, value: str | None, workspace: Path | None, by: str) -> None:
    """Show the workspace settings, or read or set one."""
    from stetline import configure
    from stetline import settings as declared
    from stetline.store import ops

    with open_ws(workspace).session() as session:
        values = declared.with_defaults(ops.get_settings(session))
        if key is None:
            for spec in declared.SETTINGS:
                click.echo(f"{spec.key} = {json.dumps(values[spec.key])}")
                click.echo(f"    {spec.label}: {spec.help}")
            return
        declared.spec(key)  # an unknown key is refused with the known ones
        if value is None:
            click.echo(json.dumps(values[key]))
            return
        changes = configure.save(session, {key: value}, by=by)
        now = declared.with_defaults(ops.get_settings(session))[key]
    click.echo(f"{key} = {json.dumps(now)}" + ("" if changes else " (unchanged)"))
    if changes and key == "kinds":
        click.echo("this setting changes which statements are drafted: run `stetline redraft` to apply it "
                   "(statements of a kind turned off keep their human work and wait in recheck as gone)")
    elif changes and key in declared.STYLE_KEYS:
        click.echo("this setting changes the wording of drafts: run `stetline redraft` to apply it")


@click.group(name="user")
def user_() -> None:
    """Manage the workspace's accounts (the first must be an admin)."""


def _read_password(password_stdin: bool) -> str:
    if password_stdin:
        return sys.stdin.readline().rstrip("\n")
    return str(click.prompt("Password", hide_input=True, confirmation_prompt=True))


@user_.command(name="add")
@click.argument("name")
@click.option("--role", type=ROLE, required=True, help="What the account may do.")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@workspace_option
@by_option
def user_add(name: str, role: str, password_stdin: bool, workspace: Path | None, by: str) -> None:
    """Add an account (the first must be an admin); prompts for its password."""
    from stetline import accounts

    ws = open_ws(workspace)
    password = _read_password(password_stdin)
    with ws.session() as session:
        accounts.add_account(session, name, role, password, by=by)
    click.echo(f"account {name} ({role}) added")


@user_.command(name="list")
@json_option
@workspace_option
def user_list(as_json: bool, workspace: Path | None) -> None:
    """List the accounts with their roles."""
    from stetline import accounts

    with open_ws(workspace).reading() as session:
        rows = [{"name": a.name, "role": a.role, "enabled": a.enabled} for a in accounts.accounts(session)]
    if as_json:
        echo_json(rows)
        return
    if not rows:
        click.echo("no accounts: this is a one-person workspace")
    for r in rows:
        click.echo(f"{r['name']:<20} {r['role']:<9} {'enabled' if r['enabled'] else 'disabled'}")


@user_.command(name="set-role")
@click.argument("name")
@click.argument("role", type=ROLE)
@workspace_option
@by_option
def user_set_role(name: str, role: str, workspace: Path | None, by: str) -> None:
    """Change an account's role (admins only)."""
    from stetline import accounts

    with open_ws(workspace).session() as session:
        accounts.set_role(session, name, role, by=by)
    click.echo(f"{name} is now {role}")


@user_.command(name="disable")
@click.argument("name")
@click.option("--enable", is_flag=True, help="Enable the account again.")
@workspace_option
@by_option
def user_disable(name: str, enable: bool, workspace: Path | None, by: str) -> None:
    """Disable an account (or, with --enable, enable it again)."""
    from stetline import accounts

    with open_ws(workspace).session() as session:
        accounts.disable(session, name, by=by, enable=enable)
    click.echo(f"{name} is {'enabled' if enable else 'disabled'}")


@user_.command(name="password")
@click.argument("name")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@workspace_option
@by_option
def user_password(name: str, password_stdin: bool, workspace: Path | None, by: str) -> None:
    """Set an account's password (the account itself, or an admin)."""
    from stetline import accounts

    ws = open_ws(workspace)
    password = _read_password(password_stdin)
    with ws.session() as session:
        accounts.set_password(session, name, password, by=by)
    click.echo(f"password of {name} changed")


@user_.command(name="assign")
@click.argument("name")
@click.option("--entity", metavar="KEY", help="An entity key to assign.")
@click.option("--topic", metavar="KEY", help="A topic key to assign.")
@workspace_option
@by_option
def user_assign(name: str, entity: str | None, topic: str | None, workspace: Path | None, by: str) -> None:
    """Assign an entity or a topic to a person (admins only)."""
    from stetline import accounts

    with open_ws(workspace).session() as session:
        accounts.assign(session, name, entity=entity, topic=topic, by=by)
    click.echo(f"assigned {'entity ' + entity if entity else 'topic ' + str(topic)} to {name}")


COMMANDS = (settings_, user_)
