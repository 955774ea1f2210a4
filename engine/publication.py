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
class Figures:
    """One entity's figures on one topic, as printed: value, rank of N, change and previous value."""

    period: str
    value: str
    rank: int | None
    rank_of: int | None
    change: str  # signed, in the topic's proper unit ("+0.8 percentage points"), or "" when not known
    previous: str  # the previous value, or ""
    previous_period: str
    #: the periods as a table prints them ("Q3 2025", stetline.periods.period_label); the fields above hold
    #: them as the data do ("2025-Q3"), for the machine-readable formats
    period_shown: str = ""
    previous_period_shown: str = ""


@dataclass
class TopicData:
    """One topic's metadata and values: what its table and charts are drawn from."""

    key: str
    label: str
    unit: str
    category: str
    better: str
    period: str  # the topic's latest period, as the data hold it ("2025-Q3")
    periods: list[str]
    series: dict[str, list[float | None]]  # entity → value per period (None when missing or withheld)
    latest: list[tuple[str, float]]  # (entity, value) in the latest period, ranked best first
    figures: dict[str, Figures]  # entity → its figures
    ranking: Any = None  # the ranked chart of every entity (a stetline.charts.ChartSpec), or None
    series_charts: dict[str, Any] = field(default_factory=dict)  # entity → its series chart (ChartSpec)
    period_shown: str = ""  # the latest period as a table's heading prints it ("Q3 2025")


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
    topics: dict[str, TopicData] = field(default_factory=dict)  # every topic's values, in topic order
    entity_noun: str = "entity"
    sections_by: str = "entity"  # "entity" or "topic": how the report is arranged

    @property
    def marked(self) -> bool:
        """True when the publication holds statements that wait in recheck (each marked, and listed)."""
        return bool(self.waiting)


RECHECK_MARK = "[recheck]"
FIGURE_NOTES = "Notes on the figures"
WAITING_HEADING = "Waiting in recheck"
WAITING_INTRO = ("These statements wait for a reviewer because the data changed since they were written or "
                 "approved; each is printed with the newest text the current data do not contradict, and "
                 "marked " + RECHECK_MARK + ".")
