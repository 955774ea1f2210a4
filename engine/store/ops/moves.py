"""Moving human work from one slot to another: renamed and merged entities at a load.

Layers, approvals, comments and events keep their ids and change only the slot they belong to;
nothing is deleted. Dropping stamps ``dropped_at`` as everywhere else.
"""

from __future__ import annotations

from collections.abc import Collection, Sequence
from typing import Any

from sqlalchemy import func, select, update
from sqlalchemy.orm import Session

from stetline.store.models import Approval, Comment, Event, Layer, Slot, utcnow
from stetline.store.ops.bulk import id_chunks, write_many


def entity_slots(session: Session, keys: Collection[str]) -> dict[str, list[tuple[str, str]]]:
    """The slots of these entities as (slot id, kind), by entity key, in slot id order."""
    out: dict[str, list[tuple[str, str]]] = {}
    for chunk in id_chunks(sorted(keys)):
        q = select(Slot.entity, Slot.id, Slot.kind).where(Slot.entity.in_(chunk)).order_by(Slot.id)
        for entity, sid, kind in session.execute(q):
            out.setdefault(str(entity), []).append((sid, kind))
    return out


def comment_counts(session: Session, slot_ids: Sequence[str]) -> dict[str, int]:
    """How many comments each of these slots has (slots without any are left out)."""
    out: dict[str, int] = {}
    for chunk in id_chunks(slot_ids):
        q = select(Comment.slot_id, func.count()).where(Comment.slot_id.in_(chunk)).group_by(Comment.slot_id)
        out.update((sid, int(n)) for sid, n in session.execute(q))
    return out


def move_rows(session: Session, moves: Sequence[tuple[str, str]]) -> None:
    """Give every layer, approval, comment and event of each old slot to its new slot (old, new)."""
    for old, new in moves:
        for model in (Layer, Approval, Comment, Event):
            session.execute(update(model).where(model.slot_id == old).values(slot_id=new))


def write_bases(session: Session, layers: Sequence[tuple[dict[str, Any], int]],
                approvals: Sequence[tuple[dict[str, Any], int]]) -> None:
    """Store new bases of layers and approvals, each given as (basis, id)."""
    write_many(session, Layer, ["basis"], list(layers), where="id")
    write_many(session, Approval, ["basis"], list(approvals), where="id")


def drop_work(session: Session, layer_ids: Collection[int], approval_ids: Collection[int], by: str) -> None:
    """Stamp these layers and approvals as dropped (kept, as every dropped layer is)."""
    now = utcnow()
    for chunk in _int_chunks(layer_ids):
        session.execute(update(Layer).where(Layer.id.in_(chunk)).values(dropped_at=now, dropped_by=by))
    for chunk in _int_chunks(approval_ids):
        session.execute(update(Approval).where(Approval.id.in_(chunk)).values(dropped_at=now))


def layer_authors(session: Session, layer_ids: Collection[int]) -> dict[int, tuple[str, str | None]]:
    """Who put each of these layers on (``by``) and whose words it keeps (``author``), by id."""
    out: dict[int, tuple[str, str | None]] = {}
    for chunk in _int_chunks(layer_ids):
        for lid, by, author in session.execute(select(Layer.id, Layer.by, Layer.author).where(Layer.id.in_(chunk))):
            out[lid] = (by, author)
    return out


def _int_chunks(ids: Collection[int]) -> list[list[int]]:
    ordered = sorted(ids)
    return [ordered[i:i + 500] for i in range(0, len(ordered), 500)]
