"""What a refresh reads and writes: slot states for reconcile, then its decisions in bulk.

A draft row is written only when a slot's text, evidence or claims change.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from sqlalchemy import func, select, text
from sqlalchemy.orm import Session

from stetline.store.models import (
    Approval,
    BreakdownObservation,
    Draft,
    Edition,
    Event,
    Layer,
    Observation,
    Slot,
    utcnow,
)
from stetline.store.ops.bulk import id_chunks, write_many

if TYPE_CHECKING:  # imported where used: `stetline status` never needs drafting (pandas, Jinja2)
    from stetline.drafting import Draft as DraftText
    from stetline.reconcile import Decision, SlotState


def hold_writers(session: Session) -> None:
    """Make every other writer of statements wait until this transaction ends (a load, a redraft).

    On SQLite a writing transaction holds the database's single write lock from its start. On
    PostgreSQL the slot table is locked in EXCLUSIVE mode: reading goes on, but an action, which
    locks its slot's row, waits for the load and then sees what the load wrote, so nothing is
    saved beside a load against the edition it replaces.
    """
    bind = session.get_bind()
    if bind.dialect.name == "postgresql":
        session.execute(text("LOCK TABLE slot IN EXCLUSIVE MODE"))


def slot_states(session: Session) -> dict[str, SlotState]:
    """Every slot's state with its active human work, for reconcile."""
    from stetline.reconcile import Basis, HumanWork, SlotState

    states = {
        sid: SlotState(sid, dig, gone, status, [], version)
        for sid, dig, gone, status, version in session.execute(
            select(Slot.id, Slot.digest, Slot.gone, Slot.status, Slot.version))
    }
    for layer in session.scalars(select(Layer).where(Layer.dropped_at.is_(None)).order_by(Layer.id)):
        states[layer.slot_id].work.append(
            HumanWork(layer.id, layer.type, layer.text, layer.base_text, Basis.from_json(layer.basis))
        )
    for appr in session.scalars(select(Approval).where(Approval.dropped_at.is_(None)).order_by(Approval.id)):
        states[appr.slot_id].work.append(HumanWork(appr.id, "approval", appr.text, None, Basis.from_json(appr.basis)))
    return states


def slots_with_work(session: Session) -> set[str]:
    """The slots that carry an active layer or approval (SlotState.human), without reading the work."""
    layered = select(Layer.slot_id).where(Layer.dropped_at.is_(None))
    approved = select(Approval.slot_id).where(Approval.dropped_at.is_(None))
    return set(session.scalars(layered.union(approved)))


def current_drafts(session: Session, slot_ids: Iterable[str]) -> list[DraftText]:
    """The current draft of each of these slots (slots without one are left out), as drafted."""
    from stetline.drafting import Draft as DraftText

    out: list[DraftText] = []
    q = select(
        Slot.id, Slot.kind, Slot.entity, Slot.topic, Draft.text, Draft.evidence, Draft.claims,
        Draft.interest, Draft.phrasing,
    ).join(Draft, Draft.id == Slot.draft_id)
    for chunk in id_chunks(slot_ids):
        for row in session.execute(q.where(Slot.id.in_(chunk))):
            out.append(DraftText(*row))
    return out


@dataclass
class Applied:
    """What applying a refresh wrote."""

    drafts: int
    slots_new: int
    slots_updated: int


def apply_decisions(
    session: Session, edition_id: int, decisions: Sequence[Decision], drafts: dict[str, DraftText], by: str,
    versions: Mapping[str, int] | None = None,
) -> Applied:
    """Write a refresh's decisions in bulk: new drafts, slot states, rebased human work, events.

    ``versions`` (each slot's version as :func:`slot_versions` or :func:`slot_states` read it, before
    any of a load's writes) lets a load apply its decisions in several calls, a kind at a time,
    without reading every slot's version each time.
    """
    next_id = (session.scalar(select(func.max(Draft.id))) or 0) + 1
    if versions is None:
        versions = slot_versions(session)
    now = utcnow()
    draft_rows: list[tuple[Any, ...]] = []
    new_slots: list[tuple[Any, ...]] = []
    updates_with_draft: list[tuple[Any, ...]] = []
    updates: list[tuple[Any, ...]] = []
    for d in decisions:
        draft = drafts.get(d.slot)
        state = (d.status, d.gone, d.recheck, d.severity, now)
        if d.write_draft and draft is not None:
            draft_rows.append((
                next_id, d.slot, edition_id, draft.text, draft.evidence_json, draft.claims_json, draft.phrasing,
                draft.interest,
            ))
            written: tuple[Any, ...] = (next_id, draft.digest, draft.interest)
            next_id += 1
        else:
            written = ()
        if d.slot in versions:
            version = versions[d.slot] + 1
            if written:
                updates_with_draft.append(state + written + (version, d.slot))
            else:
                updates.append(state + (version, d.slot))
        else:
            assert draft is not None
            new_slots.append(
                (d.slot, draft.kind, draft.entity, draft.topic) + state + (written or (None, "", 0.0)) + (1,)
            )
    state_cols = ["status", "gone", "recheck", "severity", "updated_at"]
    draft_cols = ["draft_id", "digest", "interest"]
    # slots first (drafts point at them); a new slot's draft_id refers to a draft inserted next
    write_many(session, Slot, ["id", "kind", "entity", "topic"] + state_cols + draft_cols + ["version"], new_slots)
    write_many(session, Draft, ["id", "slot_id", "edition_id", "text", "evidence", "claims", "phrasing", "interest"],
                draft_rows, serialised=frozenset({"evidence", "claims"}))
    write_many(session, Slot, state_cols + draft_cols + ["version"], updates_with_draft, where="id")
    write_many(session, Slot, state_cols + ["version"], updates, where="id")
    if session.bind is not None and session.bind.dialect.name == "postgresql" and draft_rows:
        session.execute(text("SELECT setval(pg_get_serial_sequence('draft', 'id'), (SELECT MAX(id) FROM draft))"))
    _rebase(session, decisions, drafts)
    events = [
        (now, by, "recheck", d.slot, edition_id, None, None, {"reasons": d.reasons})
        for d in decisions if d.recheck
    ]
    write_many(session, Event, ["at", "by", "action", "slot_id", "edition_id", "before", "after", "detail"], events)
    return Applied(len(draft_rows), len(new_slots), len(updates_with_draft) + len(updates))


def slot_versions(session: Session) -> dict[str, int]:
    """Every slot's version, by slot id."""
    return dict(session.execute(select(Slot.id, Slot.version)).all())  # type: ignore[arg-type]


def _rebase(session: Session, decisions: Iterable[Decision], drafts: dict[str, DraftText]) -> None:
    """Point the human work a decision carries over at its slot's new basis."""
    from stetline.reconcile import Basis

    layers: list[tuple[Any, ...]] = []
    approvals: list[tuple[Any, ...]] = []
    for d in decisions:
        if not d.rebase:
            continue
        draft = drafts.get(d.slot)
        if draft is None:
            continue
        basis = Basis.of(draft).to_json()
        for w in d.rebase:
            (approvals if w.type == "approval" else layers).append((basis, w.id))
    write_many(session, Layer, ["basis"], layers, where="id")
    write_many(session, Approval, ["basis"], approvals, where="id")


def table_counts(session: Session) -> dict[str, int]:
    """Row counts of the tables a refresh may write (for checks and benchmarks)."""
    out = {}
    for model in (Edition, Observation, BreakdownObservation, Slot, Draft, Layer, Approval, Event):
        out[model.__tablename__] = int(session.scalar(select(func.count()).select_from(model)) or 0)
    return out
