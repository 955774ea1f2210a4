"""Work on many statements at once: approve, annotate or suppress a selection.

A plan tells which statements of a selection the action applies to and why the others are left
alone (an approved statement is not approved again, a suppressed one cannot be approved or
suppressed again). Approval in bulk never signs off what needs a person's reading: a statement
whose claims the new data contradict (``claim-changed``), one whose slot is gone (``slot-gone``)
and one whose proposed text has a conflict are skipped, and applying refuses them even when a
crafted form names them. Applying runs the ordinary action on each statement, each with the
version the person confirmed and each recorded as its own event, in the caller's one transaction:
when any statement changed since, nothing is done.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from sqlalchemy.orm import Session

from stetline import actions
from stetline.actions import SlotView
from stetline.errors import StetlineError
from stetline.status import Reason, Status

ACTIONS = ("approve", "annotate", "suppress")
MAX_ITEMS = 5_000


@dataclass
class Plan:
    """What a bulk action would do to a selection."""

    action: str
    todo: list[SlotView] = field(default_factory=list)
    skipped: list[tuple[SlotView, str]] = field(default_factory=list)


def _why_not(action: str, v: SlotView) -> str | None:
    suppressed = any(x.type == "suppress" for x in v.layers)
    if action == "approve":
        if suppressed:
            return "suppressed: there is no text to approve"
        if v.slot.status == Status.APPROVED:
            return "already approved"
        return _needs_reading(v)
    if action == "suppress" and suppressed:
        return "already suppressed"
    return None


def _needs_reading(v: SlotView) -> str | None:
    """Why a statement must be approved on its own, after a person read it (None when it need not)."""
    recheck = v.slot.recheck or {}
    reasons = recheck.get("reasons", [])
    if Reason.CLAIM_CHANGED in reasons:
        return "the new data contradict its claims: approve it on its own, confirming each claim"
    if Reason.SLOT_GONE in reasons or v.slot.gone:
        return "it no longer applies to the current edition: approve or suppress it on its own"
    if Reason.MERGED in reasons:
        return "several statements were merged into it: choose a text on its own page first"
    if recheck.get("conflicts"):
        return "its proposed text has a conflict: resolve it with a rewrite first"
    return None


def plan(action: str, selection: list[SlotView]) -> Plan:
    """Split a selection into the statements the action applies to and the ones it skips."""
    if action not in ACTIONS:
        raise StetlineError(f"unknown bulk action {action!r}; one of {', '.join(ACTIONS)}")
    out = Plan(action)
    for v in selection:
        why = _why_not(action, v)
        if why is None:
            out.todo.append(v)
        else:
            out.skipped.append((v, why))
    return out


def apply(session: Session, action: str, items: list[tuple[str, int]], *, by: str,
          text: str | None = None) -> list[str]:
    """Run the action on each (slot, version); raise on the first refusal (the caller rolls back)."""
    if action not in ACTIONS:
        raise StetlineError(f"unknown bulk action {action!r}; one of {', '.join(ACTIONS)}")
    if not items:
        raise StetlineError("no statements were chosen")
    if len(items) > MAX_ITEMS:
        raise StetlineError(f"at most {MAX_ITEMS:,} statements at once, not {len(items):,}")
    if action == "annotate" and not (text or "").strip():
        raise StetlineError("a note cannot be empty")
    done = []
    for slot_id, version in items:
        if action == "approve":
            why = _needs_reading(actions.view(session, slot_id))
            if why is not None:
                raise StetlineError(f"{slot_id} cannot be approved in bulk: {why}; nothing was approved")
            actions.approve(session, slot_id, by=by, version=version)
        elif action == "annotate":
            actions.annotate(session, slot_id, text or "", by=by, version=version)
        else:
            actions.suppress(session, slot_id, by=by, version=version)
        done.append(slot_id)
    return done
