"""Commands about statements: the status summary, listing and showing them, and the actions on
one statement or a confirmed selection (rewrite, choose, pin, annotate, suppress, revert, approve)."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

import click

from stetline.cli.common import KIND, STATUS, by_option, echo_json, json_option, open_ws, workspace_option
from stetline.errors import StetlineError


@click.command()
@json_option
@workspace_option
def status(as_json: bool, workspace: Path | None) -> None:
    """Show the current edition and how many statements are in each status."""
    from stetline.summary import status_summary

    with open_ws(workspace).reading() as session:
        summary = status_summary(session)
        data = summary.to_json()
    if as_json:
        echo_json(data)
        return
    click.echo(f"edition {data['edition'] or '(none loaded)'} · {data['editions']} edition(s) · "
               f"{summary.phrase()}")
    for name, n in summary.by_status.items():
        click.echo(f"  {name:<11} {n}")
    if any(summary.recheck_reasons.values()):
        click.echo("  recheck reasons (a statement may have several):")
    for reason, n in summary.recheck_reasons.items():
        if n:
            click.echo(f"    {reason:<16} {n}")


@click.command(name="list")
@click.option("--kind", type=KIND, metavar="KIND", help="Only this statement kind.")
@click.option("--entity", metavar="KEY", help="Only this entity key.")
@click.option("--topic", metavar="KEY", help="Only this topic key.")
@click.option("--status", "status_", type=STATUS, help="Only this status.")
@json_option
@workspace_option
def list_(kind: str | None, entity: str | None, topic: str | None, status_: str | None,
          as_json: bool, workspace: Path | None) -> None:
    """List statements with their status and text; then, unless another status is asked for, the entities
    worth a data check (a note for reviewers, never printed)."""
    from stetline import actions, datachecks
    from stetline.store import ops

    with open_ws(workspace).reading() as session:
        rows = actions.views(session, ops.SlotFilter(kind=kind, entity=entity, topic=topic, status=status_))
        data = [v.to_json(session) for v in rows]
        checks = datachecks.data_checks(session) if not as_json and status_ in (None, "recheck") else []
    if as_json:
        echo_json(data)
        return
    for item in data:
        click.echo(f"{item['slot']}  [{item['status']}]")
        click.echo(f"    {item['text'] if item['text'] is not None else '(suppressed)'}")
    checks = [c for c in checks if entity is None or c.entity == entity]
    for c in checks:
        click.echo(f"{datachecks.TITLE}: {c.name} ({c.entity}) {c.summary()}; see {c.slot}")
    if checks:
        click.echo(f"    {datachecks.NOTE}")


def _evidence_line(name: str, fact: dict[str, Any]) -> str:
    """A fact in words, its live-field name beside it, and its value as shown (``value this period (value): 59.3%``)."""
    from stetline.factwords import fact_words

    return f"    {fact_words(name)} ({name}): {fact['shown']}"


@click.command()
@click.argument("slot")
@json_option
@workspace_option
def show(slot: str, as_json: bool, workspace: Path | None) -> None:
    """Show one statement: text, draft, layers, evidence, claims, recheck and history."""
    from stetline import actions, factwords
    from stetline.store import ops

    with open_ws(workspace).reading() as session:
        data = actions.view(session, slot).to_json(session)
        data["history"] = actions.history(session, slot)
        names = {t.key: t.label for t in ops.topic_rows(session)}
        names.update({e.key: e.name for e in ops.entity_rows(session)})
    if as_json:
        echo_json(data)
        return
    click.echo(f"{data['slot']}  [{data['status']}]  version {data['version']}")
    if data["suppressed"]:
        click.echo("suppressed: left out of the publication (`stetline suppress --lift` puts it back)")
    else:
        click.echo(f"text:  {data['text']}")
    if data["layer"] or data["suppressed"]:
        click.echo(f"draft: {data['draft']}")
    if data["layer"]:
        texts = [h for h in data["history"] if h["action"] in ("rewrite", "pin", "revert", "accept")]
        last = texts[-1] if texts else None
        accepted = f", proposal accepted by {last['by']}" if last and last["action"] == "accept" else ""
        click.echo(f"{data['layer']['type']} by {data['layer']['by']}{accepted} at {data['layer']['at']}")
    for note in data["notes"]:
        click.echo(f"note by {note['by']}: {note['text']}")
    if data["recheck"]:
        r = data["recheck"]
        click.echo(f"recheck: {', '.join(r['reasons'])}")
        for c in r["changes"]:
            old, new = factwords.change_value(c["old"], names), factwords.change_value(c["new"], names)
            click.echo(f"    {factwords.change_words(c['fact'])}: {old} → {new}")
        if r["proposed"]:
            click.echo(f"proposed ({'clean' if r['clean'] else 'needs a person'}): {r['proposed']}")
        for n, m in enumerate(r.get("merged") or [], 1):  # stetline choose SLOT --text N
            who = f"{m['type']} by {m['author'] or m['by']}" if m["by"] else "draft"
            click.echo(f"merged text {n}, from {m['slot']} ({who}): {m['text']}")
    click.echo("evidence:")
    for name, fact in data["evidence"].items():
        click.echo(_evidence_line(name, fact))
    click.echo("claims:")
    for name, value in data["claims"].items():
        click.echo(f"    {factwords.claim_words(name)}: {factwords.claim_value(value, names)}")
    for h in data["history"]:
        click.echo(f"  {h['at']}  {h['by']}  {h['action']}")


@click.command(name="history")
@click.argument("slot")
@json_option
@workspace_option
def history_(slot: str, as_json: bool, workspace: Path | None) -> None:
    """Show every recorded event of one statement."""
    from stetline import actions

    with open_ws(workspace).reading() as session:
        actions.view(session, slot)  # an unknown statement is an error, not an empty history
        events = actions.history(session, slot)
    if as_json:
        echo_json(events)
        return
    for h in events:
        click.echo(f"{h['at']}  {h['by']:<12} {h['action']}")
        if h["after"] is not None and h["after"] != h["before"]:
            click.echo(f"    {h['after']}")


def _act(workspace: Path | None, action: Callable[..., Any], slot: str, **kwargs: Any) -> None:
    with open_ws(workspace).session() as session:
        row = action(session, slot, **kwargs)
        click.echo(f"{row.id}: {row.status}")


@click.command(name="rewrite")
@click.argument("slot")
@click.argument("text")
@workspace_option
@by_option
def rewrite_(slot: str, text: str, workspace: Path | None, by: str) -> None:
    """Replace a statement's text with your own (live fields such as {{ value }} allowed)."""
    from stetline import actions

    _act(workspace, actions.rewrite, slot, text=text, by=by)


@click.command(name="choose")
@click.argument("slot")
@click.option("--text", "pick", type=click.IntRange(min=1), metavar="N",
              help="Make merged text N (as numbered by `stetline show`) the statement's rewrite.")
@click.option("--draft", "keep", is_flag=True, help="Keep the new draft instead of any merged text.")
@workspace_option
@by_option
def choose_(slot: str, pick: int | None, keep: bool, workspace: Path | None, by: str) -> None:
    """Resolve a merged statement: take one of the merged entities' texts, or keep the draft."""
    from stetline import renames
    from stetline.store import ops

    if (pick is None) == (not keep):
        raise StetlineError("give either --text N or --draft")
    with open_ws(workspace).session() as session:
        renames.choose(session, slot, None if keep else (pick or 1) - 1, by=by)
        row = ops.get_slot(session, slot)
        click.echo(f"{slot}: {row.status if row is not None else '?'}")


@click.command(name="pin")
@click.argument("slot")
@workspace_option
@by_option
def pin_(slot: str, workspace: Path | None, by: str) -> None:
    """Keep a statement's current text word for word."""
    from stetline import actions

    _act(workspace, actions.pin, slot, by=by)


def _selection_options(fn: Callable[..., Any], yes_help: str = "with a selection") -> Callable[..., Any]:
    for opt in reversed((
        click.option("--entity", metavar="KEY", help="Every statement of this entity (instead of SLOT)."),
        click.option("--topic", metavar="KEY", help="Every statement of this topic (instead of SLOT)."),
        click.option("--kind", type=KIND, metavar="KIND", help="Every statement of this kind (instead of SLOT)."),
        click.option("--yes", is_flag=True, help=f"Do not ask for confirmation ({yes_help})."),
    )):
        fn = opt(fn)
    return fn


def _approve_selection_options(fn: Callable[..., Any]) -> Callable[..., Any]:
    return _selection_options(fn, "with a selection or --all-clean")


def _selection(workspace: Path | None, action: str, entity: str | None, topic: str | None, kind: str | None,
               yes: bool, by: str, text: str | None = None) -> None:
    """Run an action on a selection of statements after confirming how many."""
    from stetline import actions, bulk
    from stetline.store import ops

    ws = open_ws(workspace)
    with ws.session() as session:
        chosen = bulk.plan(action, actions.views(session, ops.SlotFilter(kind=kind, entity=entity, topic=topic)))
        items = [(v.slot.id, v.slot.version) for v in chosen.todo]
    skipped = f"{len(chosen.skipped)} skipped" if chosen.skipped else ""
    if not items:
        click.echo(f"nothing to {action}: no statement matches{f' ({skipped})' if skipped else ''}")
        for view, why in chosen.skipped:
            click.echo(f"skipped {view.slot.id}: {why}")
        return
    if not yes:
        click.confirm(f"{action.capitalize()} {len(items)} statement(s)?{f' ({skipped})' if skipped else ''}",
                      abort=True)
    with ws.session() as session:
        done = bulk.apply(session, action, items, by=by, text=text)
    for view, why in chosen.skipped:
        click.echo(f"skipped {view.slot.id}: {why}")
    click.echo(f"{len(done)} statement(s): {action} done{f'; {skipped}' if skipped else ''}")


@click.command(name="annotate")
@click.argument("args", nargs=-1, required=True, metavar="[SLOT] TEXT")
@_selection_options
@workspace_option
@by_option
def annotate_(args: tuple[str, ...], entity: str | None, topic: str | None, kind: str | None, yes: bool,
              workspace: Path | None, by: str) -> None:
    """Attach a note to one statement (SLOT TEXT) or to a selection (--entity, --topic, --kind and TEXT)."""
    from stetline import actions

    selection = bool(entity or topic or kind)
    if len(args) == 2 and not selection:
        _act(workspace, actions.annotate, args[0], text=args[1], by=by)
    elif len(args) == 1 and selection:
        _selection(workspace, "annotate", entity, topic, kind, yes, by, args[0])
    else:
        raise StetlineError("give SLOT TEXT, or a selection (--entity, --topic, --kind) and TEXT")


@click.command(name="suppress")
@click.argument("slot", required=False)
@click.option("--lift", is_flag=True, help="Put a suppressed statement back.")
@_selection_options
@workspace_option
@by_option
def suppress_(slot: str | None, lift: bool, entity: str | None, topic: str | None, kind: str | None, yes: bool,
              workspace: Path | None, by: str) -> None:
    """Leave a statement out of the publication (or a selection: --entity, --topic, --kind)."""
    from stetline import actions

    selection = bool(entity or topic or kind)
    if slot and selection:
        raise StetlineError("give either a statement or a selection (--entity, --topic, --kind), not both")
    if lift and not slot:
        raise StetlineError("--lift takes one statement")
    if slot:
        _act(workspace, actions.suppress, slot, by=by, lift=lift)
    elif selection:
        _selection(workspace, "suppress", entity, topic, kind, yes, by)
    else:
        raise StetlineError("name a statement, or select some with --entity, --topic or --kind")


@click.command(name="revert")
@click.argument("slot")
@workspace_option
@by_option
def revert_(slot: str, workspace: Path | None, by: str) -> None:
    """Drop a statement's rewrite or pin: the draft shows again."""
    from stetline import actions

    _act(workspace, actions.revert, slot, by=by)


@click.command(name="approve")
@click.argument("slot", required=False)
@click.option("--accept-proposed", is_flag=True, help="Take the proposed text first, then approve.")
@click.option("--confirm-claims", is_flag=True,
              help="Approve a claim-changed statement as it reads, confirming every claim the new data contradict.")
@click.option("--all-clean", is_flag=True, help="Accept every clean proposal of numbers-changed statements.")
@_approve_selection_options
@workspace_option
@by_option
def approve_(slot: str | None, accept_proposed: bool, confirm_claims: bool, all_clean: bool, entity: str | None,
             topic: str | None, kind: str | None, yes: bool, workspace: Path | None, by: str) -> None:
    """Approve a statement, a selection (--entity, --topic, --kind) or every clean proposal (--all-clean).

    A claim-changed statement needs --confirm-claims; a selection skips claim-changed, slot-gone and
    conflicting statements and says how many it skipped.
    """
    from stetline import actions

    selection = bool(entity or topic or kind)
    if sum((bool(slot), selection, all_clean)) > 1:
        raise StetlineError("give one of: a statement, a selection (--entity, --topic, --kind) or --all-clean")
    if (accept_proposed or confirm_claims) and not slot:
        raise StetlineError("--accept-proposed and --confirm-claims take one statement")
    if slot:
        _act(workspace, actions.approve, slot, by=by, accept_proposed=accept_proposed, confirm_claims=confirm_claims)
        return
    if selection:
        _selection(workspace, "approve", entity, topic, kind, yes, by)
        return
    if not all_clean:
        raise StetlineError("name the statement to approve, select some with --entity, --topic or --kind, "
                            "or give --all-clean")
    ws = open_ws(workspace)
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


@click.command(name="worksheet")
@click.option("-o", "--output", type=click.Path(dir_okay=False, path_type=Path), required=True,
              metavar="FILE.xlsx", help="The .xlsx file to write.")
@click.option("--entity", metavar="KEY", help="Only this entity key.")
@click.option("--topic", metavar="KEY", help="Only this topic key.")
@click.option("--kind", type=KIND, metavar="KIND", help="Only this statement kind.")
@workspace_option
def worksheet_(output: Path, entity: str | None, topic: str | None, kind: str | None, workspace: Path | None) -> None:
    """Write a worksheet of statements to edit offline (fill in the "new text" column)."""
    from stetline.store import ops
    from stetline.worksheet import write_worksheet

    with open_ws(workspace).reading() as session:
        n = write_worksheet(session, output, ops.SlotFilter(kind=kind, entity=entity, topic=topic))
    click.echo(f"wrote {output}: {n} statements; fill in 'new text', then run `stetline apply-worksheet {output}`")


@click.command(name="apply-worksheet")
@click.argument("file", type=click.Path(dir_okay=False, exists=True, path_type=Path), metavar="FILE.xlsx")
@workspace_option
@by_option
def apply_worksheet_(file: Path, workspace: Path | None, by: str) -> None:
    """Turn every filled "new text" of a worksheet into a rewrite (stale rows refused)."""
    from stetline.worksheet import apply_worksheet

    with open_ws(workspace).session() as session:
        result = apply_worksheet(session, file, by=by)
    for slot in result.applied:
        click.echo(f"{slot}: rewritten")
    for slot, why in result.refused:
        click.echo(f"refused {slot}: {why}", err=True)
    click.echo(f"{len(result.applied)} applied, {len(result.refused)} refused")


COMMANDS = (status, list_, show, history_, rewrite_, choose_, pin_, annotate_, suppress_, revert_, approve_,
            worksheet_, apply_worksheet_)
