"""The filtered selections that pages list and that bulk work acts on.

An entity's or a topic's page lists its statements, optionally of one status; the recheck queue
lists the statements waiting in recheck, optionally by reason, kind, entity and topic. The bulk
confirmation page rebuilds the same selection from the same filters, so "all N shown" means
the statements the page showed.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from urllib.parse import urlencode

from flask import url_for
from sqlalchemy.orm import Session

from stetline import actions
from stetline.status import Status
from stetline.store import ops

SCOPES = ("entity", "topic", "recheck")
FILTERS = {"entity": ("status",), "topic": ("status",), "recheck": ("reason", "kind", "entity", "topic")}
MAX_FILTER = 200


@dataclass
class Selection:
    """Which statements a page shows: a scope (entity, topic, recheck), its key and filters."""

    scope: str
    key: str | None = None
    filters: dict[str, str | None] = field(default_factory=dict)

    @classmethod
    def parse(cls, scope: str, key: str | None, args: Mapping[str, str]) -> Selection:
        """A selection from a scope, a key and the request's filter values (unknown ones ignored)."""
        if scope not in SCOPES:
            raise ValueError(f"unknown selection {scope!r}")
        chosen = {k: ((args.get(k) or "").strip()[:MAX_FILTER] or None) for k in FILTERS[scope]}
        if chosen.get("status") not in (None, *actions.STATUSES):
            chosen["status"] = None
        return cls(scope, key if scope != "recheck" else None, chosen)

    def slot_filter(self) -> ops.SlotFilter:
        """The store filter of this selection."""
        f = {k: v for k, v in self.filters.items() if v}
        kind, status, reason = f.get("kind"), f.get("status"), f.get("reason")
        if self.scope == "entity":
            return ops.SlotFilter(kind=kind, entity=self.key, topic=f.get("topic"), status=status, reason=reason)
        if self.scope == "topic":
            return ops.SlotFilter(kind=kind, entity=f.get("entity"), topic=self.key, status=status, reason=reason)
        return ops.SlotFilter(kind=kind, entity=f.get("entity"), topic=f.get("topic"), status=Status.RECHECK,
                              reason=reason)

    def views(self, s: Session, *, limit: int | None = None, offset: int = 0) -> list[actions.SlotView]:
        """The statements of this selection in the order the page lists them (or one page of them)."""
        order = "severity" if self.scope == "recheck" else "interest"
        return actions.views(s, self.slot_filter(), order=order, limit=limit, offset=offset)

    def count(self, s: Session) -> int:
        """How many statements this selection holds."""
        return ops.count_slots(s, self.slot_filter())

    @property
    def filtered(self) -> bool:
        """True when any filter narrows the selection."""
        return any(self.filters.values())

    def url(self) -> str:
        """The address of the page that lists this selection."""
        if self.scope == "recheck":
            base = url_for("recheck.queue")
        elif self.scope == "entity":
            base = url_for("browse.entity", key=self.key)
        else:
            base = url_for("browse.topic", key=self.key)
        query = urlencode({k: v for k, v in self.filters.items() if v})
        return f"{base}?{query}" if query else base

    def hidden_fields(self) -> dict[str, str]:
        """The form fields that carry this selection to the bulk pages."""
        out = {"scope": self.scope, "key": self.key or ""}
        out.update({k: v for k, v in self.filters.items() if v})
        return out
