"""How a stored time is written as text: one ISO 8601 form for JSON, pages and publications.

A leaf module (it imports nothing of Stetline's). Times are stored in UTC without a zone (see
``stetline.store.models.utcnow``); they are written to the second with a "Z" for UTC.
"""

from __future__ import annotations

from datetime import UTC, datetime


def iso_time(at: datetime) -> str:
    """Write a UTC time as ISO 8601 to the second with a "Z": ``2025-03-01T09:30:00Z``."""
    if at.tzinfo is not None:  # a time that carries its zone: the same instant in UTC
        at = at.astimezone(UTC).replace(tzinfo=None)
    return at.isoformat(timespec="seconds") + "Z"
