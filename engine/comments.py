"""A discussion thread per statement: comments, and reviewers sending a statement back.

A reviewer who does not approve a statement sends it back with a comment saying what to change:
the comment goes in the thread (kind ``send-back``) and an event ``send-back`` is recorded; the
statement's status and text stay as they are.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from sqlalchemy.orm import Session

from stetline.accounts import authorize
from stetline.errors import NotFound, StetlineError
from stetline.store import ops
from stetline.store.models import Comment
from stetline.timestamps import iso_time

MAX_COMMENT = 5_000


def _check(session: Session, slot_id: str, text: str, what: str) -> str:
    text = text.strip()
    if not text:
        raise StetlineError(f"{what} cannot be empty")
    if len(text) > MAX_COMMENT:
        raise StetlineError(f"{what} is {len(text):,} characters long; the limit is {MAX_COMMENT:,}")
    if ops.get_slot(session, slot_id) is None:
        raise NotFound(f"no statement {slot_id!r}; list them with: stetline list")
    return text


def add_comment(session: Session, slot: str, text: str, by: str) -> Comment:
    """Add a comment to a statement's thread."""
    authorize(session, by, "comment")
    text = _check(session, slot, text, "a comment")
    return ops.add_comment(session, slot, by, text, "comment")


def send_back(session: Session, slot: str, text: str, by: str) -> Comment:
    """Send a statement back with a comment instead of approving it (its status stays as is)."""
    authorize(session, by, "send-back")
    text = _check(session, slot, text, "the reason for sending it back")
    comment = ops.add_comment(session, slot, by, text, "send-back")
    ops.add_event(session, by, "send-back", slot, after=text)
    return comment


@dataclass(frozen=True)
class ThreadEntry:
    """One comment as the thread shows it."""

    by: str
    at: str
    text: str
    kind: str

    def to_json(self) -> dict[str, Any]:
        """The entry as a JSON object."""
        return dict(self.__dict__)


def thread(session: Session, slot: str) -> list[ThreadEntry]:
    """A statement's thread, oldest first."""
    return [ThreadEntry(c.by, iso_time(c.at), c.text, c.kind)
            for c in ops.comments_for(session, slot)]
