"""Browsing pages: the entities and topics, each with its statements in interest order, a status
filter, and bulk work on the statements shown."""

from __future__ import annotations

from typing import Any

from flask import Blueprint, abort, render_template, request
from sqlalchemy.orm import Session

from engine import actions
from engine.livefields import LiveFields
from engine.loading import house_style
from engine.store import ops
from webapp.db import session
from webapp.selection import Selection

bp = Blueprint("browse", __name__)


@bp.get("/entities")
def entities() -> str:
    """Every entity with how many of its statements are in each status."""
    s = session()
    return render_template(
        "browse/entities.html", entities=ops.entity_rows(s), counts=ops.status_counts_by(s, "entity"),
        statuses=actions.STATUSES,
    )


@bp.get("/topics")
def topics() -> str:
    """Every topic with how many of its statements are in each status."""
    s = session()
    return render_template(
        "browse/topics.html", topics=ops.topic_rows(s), counts=ops.status_counts_by(s, "topic"),
        statuses=actions.STATUSES,
    )


@bp.get("/entities/<key>")
def entity(key: str) -> str:
    """One entity's statements, most interesting first."""
    s = session()
    row = ops.get_entity(s, key)
    if row is None:
        abort(404, description=f"There is no entity {key!r} in this workspace.")
    return _listing(s, Selection.parse("entity", key, request.args), row.name,
                    f"Group: {row.group}" if row.group else "")


@bp.get("/topics/<key>")
def topic(key: str) -> str:
    """One topic's statements, most interesting first."""
    s = session()
    row = ops.get_topic(s, key)
    if row is None:
        abort(404, description=f"There is no topic {key!r} in this workspace.")
    better = {"higher": "higher is better", "lower": "lower is better"}.get(row.better, "neither direction is better")
    subtitle = " · ".join(x for x in (row.category, row.unit, better) if x)
    return _listing(s, Selection.parse("topic", key, request.args), row.label, subtitle)


def _listing(s: Session, sel: Selection, title: str, subtitle: str) -> str:
    items = sel.views(s)
    every = ops.status_counts_by(s, sel.scope).get(sel.key or "", {})
    return render_template("browse/statements.html", what=sel.scope, title=title, subtitle=subtitle,
                           rows=_rows(s, items), selection=sel, statuses=actions.STATUSES, every=every,
                           total=sum(every.values()))


def _rows(s: Session, items: list[actions.SlotView]) -> list[dict[str, Any]]:
    live = LiveFields(house_style(s)[0])
    return [v.to_json(s, live) for v in items]
