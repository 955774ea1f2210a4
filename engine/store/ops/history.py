"""The workspace's history: events, comment threads, and drafts and layers as of an edition."""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from stetline.store.models import Comment, Draft, Edition, Event, Layer, Slot


def add_event(
    session: Session, by: str, action: str, slot: str | None = None, *, edition_id: int | None = None,
    before: str | None = None, after: str | None = None, detail: dict[str, Any] | None = None,
) -> Event:
    """Record an event."""
    event = Event(by=by, action=action, slot_id=slot, edition_id=edition_id, before=before, after=after,
                  detail=detail or {})
    session.add(event)
    return event


def events_for(session: Session, slot_id: str) -> list[Event]:
    """A slot's events, oldest first."""
    return list(session.scalars(select(Event).where(Event.slot_id == slot_id).order_by(Event.id)))


def recent_events(session: Session, limit: int = 100) -> list[Event]:
    """The workspace's most recent events, newest first."""
    return list(session.scalars(select(Event).order_by(Event.id.desc()).limit(limit)))


def events_by_action(session: Session, action: str, limit: int = 20) -> list[Event]:
    """The most recent events of one action, newest first."""
    return list(session.scalars(select(Event).where(Event.action == action).order_by(Event.id.desc()).limit(limit)))


def latest_event(session: Session, actions: Sequence[str]) -> Event | None:
    """The most recent event of any of these actions."""
    return session.scalars(select(Event).where(Event.action.in_(actions)).order_by(Event.id.desc()).limit(1)).first()


def first_edition_of(session: Session, slot_id: str) -> Edition | None:
    """The edition in which a slot was first drafted (None for an unknown slot)."""
    first = select(func.min(Draft.edition_id)).where(Draft.slot_id == slot_id).scalar_subquery()
    return session.scalars(select(Edition).where(Edition.id == first)).first()


def events_after(session: Session, action: str, after_id: int | None) -> list[Event]:
    """Events of one action recorded after an event id (all of them when None), oldest first."""
    q = select(Event).where(Event.action == action)
    if after_id is not None:
        q = q.where(Event.id > after_id)
    return list(session.scalars(q.order_by(Event.id)))


COMMENT_KINDS = ("comment", "send-back")


def add_comment(session: Session, slot_id: str, by: str, text_: str, kind: str = "comment") -> Comment:
    """Add a comment to a slot's thread."""
    if kind not in COMMENT_KINDS:
        raise ValueError(f"a comment is one of {', '.join(COMMENT_KINDS)}, not {kind!r}")
    row = Comment(slot_id=slot_id, by=by, text=text_, kind=kind)
    session.add(row)
    return row


def comments_for(session: Session, slot_id: str) -> list[Comment]:
    """A slot's thread, oldest first."""
    return list(session.scalars(select(Comment).where(Comment.slot_id == slot_id).order_by(Comment.id)))


def drafts_as_of(session: Session, edition_id: int) -> dict[str, Draft]:
    """Each slot's latest draft written at or before an edition."""
    latest = (
        select(Draft.slot_id, func.max(Draft.id).label("id"))
        .where(Draft.edition_id <= edition_id).group_by(Draft.slot_id).subquery()
    )
    rows = session.scalars(select(Draft).join(latest, Draft.id == latest.c.id))
    return {d.slot_id: d for d in rows}


def gone_as_of(session: Session, edition_id: int) -> set[str]:
    """Slots that had no draft in an edition's load because they no longer applied.

    A slot is gone at an edition when it is gone now and its latest draft is older than that
    edition (drafts are rewritten whenever a slot is drafted with any change).
    """
    latest = select(Draft.slot_id, func.max(Draft.edition_id).label("edition")).group_by(Draft.slot_id).subquery()
    q = select(Slot.id).join(latest, latest.c.slot_id == Slot.id).where(
        Slot.gone.is_(True), latest.c.edition < edition_id
    )
    return set(session.scalars(q))


def moves_between(session: Session, after_edition_id: int, to_edition_id: int) -> dict[str, str]:
    """Where each slot moved at the loads after one edition up to another (renamed and merged entities):
    old slot id → the slot id it ends as, a move at a later load followed on."""
    q = select(Event.before, Event.after).where(
        Event.action == "move", Event.edition_id > after_edition_id, Event.edition_id <= to_edition_id)
    out: dict[str, str] = {}
    for old, new in session.execute(q.order_by(Event.id)):
        if old is None or new is None:
            continue
        for earlier, target in out.items():
            if target == old:
                out[earlier] = new
        out[old] = new
    return out


def layer_types_by_slot(session: Session, before_edition_id: int) -> dict[str, list[str]]:
    """Active layers made before an edition was loaded, as the list of their types per slot."""
    loaded = session.scalar(select(Edition.loaded_at).where(Edition.id == before_edition_id))
    q = select(Layer.slot_id, Layer.type).where(Layer.dropped_at.is_(None))
    if loaded is not None:
        q = q.where(Layer.at < loaded)
    out: dict[str, list[str]] = {}
    for slot_id, type_ in session.execute(q.order_by(Layer.id)):
        out.setdefault(slot_id, []).append(type_)
    return out
