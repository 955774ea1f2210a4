"""Bulk operations and queries on the workspace database; the session belongs to the caller.

Writes are bulk and touch only rows that changed: observations are versioned by edition, a
draft row is written only when a slot's text, evidence or claims change, and layers and
approvals are never deleted (dropping stamps ``dropped_at``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Iterable, Sequence

import pandas as pd
from sqlalchemy import func, select, text, update
from sqlalchemy.orm import Session

from engine.drafting import Draft as DraftText
from engine.reconcile import Basis, Decision, HumanWork, SlotState
from engine.store.models import (
    Approval, Draft, Edition, Entity, Event, Layer, Observation, Setting, Slot, Topic, utcnow,
)

CHUNK = 20_000


# -- settings -------------------------------------------------------------------------------

def get_settings(session: Session) -> dict[str, Any]:
    """Every stored setting (without defaults)."""
    return {s.key: s.value for s in session.scalars(select(Setting))}


def put_setting(session: Session, key: str, value: Any) -> None:
    """Store a setting."""
    row = session.get(Setting, key)
    if row is None:
        session.add(Setting(key=key, value=value))
    else:
        row.value = value


# -- editions and metadata ------------------------------------------------------------------

def current_edition(session: Session) -> Edition | None:
    """The newest edition, or None before the first load."""
    return session.scalars(select(Edition).order_by(Edition.id.desc()).limit(1)).first()


def editions(session: Session) -> list[Edition]:
    """Every edition, oldest first."""
    return list(session.scalars(select(Edition).order_by(Edition.id)))


def edition_by_label(session: Session, label: str) -> Edition | None:
    """The edition with a label."""
    return session.scalars(select(Edition).where(Edition.label == label)).first()


def label_taken(session: Session, label: str) -> bool:
    """True when an edition already has this label."""
    return edition_by_label(session, label) is not None


def topics_frame(session: Session) -> pd.DataFrame | None:
    """The stored topic metadata as a frame shaped like engine.dataset's, or None if empty."""
    rows = session.scalars(select(Topic).order_by(Topic.position)).all()
    if not rows:
        return None
    return pd.DataFrame([{
        "topic": r.key, "label": r.label, "unit": r.unit, "better": r.better,
        "decimals": r.decimals, "category": r.category,
        "target": float("nan") if r.target is None else r.target,
        "weight": r.weight, "source": r.source, "position": r.position,
    } for r in rows]).astype({"target": "float64", "weight": "float64", "decimals": "int64"})


def entities_frame(session: Session) -> pd.DataFrame | None:
    """The stored entity metadata as a frame, or None if empty."""
    rows = session.scalars(select(Entity).order_by(Entity.position)).all()
    if not rows:
        return None
    return pd.DataFrame([{"entity": r.key, "name": r.name, "group": r.group, "position": r.position} for r in rows])


def replace_metadata(session: Session, topics: pd.DataFrame, entities: pd.DataFrame) -> None:
    """Store the metadata in force (rows not in the frames are kept: nothing is deleted)."""
    existing_t = {t.key: t for t in session.scalars(select(Topic))}
    for r in topics.itertuples(index=False):
        values = dict(
            label=r.label, unit=r.unit, better=r.better, decimals=int(r.decimals), category=r.category,
            target=None if pd.isna(r.target) else float(r.target), weight=float(r.weight),
            source=r.source, position=int(r.position),
        )
        row = existing_t.get(r.topic)
        if row is None:
            session.add(Topic(key=r.topic, **values))
        else:
            for k, v in values.items():
                if getattr(row, k) != v:
                    setattr(row, k, v)
    existing_e = {e.key: e for e in session.scalars(select(Entity))}
    for r in entities.itertuples(index=False):
        values = dict(name=r.name, group=r.group, position=int(r.position))
        row = existing_e.get(r.entity)
        if row is None:
            session.add(Entity(key=r.entity, **values))
        else:
            for k, v in values.items():
                if getattr(row, k) != v:
                    setattr(row, k, v)
    session.flush()


# -- observations ---------------------------------------------------------------------------

OBS_KEY = ["entity", "topic", "period"]


def observations_frame(session: Session, edition_id: int | None = None) -> pd.DataFrame:
    """The observations valid in an edition (default: the current ones)."""
    q = select(
        Observation.id, Observation.entity, Observation.topic, Observation.period,
        Observation.value, Observation.margin, Observation.status,
    )
    if edition_id is None:
        q = q.where(Observation.valid_to.is_(None))
    else:
        q = q.where(Observation.valid_from <= edition_id).where(
            (Observation.valid_to.is_(None)) | (Observation.valid_to > edition_id)
        )
    rows = session.execute(q).all()
    frame = pd.DataFrame(rows, columns=["id", "entity", "topic", "period", "value", "margin", "status"])
    return frame.astype({"value": "float64", "margin": "float64"})


def store_observations(session: Session, edition_id: int, observations: pd.DataFrame) -> dict[str, int]:
    """Version the observations: close rows that changed or left, insert new and changed rows."""
    old = observations_frame(session)
    new = observations[["entity", "topic", "period", "value", "margin", "status"]]
    merged = new.merge(old, on=OBS_KEY, how="outer", suffixes=("", "_old"), indicator=True)

    def same(a: pd.Series, b: pd.Series) -> pd.Series:
        return (a == b) | (a.isna() & b.isna())

    both = merged["_merge"] == "both"
    unchanged = both & same(merged["value"], merged["value_old"]) & same(merged["margin"], merged["margin_old"]) & (
        merged["status"] == merged["status_old"]
    )
    to_close = merged.loc[(merged["_merge"] == "right_only") | (both & ~unchanged), "id"].dropna().astype("int64")
    to_insert = merged.loc[(merged["_merge"] == "left_only") | (both & ~unchanged), ["entity", "topic", "period", "value", "margin", "status"]]
    ids = to_close.tolist()
    for start in range(0, len(ids), CHUNK):
        session.execute(update(Observation), [{"id": i, "valid_to": edition_id} for i in ids[start:start + CHUNK]])
    records = [
        {
            "entity": e, "topic": t, "period": p,
            "value": None if pd.isna(v) else float(v), "margin": None if pd.isna(m) else float(m),
            "status": s, "valid_from": edition_id, "valid_to": None,
        }
        for e, t, p, v, m, s in to_insert.itertuples(index=False, name=None)
    ]
    _bulk_insert(session, Observation, records)
    return {"closed": len(ids), "inserted": len(records)}


def _bulk_insert(session: Session, model: type, records: list[dict[str, Any]]) -> None:
    from sqlalchemy import insert

    for start in range(0, len(records), CHUNK):
        session.execute(insert(model), records[start:start + CHUNK])


# -- slot states for reconcile --------------------------------------------------------------

def slot_states(session: Session) -> dict[str, SlotState]:
    """Every slot's state with its active human work, for reconcile."""
    states = {
        sid: SlotState(sid, dig, gone, status)
        for sid, dig, gone, status in session.execute(select(Slot.id, Slot.digest, Slot.gone, Slot.status))
    }
    for layer in session.scalars(select(Layer).where(Layer.dropped_at.is_(None)).order_by(Layer.id)):
        states[layer.slot_id].work.append(
            HumanWork(layer.id, layer.type, layer.text, layer.base_text, Basis.from_json(layer.basis))
        )
    for appr in session.scalars(select(Approval).where(Approval.dropped_at.is_(None)).order_by(Approval.id)):
        states[appr.slot_id].work.append(HumanWork(appr.id, "approval", appr.text, None, Basis.from_json(appr.basis)))
    return states


@dataclass
class Applied:
    """What applying a refresh wrote."""

    drafts: int
    slots_new: int
    slots_updated: int


def apply_decisions(
    session: Session, edition_id: int, decisions: Sequence[Decision], drafts: dict[str, DraftText], by: str,
) -> Applied:
    """Write a refresh's decisions in bulk: new drafts, slot states, rebased human work, events."""
    from sqlalchemy import insert

    next_id = (session.scalar(select(func.max(Draft.id))) or 0) + 1
    existing = set(session.scalars(select(Slot.id)))
    now = utcnow()
    draft_rows: list[dict[str, Any]] = []
    new_slots: list[dict[str, Any]] = []
    slot_updates: list[dict[str, Any]] = []
    versions = dict(session.execute(select(Slot.id, Slot.version)).all()) if existing else {}
    for d in decisions:
        draft = drafts.get(d.slot)
        row: dict[str, Any] = {
            "status": d.status, "gone": d.gone, "recheck": d.recheck, "severity": d.severity, "updated_at": now,
        }
        if d.write_draft and draft is not None:
            draft_rows.append({
                "id": next_id, "slot_id": d.slot, "edition_id": edition_id, "text": draft.text,
                "evidence": draft.evidence, "claims": draft.claims, "phrasing": draft.phrasing,
                "interest": draft.interest,
            })
            row.update(draft_id=next_id, digest=draft.digest, interest=draft.interest)
            next_id += 1
        if d.slot in existing:
            row["id"] = d.slot
            row["version"] = versions.get(d.slot, 1) + 1
            slot_updates.append(row)
        else:
            assert draft is not None
            row.update(id=d.slot, kind=draft.kind, entity=draft.entity, topic=draft.topic, version=1)
            new_slots.append(row)
    # slots first (drafts point at them); a new slot's draft_id refers to a draft inserted next
    _bulk_insert(session, Slot, new_slots)
    _bulk_insert(session, Draft, draft_rows)
    for start in range(0, len(slot_updates), CHUNK):
        chunk = slot_updates[start:start + CHUNK]
        by_keys: dict[tuple[str, ...], list[dict[str, Any]]] = {}
        for r in chunk:
            by_keys.setdefault(tuple(sorted(r)), []).append(r)
        for rows in by_keys.values():
            session.execute(update(Slot), rows)
    if session.bind is not None and session.bind.dialect.name == "postgresql" and draft_rows:
        session.execute(text("SELECT setval(pg_get_serial_sequence('draft', 'id'), (SELECT MAX(id) FROM draft))"))
    _rebase(session, decisions, drafts)
    events = [
        {"at": now, "by": by, "action": "recheck", "slot_id": d.slot, "edition_id": edition_id,
         "before": None, "after": None, "detail": {"reasons": d.reasons}}
        for d in decisions if d.recheck
    ]
    _bulk_insert(session, Event, events)
    return Applied(len(draft_rows), len(new_slots), len(slot_updates))


def _rebase(session: Session, decisions: Iterable[Decision], drafts: dict[str, DraftText]) -> None:
    layers, approvals = [], []
    for d in decisions:
        draft = drafts.get(d.slot)
        if draft is None:
            continue
        basis = Basis.of(draft).to_json()
        for w in d.rebase:
            (approvals if w.type == "approval" else layers).append({"id": w.id, "basis": basis})
    if layers:
        session.execute(update(Layer), layers)
    if approvals:
        session.execute(update(Approval), approvals)


def add_event(
    session: Session, by: str, action: str, slot: str | None = None, *, edition_id: int | None = None,
    before: str | None = None, after: str | None = None, detail: dict[str, Any] | None = None,
) -> Event:
    """Record an event."""
    event = Event(by=by, action=action, slot_id=slot, edition_id=edition_id, before=before, after=after, detail=detail or {})
    session.add(event)
    return event


# -- slots, layers and approvals ------------------------------------------------------------

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


def events_for(session: Session, slot_id: str) -> list[Event]:
    """A slot's events, oldest first."""
    return list(session.scalars(select(Event).where(Event.slot_id == slot_id).order_by(Event.id)))


def recent_events(session: Session, limit: int = 100) -> list[Event]:
    """The workspace's most recent events, newest first."""
    return list(session.scalars(select(Event).order_by(Event.id.desc()).limit(limit)))


# -- listing --------------------------------------------------------------------------------

@dataclass
class SlotFilter:
    """Which slots to list."""

    kind: str | None = None
    entity: str | None = None
    topic: str | None = None
    status: str | None = None
    reason: str | None = None
    include_gone: bool = False


def list_slots(session: Session, f: SlotFilter, *, limit: int | None = None, offset: int = 0,
               order: str = "id") -> list[tuple[Slot, Draft | None]]:
    """Slots with their current drafts, filtered; ordered by id, or by interest or severity."""
    q = select(Slot, Draft).outerjoin(Draft, Draft.id == Slot.draft_id)
    q = _filtered(q, f)
    if order == "interest":
        q = q.order_by(Slot.interest.desc(), Slot.id)
    elif order == "severity":
        q = q.order_by(Slot.severity.desc(), Slot.id)
    else:
        q = q.order_by(Slot.id)
    if f.reason:
        # the reasons live in the slot's recheck JSON: filtered here, before paging
        rows = [(s, d) for s, d in session.execute(q).all() if f.reason in (s.recheck or {}).get("reasons", [])]
        return rows[offset:] if limit is None else rows[offset:offset + limit]
    if limit is not None:
        q = q.limit(limit).offset(offset)
    return [(s, d) for s, d in session.execute(q).all()]


def _filtered(q: Any, f: SlotFilter) -> Any:
    if f.kind:
        q = q.where(Slot.kind == f.kind)
    if f.entity:
        q = q.where(Slot.entity == f.entity)
    if f.topic:
        q = q.where(Slot.topic == f.topic)
    if f.status:
        q = q.where(Slot.status == f.status)
    if not f.include_gone:
        q = q.where((Slot.gone.is_(False)) | (Slot.status == "recheck"))
    return q


def count_slots(session: Session, f: SlotFilter) -> int:
    """How many slots match a filter."""
    if f.reason:
        return len(list_slots(session, f))
    return int(session.scalar(_filtered(select(func.count()).select_from(Slot), f)) or 0)


def status_counts(session: Session) -> dict[str, int]:
    """How many listed slots are in each status."""
    q = select(Slot.status, func.count()).where((Slot.gone.is_(False)) | (Slot.status == "recheck")).group_by(Slot.status)
    return {s: int(n) for s, n in session.execute(q).all()}


def status_counts_by(session: Session, by: str) -> dict[str, dict[str, int]]:
    """How many listed slots are in each status, per entity (``by="entity"``) or per topic."""
    column = {"entity": Slot.entity, "topic": Slot.topic}[by]
    q = select(column, Slot.status, func.count()).where(
        column.is_not(None), (Slot.gone.is_(False)) | (Slot.status == "recheck")
    ).group_by(column, Slot.status)
    out: dict[str, dict[str, int]] = {}
    for key, status, n in session.execute(q).all():
        out.setdefault(key, {})[status] = int(n)
    return out


def recheck_reason_counts(session: Session) -> dict[str, int]:
    """How many slots in recheck carry each reason."""
    counts: dict[str, int] = {}
    for (recheck,) in session.execute(select(Slot.recheck).where(Slot.status == "recheck")):
        for reason in (recheck or {}).get("reasons", []):
            counts[reason] = counts.get(reason, 0) + 1
    return counts


def layers_for(session: Session, slot_ids: Sequence[str]) -> dict[str, list[Layer]]:
    """Active layers of many slots, by slot id."""
    out: dict[str, list[Layer]] = {}
    for start in range(0, len(slot_ids), 900):
        chunk = list(slot_ids[start:start + 900])
        for layer in session.scalars(
            select(Layer).where(Layer.slot_id.in_(chunk), Layer.dropped_at.is_(None)).order_by(Layer.id)
        ):
            out.setdefault(layer.slot_id, []).append(layer)
    return out


def all_active_layers(session: Session) -> list[Layer]:
    """Every active layer of the workspace."""
    return list(session.scalars(select(Layer).where(Layer.dropped_at.is_(None)).order_by(Layer.id)))


def all_active_approvals(session: Session) -> list[Approval]:
    """Every active approval of the workspace."""
    return list(session.scalars(select(Approval).where(Approval.dropped_at.is_(None)).order_by(Approval.id)))


def table_counts(session: Session) -> dict[str, int]:
    """Row counts of the tables a refresh may write (for checks and benchmarks)."""
    out = {}
    for model in (Edition, Observation, Slot, Draft, Layer, Approval, Event):
        out[model.__tablename__] = int(session.scalar(select(func.count()).select_from(model)) or 0)
    return out


def topic_rows(session: Session) -> list[Topic]:
    """Every topic, in file order."""
    return list(session.scalars(select(Topic).order_by(Topic.position)))


def entity_rows(session: Session) -> list[Entity]:
    """Every entity, in file order."""
    return list(session.scalars(select(Entity).order_by(Entity.position)))


def get_entity(session: Session, key: str) -> Entity | None:
    """An entity by key."""
    return session.get(Entity, key)


def get_topic(session: Session, key: str) -> Topic | None:
    """A topic by key."""
    return session.get(Topic, key)


def replaced_values(session: Session) -> pd.DataFrame:
    """For each observation key that was revised, the value it held before its latest revision."""
    q = select(Observation.entity, Observation.topic, Observation.period, Observation.value, Observation.valid_to).where(
        Observation.valid_to.is_not(None)
    )
    frame = pd.DataFrame(session.execute(q).all(), columns=["entity", "topic", "period", "value", "valid_to"])
    if frame.empty:
        return frame.drop(columns=["valid_to"])
    frame = frame.sort_values("valid_to").drop_duplicates(OBS_KEY, keep="last")
    return frame.drop(columns=["valid_to"]).astype({"value": "float64"})


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
    q = select(Slot.id).join(latest, latest.c.slot_id == Slot.id).where(Slot.gone.is_(True), latest.c.edition < edition_id)
    return set(session.scalars(q))


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


def slot_statuses(session: Session, slot_ids: Sequence[str]) -> dict[str, tuple[str, Any]]:
    """Status and recheck of many slots."""
    out: dict[str, tuple[str, Any]] = {}
    for start in range(0, len(slot_ids), 900):
        chunk = list(slot_ids[start:start + 900])
        for sid, status, recheck in session.execute(select(Slot.id, Slot.status, Slot.recheck).where(Slot.id.in_(chunk))):
            out[sid] = (status, recheck)
    return out
