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
    status: str
    text: str
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
