"""The words of a slot's state: its status and the reasons it waits in recheck.

A leaf module: it imports nothing of Stetline's, so every layer (reconcile, store, actions, the
web app, the CLI) can name statuses and reasons without an import cycle. Both are ``StrEnum``s:
a member equals its word (``Status.RECHECK == "recheck"``), so a status read back from the
database as plain text compares equal to the member, and a member written out (JSON, SQL, a
template, an f-string) is its word.
"""

from __future__ import annotations

from enum import StrEnum
from typing import Final


class Status(StrEnum):
    """The status of a slot (DESIGN, "Statuses of a slot")."""

    DRAFT = "draft"  # machine text, untouched
    EDITED = "edited"  # has a layer, not approved
    APPROVED = "approved"  # signed off against the current basis
    RECHECK = "recheck"  # the basis changed since the edit or the sign-off
    SUPPRESSED = "suppressed"  # left out of the publication


class Reason(StrEnum):
    """Why a slot waits in recheck, most urgent first (DESIGN, "Reconcile")."""

    CLAIM_CHANGED = "claim-changed"
    SLOT_GONE = "slot-gone"
    MERGED = "merged"  # several entities became one at a load: a person picks a text (stetline.renames)
    RENDER_FAILED = "render-failed"  # a rewrite's live fields no longer render (stetline.slotstatus)
    NUMBERS_CHANGED = "numbers-changed"
    WORDING_CHANGED = "wording-changed"


#: every status word, in the order pages and summaries list them (plain text, for option lists)
STATUSES: Final[tuple[str, ...]] = tuple(s.value for s in Status)
#: every recheck reason word, most urgent first (plain text, for option lists)
REASONS: Final[tuple[str, ...]] = tuple(r.value for r in Reason)
#: higher is more urgent; the recheck queue sorts by it
SEVERITY: Final[dict[str, int]] = {
    Reason.CLAIM_CHANGED: 3, Reason.SLOT_GONE: 3, Reason.MERGED: 3, Reason.RENDER_FAILED: 3,
    Reason.NUMBERS_CHANGED: 2, Reason.WORDING_CHANGED: 1,
}
