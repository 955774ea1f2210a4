"""Bulk operations and queries on the workspace database; the session belongs to the caller.

Writes are bulk and touch only rows that changed: observations are versioned by edition, a
draft row is written only when a slot's text, evidence or claims change, and layers and
approvals are never deleted (dropping stamps ``dropped_at``).
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from sqlalchemy import func, select, text, update
from sqlalchemy.orm import Session

from stetline.drafting import Draft as DraftText
from stetline.reconcile import Basis, Decision, HumanWork, SlotState
from stetline.store.models import (
    Approval,
    Draft,
    Edition,
    Entity,
    Event,
    Layer,
    Observation,
    Setting,
    Slot,
    Topic,
    utcnow,
)

CHUNK = 20_000
#: ids per IN (...) list: below SQLite's oldest limit on bound parameters (999)
IN_CHUNK = 900


def _id_chunks(ids: Iterable[str]) -> Iterator[list[str]]:
    """The ids in lists short enough for one IN (...) each."""
    ids = list(ids)
    for start in range(0, len(ids), IN_CHUNK):
        yield ids[start:start + IN_CHUNK]


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
    frame = _frame(rows, ["id", "entity", "topic", "period", "value", "margin", "status"], ("value", "margin"))
    return frame.astype({"value": "float64", "margin": "float64"})


def _frame(rows: Sequence[Any], columns: list[str], floats: tuple[str, ...] = ()) -> pd.DataFrame:
    """``pd.DataFrame(rows, columns=columns)``, built column by column (several times faster for
    many rows); the ``floats`` columns come as float64 with NaN for NULL."""
    if not rows:
        return pd.DataFrame(rows, columns=columns)
    data: dict[str, Any] = {}
    for name, values in zip(columns, zip(*rows)):
        data[name] = np.array(values, dtype="float64") if name in floats else list(values)
    return pd.DataFrame(data, columns=columns)


def store_observations(
    session: Session, edition_id: int, observations: pd.DataFrame, current: pd.DataFrame | None = None,
) -> dict[str, int]:
    """Version the observations: close rows that changed or left, insert new and changed rows.

    ``current`` is what observations_frame(session) gives, when the caller has already read it.
    """
    old = observations_frame(session) if current is None else current
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
    _write_many(session, Observation, ["valid_to"], [(edition_id, i) for i in ids], where="id")
    n = len(to_insert)
    columns = {
        "entity": to_insert["entity"].tolist(), "topic": to_insert["topic"].tolist(),
        "period": to_insert["period"].tolist(),
        "value": _floats_or_none(to_insert["value"]), "margin": _floats_or_none(to_insert["margin"]),
        "status": to_insert["status"].tolist(), "valid_from": [edition_id] * n, "valid_to": [None] * n,
    }
    _write_many(session, Observation, list(columns), list(zip(*columns.values())))
    return {"closed": len(ids), "inserted": n}


def _floats_or_none(values: pd.Series) -> list[float | None]:
    """A column as Python floats, None where missing."""
    out = values.astype("float64")
    return [None if v != v else v for v in out.tolist()]


def _bulk_insert(session: Session, model: type, records: list[dict[str, Any]]) -> None:
    """Insert rows given as dicts, in order; each run of rows with the same keys is one executemany."""
    from itertools import groupby

    for keys, run in groupby(records, key=tuple):
        _write_many(session, model, list(keys), [tuple(r.values()) for r in run])


def _write_many(
    session: Session, model: Any, columns: list[str], rows: list[tuple[Any, ...]], *, where: str | None = None,
    serialised: frozenset[str] = frozenset(),
) -> None:
    """INSERT (or, with ``where``, UPDATE ... WHERE where = the last value of each row) many rows.

    The values go through each column's own bind processing (JSON, dates, booleans) exactly as
    an ORM insert would, then to the driver's executemany in chunks: no per-row statement
    compilation. Columns the rows leave out take their scalar or callable defaults, as in an
    ORM insert. Drivers with a placeholder style other than ? or %s use SQLAlchemy's own path.
    JSON columns named in ``serialised`` hold text already serialised (a draft's evidence and
    claims, serialised once for its digest too) and go to the driver as they are.
    """
    if not rows:
        return
    session.flush()  # as a session.execute would (autoflush): pending rows go first
    table = model.__table__
    dialect = session.get_bind().dialect
    placeholder = {"qmark": "?", "format": "%s", "pyformat": "%s"}.get(dialect.paramstyle)
    if placeholder is None:
        if serialised:
            at = [i for i, c in enumerate(columns) if c in serialised]
            rows = [tuple(json.loads(v) if i in at else v for i, v in enumerate(r)) for r in rows]
        _write_many_orm(session, model, columns, rows, where)
        return
    columns = list(columns)
    if where is None:
        rows, columns = _with_defaults(table, columns, rows)
    q = dialect.identifier_preparer.quote
    processors = [
        None if c in serialised else table.c[c].type.dialect_impl(dialect).bind_processor(dialect) for c in columns
    ]
    if where is None:
        sql = (f"INSERT INTO {q(table.name)} ({', '.join(q(c) for c in columns)}) "
               f"VALUES ({', '.join([placeholder] * len(columns))})")
    else:
        sets = ", ".join(f"{q(c)} = {placeholder}" for c in columns)
        sql = f"UPDATE {q(table.name)} SET {sets} WHERE {q(where)} = {placeholder}"
        processors.append(None)
    if any(processors):
        rows = _process(rows, processors)
    conn = session.connection()
    for start in range(0, len(rows), CHUNK):
        conn.exec_driver_sql(sql, rows[start:start + CHUNK])


def _process(rows: list[tuple[Any, ...]], processors: list[Any]) -> list[tuple[Any, ...]]:
    """Apply each column's bind processor to its values (column-wise, then back to rows)."""
    cols: list[Any] = list(zip(*rows))
    for i, proc in enumerate(processors):
        if proc is None:
            continue
        col = cols[i]
        if len(set(map(id, col))) == 1:  # one value throughout (a timestamp, a flag): process it once
            cols[i] = [proc(col[0])] * len(col)
        else:
            cols[i] = list(map(proc, col))
    return list(zip(*cols))


def _with_defaults(table: Any, columns: list[str], rows: list[tuple[Any, ...]]) -> tuple[list[tuple[Any, ...]], list[str]]:
    """Add the columns an insert leaves out that have a Python-side default."""
    extra: list[tuple[str, Any]] = []
    for col in table.columns:
        if col.name in columns or col.default is None:
            continue
        default = col.default
        if default.is_scalar:
            extra.append((col.name, lambda value=default.arg: value))
        elif default.is_callable:
            extra.append((col.name, lambda fn=default.arg: fn(None)))
    if not extra:
        return rows, columns
    out = [row + tuple(make() for _, make in extra) for row in rows]
    return out, columns + [name for name, _ in extra]


def _write_many_orm(session: Session, model: Any, columns: list[str], rows: list[tuple[Any, ...]],
                    where: str | None) -> None:
    from sqlalchemy import insert

    if where is None:
        records = [dict(zip(columns, r)) for r in rows]
        for start in range(0, len(records), CHUNK):
            session.execute(insert(model), records[start:start + CHUNK])
    else:
        records = [dict(zip(columns + [where], r)) for r in rows]
        for start in range(0, len(records), CHUNK):
            session.execute(update(model), records[start:start + CHUNK])


# -- slot states for reconcile --------------------------------------------------------------

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


def current_drafts(session: Session, slot_ids: Iterable[str]) -> list[DraftText]:
    """The current draft of each of these slots (slots without one are left out), as drafted."""
    out: list[DraftText] = []
    q = select(
        Slot.id, Slot.kind, Slot.entity, Slot.topic, Draft.text, Draft.evidence, Draft.claims,
        Draft.interest, Draft.phrasing,
    ).join(Draft, Draft.id == Slot.draft_id)
    for chunk in _id_chunks(slot_ids):
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
) -> Applied:
    """Write a refresh's decisions in bulk: new drafts, slot states, rebased human work, events."""
    next_id = (session.scalar(select(func.max(Draft.id))) or 0) + 1
    versions: dict[str, int] = dict(session.execute(select(Slot.id, Slot.version)).all())  # type: ignore[arg-type]
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
    _write_many(session, Slot, ["id", "kind", "entity", "topic"] + state_cols + draft_cols + ["version"], new_slots)
    _write_many(session, Draft, ["id", "slot_id", "edition_id", "text", "evidence", "claims", "phrasing", "interest"],
                draft_rows, serialised=frozenset({"evidence", "claims"}))
    _write_many(session, Slot, state_cols + draft_cols + ["version"], updates_with_draft, where="id")
    _write_many(session, Slot, state_cols + ["version"], updates, where="id")
    if session.bind is not None and session.bind.dialect.name == "postgresql" and draft_rows:
        session.execute(text("SELECT setval(pg_get_serial_sequence('draft', 'id'), (SELECT MAX(id) FROM draft))"))
    _rebase(session, decisions, drafts)
    events = [
        (now, by, "recheck", d.slot, edition_id, None, None, {"reasons": d.reasons})
        for d in decisions if d.recheck
    ]
    _write_many(session, Event, ["at", "by", "action", "slot_id", "edition_id", "before", "after", "detail"], events)
    return Applied(len(draft_rows), len(new_slots), len(updates_with_draft) + len(updates))


def _rebase(session: Session, decisions: Iterable[Decision], drafts: dict[str, DraftText]) -> None:
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
    _write_many(session, Layer, ["basis"], layers, where="id")
    _write_many(session, Approval, ["basis"], approvals, where="id")


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
    # ties go by id, in the same direction, so one backward scan of an index gives the order
    if order == "interest":
        q = q.order_by(Slot.interest.desc(), Slot.id.desc())
    elif order == "severity":
        q = q.order_by(Slot.severity.desc(), Slot.id.desc())
    else:
        q = q.order_by(Slot.id)
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
    if f.reason:
        q = q.where(_has_reason(f.reason))
    if not f.include_gone:
        q = q.where((Slot.gone.is_(False)) | (Slot.status == "recheck"))
    return q


def _has_reason(reason: str) -> Any:
    """Slots whose recheck JSON lists this reason (a reason outside the vocabulary: none).

    The reasons are words of a fixed vocabulary, stored as JSON strings in ``recheck.reasons``;
    no other part of that JSON holds one as a whole quoted string (a quote inside a proposed
    text is escaped), so matching the quoted word in the JSON text is exact, and runs in the
    database on SQLite and PostgreSQL alike.
    """
    from sqlalchemy import String, cast, false

    from stetline.reconcile import REASONS

    if reason not in REASONS:
        return false()
    return cast(Slot.recheck, String).like(f'%"{reason}"%')


def count_slots(session: Session, f: SlotFilter) -> int:
    """How many slots match a filter."""
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


def status_counts_of(session: Session, by: str, key: str) -> dict[str, int]:
    """How many listed slots of one entity (``by="entity"``) or one topic are in each status."""
    column = {"entity": Slot.entity, "topic": Slot.topic}[by]
    q = select(Slot.status, func.count()).where(
        column == key, (Slot.gone.is_(False)) | (Slot.status == "recheck")
    ).group_by(Slot.status)
    return {status: int(n) for status, n in session.execute(q).all()}


def recheck_options(session: Session, field: str) -> list[tuple[str, str]]:
    """The kinds, entities or topics (``field``) of the slots waiting in recheck, each with the
    name to show: kinds sorted, entities and topics in file order."""
    column = {"kind": Slot.kind, "entity": Slot.entity, "topic": Slot.topic}[field]
    waiting = select(column).where(Slot.status == "recheck", column.is_not(None)).distinct()
    if field == "kind":
        return sorted((str(k), str(k)) for (k,) in session.execute(waiting))
    if field == "entity":
        q = select(Entity.key, Entity.name).where(Entity.key.in_(waiting)).order_by(Entity.position)
    else:
        q = select(Topic.key, Topic.label).where(Topic.key.in_(waiting)).order_by(Topic.position)
    return [(str(k), str(n)) for k, n in session.execute(q)]


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
    for chunk in _id_chunks(slot_ids):
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


def approvals_for(session: Session, slot_ids: Sequence[str]) -> dict[str, Approval]:
    """The active approval of each of these slots that has one, by slot id."""
    out: dict[str, Approval] = {}
    for chunk in _id_chunks(slot_ids):
        q = select(Approval).where(Approval.slot_id.in_(chunk), Approval.dropped_at.is_(None))
        out.update((a.slot_id, a) for a in session.scalars(q))
    return out


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


def replaced_values(session: Session, before: int | None = None) -> pd.DataFrame:
    """For each current observation that replaced an earlier value, the value it replaced.

    That is the row the current one took over from: same key, closed by the edition that opened
    the current row. A key that left the data and came back later replaced nothing (the load
    that brought it back had nothing to compare it with). With ``before``, only rows closed by
    an edition older than that edition id count (what that edition's own load saw). One probe of
    the observation index per current row, however many editions are stored.
    """
    from sqlalchemy.orm import aliased

    old, cur = aliased(Observation), aliased(Observation)
    q = select(old.entity, old.topic, old.period, old.value).join(
        cur, (cur.valid_to.is_(None)) & (cur.entity == old.entity) & (cur.topic == old.topic)
        & (cur.period == old.period) & (old.valid_to == cur.valid_from),
    )
    if before is not None:
        q = q.where(old.valid_to < before)
    frame = _frame(session.execute(q).all(), ["entity", "topic", "period", "value"], ("value",))
    return frame.astype({"value": "float64"}) if not frame.empty else frame


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
    for chunk in _id_chunks(slot_ids):
        for sid, status, recheck in session.execute(select(Slot.id, Slot.status, Slot.recheck).where(Slot.id.in_(chunk))):
            out[sid] = (status, recheck)
    return out


# -- comments, search, series and recent events (for the web editor) ---------------------------

from datetime import datetime  # noqa: E402

from sqlalchemy import DateTime as _DateTime
from sqlalchemy import String as _String  # noqa: E402
from sqlalchemy import case, cast, literal, null, union_all

from stetline import periods as _periods  # noqa: E402
from stetline.store.models import Comment  # noqa: E402

COMMENT_KINDS = ("comment", "send-back")
SEARCH_LIMIT = 50
MAX_SEARCH_TERMS = 10


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
    return "%" + term.replace("\\", "\\\\").replace("%", "\\%").replace("_", "\\_") + "%"


def search(session: Session, query: str, *, limit: int = SEARCH_LIMIT, offset: int = 0) -> SearchPage:
    """Texts holding every word of the query (case-insensitive): current drafts, the text of
    active rewrites, pins and notes, and comments; of listed slots, by slot."""
    terms = search_terms(query)
    if not terms:
        return SearchPage([], 0, offset, limit)

    def matching(column: Any) -> list[Any]:
        return [column.ilike(_like(t), escape="\\") for t in terms]

    no_by, no_at = cast(null(), _String(100)), cast(null(), _DateTime())
    drafts = (
        select(Slot.id.label("slot_id"), literal("draft", _String(20)).label("place"), Draft.text.label("text"),
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
    listed = (Slot.gone.is_(False)) | (Slot.status == "recheck")
    base = select(found, Slot.status).join(Slot, Slot.id == found.c.slot_id).where(listed)
    total = int(session.scalar(select(func.count()).select_from(base.subquery())) or 0)
    rows = session.execute(
        base.order_by(found.c.slot_id, found.c.source, found.c.row).limit(limit).offset(offset)
    ).all()
    hits = [SearchHit(r.slot_id, r.status, r.place, r.text, r.by, r.at) for r in rows]
    return SearchPage(hits, total, offset, limit)


def series(session: Session, entity: str, topic: str) -> list[Observation]:
    """The current observations of one entity on one topic, in period order."""
    rows = session.scalars(select(Observation).where(
        Observation.valid_to.is_(None), Observation.entity == entity, Observation.topic == topic,
    ))
    return sorted(rows, key=lambda o: _periods.period_time(o.period))


def latest_values(session: Session, topic: str) -> tuple[str | None, list[tuple[str, float]]]:
    """The topic's latest period with a value, and every entity's value in it (highest first)."""
    rows = session.execute(select(Observation.entity, Observation.period, Observation.value).where(
        Observation.valid_to.is_(None), Observation.topic == topic, Observation.value.is_not(None),
    )).all()
    if not rows:
        return None, []
    latest = max({r.period for r in rows}, key=_periods.period_time)
    values = sorted(((r.entity, float(r.value)) for r in rows if r.period == latest), key=lambda p: (-p[1], p[0]))
    return latest, values


def events_by_action(session: Session, action: str, limit: int = 20) -> list[Event]:
    """The most recent events of one action, newest first."""
    return list(session.scalars(select(Event).where(Event.action == action).order_by(Event.id.desc()).limit(limit)))


def latest_event(session: Session, actions: Sequence[str]) -> Event | None:
    """The most recent event of any of these actions."""
    return session.scalars(select(Event).where(Event.action.in_(actions)).order_by(Event.id.desc()).limit(1)).first()


def events_after(session: Session, action: str, after_id: int | None) -> list[Event]:
    """Events of one action recorded after an event id (all of them when None), oldest first."""
    q = select(Event).where(Event.action == action)
    if after_id is not None:
        q = q.where(Event.id > after_id)
    return list(session.scalars(q.order_by(Event.id)))
