"""The workspace's tables as typed SQLAlchemy 2 models.

Observations are versioned, not copied: a row is valid from the edition that loaded it until the
edition that changed or dropped it (``valid_to``, exclusive; NULL while current), so a refresh
writes only the observations that changed. Drafts are written only when a slot's text, evidence
or claims change. Layers and approvals are never deleted: dropping one stamps ``dropped_at``.
"""

from __future__ import annotations

from datetime import UTC, datetime
from typing import Any

from sqlalchemy import JSON, ForeignKey, Index, MetaData, String, Text, UniqueConstraint
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column

from stetline.status import Status

NAMING = {
    "ix": "ix_%(column_0_label)s",
    "uq": "uq_%(table_name)s_%(column_0_name)s",
    "ck": "ck_%(table_name)s_%(constraint_name)s",
    "fk": "fk_%(table_name)s_%(column_0_name)s_%(referred_table_name)s",
    "pk": "pk_%(table_name)s",
}


def utcnow() -> datetime:
    """The current time in UTC, without microseconds noise in the display."""
    return datetime.now(UTC).replace(tzinfo=None)


class Base(DeclarativeBase):
    """Declarative base with a naming convention, so migrations can name every constraint."""

    metadata = MetaData(naming_convention=NAMING)
    type_annotation_map = {dict[str, Any]: JSON, list[Any]: JSON, str: String(), Any: JSON}


class Setting(Base):
    """A workspace setting (house style and the like); absent keys take their declared default."""

    __tablename__ = "setting"
    key: Mapped[str] = mapped_column(String(100), primary_key=True)
    value: Mapped[Any] = mapped_column(JSON)


class Edition(Base):
    """One import of the data, immutable once loaded."""

    __tablename__ = "edition"
    id: Mapped[int] = mapped_column(primary_key=True)
    label: Mapped[str] = mapped_column(String(100), unique=True)
    loaded_at: Mapped[datetime] = mapped_column(default=utcnow)
    loaded_by: Mapped[str] = mapped_column(String(100))
    files: Mapped[list[Any]] = mapped_column(JSON, default=list)
    latest_period: Mapped[str] = mapped_column(String(20))
    period_format: Mapped[str] = mapped_column(String(10))
    observations: Mapped[int] = mapped_column(default=0)
    summary: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)

    @property
    def periods_shown(self) -> str:
        """The edition's latest period, with the latest of each other format its topics use
        ("2025 (quarterly topics to 2025-Q3)"); editions loaded before this was kept show the one."""
        latest = dict((self.summary or {}).get("latest_periods") or {})
        others = [f"{_FORMAT_WORDS.get(k, k)} topics to {v}" for k, v in latest.items() if v != self.latest_period]
        return f"{self.latest_period} ({'; '.join(others)})" if others else self.latest_period


#: how a period format is named before "topics" on the pages that list editions
_FORMAT_WORDS = {"year": "yearly", "quarter": "quarterly", "month": "monthly"}


class Entity(Base):
    """A thing the report describes: the metadata as last loaded."""

    __tablename__ = "entity"
    key: Mapped[str] = mapped_column(String(200), primary_key=True)
    name: Mapped[str] = mapped_column(String(300))
    group: Mapped[str] = mapped_column(String(200), default="")
    position: Mapped[int] = mapped_column(default=0)
    #: the key of the entity this one lies within ("" at the top): the hierarchy, apart from the flat group
    parent: Mapped[str] = mapped_column(String(200), default="", server_default="")
    #: "the", "none" or "" (the engine decides): whether the name takes "the" mid-sentence
    article: Mapped[str] = mapped_column(String(10), default="", server_default="")


class Topic(Base):
    """A measured indicator: the metadata as last loaded."""

    __tablename__ = "topic"
    key: Mapped[str] = mapped_column(String(200), primary_key=True)
    label: Mapped[str] = mapped_column(String(300))
    unit: Mapped[str] = mapped_column(String(100), default="")
    better: Mapped[str] = mapped_column(String(10))
    decimals: Mapped[int] = mapped_column(default=0)
    category: Mapped[str] = mapped_column(String(200), default="")
    target: Mapped[float | None]
    weight: Mapped[float] = mapped_column(default=1.0)
    source: Mapped[str] = mapped_column(String(500), default="")
    position: Mapped[int] = mapped_column(default=0)
    change: Mapped[str] = mapped_column(String(20), default="", server_default="")
    label_in_sentence: Mapped[str] = mapped_column(String(300), default="", server_default="")
    article: Mapped[str] = mapped_column(String(10), default="", server_default="")


class Observation(Base):
    """One value of one topic for one entity in one period, valid over a range of editions."""

    __tablename__ = "observation"
    id: Mapped[int] = mapped_column(primary_key=True)
    entity: Mapped[str] = mapped_column(String(200))
    topic: Mapped[str] = mapped_column(String(200))
    period: Mapped[str] = mapped_column(String(20))
    value: Mapped[float | None]
    margin: Mapped[float | None]
    status: Mapped[str] = mapped_column(String(20), default="")
    valid_from: Mapped[int] = mapped_column(ForeignKey("edition.id"))
    valid_to: Mapped[int | None] = mapped_column(ForeignKey("edition.id"))

    __table_args__ = (
        Index("ix_observation_current", "valid_to", "entity", "topic"),
        Index("ix_observation_series", "entity", "topic", "period"),
    )


class BreakdownObservation(Base):
    """One value of one subgroup of a breakdown (age band 65+), valid over a range of editions.

    The totals stay in ``observation``; rows here are read only by the breakdown kind.
    """

    __tablename__ = "breakdown_observation"
    id: Mapped[int] = mapped_column(primary_key=True)
    entity: Mapped[str] = mapped_column(String(200))
    topic: Mapped[str] = mapped_column(String(200))
    breakdown: Mapped[str] = mapped_column(String(200))
    subgroup: Mapped[str] = mapped_column(String(300))
    period: Mapped[str] = mapped_column(String(20))
    value: Mapped[float | None]
    margin: Mapped[float | None]
    status: Mapped[str] = mapped_column(String(20), default="")
    share: Mapped[float | None]
    valid_from: Mapped[int] = mapped_column(ForeignKey("edition.id"))
    valid_to: Mapped[int | None] = mapped_column(ForeignKey("edition.id"))

    __table_args__ = (Index("ix_breakdown_observation_current", "valid_to", "entity", "topic"),)


class Slot(Base):
    """The stable identity of a statement across editions, with its current state."""

    __tablename__ = "slot"
    id: Mapped[str] = mapped_column(String(450), primary_key=True)
    kind: Mapped[str] = mapped_column(String(40))
    entity: Mapped[str | None] = mapped_column(String(200))
    topic: Mapped[str | None] = mapped_column(String(200))
    status: Mapped[str] = mapped_column(String(20), default=Status.DRAFT.value)
    version: Mapped[int] = mapped_column(default=1)
    interest: Mapped[float] = mapped_column(default=0.0)
    draft_id: Mapped[int | None]  # the current draft (no foreign key: drafts point at slots)
    digest: Mapped[str] = mapped_column(String(32), default="")
    gone: Mapped[bool] = mapped_column(default=False)
    recheck: Mapped[dict[str, Any] | None] = mapped_column(JSON)
    severity: Mapped[int] = mapped_column(default=0)
    updated_at: Mapped[datetime] = mapped_column(default=utcnow)

    __table_args__ = (
        # the entity and topic pages: a page by interest (ties by id) read off the index, and
        # the status counts from the index alone; the recheck queue by severity (ties by id),
        # its count and its filter choices from the index alone
        Index("ix_slot_entity_listing", "entity", "interest", "id", "status", "gone"),
        Index("ix_slot_topic_listing", "topic", "interest", "id", "status", "gone"),
        Index("ix_slot_recheck_queue", "status", "severity", "id", "gone", "kind", "entity", "topic"),
        Index("ix_slot_kind", "kind"),
    )


class Draft(Base):
    """The machine text of a slot in an edition, with its evidence and claims."""

    __tablename__ = "draft"
    id: Mapped[int] = mapped_column(primary_key=True)
    slot_id: Mapped[str] = mapped_column(ForeignKey("slot.id"), index=True)
    edition_id: Mapped[int] = mapped_column(ForeignKey("edition.id"))
    text: Mapped[str] = mapped_column(Text)
    evidence: Mapped[dict[str, Any]] = mapped_column(JSON)
    claims: Mapped[dict[str, Any]] = mapped_column(JSON)
    phrasing: Mapped[int] = mapped_column(default=0)
    interest: Mapped[float] = mapped_column(default=0.0)


class Layer(Base):
    """Human work on a slot: a rewrite, a pin, a note (annotate) or a suppression."""

    __tablename__ = "layer"
    id: Mapped[int] = mapped_column(primary_key=True)
    slot_id: Mapped[str] = mapped_column(ForeignKey("slot.id"), index=True)
    type: Mapped[str] = mapped_column(String(20))
    text: Mapped[str | None] = mapped_column(Text)
    base_text: Mapped[str | None] = mapped_column(Text)
    basis: Mapped[dict[str, Any]] = mapped_column(JSON)
    by: Mapped[str] = mapped_column(String(100))
    at: Mapped[datetime] = mapped_column(default=utcnow)
    dropped_at: Mapped[datetime | None]
    dropped_by: Mapped[str | None] = mapped_column(String(100))
    # who wrote the words a text layer keeps (a pin or an accepted proposal keeps someone else's);
    # null for the machine's words; the two-person rule asks this, not ``by``
    author: Mapped[str | None] = mapped_column(String(100))


class Approval(Base):
    """A reviewer's sign-off of a slot's text against a basis."""

    __tablename__ = "approval"
    id: Mapped[int] = mapped_column(primary_key=True)
    slot_id: Mapped[str] = mapped_column(ForeignKey("slot.id"), index=True)
    text: Mapped[str] = mapped_column(Text)
    basis: Mapped[dict[str, Any]] = mapped_column(JSON)
    by: Mapped[str] = mapped_column(String(100))
    at: Mapped[datetime] = mapped_column(default=utcnow)
    dropped_at: Mapped[datetime | None]


class Event(Base):
    """One recorded action: who, when, on which slot, the text before and after."""

    __tablename__ = "event"
    id: Mapped[int] = mapped_column(primary_key=True)
    at: Mapped[datetime] = mapped_column(default=utcnow)
    by: Mapped[str] = mapped_column(String(100))
    action: Mapped[str] = mapped_column(String(40))
    slot_id: Mapped[str | None] = mapped_column(String(450), index=True)
    edition_id: Mapped[int | None] = mapped_column(ForeignKey("edition.id"))
    before: Mapped[str | None] = mapped_column(Text)
    after: Mapped[str | None] = mapped_column(Text)
    detail: Mapped[dict[str, Any]] = mapped_column(JSON, default=dict)


__all__ = [
    "Base", "Setting", "Edition", "Entity", "Topic", "Observation", "Slot", "Draft", "Layer",
    "Approval", "Event", "UniqueConstraint", "utcnow",
]


class Comment(Base):
    """A comment in a slot's discussion thread: a remark, or a reviewer sending the statement back."""

    __tablename__ = "comment"
    id: Mapped[int] = mapped_column(primary_key=True)
    slot_id: Mapped[str] = mapped_column(ForeignKey("slot.id"), index=True)
    by: Mapped[str] = mapped_column(String(100))
    at: Mapped[datetime] = mapped_column(default=utcnow)
    text: Mapped[str] = mapped_column(Text)
    kind: Mapped[str] = mapped_column(String(20), default="comment")  # 'comment' or 'send-back'


__all__ += ["Comment"]


class Account(Base):
    """A person who may act in the workspace, with one role; passwords are stored hashed."""

    __tablename__ = "account"
    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(100), unique=True)
    role: Mapped[str] = mapped_column(String(20))
    password_hash: Mapped[str] = mapped_column(String(300))
    enabled: Mapped[bool] = mapped_column(default=True)
    created_at: Mapped[datetime] = mapped_column(default=utcnow)
    failed_logins: Mapped[int] = mapped_column(default=0)
    locked_until: Mapped[datetime | None]
    #: raised when the account signs out, changes password or role, or is disabled or enabled:
    #: a session cookie carrying an older number is no longer accepted
    session_generation: Mapped[int] = mapped_column(default=0, server_default="0")


class Assignment(Base):
    """An entity or topic an admin assigned to a person ("my statements")."""

    __tablename__ = "assignment"
    id: Mapped[int] = mapped_column(primary_key=True)
    account: Mapped[str] = mapped_column(String(100), index=True)
    entity: Mapped[str | None] = mapped_column(String(200))
    topic: Mapped[str | None] = mapped_column(String(200))
    by: Mapped[str] = mapped_column(String(100))
    at: Mapped[datetime] = mapped_column(default=utcnow)


__all__ += ["Account", "Assignment"]
