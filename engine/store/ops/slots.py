"""A slot, its current draft, its layers and approvals: read one or many, add, drop.

Layers and approvals are never deleted: dropping stamps ``dropped_at``.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from sqlalchemy import select
from sqlalchemy.orm import Session

from stetline.store.models import Approval, Draft, Layer, Slot, utcnow
from stetline.store.ops.bulk import id_chunks


def get_slot(session: Session, slot_id: str, *, lock: bool = False) -> Slot | None:
    """A slot by id."""
    q = select(Slot).where(Slot.id == slot_id)
    if lock:
        q = q.with_for_update()
    return session.scalars(q).first()


def get_draft(session: Session, draft_id: int | None) -> Draft | None:
    """A draft by id."""
    return None if draft_id is None else session.get(Draft, draft_id)


def active_layers(session: Session, slot_id: str) -> list[Layer]:
    """A slot's layers that are not dropped, oldest first."""
    return list(session.scalars(
        select(Layer).where(Layer.slot_id == slot_id, Layer.dropped_at.is_(None)).order_by(Layer.id)
    ))


def text_layer_history(session: Session, slot_id: str) -> list[Layer]:
    """Every rewrite and pin a slot ever had, dropped ones included, oldest first."""
    return list(session.scalars(
        select(Layer).where(Layer.slot_id == slot_id, Layer.type.in_(("rewrite", "pin"))).order_by(Layer.id)
    ))


def active_approval(session: Session, slot_id: str) -> Approval | None:
    """A slot's approval that is not dropped."""
    return session.scalars(
        select(Approval).where(Approval.slot_id == slot_id, Approval.dropped_at.is_(None)).order_by(Approval.id.desc())
    ).first()


def last_approval(session: Session, slot_id: str) -> Approval | None:
    """The most recent approval of a slot, dropped or not."""
    return session.scalars(select(Approval).where(Approval.slot_id == slot_id).order_by(Approval.id.desc())).first()


def add_layer(session: Session, slot_id: str, type_: str, text_: str | None, base_text: str | None,
              basis: dict[str, Any], by: str) -> Layer:
    """Add a layer to a slot."""
    layer = Layer(slot_id=slot_id, type=type_, text=text_, base_text=base_text, basis=basis, by=by)
    session.add(layer)
    return layer


def drop(session: Session, row: Layer | Approval, by: str) -> None:
    """Drop a layer or an approval (kept, stamped as dropped)."""
    row.dropped_at = utcnow()
    if isinstance(row, Layer):
        row.dropped_by = by


def add_approval(session: Session, slot_id: str, text_: str, basis: dict[str, Any], by: str) -> Approval:
    """Record an approval of a slot's text."""
    appr = Approval(slot_id=slot_id, text=text_, basis=basis, by=by)
    session.add(appr)
    return appr


def layers_for(session: Session, slot_ids: Sequence[str]) -> dict[str, list[Layer]]:
    """Active layers of many slots, by slot id."""
    out: dict[str, list[Layer]] = {}
    for chunk in id_chunks(slot_ids):
        for layer in session.scalars(
            select(Layer).where(Layer.slot_id.in_(chunk), Layer.dropped_at.is_(None)).order_by(Layer.id)
        ):
            out.setdefault(layer.slot_id, []).append(layer)
    return out


def approvals_for(session: Session, slot_ids: Sequence[str]) -> dict[str, Approval]:
    """The active approval of each of these slots that has one, by slot id."""
    out: dict[str, Approval] = {}
    for chunk in id_chunks(slot_ids):
        q = select(Approval).where(Approval.slot_id.in_(chunk), Approval.dropped_at.is_(None))
        out.update((a.slot_id, a) for a in session.scalars(q))
    return out


def all_active_layers(session: Session) -> list[Layer]:
    """Every active layer of the workspace."""
    return list(session.scalars(select(Layer).where(Layer.dropped_at.is_(None)).order_by(Layer.id)))


def all_active_approvals(session: Session) -> list[Approval]:
    """Every active approval of the workspace."""
    return list(session.scalars(select(Approval).where(Approval.dropped_at.is_(None)).order_by(Approval.id)))


def slot_statuses(session: Session, slot_ids: Sequence[str]) -> dict[str, tuple[str, Any]]:
    """Status and recheck of many slots."""
    out: dict[str, tuple[str, Any]] = {}
    for chunk in id_chunks(slot_ids):
        q = select(Slot.id, Slot.status, Slot.recheck).where(Slot.id.in_(chunk))
        for sid, status, recheck in session.execute(q):
            out[sid] = (status, recheck)
    return out
