"""Commands about the workspace, its editions and publishing: init, load, redraft, audit, changes,
publish, the layout and phrasing copies, backup and restore."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from stetline.cli.common import (
    FORMAT,
    KIND,
    by_option,
    echo_json,
    init_ws,
    json_option,
    open_ws,
    shown_progress,
    workspace_option,
)
from stetline.workspace import default_path


@click.command()
@workspace_option
def init(workspace: Path | None) -> None:
    """Create a workspace (or bring an existing one to the newest schema)."""
    ws = init_ws(workspace)
    click.echo(f"workspace ready: {ws.path}")


@click.command()
@click.argument("observations", type=click.Path(dir_okay=False, path_type=Path), metavar="OBS")
@click.option("--topics", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="Topic metadata (CSV or XLSX).")
@click.option("--entities", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="Entity metadata (CSV or XLSX).")
@click.option("--edition", "label", metavar="LABEL",
              help="Edition label (default: the latest period in the file, of the format most topics use).")
@click.option("--renames", type=click.Path(dir_okay=False, path_type=Path), metavar="MAP",
              help="Renamed or merged entities (CSV, columns old,new): their human work moves to the new keys.")
@click.option("--dry-run", is_flag=True, help="Show what the load would do; write nothing.")
@json_option
@workspace_option
@by_option
def load(observations: Path, topics: Path | None, entities: Path | None, label: str | None, renames: Path | None,
         dry_run: bool, as_json: bool, workspace: Path | None, by: str) -> None:
    """Load an edition: the first load, and every refresh."""
    from stetline import loading

    with shown_progress("load", as_json) as progress:
        summary = loading.load_edition(open_ws(workspace), observations, topics, entities, label=label, by=by,
                                       dry_run=dry_run, progress=progress, renames=renames)
    if as_json:
        echo_json(summary.to_json())
    else:
        click.echo("\n".join(summary.lines()))


@click.command()
@json_option
@workspace_option
@by_option
def redraft(as_json: bool, workspace: Path | None, by: str) -> None:
    """Redraft the current edition after a phrasing or settings change."""
    from stetline import loading

    with shown_progress("redraft", as_json) as progress:
        summary = loading.redraft(open_ws(workspace), by=by, progress=progress)
    if as_json:
        echo_json(summary.to_json())
    else:
        click.echo("\n".join(summary.lines()))


@click.command(name="audit")
@json_option
@click.option("--untraced", "only_untraced", is_flag=True, help="Only statements with untraced numbers.")
@workspace_option
def audit_(as_json: bool, only_untraced: bool, workspace: Path | None) -> None:
    """List every number in the text that would be published, with its source fact."""
    from stetline.audit import audit

    with open_ws(workspace).reading() as session:
        results = [a for a in audit(session) if a.untraced or not only_untraced]
    if as_json:
        echo_json([a.to_json() for a in results])
        return
    untraced = 0
    for a in results:
        click.echo(a.slot)
        for use in a.uses:
            untraced += use.fact is None
            where = "  (in a note)" if use.where == "note" else ""
            click.echo(f"    {use.text:<14} {use.fact or 'UNTRACED'}{where}")
    click.echo(f"{untraced} untraced number(s) in {sum(1 for a in results if a.untraced)} statement(s)")


@click.command(name="changes")
@click.option("--from", "from_label", metavar="LABEL", help="The older edition (default: the one before --to).")
@click.option("--to", "to_label", metavar="LABEL", help="The newer edition (default: the current one).")
@click.option("--format", "fmt", type=click.Choice(["md", "json"]), default="md", show_default=True,
              help="Markdown or JSON.")
@workspace_option
def changes_(from_label: str | None, to_label: str | None, fmt: str, workspace: Path | None) -> None:
    """Show what changed between two editions."""
    from stetline.changelog import changes

    with open_ws(workspace).reading() as session:
        log = changes(session, from_label, to_label)
    if fmt == "json":
        echo_json(log.to_json())
    else:
        click.echo(log.to_markdown(), nl=False)


@click.command(name="publish")
@click.option("--format", "fmt", type=FORMAT, default="md", show_default=True, help="The file format.")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="File to write (default: stdout; required for docx).")
@click.option("--sections", type=click.Choice(["entity", "topic", "parent"]), default="entity", show_default=True,
              help="Group the statements by entity, by topic, or by entity under each parent's heading.")
@click.option("--allow-recheck", is_flag=True, help="Publish statements in recheck with their last approved text.")
@click.option("--require-approval", is_flag=True, help="Also refuse statements nobody approved.")
@workspace_option
@by_option
def publish_(fmt: str, output: Path | None, sections: str, allow_recheck: bool, require_approval: bool,
             workspace: Path | None, by: str) -> None:
    """Publish the statements (refused while any statement waits in recheck)."""
    from stetline import publish as publishing
    from stetline.formats import BINARY

    if fmt in BINARY and output is None:
        raise click.UsageError(f"{fmt} is a binary format and is not written to the terminal; "
                               f"give a file with -o, e.g. -o report.{fmt}")
    ws = open_ws(workspace)
    with shown_progress("publish") as progress, ws.session() as session:
        data, pub = publishing.publish(session, fmt, by=by, sections=sections, allow_recheck=allow_recheck,
                                       require_approval=require_approval, layouts_dir=ws.layouts_dir,
                                       chart_dir=ws.chart_dir, progress=progress)
    for w in pub.warnings:
        click.echo(f"warning: {w}", err=True)
    if output is None:
        sys.stdout.write(data.decode("utf-8"))
    else:
        output.write_bytes(data)
        click.echo(f"wrote {output} ({len(data):,} bytes)")


@click.group(name="layout")
def layout_() -> None:
    """Change the report layouts (md, html) of this workspace."""


@layout_.command(name="copy")
@click.argument("name", type=click.Choice(["md", "html"]))
@click.option("--force", is_flag=True, help="Overwrite a copy that exists already.")
@workspace_option
def layout_copy(name: str, force: bool, workspace: Path | None) -> None:
    """Copy a built-in report layout into the workspace to edit."""
    from stetline.layout import copy_layout

    target = copy_layout(open_ws(workspace).layouts_dir, name, force=force)
    click.echo(f"wrote {target}; edit it, then publish as usual")


@click.group(name="phrasing")
def phrasing_() -> None:
    """Change the wording of a statement kind in this workspace."""


@phrasing_.command(name="copy")
@click.argument("kind", type=KIND, metavar="KIND")
@click.option("--force", is_flag=True, help="Overwrite a copy that exists already.")
@workspace_option
def phrasing_copy(kind: str, force: bool, workspace: Path | None) -> None:
    """Copy a statement kind's template into the workspace to edit (it renders in the sandbox)."""
    from stetline.kinds import copy_template

    target = copy_template(open_ws(workspace).phrasing_dir, kind, force=force)
    click.echo(f"wrote {target}; edit it, then run `stetline redraft`")


@click.command(name="backup")
@click.argument("file", type=click.Path(path_type=Path))
@click.option("--force", is_flag=True, help="Replace FILE if it already exists.")
@workspace_option
@by_option
def backup_(file: Path, force: bool, workspace: Path | None, by: str) -> None:
    """Write a consistent copy of the workspace database to FILE (safe while the app runs)."""
    from stetline import backup as backup_mod
    from stetline.store import ops

    ws = backup_mod.attach(workspace or default_path())
    try:
        result = backup_mod.backup(ws, file, by=by, force=force)
    finally:
        ws.close()
    c = result.counts
    click.echo(f"backed up the workspace to {result.file} ({result.size:,} bytes: {c['edition']} edition(s), "
               f"{ops.describe_totals(c)}, {c['layer']} layer(s), {c['event']} event(s))")
    if not result.recorded:
        click.echo("note: the workspace was busy, so the backup is not in its history", err=True)


@click.command(name="restore")
@click.argument("file", type=click.Path(path_type=Path))
@workspace_option
@by_option
def restore_(file: Path, workspace: Path | None, by: str) -> None:
    """Replace the workspace database with the backup FILE (the replaced one is kept beside it).

    Stop `stetline serve` first, and start it again afterwards.
    """
    from stetline import backup as backup_mod
    from stetline.store import ops

    ws = backup_mod.attach(workspace or default_path())
    try:
        result = backup_mod.restore(ws, file, by=by)
    finally:
        ws.close()
    c = result.counts
    click.echo(f"restored the workspace from {result.file}: {c['edition']} edition(s), {ops.describe_totals(c)}, "
               f"{c['layer']} layer(s), {c['event']} event(s)")
    if not result.recorded:
        click.echo("note: the workspace was busy, so the restore is not in its history", err=True)
    if result.revision_before != result.revision_now:
        click.echo(f"brought the backup's schema up to date ({result.revision_before} → {result.revision_now})")
    if result.kept is not None:
        click.echo(f"the database it replaced is kept as {result.kept} (restore that file to undo)")
    click.echo("restart any running `stetline serve` of this workspace so it reads the restored data")


COMMANDS = (init, load, redraft, audit_, changes_, publish_, layout_, phrasing_, backup_, restore_)
