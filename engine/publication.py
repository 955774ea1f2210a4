"""What a publication holds, as plain data: the statements, their sections and the caution.

The gathering code (publish.py) fills these; the formats and layouts render them. This module
imports nothing of Stetline's, so both sides can depend on it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

CAUTION = (
    "These statements are drafts computed from the loaded data. A qualified person must check "
    "them before release; the publisher's own statistical release policy or code of practice comes first."
)


@dataclass
class Statement:
    """One published statement."""

    slot: str
    kind: str
    entity: str | None
    topic: str | None
    status: str  # the slot's status word; "recheck" marks a statement printed while it waits
    text: str  # the text alone, never a marker
    notes: list[str]
    caveat: str | None
    interest: float
    warning: str | None = None
    evidence: dict[str, Any] = field(default_factory=dict)  # the facts the published text rests on
    written_by: str | None = None  # who wrote the text layer (rewrite or pin), if any
    approved_by: str | None = None
    approved_at: str | None = None  # ISO 8601, UTC


@dataclass
class Publication:
    """What a publication holds, before it is rendered to a format."""

    title: str
    edition: str
    date: str
    sections: list[tuple[str, str, list[Statement]]]  # (key, heading, statements)
    warnings: list[str] = field(default_factory=list)
    sources: dict[str, str] = field(default_factory=dict)
    entity_names: dict[str, str] = field(default_factory=dict)
    topic_labels: dict[str, str] = field(default_factory=dict)
    waiting: list[tuple[str, str]] = field(default_factory=list)  # (slot, reason) of each statement in recheck

    @property
    def marked(self) -> bool:
        """True when the publication holds statements that wait in recheck (each marked, and listed)."""
        return bool(self.waiting)


RECHECK_MARK = "[recheck]"
WAITING_HEADING = "Waiting in recheck"
WAITING_INTRO = ("These statements wait for a reviewer because the data changed since they were written or "
                 "approved; each is printed with the newest text the current data do not contradict, and "
                 "marked " + RECHECK_MARK + ".")
