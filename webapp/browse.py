"""Browsing pages: the entities and topics, each with its statements in interest order, a status
filter, and bulk work on the statements shown.

A page's statements are grouped as a report reads: an entity's by topic category (its profile
first), a topic's into the topic as a whole (the roundup) and its entities (the blurbs). Part
statements (standing, change, trend; leaders, movement), when the workspace drafts them, fold
beneath the blurb or roundup they are part of when it is on the same page. Each page is still read
with LIMIT and OFFSET in interest order; the grouping only arranges the page's rows."""

from __future__ import annotations

from typing import Any

from flask import Blueprint, abort, render_template, request
from sqlalchemy.orm import Session

from stetline import actions, nesting, words
from stetline.kinds import blurb, roundup
from stetline.livefields import LiveFields
from stetline.loading import house_style
from stetline.status import Status
from stetline.store import ops
from stetline.web.db import session
from stetline.web.paging import current_page
from stetline.web.selection import Selection
from stetline.web.wording import entity_noun, entity_nouns

bp = Blueprint("browse", __name__)


ENTITY_SORTS = {"name": "name", "group": "group", "recheck": "recheck"}
TOPIC_SORTS = {"label": "label", "category": "category", "recheck": "recheck"}


def _sorted_filtered(rows: list[Any], counts: dict[str, dict[str, int]], fields: tuple[str, ...],
                     sorts: dict[str, str], default: str) -> tuple[list[Any], str, str]:
    """Filter rows by the words of ?q= in any field, then sort by ?sort= (recheck: most waiting first)."""
    q = (request.args.get("q") or "").strip().lower()[:100]
    sort = request.args.get("sort") or default
    sort = sort if sort in sorts else default
    if q:
        rows = [r for r in rows if all(any(w in str(getattr(r, f) or "").lower() for f in fields) for w in q.split())]
    if sort == "recheck":
        rows = sorted(rows, key=lambda r: (-counts.get(r.key, {}).get(Status.RECHECK, 0),
                                           str(getattr(r, fields[0])).lower()))
    else:
        rows = sorted(rows, key=lambda r: (str(getattr(r, sort) or "").lower(), str(getattr(r, fields[0])).lower()))
    return rows, q, sort


@bp.get("/entities")
def entities() -> str:
    """Every entity with how many of its statements are in each status; sortable and filterable."""
    s = session()
    counts = ops.status_counts_by(s, "entity")
    every = ops.entity_rows(s)
    rows, q, sort = _sorted_filtered(every, counts, ("name", "group", "key"), ENTITY_SORTS, "name")
    names = {e.key: e.name for e in every}
    return render_template("browse/entities.html", entities=rows, counts=counts, statuses=actions.STATUSES,
                           q=q, sort=sort, parent_names=names, nested=any(e.parent for e in every))


@bp.get("/topics")
def topics() -> str:
    """Every topic with how many of its statements are in each status; sortable and filterable."""
    s = session()
    counts = ops.status_counts_by(s, "topic")
    rows, q, sort = _sorted_filtered(ops.topic_rows(s), counts, ("label", "category", "key", "unit"), TOPIC_SORTS,
                                     "label")
    return render_template("browse/topics.html", topics=rows, counts=counts, statuses=actions.STATUSES,
                           q=q, sort=sort)


@bp.get("/entities/<key>")
def entity(key: str) -> str:
    """One entity's statements, most interesting first."""
    s = session()
    row = ops.get_entity(s, key)
    if row is None:
        abort(404, description=f"There is no entity {key!r} in this workspace.")
    rows = ops.entity_rows(s)
    parents = {e.key: e.parent for e in rows}
    names = {e.key: e.name for e in rows}
    up = [(k, names[k]) for k in reversed(nesting.ancestors(parents, key))]  # top first, for the breadcrumb
    down = [(e.key, e.name) for e in rows if e.parent == key]
    return _listing(s, Selection.parse("entity", key, request.args), row.name,
                    f"Group: {row.group}" if row.group else "", up=up, down=down)


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


def _listing(s: Session, sel: Selection, title: str, subtitle: str, **nav: Any) -> str:
    every = ops.status_counts_of(s, sel.scope, sel.key or "")
    status = sel.filters.get("status")
    page = current_page(every.get(status, 0) if status else sum(every.values()))
    items = sel.views(s, limit=page.size, offset=page.offset)
    rows = _rows(s, items)
    return render_template("browse/statements.html", what=sel.scope, title=title, subtitle=subtitle,
                           rows=rows, groups=_groups(s, sel.scope, rows), selection=sel, statuses=actions.STATUSES,
                           every=every, total=sum(every.values()), page=page, up=nav.get("up", []),
                           down=nav.get("down", []))


#: the statement each part kind folds beneath: its slot id from the part's entity and topic
_WHOLE = {**{k: blurb.KIND for k in blurb.PARTS}, **{k: roundup.KIND for k in roundup.PARTS}}


def _whole_of(row: dict[str, Any]) -> str | None:
    whole = _WHOLE.get(row["kind"])
    if whole is None:
        return None
    return f"{whole}/{row['entity']}/{row['topic']}" if row["entity"] else f"{whole}/{row['topic']}"


def _groups(s: Session, scope: str, rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    """The page's rows in headed groups, interest order kept within each; parts beneath their whole."""
    on_page = {r["slot"]: r for r in rows}
    for r in rows:
        r["parts"] = []
    shown: list[dict[str, Any]] = []
    for r in rows:
        whole = on_page.get(_whole_of(r) or "")
        if whole is not None:
            whole["parts"].append(r)
        else:
            shown.append(r)
    if scope == "entity":
        topics = ops.topic_rows(s)
        category = {t.key: t.category or "Other indicators" for t in topics}
        order = ["Overall", *dict.fromkeys(category[t.key] for t in topics)]

        def heading(r: dict[str, Any]) -> str:
            return category.get(r["topic"], "Other indicators") if r["topic"] else "Overall"
    else:  # the entities under their level's noun, top level first: "Districts", then "Towns"
        parents = {e.key: e.parent for e in ops.entity_rows(s)}
        nouns = nesting.nouns_of(str(house_style(s)[1]["level_nouns"]))
        depths = sorted({len(nesting.ancestors(parents, r["entity"])) for r in shown if r["entity"]})
        each = {d: words.capitalise(words.noun_plural(nesting.level_noun(nouns, d, entity_noun()), 2))
                for d in depths} if nouns else {d: entity_nouns() for d in depths}
        order = ["The topic as a whole", *dict.fromkeys(each.values())]

        def heading(r: dict[str, Any]) -> str:
            return each[len(nesting.ancestors(parents, r["entity"]))] if r["entity"] else "The topic as a whole"
    groups: dict[str, list[dict[str, Any]]] = {}
    for r in shown:
        groups.setdefault(heading(r), []).append(r)
    known = [h for h in order if h in groups] + [h for h in groups if h not in order]
    return [{"heading": h, "rows": groups[h]} for h in known]


def _rows(s: Session, items: list[actions.SlotView]) -> list[dict[str, Any]]:
    live = LiveFields(house_style(s)[0])
    return [v.to_json(s, live) for v in items]
