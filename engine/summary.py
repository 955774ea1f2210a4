"""The status summary of a workspace: its current edition and how many statements are in each
status and recheck reason. The CLI's ``status`` and the web app's overview page both show it.

Reads only; writes nothing.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from sqlalchemy.orm import Session

from stetline.status import REASONS, STATUSES, Status  # not actions or reconcile: `stetline status` starts at once
from stetline.store import ops
from stetline.store.models import Edition


@dataclass(frozen=True)
class StatusSummary:
    """The current edition, every edition so far, and the counts by status and recheck reason."""

    edition: Edition | None
    editions: list[Edition]
    by_status: dict[str, int]
    recheck_reasons: dict[str, int]
    counts: ops.Counts

    @property
    def total(self) -> int:
        """How many statements are listed (gone ones only while they wait in recheck)."""
        return self.counts.statements

    def phrase(self) -> str:
        """The totals in the one phrase every message about statement counts uses."""
        return self.counts.summary()

    @property
    def waiting(self) -> int:
        """How many statements wait in recheck."""
        return self.by_status[Status.RECHECK]

    @property
    def ready(self) -> int:
        """How many statements could be published now (neither in recheck nor suppressed)."""
        return self.by_status[Status.APPROVED] + self.by_status[Status.DRAFT] + self.by_status[Status.EDITED]

    def to_json(self) -> dict[str, Any]:
        """The summary as plain JSON data."""
        return {
            "edition": self.edition.label if self.edition else None,
            "editions": len(self.editions),
            "slots": self.total,
            "by_status": dict(self.by_status),
            "recheck_reasons": dict(self.recheck_reasons),
            **self.counts.totals(),
        }


def status_summary(session: Session) -> StatusSummary:
    """Count the statements of the workspace by status and by recheck reason (every one listed)."""
    counts = ops.workspace_counts(session)
    return StatusSummary(
        edition=ops.current_edition(session),
        editions=ops.editions(session),
        by_status={s: counts.by_status.get(s, 0) for s in STATUSES},
        recheck_reasons={r: counts.reasons.get(r, 0) for r in REASONS},
        counts=counts,
    )
