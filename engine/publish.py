"""Publish the statements: what is published, the gate that stops stale text, and Markdown.

Published: for every listed slot, what stetline.printing.printed says (the text layer if it has
one, else the draft, with its notes; nothing for a suppressed or gone slot), in interest order
within each entity (or topic) section. The gate refuses while any slot is in recheck, unless told
to publish them: then each prints the newest text the current data do not contradict, marked.
The other formats (HTML, JSON, CSV, Word) render the same Publication; see stetline.formats.
"""

from __future__ import annotations

import hashlib
from datetime import date
from pathlib import Path

from sqlalchemy.orm import Session

from stetline import charts, nesting, periods
from stetline import settings as settings_mod
from stetline.actions import views
from stetline.errors import StetlineError
from stetline.livefields import LiveFields
from stetline.progress import Progress, no_progress
from stetline.publication import Publication, Statement
from stetline.publish_figures import topic_data
from stetline.slotstatus import house_style, recheck_unrenderable
from stetline.status import Status
from stetline.store import ops
from stetline.timestamps import iso_time


class GateClosed(StetlineError):
    """Publishing is refused: some slots are in recheck (or unapproved, when approval is required)."""


def gather(session: Session, *, sections: str = "entity", allow_recheck: bool = False,
           require_approval: bool = False) -> Publication:
    """Collect what would be published, applying the gate; raise GateClosed listing what blocks."""
    edition = ops.current_edition(session)
    if edition is None:
        raise StetlineError("nothing to publish: load an edition first")
    every = views(session, ops.SlotFilter(include_gone=False), order="interest")
    blocked = [v.slot.id for v in every if v.slot.status == Status.RECHECK]
    unapproved = [v.slot.id for v in every if v.slot.status in (Status.DRAFT, Status.EDITED)]
    problems = []
    if blocked and not allow_recheck:
        problems.append(f"{len(blocked)} statement(s) wait in recheck: " + ", ".join(blocked[:20])
                        + (" …" if len(blocked) > 20 else ""))
    if require_approval and unapproved:
        problems.append(f"{len(unapproved)} statement(s) were never approved: " + ", ".join(unapproved[:20])
                        + (" …" if len(unapproved) > 20 else ""))
    if problems:
        raise GateClosed("publishing refused: " + "; ".join(problems)
                         + ". Resolve them, or publish with --allow-recheck.")
    style, values = house_style(session)
    live = LiveFields(style)
    topics = {t.key: t for t in ops.topic_rows(session)}
    entities = {e.key: e for e in ops.entity_rows(session)}
    warnings: list[str] = []
    waiting: list[tuple[str, str]] = []
    grouped: dict[str, list[Statement]] = {}
    for v in every:
        shown = v.printed(session, live)
        if shown.waiting:
            waiting.append((v.slot.id, shown.reason))
            warnings.append(waiting_warning(v.slot.id, shown.reason))
        if shown.text is None:
            continue
        figure = v.draft.evidence.get("status", {}).get("value") or ""
        period = v.draft.evidence.get("period", {}).get("shown", "")
        caveat = (f"The {periods.period_adjective(period, style.locale)} figure is {figure}."
                  if figure in ("provisional", "estimated") else None)  # "the third-quarter 2025 figure"
        approval = shown.approval
        st = Statement(v.slot.id, v.slot.kind, v.slot.entity, v.slot.topic, shown.status, shown.text,
                       list(shown.notes), caveat, v.slot.interest, shown.reason if shown.waiting else None,
                       v.draft.evidence, shown.written_by, approval.by if approval is not None else None,
                       iso_time(approval.at) if approval is not None else None)
        key = (v.slot.entity if sections != "topic" else v.slot.topic) or ""
        grouped.setdefault(key, []).append(st)
    parents = {k: e.parent for k, e in entities.items()}
    order = (list(topics) if sections == "topic" else nesting.tree_order(parents) if sections == "parent"
             else list(entities))
    heads = {p for k in grouped for p in nesting.ancestors(parents, k)} if sections == "parent" else set()
    out_sections = []
    if "" in grouped:
        out_sections.append(("", "Overview", grouped.pop("")))
    for key in order:
        if key in grouped or key in heads:  # by parent: a parent's heading leads its children, statements or none
            heading = topics[key].label if sections == "topic" else entities[key].name
            if sections == "parent" and parents.get(key):
                heading = f"{heading} ({entities[parents[key]].name})"
            out_sections.append((key, heading, grouped.pop(key, [])))
    sources = {k: t.source for k, t in topics.items() if t.source}
    noun = str(values["entity_noun"])
    return Publication(str(values["title"]), edition.label, date.today().isoformat(), out_sections, warnings, sources,
                       {k: e.name for k, e in entities.items()}, {k: t.label for k, t in topics.items()}, waiting,
                       topic_data(session, style, noun, nesting.nouns_of(str(values["level_nouns"]))), noun, sections)


def waiting_warning(slot_id: str, reason: str) -> str:
    """The warning for a statement published while it waits in recheck (stderr and the web page alike)."""
    return f"{slot_id}: {reason}"




def to_markdown(pub: Publication, layouts_dir: Path | None = None) -> str:
    """Render a publication as a Markdown document (the workspace's layout if it has one)."""
    from stetline import layout  # layout imports this module

    return layout.render(pub, "md", layouts_dir)


def checksum(data: bytes) -> str:
    """The SHA-256 of a published file."""
    return hashlib.sha256(data).hexdigest()


def publish(session: Session, fmt: str, *, by: str, sections: str = "entity", allow_recheck: bool = False,
            require_approval: bool = False, layouts_dir: Path | None = None, chart_dir: Path | None = None,
            progress: Progress = no_progress) -> tuple[bytes, Publication]:
    """Produce a publication in a format and record it as an event with its checksum.

    Charts drawn for it are kept as files in ``chart_dir`` when given (stetline.charts.folder), so
    publishing again draws only the charts whose figures changed.
    """
    from stetline.formats import FORMATS, render  # formats imports this module

    if fmt not in FORMATS:
        raise StetlineError(f"unknown format {fmt!r}; available: " + ", ".join(FORMATS))
    if sections not in ("entity", "topic", "parent"):
        raise StetlineError("sections are by entity, by topic or by parent (entities under their parents)")
    from stetline.accounts import authorize

    authorize(session, by, "publish")
    progress("checking rewrites", 0, None)
    recheck_unrenderable(session, by=by)  # a rewrite that no longer renders waits in recheck
    progress("gathering statements", 0, None)
    pub = gather(session, sections=sections, allow_recheck=allow_recheck, require_approval=require_approval)
    progress("checking numbers", 0, sum(len(statements) for _key, _heading, statements in pub.sections))
    untraced = untraced_numbers(session)
    if untraced and settings_mod.with_defaults(ops.get_settings(session))["untraced_numbers"] == "refuse":
        raise GateClosed(
            f"publishing refused: {len(untraced)} statement(s) hold numbers that match no fact: "
            + "; ".join(f"{slot} ({', '.join(nums)})" for slot, nums in untraced[:20])
            + ". Correct them, or set untraced_numbers to warn."
        )
    pub.warnings += [f"{slot}: untraced number(s) {', '.join(nums)}" for slot, nums in untraced]
    progress(f"writing {fmt}", 0, None)
    with charts.folder(chart_dir):
        data = render(pub, fmt, layouts_dir)
    edition = ops.current_edition(session)
    ops.add_event(session, by, "publish", edition_id=edition.id if edition else None,
                  detail={"format": fmt, "sha256": checksum(data), "warnings": pub.warnings})
    return data, pub


def untraced_numbers(session: Session) -> list[tuple[str, list[str]]]:
    """Every published slot holding typed numbers that match no fact, with those numbers."""
    from stetline.audit import audit

    return [(a.slot, [u.text for u in a.untraced]) for a in audit(session) if a.untraced]
