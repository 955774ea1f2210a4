"""Search the texts of listed slots: current drafts, active rewrites, pins and notes, comments."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Any

from sqlalchemy import DateTime, String, case, cast, func, literal, null, select, union_all
from sqlalchemy.orm import Session

from stetline.store.models import Comment, Draft, Layer, Slot
from stetline.store.ops.listing import listed

#: hits per page
SEARCH_LIMIT = 50
#: words of a query that count (the rest are ignored)
MAX_SEARCH_TERMS = 10


@dataclass
class SearchHit:
    """One text that holds every search term: a slot's draft, a layer's text, or a comment."""

    slot_id: str
    status: str
    where: str  # draft, rewrite, pin, note, comment or send-back
    text: str
    by: str | None
    at: datetime | None


@dataclass
class SearchPage:
    """One page of search results and how many there are in all."""

    hits: list[SearchHit]
    total: int
    offset: int
    limit: int


def search_terms(query: str) -> list[str]:
    """The words of a search query (at most MAX_SEARCH_TERMS)."""
    return query.split()[:MAX_SEARCH_TERMS]


def _like(term: str) -> str:
    """A LIKE pattern matching the term anywhere, its wildcards taken literally."""
    return "%" + term.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_") + "%"


def search(session: Session, query: str, *, limit: int = SEARCH_LIMIT, offset: int = 0) -> SearchPage:
    """Texts holding every word of the query (case-insensitive): current drafts, the text of
    active rewrites, pins and notes, and comments; of listed slots, by slot."""
    terms = search_terms(query)
    if not terms:
        return SearchPage([], 0, offset, limit)

    def matching(column: Any) -> list[Any]:
        return [column.ilike(_like(t), escape="\\") for t in terms]

    no_by, no_at = cast(null(), String(100)), cast(null(), DateTime())
    drafts = (
        select(Slot.id.label("slot_id"), literal("draft", String(20)).label("place"), Draft.text.label("text"),
               no_by.label("by"), no_at.label("at"), literal(0).label("source"), Draft.id.label("row"))
        .join(Draft, Draft.id == Slot.draft_id).where(*matching(Draft.text))
    )
    layers = (
        select(Layer.slot_id, case((Layer.type == "annotate", "note"), else_=Layer.type), Layer.text,
               Layer.by, Layer.at, literal(1), Layer.id)
        .where(Layer.dropped_at.is_(None), Layer.text.is_not(None),
               Layer.type.in_(("rewrite", "pin", "annotate")), *matching(Layer.text))
    )
    comments = select(Comment.slot_id, Comment.kind, Comment.text, Comment.by, Comment.at, literal(2),
                      Comment.id).where(*matching(Comment.text))
    found = union_all(drafts, layers, comments).subquery()
    base = select(found, Slot.status).join(Slot, Slot.id == found.c.slot_id).where(listed())
    total = int(session.scalar(select(func.count()).select_from(base.subquery())) or 0)
    rows = session.execute(
        base.order_by(found.c.slot_id, found.c.source, found.c.row).limit(limit).offset(offset)
    ).all()
    hits = [SearchHit(r.slot_id, r.status, r.place, r.text, r.by, r.at) for r in rows]
    return SearchPage(hits, total, offset, limit)
