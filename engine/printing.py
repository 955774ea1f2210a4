"""What the next publication prints for a slot, and why: the one rule every screen and format uses.

A slot that does not wait in recheck prints its current text (the text layer with live fields
rendered, else the draft) and the notes attached to it; a suppressed or gone one prints nothing.
A slot in recheck is printed only when the publisher allows it, and then never with a human text
or an approval the current data contradict:

- ``claim-changed`` (and ``wording-changed``, and ``merged`` until a person chooses a text): the new draft;
- ``slot-gone``: nothing (the slot no longer applies);
- ``numbers-changed``: the proposed update when it merged cleanly, otherwise the new draft.

Notes whose own basis changed wait with the slot and are left out. The statement page, the
lists, the publish page and the publication itself all ask ``printed`` (through
``stetline.actions.printed_view``), so what a screen calls printed is what gets printed.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from sqlalchemy.orm import Session

from stetline import reconcile
from stetline.livefields import LiveFieldError, LiveFields
from stetline.numbers import shown_changes
from stetline.status import Reason, Status
from stetline.store import ops
from stetline.store.models import Approval, Draft, Layer, Slot

SOURCES = ("draft", "rewrite", "pin", "proposal", "none")
ALLOW_RECHECK = "publish even though statements wait in recheck (--allow-recheck)"


@dataclass(frozen=True)
class Printed:
    """What a publication prints for one slot: the text alone (None: left out), where it comes from
    (one of SOURCES), the reason in one sentence for people, the slot's status word and the notes."""

    text: str | None
    source: str
    reason: str
    status: str
    notes: list[str] = field(default_factory=list)
    written_by: str | None = None  # who wrote the printed text layer, if one is printed
    approval: Approval | None = None  # the approval of the printed text, only if it holds for the current data

    @property
    def waiting(self) -> bool:
        """True when the slot waits in recheck: printed only if the publisher allows it, and marked."""
        return self.status == Status.RECHECK


def _note_holds(layer: Layer, draft: Draft) -> bool:
    """True when a note's basis agrees with the current draft (same claims, same numbers shown)."""
    basis = layer.basis or {}
    return (not reconcile.claim_changes(basis.get("claims") or {}, draft.claims)
            and not shown_changes(basis.get("evidence") or {}, draft.evidence))


def _proposal(slot: Slot, draft: Draft, text_layer: Layer | None, live: LiveFields) -> str | None:
    """The clean proposed update of a numbers-changed slot, rendered as it would read; else None."""
    recheck = slot.recheck or {}
    proposed = recheck.get("proposed")
    if not proposed or not recheck.get("clean") or recheck.get("conflicts"):
        return None
    if text_layer is None or text_layer.type != "rewrite":
        return str(proposed)
    try:
        return live.render(str(proposed), draft.evidence)
    except LiveFieldError:
        return None


def printed(slot: Slot, draft: Draft, layers: list[Layer], approval: Approval | None, current: str | None,
            live: LiveFields) -> Printed:
    """What the next publication prints for a slot; ``current`` is its current text (None if suppressed)."""
    notes = [x.text or "" for x in layers if x.type == "annotate"]
    text_layer = next((x for x in layers if x.type in reconcile.TEXT_LAYERS), None)
    if slot.status != Status.RECHECK:
        if slot.gone:
            return Printed(None, "none", "Left out: it no longer applies to the current data.", slot.status)
        if current is None or any(x.type == "suppress" for x in layers):
            who = next((x.by for x in layers if x.type == "suppress"), None)
            return Printed(None, "none", "Left out: suppressed" + (f" by {who}." if who else "."), slot.status)
        holds = approval if slot.status == Status.APPROVED else None
        if text_layer is None:
            source, reason = "draft", "Prints the draft of the current edition"
        else:
            source = text_layer.type
            reason = f"Prints the {'rewrite' if source == 'rewrite' else 'text pinned'} by {text_layer.by}"
        reason += f", approved by {holds.by}." if holds is not None else ", not approved."
        return Printed(current, source, reason, slot.status, notes,
                       text_layer.by if text_layer is not None else None, holds)
    reasons = list((slot.recheck or {}).get("reasons", []))
    said = ", ".join(reasons) or "recheck"
    kept = [x.text or "" for x in layers if x.type == "annotate" and _note_holds(x, draft)]
    left = len(notes) - len(kept)
    tail = f" {left} note(s) wait as well and are left out." if left else ""
    if slot.gone or Reason.SLOT_GONE in reasons:
        return Printed(None, "none", f"Waits in recheck ({said}): it no longer applies to the current data, "
                       "so nothing is printed." + tail, slot.status)
    if Reason.CLAIM_CHANGED not in reasons and Reason.NUMBERS_CHANGED in reasons:
        proposal = _proposal(slot, draft, text_layer, live)
        if proposal is not None:
            return Printed(proposal, "proposal", f"Waits in recheck ({said}): prints the proposed update with "
                           "the new numbers, marked as waiting." + tail, slot.status, kept)
        had = (slot.recheck or {}).get("proposed")
        why = "the proposed update has a conflict" if had else "there is no proposed update"
        return Printed(draft.text, "draft", f"Waits in recheck ({said}): {why}, so it prints the new draft, "
                       "marked as waiting." + tail, slot.status, kept)
    if Reason.CLAIM_CHANGED in reasons:
        why = "the current data contradict the earlier text"
    elif Reason.MERGED in reasons:
        why = "several statements were merged into it and a person picks the text"
    else:
        why = "the wording of the draft changed"
    return Printed(draft.text, "draft", f"Waits in recheck ({said}): {why}, so it prints the new draft, "
                   "marked as waiting." + tail, slot.status, kept)


def print_record(session: Session, slot_id: str) -> list[str]:
    """Sentences for a slot's page saying whether it was ever printed and ever approved."""
    lines = []
    first = ops.first_edition_of(session, slot_id)
    last = ops.latest_event(session, ["publish"])
    if first is not None and (last is None or (last.edition_id or 0) < first.id):
        lines.append(f"Never printed: no publication has been made since it first appeared (edition {first.label}).")
    elif last is not None:
        lines.append(f"The last publication ({last.at:%Y-%m-%d}, {last.detail.get('format', '?')}) was made "
                     "after it first appeared.")
    if ops.last_approval(session, slot_id) is None:
        lines.append("Never approved: nobody has signed it off yet.")
    return lines
