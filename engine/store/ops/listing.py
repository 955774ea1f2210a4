"""Which slots are listed, filtered, counted by status, and waiting in recheck.

A slot is listed when it still applies, or when it is gone but waits in recheck (so a reviewer
sees what left the data); listed() is that rule, and every listing and count uses it.

What is counted, defined once (workspace_counts; every message and page uses it):
*statements* are the listed slots; *current* ones are those the current edition drafted; slots
that *no longer apply* (gone) are kept with their human work; *slots* are all of them, gone ones
included; recheck *reasons* are counted per statement, and one statement may carry several.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

from sqlalchemy import ColumnElement, String, cast, false, func, select
from sqlalchemy.orm import Session

from stetline.status import REASONS, Status
from stetline.store.models import Draft, Entity, Slot, Topic
from stetline.store.ops.bulk import id_chunks


def listed() -> ColumnElement[bool]:
    """The slots a listing shows: not gone, or in recheck."""
    return (Slot.gone.is_(False)) | (Slot.status == Status.RECHECK)


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
    """The query narrowed to the slots the filter asks for."""
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
        q = q.where(listed())
    return q


def _has_reason(reason: str) -> Any:
    """Slots whose recheck JSON lists this reason (a reason outside the vocabulary: none).

    The reasons are words of a fixed vocabulary, stored as JSON strings in ``recheck.reasons``;
    no other part of that JSON holds one as a whole quoted string (a quote inside a proposed
    text is escaped), so matching the quoted word in the JSON text is exact, and runs in the
    database on SQLite and PostgreSQL alike.
    """
    if reason not in REASONS:
        return false()
    return cast(Slot.recheck, String).like(f'%"{reason}"%')


def count_slots(session: Session, f: SlotFilter) -> int:
    """How many slots match a filter."""
    return int(session.scalar(_filtered(select(func.count()).select_from(Slot), f)) or 0)


def status_counts(session: Session) -> dict[str, int]:
    """How many listed slots are in each status."""
    q = select(Slot.status, func.count()).where(listed()).group_by(Slot.status)
    return {s: int(n) for s, n in session.execute(q).all()}


def status_counts_by(session: Session, by: str) -> dict[str, dict[str, int]]:
    """How many listed slots are in each status, per entity (``by="entity"``) or per topic."""
    column = {"entity": Slot.entity, "topic": Slot.topic}[by]
    q = select(column, Slot.status, func.count()).where(column.is_not(None), listed()).group_by(column, Slot.status)
    out: dict[str, dict[str, int]] = {}
    for key, status, n in session.execute(q).all():
        out.setdefault(str(key), {})[status] = int(n)
    return out


def status_counts_of(session: Session, by: str, key: str) -> dict[str, int]:
    """How many listed slots of one entity (``by="entity"``) or one topic are in each status."""
    column = {"entity": Slot.entity, "topic": Slot.topic}[by]
    q = select(Slot.status, func.count()).where(column == key, listed()).group_by(Slot.status)
    return {status: int(n) for status, n in session.execute(q).all()}


def recheck_options(session: Session, field: str) -> list[tuple[str, str]]:
    """The kinds, entities or topics (``field``) of the slots waiting in recheck, each with the
    name to show: kinds sorted, entities and topics in file order."""
    column = {"kind": Slot.kind, "entity": Slot.entity, "topic": Slot.topic}[field]
    waiting = select(column).where(Slot.status == Status.RECHECK, column.is_not(None)).distinct()
    if field == "kind":
        return sorted((str(k), str(k)) for (k,) in session.execute(waiting))
    if field == "entity":
        q = select(Entity.key, Entity.name).where(Entity.key.in_(waiting)).order_by(Entity.position)
    else:
        q = select(Topic.key, Topic.label).where(Topic.key.in_(waiting)).order_by(Topic.position)
    return [(str(k), str(n)) for k, n in session.execute(q)]


@dataclass(frozen=True)
class CurrentDraft:
    """What a slot's current draft claims and shows (its text left out)."""

    slot: str
    entity: str | None
    claims: dict[str, Any]
    evidence: dict[str, Any]


def current_of_kind(session: Session, kind: str, entities: Sequence[str] | None = None) -> list[CurrentDraft]:
    """The claims and evidence of the current drafts of a kind's slots that still apply, by slot id;
    only these entities' slots when ``entities`` is given."""
    q = (select(Slot.id, Slot.entity, Draft.claims, Draft.evidence).join(Draft, Draft.id == Slot.draft_id)
         .where(Slot.kind == kind, Slot.gone.is_(False)).order_by(Slot.id))
    if entities is None:
        return [CurrentDraft(*row) for row in session.execute(q)]
    out = [CurrentDraft(*row) for chunk in id_chunks(entities)
           for row in session.execute(q.where(Slot.entity.in_(chunk)))]
    return sorted(out, key=lambda d: d.slot)


@dataclass(frozen=True)
class Counts:
    """The workspace's statement counts (see the module docstring for what each one counts)."""

    statements: int  # listed: the current ones, plus the gone ones that wait in recheck
    current: int  # drafted by the current edition
    gone: int  # no longer apply; kept with their human work
    by_status: dict[str, int]  # statements per status
    reasons: dict[str, int]  # statements in recheck per reason; one statement may carry several

    @property
    def slots(self) -> int:
        """Every slot, gone ones included."""
        return self.current + self.gone

    def totals(self) -> dict[str, int]:
        """The four totals by name, for JSON and messages."""
        return {"statements": self.statements, "current": self.current, "gone": self.gone, "all_slots": self.slots}

    def summary(self) -> str:
        """The totals in one phrase for people."""
        return describe_totals(self.totals())


def describe_totals(totals: dict[str, int]) -> str:
    """The totals of Counts.totals() in one phrase: every message about statement counts uses it."""
    statements, current, gone = totals["statements"], totals["current"], totals["gone"]
    out = f"{statements} statement{'' if statements == 1 else 's'}"
    if statements != current:
        out += f" ({current} current, {statements - current} that no longer apply wait in recheck)"
    if gone:
        out += f"; {current + gone} slots kept, {gone} of them no longer apply"
    return out


def workspace_counts(session: Session) -> Counts:
    """Count the workspace's statements, slots and recheck reasons (one query per kind of count)."""
    current = gone = statements = 0
    by_status: dict[str, int] = {}
    q = select(Slot.gone, Slot.status, func.count()).group_by(Slot.gone, Slot.status)
    for is_gone, status, count in session.execute(q):
        n = int(count)
        if is_gone:
            gone += n
        else:
            current += n
        if not is_gone or status == Status.RECHECK:
            statements += n
            by_status[status] = by_status.get(status, 0) + n
    return Counts(statements, current, gone, by_status, recheck_reason_counts(session))


def recheck_reason_counts(session: Session) -> dict[str, int]:
    """How many slots in recheck carry each reason."""
    counts: dict[str, int] = {}
    for (recheck,) in session.execute(select(Slot.recheck).where(Slot.status == Status.RECHECK)):
        for reason in (recheck or {}).get("reasons", []):
            counts[reason] = counts.get(reason, 0) + 1
    return counts
