"""The ``stetline`` command: a thin shell that parses options, calls the engine and the store.

Errors the engine raises for people become one message on stderr and exit code 1; nothing here
holds business rules. Read commands never need ``--by``; commands that change or publish take it.
"""

from __future__ import annotations

import functools
import getpass
import json
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

import click
from sqlalchemy.exc import SQLAlchemyError

from stetline import actions, loading
from stetline import publish as publishing
from stetline import settings as settings_mod
from stetline.errors import StetlineError
from stetline.formats import BINARY, FORMATS
from stetline.reconcile import REASONS
from stetline.store import ops
from stetline.workspace import Workspace, default_path, init_workspace, is_workspace, open_workspace


def _default_by() -> str:
    try:
        return getpass.getuser()
    except Exception:  # no login name on some containers
        return "unknown"


def handle_errors(fn: Callable[..., Any]) -> Callable[..., Any]:
    """Turn the engine's errors into one clear message and exit code 1."""
    @functools.wraps(fn)
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        try:
            return fn(*args, **kwargs)
        except StetlineError as exc:
            raise click.ClickException(str(exc)) from None
        except OSError as exc:
            raise click.ClickException(f"{exc.strerror or exc}: {exc.filename or ''}".rstrip(": ")) from None
        except SQLAlchemyError as exc:
            detail = " ".join(str(getattr(exc, "orig", exc)).split())[:200]
            raise click.ClickException(
                f"the workspace database could not complete the command ({detail}); nothing was changed"
            ) from None
    return wrapper


workspace_option = click.option(
    "-w", "--workspace", "workspace", type=click.Path(file_okay=False, path_type=Path),
    default=None, help="Workspace folder (default: $STETLINE_WORKSPACE or ./workspace).",
)
by_option = click.option("--by", default=_default_by, show_default="your login name",
                         help="Who acts (recorded in the history).")


def _is_loopback(host: str) -> bool:
    import ipaddress

    if host == "localhost":
        return True
    try:
        return ipaddress.ip_address(host).is_loopback
    except ValueError:
        return False


def _closing(ws: Workspace) -> Workspace:
    """Close the workspace (releasing its database connections) when the running command ends,
    however it ends."""
    ctx = click.get_current_context(silent=True)
    if ctx is not None:
        ctx.call_on_close(ws.close)
    return ws


def _open(path: Path | None) -> Workspace:
    return _closing(open_workspace(path or default_path()))


def _echo_json(data: Any) -> None:
    click.echo(json.dumps(data, indent=2, ensure_ascii=False))


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="stetline")
def main() -> None:
    """Draft, keep and recheck the statements of a recurring data report."""


@main.command()
@workspace_option
@handle_errors
def init(workspace: Path | None) -> None:
    """Create a workspace (or bring an existing one to the newest schema)."""
    ws = _closing(init_workspace(workspace or default_path()))
    click.echo(f"workspace ready: {ws.path}")


@main.command()
@click.argument("observations", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--topics", type=click.Path(dir_okay=False, path_type=Path), help="Topic metadata (CSV or XLSX).")
@click.option("--entities", type=click.Path(dir_okay=False, path_type=Path), help="Entity metadata (CSV or XLSX).")
@click.option("--edition", "label", help="Edition label (default: the latest period in the file).")
@click.option("--dry-run", is_flag=True, help="Show what the load would do; write nothing.")
@click.option("--json", "as_json", is_flag=True, help="Print the summary as JSON.")
@workspace_option
@by_option
@handle_errors
def load(observations: Path, topics: Path | None, entities: Path | None, label: str | None,
         dry_run: bool, as_json: bool, workspace: Path | None, by: str) -> None:
    """Load an edition: the first load, and every refresh."""
    ws = _open(workspace)
    summary = loading.load_edition(ws, observations, topics, entities, label=label, by=by, dry_run=dry_run)
    if as_json:
        _echo_json(summary.to_json())
    else:
        click.echo("\n".join(summary.lines()))


@main.command()
@click.option("--json", "as_json", is_flag=True, help="Print the summary as JSON.")
@workspace_option
@by_option
@handle_errors
def redraft(as_json: bool, workspace: Path | None, by: str) -> None:
    """Redraft the current edition after a phrasing or house-style change."""
    summary = loading.redraft(_open(workspace), by=by)
    if as_json:
        _echo_json(summary.to_json())
    else:
        click.echo("\n".join(summary.lines()))


@main.command()
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@workspace_option
@handle_errors
def status(as_json: bool, workspace: Path | None) -> None:
    """Show the current edition and how many statements are in each status."""
    ws = _open(workspace)
    with ws.reading() as session:
        edition = ops.current_edition(session)
        counts = ops.status_counts(session)
        by_status = {s: counts.get(s, 0) for s in actions.STATUSES}
        reasons = ops.recheck_reason_counts(session)
        data = {
            "edition": edition.label if edition else None,
            "editions": len(ops.editions(session)),
            "slots": sum(by_status.values()),
            "by_status": by_status,
            "recheck_reasons": {r: reasons.get(r, 0) for r in REASONS},
        }
    if as_json:
        _echo_json(data)
        return
    click.echo(f"edition {data['edition'] or '(none loaded)'} · {data['editions']} edition(s) · {data['slots']} statements")
    for s, n in by_status.items():
        click.echo(f"  {s:<11} {n}")
    for r, n in data["recheck_reasons"].items():
        if n:
            click.echo(f"    {r:<16} {n}")


def _filter(kind: str | None, entity: str | None, topic: str | None, status_: str | None) -> ops.SlotFilter:
    return ops.SlotFilter(kind=kind, entity=entity, topic=topic, status=status_)


@main.command(name="list")
@click.option("--kind", help="Only this statement kind.")
@click.option("--entity", help="Only this entity key.")
@click.option("--topic", help="Only this topic key.")
@click.option("--status", "status_", type=click.Choice(actions.STATUSES), help="Only this status.")
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@workspace_option
@handle_errors
def list_(kind: str | None, entity: str | None, topic: str | None, status_: str | None,
          as_json: bool, workspace: Path | None) -> None:
    """List statements with their status and text."""
    ws = _open(workspace)
    with ws.reading() as session:
        rows = actions.views(session, _filter(kind, entity, topic, status_))
        data = [v.to_json(session) for v in rows]
    if as_json:
        _echo_json(data)
        return
    for item in data:
        click.echo(f"{item['slot']}  [{item['status']}]")
        click.echo(f"    {item['text'] if item['text'] is not None else '(suppressed)'}")


@main.command()
@click.argument("slot")
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@workspace_option
@handle_errors
def show(slot: str, as_json: bool, workspace: Path | None) -> None:
    """Show one statement: text, draft, layers, evidence, claims, recheck and history."""
    ws = _open(workspace)
    with ws.reading() as session:
        data = actions.view(session, slot).to_json(session)
        data["history"] = actions.history(session, slot)
    if as_json:
        _echo_json(data)
        return
    click.echo(f"{data['slot']}  [{data['status']}]  version {data['version']}")
    click.echo(f"text:  {data['text']}")
    if data["layer"]:
        click.echo(f"draft: {data['draft']}")
        click.echo(f"{data['layer']['type']} by {data['layer']['by']} at {data['layer']['at']}")
    for note in data["notes"]:
        click.echo(f"note by {note['by']}: {note['text']}")
    if data["recheck"]:
        r = data["recheck"]
        click.echo(f"recheck: {', '.join(r['reasons'])}")
        for c in r["changes"]:
            click.echo(f"    {c['fact']}: {c['old']} → {c['new']}")
        if r["proposed"]:
            click.echo(f"proposed ({'clean' if r['clean'] else 'needs a person'}): {r['proposed']}")
    click.echo("evidence:")
    for name, e in data["evidence"].items():
        click.echo(f"    {name}: {e['shown']}  ({e['value']})")
    click.echo("claims: " + json.dumps(data["claims"], ensure_ascii=False))
    for h in data["history"]:
        click.echo(f"  {h['at']}  {h['by']}  {h['action']}")


@main.command(name="history")
@click.argument("slot")
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@workspace_option
@handle_errors
def history_(slot: str, as_json: bool, workspace: Path | None) -> None:
    """Show every recorded event of one statement."""
    ws = _open(workspace)
    with ws.reading() as session:
        actions.view(session, slot)
        events = actions.history(session, slot)
    if as_json:
        _echo_json(events)
        return
    for h in events:
        click.echo(f"{h['at']}  {h['by']:<12} {h['action']}")
        if h["after"] is not None and h["after"] != h["before"]:
            click.echo(f"    {h['after']}")


def _act(workspace: Path | None, fn: Callable[..., Any], slot: str, **kwargs: Any) -> None:
    ws = _open(workspace)
    with ws.session() as session:
        row = fn(session, slot, **kwargs)
        click.echo(f"{row.id}: {row.status}")


@main.command(name="rewrite")
@click.argument("slot")
@click.argument("text")
@workspace_option
@by_option
@handle_errors
def rewrite_(slot: str, text: str, workspace: Path | None, by: str) -> None:
    """Replace a statement's text with your own (live fields such as {{ value }} allowed)."""
    _act(workspace, actions.rewrite, slot, text=text, by=by)


@main.command(name="pin")
@click.argument("slot")
@workspace_option
@by_option
@handle_errors
def pin_(slot: str, workspace: Path | None, by: str) -> None:
    """Keep a statement's current text word for word."""
    _act(workspace, actions.pin, slot, by=by)


def _selection_option(fn: Callable[..., Any]) -> Callable[..., Any]:
    for opt in reversed((
        click.option("--entity", help="Every statement of this entity (instead of SLOT)."),
        click.option("--topic", help="Every statement of this topic (instead of SLOT)."),
        click.option("--kind", help="Every statement of this kind (instead of SLOT)."),
        click.option("--yes", is_flag=True, help="Do not ask for confirmation (with a selection)."),
    )):
        fn = opt(fn)
    return fn


def _bulk(workspace: Path | None, action: str, slot: str | None, entity: str | None, topic: str | None,
          kind: str | None, yes: bool, by: str, text: str | None = None) -> None:
    """Run an action on one statement, or on a selection after confirming how many."""
    from stetline import bulk

    if slot and (entity or topic or kind):
        raise StetlineError("give either a statement or a selection (--entity, --topic, --kind), not both")
    if not slot and not (entity or topic or kind):
        raise StetlineError("name a statement, or select some with --entity, --topic or --kind")
    ws = _open(workspace)
    if slot:
        with ws.session() as session:
            fn = actions.annotate if action == "annotate" else actions.suppress
            row = fn(session, slot, text, by=by) if action == "annotate" else fn(session, slot, by=by)
            click.echo(f"{row.id}: {row.status}")
        return
    with ws.session() as session:
        chosen = bulk.plan(action, actions.views(session, ops.SlotFilter(kind=kind, entity=entity, topic=topic)))
        items = [(v.slot.id, v.slot.version) for v in chosen.todo]
    if not items:
        click.echo(f"nothing to {action}: no statement matches" + (f" ({len(chosen.skipped)} skipped)" if chosen.skipped else ""))
        return
    if not yes:
        click.confirm(f"{action.capitalize()} {len(items)} statement(s)?", abort=True)
    with ws.session() as session:
        done = bulk.apply(session, action, items, by=by, text=text)
    for slot_id, why in ((v.slot.id, w) for v, w in chosen.skipped):
        click.echo(f"skipped {slot_id}: {why}")
    click.echo(f"{len(done)} statement(s): {action} done")


@main.command(name="annotate", help="Attach a note: `annotate SLOT TEXT`, or `annotate --topic T TEXT` "
              "for a selection (--entity, --topic, --kind).")
@click.argument("args", nargs=-1, required=True, metavar="[SLOT] TEXT")
@_selection_option
@workspace_option
@by_option
@handle_errors
def annotate_(args: tuple[str, ...], entity: str | None, topic: str | None, kind: str | None, yes: bool,
              workspace: Path | None, by: str) -> None:
    """Attach a note to a statement or a selection."""
    selection = bool(entity or topic or kind)
    if len(args) == 2 and not selection:
        _bulk(workspace, "annotate", args[0], None, None, None, yes, by, args[1])
    elif len(args) == 1 and selection:
        _bulk(workspace, "annotate", None, entity, topic, kind, yes, by, args[0])
    else:
        raise StetlineError("give SLOT TEXT, or a selection (--entity, --topic, --kind) and TEXT")


@main.command(name="suppress")
@click.argument("slot", required=False)
@click.option("--lift", is_flag=True, help="Put a suppressed statement back.")
@_selection_option
@workspace_option
@by_option
@handle_errors
def suppress_(slot: str | None, lift: bool, entity: str | None, topic: str | None, kind: str | None, yes: bool,
              workspace: Path | None, by: str) -> None:
    """Leave a statement out of the publication (or a selection: --entity, --topic, --kind)."""
    if lift:
        if not slot:
            raise StetlineError("--lift takes one statement")
        _act(workspace, actions.suppress, slot, by=by, lift=True)
        return
    _bulk(workspace, "suppress", slot, entity, topic, kind, yes, by)


@main.command(name="revert")
@click.argument("slot")
@workspace_option
@by_option
@handle_errors
def revert_(slot: str, workspace: Path | None, by: str) -> None:
    """Drop a statement's rewrite or pin: the draft shows again."""
    _act(workspace, actions.revert, slot, by=by)


@main.command(name="approve")
@click.argument("slot", required=False)
@click.option("--accept-proposed", is_flag=True, help="Take the proposed text first, then approve.")
@click.option("--all-clean", is_flag=True, help="Accept every clean proposal of numbers-changed statements.")
@click.option("--yes", is_flag=True, help="Do not ask for confirmation (with --all-clean).")
@workspace_option
@by_option
@handle_errors
def approve_(slot: str | None, accept_proposed: bool, all_clean: bool, yes: bool,
             workspace: Path | None, by: str) -> None:
    """Approve a statement against the current edition (or, --all-clean, every clean proposal)."""
    if all_clean:
        if slot:
            raise StetlineError("give either a statement or --all-clean, not both")
        ws = _open(workspace)
        with ws.session() as session:
            pending = actions.clean_proposals(session)
        if not pending:
            click.echo("no clean proposals wait for approval")
            return
        if not yes:
            click.confirm(f"Accept the proposed text of {len(pending)} statement(s) and approve them?", abort=True)
        with ws.session() as session:
            done = actions.accept_all_clean(session, by=by)
        for slot_id in done:
            click.echo(f"{slot_id}: approved (proposed text accepted)")
        click.echo(f"{len(done)} statement(s) approved")
        return
    if not slot:
        raise StetlineError("name the statement to approve, or give --all-clean")
    _act(workspace, actions.approve, slot, by=by, accept_proposed=accept_proposed)


@main.command(name="audit")
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@click.option("--untraced", "only_untraced", is_flag=True, help="Only statements with untraced numbers.")
@workspace_option
@handle_errors
def audit_(as_json: bool, only_untraced: bool, workspace: Path | None) -> None:
    """List every number in the text that would be published, with its source fact."""
    from stetline.audit import audit

    ws = _open(workspace)
    with ws.reading() as session:
        results = [a for a in audit(session) if a.untraced or not only_untraced]
    if as_json:
        _echo_json([a.to_json() for a in results])
        return
    untraced = 0
    for a in results:
        click.echo(a.slot)
        for use in a.uses:
            source = use.fact or "UNTRACED"
            untraced += use.fact is None
            click.echo(f"    {use.text:<14} {source}" + ("  (in a note)" if use.where == "note" else ""))
    click.echo(f"{untraced} untraced number(s) in {sum(1 for a in results if a.untraced)} statement(s)")


@main.command(name="changes")
@click.option("--from", "from_label", help="The older edition (default: the one before --to).")
@click.option("--to", "to_label", help="The newer edition (default: the current one).")
@click.option("--format", "fmt", type=click.Choice(["md", "json"]), default="md", show_default=True)
@workspace_option
@handle_errors
def changes_(from_label: str | None, to_label: str | None, fmt: str, workspace: Path | None) -> None:
    """Show what changed between two editions."""
    from stetline.changelog import changes

    ws = _open(workspace)
    with ws.reading() as session:
        log = changes(session, from_label, to_label)
    if fmt == "json":
        _echo_json(log.to_json())
    else:
        click.echo(log.to_markdown(), nl=False)


@main.command(name="publish")
@click.option("--format", "fmt", type=click.Choice(list(FORMATS)), default="md", show_default=True)
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path),
              help="File to write (default: stdout; required for docx).")
@click.option("--sections", type=click.Choice(["entity", "topic"]), default="entity", show_default=True)
@click.option("--allow-recheck", is_flag=True, help="Publish statements in recheck with their last approved text.")
@click.option("--require-approval", is_flag=True, help="Also refuse statements nobody approved.")
@workspace_option
@by_option
@handle_errors
def publish_(fmt: str, output: Path | None, sections: str, allow_recheck: bool, require_approval: bool,
             workspace: Path | None, by: str) -> None:
    """Publish the statements (refused while any statement waits in recheck)."""
    if fmt in BINARY and output is None:
        raise click.UsageError(f"{fmt} is a binary format and is not written to the terminal; "
                               f"give a file with -o, e.g. -o report.{fmt}")
    ws = _open(workspace)
    with ws.session() as session:
        data, pub = publishing.publish(session, fmt, by=by, sections=sections, allow_recheck=allow_recheck,
                                       require_approval=require_approval, layouts_dir=ws.layouts_dir)
    for w in pub.warnings:
        click.echo(f"warning: {w}", err=True)
    if output is None:
        sys.stdout.write(data.decode("utf-8"))
    else:
        output.write_bytes(data)
        click.echo(f"wrote {output} ({len(data):,} bytes)")


@main.command(name="settings")
@click.argument("key", required=False)
@click.argument("value", required=False)
@workspace_option
@by_option
@handle_errors
def settings_(key: str | None, value: str | None, workspace: Path | None, by: str) -> None:
    """Show the workspace settings, or read or set one."""
    ws = _open(workspace)
    with ws.session() as session:
        values = settings_mod.with_defaults(ops.get_settings(session))
        if key is None:
            for spec in settings_mod.SETTINGS:
                click.echo(f"{spec.key} = {json.dumps(values[spec.key])}")
                click.echo(f"    {spec.help}")
            return
        spec = settings_mod.spec(key)
        if value is None:
            click.echo(json.dumps(values[key]))
            return
        from stetline.accounts import authorize

        authorize(session, by, "settings")
        parsed = spec.parse(value)
        ops.put_setting(session, key, parsed)
        ops.add_event(session, by, "setting", detail={"key": key, "old": values[key], "new": parsed})
        from stetline.slotstatus import recheck_unrenderable

        session.flush()
        recheck_unrenderable(session, by=by)  # a rewrite whose live fields now fail waits in recheck
    click.echo(f"{key} = {json.dumps(parsed)}")
    if key in settings_mod.STYLE_KEYS:
        click.echo("this setting changes the wording of drafts: run `stetline redraft` to apply it")


@main.command(name="worksheet")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), required=True,
              help="The .xlsx file to write.")
@click.option("--entity", help="Only this entity key.")
@click.option("--topic", help="Only this topic key.")
@click.option("--kind", help="Only this statement kind.")
@workspace_option
@handle_errors
def worksheet_(output: Path, entity: str | None, topic: str | None, kind: str | None, workspace: Path | None) -> None:
    """Write a worksheet of statements to edit offline (fill in the "new text" column)."""
    from stetline.worksheet import write_worksheet

    ws = _open(workspace)
    with ws.reading() as session:
        n = write_worksheet(session, output, ops.SlotFilter(kind=kind, entity=entity, topic=topic))
    click.echo(f"wrote {output}: {n} statements; fill in 'new text', then run `stetline apply-worksheet {output}`")


@main.command(name="apply-worksheet")
@click.argument("file", type=click.Path(dir_okay=False, exists=True, path_type=Path))
@workspace_option
@by_option
@handle_errors
def apply_worksheet_(file: Path, workspace: Path | None, by: str) -> None:
    """Turn every filled "new text" of a worksheet into a rewrite."""
    from stetline.worksheet import apply_worksheet

    ws = _open(workspace)
    with ws.session() as session:
        result = apply_worksheet(session, file, by=by)
    for slot in result.applied:
        click.echo(f"{slot}: rewritten")
    for slot, why in result.refused:
        click.echo(f"refused {slot}: {why}", err=True)
    click.echo(f"{len(result.applied)} applied, {len(result.refused)} refused")


@main.group(name="user")
def user_() -> None:
    """Manage the workspace's accounts (the first must be an admin)."""


def _read_password(password_stdin: bool) -> str:
    if password_stdin:
        return sys.stdin.readline().rstrip("\n")
    return click.prompt("Password", hide_input=True, confirmation_prompt=True)


@user_.command(name="add")
@click.argument("name")
@click.option("--role", type=click.Choice(["editor", "expert", "reviewer", "admin"]), required=True)
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@workspace_option
@by_option
@handle_errors
def user_add(name: str, role: str, password_stdin: bool, workspace: Path | None, by: str) -> None:
    """Add an account NAME with a role (prompts for its password)."""
    from stetline import accounts

    ws = _open(workspace)
    password = _read_password(password_stdin)
    with ws.session() as session:
        accounts.add_account(session, name, role, password, by=by)
    click.echo(f"account {name} ({role}) added")


@user_.command(name="list")
@click.option("--json", "as_json", is_flag=True, help="Print as JSON.")
@workspace_option
@handle_errors
def user_list(as_json: bool, workspace: Path | None) -> None:
    """List the accounts with their roles."""
    from stetline import accounts

    ws = _open(workspace)
    with ws.reading() as session:
        rows = [{"name": a.name, "role": a.role, "enabled": a.enabled} for a in accounts.accounts(session)]
    if as_json:
        _echo_json(rows)
        return
    if not rows:
        click.echo("no accounts: this is a one-person workspace")
    for r in rows:
        click.echo(f"{r['name']:<20} {r['role']:<9} {'enabled' if r['enabled'] else 'disabled'}")


@user_.command(name="set-role")
@click.argument("name")
@click.argument("role", type=click.Choice(["editor", "expert", "reviewer", "admin"]))
@workspace_option
@by_option
@handle_errors
def user_set_role(name: str, role: str, workspace: Path | None, by: str) -> None:
    """Change an account's role (admins only)."""
    from stetline import accounts

    ws = _open(workspace)
    with ws.session() as session:
        accounts.set_role(session, name, role, by=by)
    click.echo(f"{name} is now {role}")


@user_.command(name="disable")
@click.argument("name")
@click.option("--enable", is_flag=True, help="Enable the account again.")
@workspace_option
@by_option
@handle_errors
def user_disable(name: str, enable: bool, workspace: Path | None, by: str) -> None:
    """Disable an account (or, with --enable, enable it again)."""
    from stetline import accounts

    ws = _open(workspace)
    with ws.session() as session:
        accounts.disable(session, name, by=by, enable=enable)
    click.echo(f"{name} is {'enabled' if enable else 'disabled'}")


@user_.command(name="password")
@click.argument("name")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@workspace_option
@by_option
@handle_errors
def user_password(name: str, password_stdin: bool, workspace: Path | None, by: str) -> None:
    """Set an account's password (the account itself, or an admin)."""
    from stetline import accounts

    ws = _open(workspace)
    password = _read_password(password_stdin)
    with ws.session() as session:
        accounts.set_password(session, name, password, by=by)
    click.echo(f"password of {name} changed")


@user_.command(name="assign")
@click.argument("name")
@click.option("--entity", help="An entity key to assign.")
@click.option("--topic", help="A topic key to assign.")
@workspace_option
@by_option
@handle_errors
def user_assign(name: str, entity: str | None, topic: str | None, workspace: Path | None, by: str) -> None:
    """Assign an entity or a topic to a person (admins only)."""
    from stetline import accounts

    ws = _open(workspace)
    with ws.session() as session:
        accounts.assign(session, name, entity=entity, topic=topic, by=by)
    click.echo(f"assigned {'entity ' + entity if entity else 'topic ' + str(topic)} to {name}")


@main.group(name="layout")
def layout_() -> None:
    """Change the report layouts (md, html) of this workspace."""


@layout_.command(name="copy")
@click.argument("name", type=click.Choice(["md", "html"]))
@click.option("--force", is_flag=True, help="Overwrite a copy that exists already.")
@workspace_option
@handle_errors
def layout_copy(name: str, force: bool, workspace: Path | None) -> None:
    """Copy the built-in NAME layout into the workspace to edit."""
    from stetline.layout import copy_layout

    target = copy_layout(_open(workspace).layouts_dir, name, force=force)
    click.echo(f"wrote {target}; edit it, then publish as usual")


@main.group(name="phrasing")
def phrasing_() -> None:
    """Change the wording of a statement kind in this workspace."""


@phrasing_.command(name="copy")
@click.argument("kind")
@click.option("--force", is_flag=True, help="Overwrite a copy that exists already.")
@workspace_option
@handle_errors
def phrasing_copy(kind: str, force: bool, workspace: Path | None) -> None:
    """Copy KIND's built-in template into the workspace to edit (it renders in the sandbox)."""
    from stetline.kinds import copy_template

    ws = _open(workspace)
    target = copy_template(ws.phrasing_dir, kind, force=force)
    click.echo(f"wrote {target}; edit it, then run `stetline redraft`")


@main.command()
@click.option("--host", default="127.0.0.1", show_default=True)
@click.option("--port", default=5000, show_default=True, type=int)
@workspace_option
@handle_errors
def serve(host: str, port: int, workspace: Path | None) -> None:
    """Serve the web app for the workspace."""
    from stetline.web import create_app  # the one place the engine imports the web app

    ws = _open(workspace)
    from stetline import accounts

    with ws.session() as session:
        shared = accounts.has_accounts(session)
    if not shared and not _is_loopback(host):
        raise StetlineError(
            f"this workspace has no accounts, so anyone who reaches {host} could act in it; "
            "serve it on 127.0.0.1, or add an admin first: stetline user add NAME --role admin"
        )
    app = create_app(ws)
    click.echo(f"Stetline is listening on http://{host}:{port}/ (Ctrl+C to stop)")
    from werkzeug.serving import run_simple

    run_simple(host, port, app, threaded=True, use_reloader=False)


@main.command()
@click.option("--no-serve", is_flag=True, help="Build the demo workspace and stop.")
@click.option("--host", default="127.0.0.1", show_default=True)
@click.option("--port", default=5000, show_default=True, type=int)
@workspace_option
@handle_errors
def demo(no_serve: bool, host: str, port: int, workspace: Path | None) -> None:
    """Build the demo workspace (two editions, example layers, rechecks) and serve it."""
    from stetline import demo as demo_mod

    path = workspace or default_path()
    if path.exists() and any(path.iterdir()) and not (is_workspace(path) and demo_mod.is_demo(path)):
        raise StetlineError(f"{path} already holds other work; give an empty folder with -w")
    built = demo_mod.build(path, echo=click.echo)
    built.close()  # serving opens the workspace again
    if no_serve:
        click.echo(f"demo workspace ready in {built.path}; serve it with: stetline serve -w {built.path}")
        return
    ctx = click.get_current_context()
    ctx.invoke(serve, host=host, port=port, workspace=built.path)


@main.command(name="backup")
@click.argument("file", type=click.Path(path_type=Path))
@click.option("--force", is_flag=True, help="Replace FILE if it already exists.")
@workspace_option
@by_option
@handle_errors
def backup_(file: Path, force: bool, workspace: Path | None, by: str) -> None:
    """Write a consistent copy of the workspace database to FILE (safe while the app runs)."""
    from stetline import backup as backup_mod

    ws = backup_mod.attach(workspace or default_path())
    try:
        result = backup_mod.backup(ws, file, by=by, force=force)
    finally:
        ws.close()
    c = result.counts
    click.echo(f"backed up the workspace to {result.file} ({result.size:,} bytes: {c['edition']} edition(s), "
               f"{c['slot']} statements, {c['layer']} layer(s), {c['event']} event(s))")
    if not result.recorded:
        click.echo("note: the workspace was busy, so the backup is not in its history", err=True)


@main.command(name="restore")
@click.argument("file", type=click.Path(path_type=Path))
@workspace_option
@by_option
@handle_errors
def restore_(file: Path, workspace: Path | None, by: str) -> None:
    """Replace the workspace database with the backup FILE (the replaced one is kept beside it).

    Stop `stetline serve` first, and start it again afterwards.
    """
    from stetline import backup as backup_mod

    ws = backup_mod.attach(workspace or default_path())
    try:
        result = backup_mod.restore(ws, file, by=by)
    finally:
        ws.close()
    c = result.counts
    click.echo(f"restored the workspace from {result.file}: {c['edition']} edition(s), {c['slot']} statements, "
               f"{c['layer']} layer(s), {c['event']} event(s)")
    if not result.recorded:
        click.echo("note: the workspace was busy, so the restore is not in its history", err=True)
    if result.revision_before != result.revision_now:
        click.echo(f"brought the backup's schema up to date ({result.revision_before} → {result.revision_now})")
    if result.kept is not None:
        click.echo(f"the database it replaced is kept as {result.kept} (restore that file to undo)")
    click.echo("restart any running `stetline serve` of this workspace so it reads the restored data")
