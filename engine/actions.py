"""What people do to a slot: rewrite, pin, annotate, suppress, revert, approve; and how a slot reads.

Every action checks the slot's version when one is given (optimistic locking), records an event
with the text before and after, and re-derives the slot's status by comparing its remaining
human work with the current draft (the same rule a refresh applies).
"""

from __future__ import annotations

from collections.abc import Collection
from dataclasses import dataclass
from typing import Any

from sqlalchemy.orm import Session

from stetline import reconcile
from stetline.accounts import authorize, check_two_person_rule
from stetline.claimcheck import ClaimsNotConfirmed as ClaimsNotConfirmed  # re-exported
from stetline.claimcheck import check_claims, contradicted_claims
from stetline.errors import Conflict, NotFound, StetlineError
from stetline.livefields import MAX_TEXT, LiveFieldError, LiveFields, has_live_fields
from stetline.printing import Printed, printed
from stetline.slotstatus import house_style, marked_unrenderable, merged_layer, render_error, restatus, set_aside
from stetline.status import STATUSES as STATUSES  # re-exported: the CLI and the web app list them from here
from stetline.status import Reason, Status
from stetline.store import ops
from stetline.store.models import Approval, Draft, Layer, Slot, utcnow
from stetline.timestamps import iso_time as iso_time  # re-exported: pages show times with it

MAX_REWRITE = MAX_TEXT  # characters a rewrite may hold as typed (live fields included)
MAX_NOTE = 10_000  # characters of a note


def check_length(text: str, limit: int, what: str) -> None:
    """Refuse a text longer than a limit, saying by how much."""
    if len(text) > limit:
        raise StetlineError(f"{what} may hold at most {limit:,} characters; this one has {len(text):,}. "
                            "Shorten it (a statement is read in a few lines)")


def _slot(session: Session, slot_id: str) -> tuple[Slot, Draft]:
    slot = ops.get_slot(session, slot_id, lock=True)
    if slot is None:
        raise NotFound(f"no statement {slot_id!r}; list them with: stetline list")
    draft = ops.get_draft(session, slot.draft_id)
    assert draft is not None
    return slot, draft


def _check_version(slot: Slot, version: int | None) -> None:
    if version is not None and version != slot.version:
        raise Conflict(
            f"{slot.id} changed since you opened it (your version {version}, now {slot.version}); "
            "reload it and apply your change again"
        )


def _basis(draft: Draft) -> dict[str, Any]:
    return {"evidence": draft.evidence, "claims": draft.claims, "text": draft.text}


def published_text(session: Session, slot: Slot, draft: Draft, layers: list[Layer] | None = None,
                   live: LiveFields | None = None) -> str | None:
    """The text that would be published now: the text layer (live fields rendered), else the draft.

    A rewrite that cannot be rendered gives its text as written (see ``published``).
    """
    return published(session, slot, draft, layers, live)[0]


def published(session: Session, slot: Slot, draft: Draft, layers: list[Layer] | None = None,
              live: LiveFields | None = None) -> tuple[str | None, str | None]:
    """The text that would be published now and, when its rewrite cannot be rendered, why."""
    if layers is None:
        layers = ops.active_layers(session, slot.id)
    if any(layer.type == "suppress" for layer in layers):
        return None, None
    text_layer = next((layer for layer in layers if layer.type in reconcile.TEXT_LAYERS), None)
    if text_layer is None or text_layer.text is None:
        return draft.text, None
    if text_layer.type != "rewrite":
        return text_layer.text, None
    known = marked_unrenderable(slot)
    if known is not None:  # a known failure is not tried again on every page
        return text_layer.text, known
    live = live or LiveFields(house_style(session)[0])
    try:
        return live.render(text_layer.text, draft.evidence), None
    except LiveFieldError as exc:
        return text_layer.text, str(exc)


def stored_text(layers: list[Layer], draft: Draft) -> str | None:
    """What the slot holds as written (no live field rendered): None when suppressed."""
    if any(layer.type == "suppress" for layer in layers):
        return None
    text_layer = next((layer for layer in layers if layer.type in reconcile.TEXT_LAYERS), None)
    return draft.text if text_layer is None or text_layer.text is None else text_layer.text


def _refuse_unrenderable(session: Session, slot: Slot, draft: Draft, layers: list[Layer], what: str) -> None:
    error = marked_unrenderable(slot) or render_error(LiveFields(house_style(session)[0]), layers, draft)
    if error is not None:
        raise StetlineError(f"the rewrite of {slot.id} cannot be rendered ({error}); edit or revert it before "
                            f"you {what}")


def _touch(slot: Slot) -> None:
    slot.version += 1
    slot.updated_at = utcnow()


def layer_author(layer: Layer | None) -> str | None:
    """Who wrote the words a text layer keeps (None: the machine's, or no layer)."""
    if layer is None:
        return None
    if layer.author is None and layer.type == "rewrite":
        return layer.by  # a rewrite's words are its writer's
    return layer.author


def _text_layer(session: Session, slot_id: str) -> Layer | None:
    return next((x for x in ops.active_layers(session, slot_id) if x.type in reconcile.TEXT_LAYERS), None)


def _rendered(live: LiveFields, text: str, evidence: dict[str, Any]) -> str | None:
    try:
        return live.render(text, evidence)
    except LiveFieldError:
        return None


def words_author(session: Session, slot_id: str, text: str, draft: Draft, by: str) -> str | None:
    """Who wrote a text a person puts on a slot: whoever first wrote those words there, else ``by``.

    A restored rewrite, a worksheet cell holding an earlier text, or a text copied from the
    page keeps its author; the two-person rule asks this, not who clicked.
    """
    text = text.strip()
    live: LiveFields | None = None
    for layer in ops.text_layer_history(session, slot_id):
        if layer.text is None:
            continue
        same = layer.text.strip() == text
        if not same and layer.type == "rewrite" and has_live_fields(layer.text):
            live = live or LiveFields(house_style(session)[0])
            same = _rendered(live, layer.text, draft.evidence) == text
        if same:
            return layer_author(layer)
    return by


def _drop_approval(session: Session, slot_id: str, by: str) -> None:
    approval = ops.active_approval(session, slot_id)
    if approval is not None:
        ops.drop(session, approval, by)


def rewrite(session: Session, slot_id: str, text: str, *, by: str, version: int | None = None) -> Slot:
    """Replace a slot's text with a person's rewrite (live fields allowed)."""
    text = text.strip()
    if not text:
        raise StetlineError("a rewrite cannot be empty; to leave the statement out, suppress it")
    check_length(text, MAX_REWRITE, "a rewrite")
    authorize(session, by, "rewrite")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    LiveFields(house_style(session)[0]).render(text, draft.evidence)  # refuse template errors
    before = published_text(session, slot, draft)
    author = words_author(session, slot_id, text, draft, by)
    old = _text_layer(session, slot_id)
    if old is not None:
        ops.drop(session, old, by)
    ops.add_layer(session, slot_id, "rewrite", text, draft.text, _basis(draft), by).author = author
    _drop_approval(session, slot_id, by)
    set_aside(session, slot_id, by, "rewrite")  # a text of one's own replaces the choice of merged texts
    session.flush()
    restatus(session, slot, draft)
    _touch(slot)
    ops.add_event(session, by, "rewrite", slot_id, before=before, after=text)
    return slot


def pin(session: Session, slot_id: str, *, by: str, version: int | None = None) -> Slot:
    """Keep the slot's current text word for word, numbers included."""
    authorize(session, by, "pin")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    _refuse_unrenderable(session, slot, draft, ops.active_layers(session, slot_id), "pin it")
    before = published_text(session, slot, draft)
    if before is None:
        raise StetlineError(f"{slot_id} is suppressed; lift the suppression before pinning")
    old = _text_layer(session, slot_id)
    if old is not None:
        ops.drop(session, old, by)
    # a pin keeps the words of the text it is put on: the machine's, or the layer's author's
    ops.add_layer(session, slot_id, "pin", before, draft.text, _basis(draft), by).author = layer_author(old)
    session.flush()
    restatus(session, slot, draft)
    _touch(slot)
    ops.add_event(session, by, "pin", slot_id, before=before, after=before)
    return slot


def annotate(session: Session, slot_id: str, text: str, *, by: str, version: int | None = None) -> Slot:
    """Attach a note (context, an anecdote) to a slot; the draft stays automatic."""
    text = text.strip()
    if not text:
        raise StetlineError("a note cannot be empty")
    check_length(text, MAX_NOTE, "a note")
    authorize(session, by, "annotate")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    ops.add_layer(session, slot_id, "annotate", text, draft.text, _basis(draft), by)
    session.flush()
    restatus(session, slot, draft, LiveFields(house_style(session)[0]), by)
    _touch(slot)
    ops.add_event(session, by, "annotate", slot_id, after=text)
    return slot


def suppress(session: Session, slot_id: str, *, by: str, lift: bool = False, version: int | None = None) -> Slot:
    """Leave a slot out of the publication (or, with ``lift``, put it back)."""
    authorize(session, by, "suppress")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    layers = ops.active_layers(session, slot_id)
    current = [x for x in layers if x.type == "suppress"]
    before = stored_text(layers, draft)  # never rendered: a broken rewrite can always be suppressed
    if lift:
        if not current:
            raise StetlineError(f"{slot_id} is not suppressed")
        for layer in current:
            ops.drop(session, layer, by)
    elif current:
        raise StetlineError(f"{slot_id} is already suppressed")
    else:
        ops.add_layer(session, slot_id, "suppress", None, draft.text, _basis(draft), by)
    session.flush()
    restatus(session, slot, draft)
    _touch(slot)
    ops.add_event(session, by, "unsuppress" if lift else "suppress", slot_id, before=before,
                  after=stored_text(ops.active_layers(session, slot_id), draft))
    return slot


def revert(session: Session, slot_id: str, *, by: str, version: int | None = None) -> Slot:
    """Drop the slot's text layer (rewrite or pin) and any merged texts to choose from: the draft shows again."""
    authorize(session, by, "revert")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    layer = _text_layer(session, slot_id)
    if layer is None and merged_layer(session, slot_id) is None:
        raise StetlineError(f"{slot_id} has no rewrite or pin to revert")
    before = draft.text if layer is None else layer.text  # as written: a broken rewrite can always be reverted
    if layer is not None:
        ops.drop(session, layer, by)
    _drop_approval(session, slot_id, by)
    set_aside(session, slot_id, by, "revert")
    session.flush()
    restatus(session, slot, draft)
    _touch(slot)
    ops.add_event(session, by, "revert", slot_id, before=before, after=draft.text)
    return slot


def approve(session: Session, slot_id: str, *, by: str, accept_proposed: bool = False,
            version: int | None = None, confirm_claims: bool | Collection[str] = False) -> Slot:
    """Sign off a slot against the current edition, optionally taking the proposed text first.

    A statement whose claims the new data contradict (``claim-changed``) is approved only when
    ``confirm_claims`` names every contradicted claim (or is ``True``); otherwise
    :class:`ClaimsNotConfirmed` lists them and nothing changes.
    """
    authorize(session, by, "accept" if accept_proposed else "approve")
    slot, draft = _slot(session, slot_id)
    _check_version(slot, version)
    layers = ops.active_layers(session, slot_id)
    if any(x.type == "suppress" for x in layers):
        raise StetlineError(f"{slot_id} is suppressed: there is no text to approve")
    if any(x.type == reconcile.MERGED_LAYER for x in layers):
        raise StetlineError(f"several statements were merged into {slot_id}: choose a text first (stetline choose "
                            f"{slot_id} --text N, or --draft), or write a rewrite")
    recheck = slot.recheck or {}
    proposed = recheck.get("proposed")
    if accept_proposed and not proposed:
        raise StetlineError(f"{slot_id} has no proposed text to accept")
    if accept_proposed and recheck.get("conflicts"):
        raise StetlineError(
            f"the proposed text of {slot_id} has a conflict; edit it (stetline rewrite) before approving"
        )
    if not accept_proposed:
        _refuse_unrenderable(session, slot, draft, layers, "approve it")
    contradicted = contradicted_claims(slot, draft, layers, ops.active_approval(session, slot_id))
    check_claims(slot_id, contradicted, confirm_claims)
    check_two_person_rule(session, by, layer_author(next((x for x in layers if x.type in reconcile.TEXT_LAYERS), None)))
    before = published_text(session, slot, draft, layers)
    detail: dict[str, Any] = {"reasons": list(recheck.get("reasons", []))}
    if contradicted:
        detail["confirmed_claims"] = [c["words"] for c in contradicted]
    action = "approve"
    if accept_proposed:
        text_layer = next((x for x in layers if x.type in reconcile.TEXT_LAYERS), None)
        if text_layer is not None:  # the text stays its author's; the event and approval name the approver
            ops.drop(session, text_layer, by)
            new_type = "pin" if text_layer.type == "pin" else "rewrite"
            # the proposal merges the layer's words with the new draft's: they stay the author's
            author = layer_author(text_layer)
            ops.add_layer(session, slot_id, new_type, proposed, draft.text, _basis(draft), text_layer.by).author = \
                author
            detail["author"] = author
        action = "accept"
    for layer in layers:
        if layer.dropped_at is None:
            layer.basis = _basis(draft)
    _drop_approval(session, slot_id, by)
    session.flush()
    after = published_text(session, slot, draft)
    ops.add_approval(session, slot_id, after or "", _basis(draft), by)
    slot.recheck, slot.severity = None, 0
    slot.status = Status.APPROVED
    _touch(slot)
    ops.add_event(session, by, action, slot_id, before=before, after=after, detail=detail)
    return slot


# -- how a slot reads -----------------------------------------------------------------------

@dataclass
class SlotView:
    """Everything about one slot that the CLI and the web app show."""

    slot: Slot
    draft: Draft
    layers: list[Layer]
    approval: Approval | None

    def printed(self, session: Session, live: LiveFields | None = None) -> Printed:
        """What the next publication prints for this slot, and why (see stetline.printing)."""
        live = live or LiveFields(house_style(session)[0])
        current = published_text(session, self.slot, self.draft, self.layers, live)
        return printed(self.slot, self.draft, self.layers, self.approval, current, live)

    def to_json(self, session: Session, live: LiveFields | None = None) -> dict[str, Any]:
        """The slot as DESIGN's JSON contract gives it (``text``: what the next publication prints)."""
        live = live or LiveFields(house_style(session)[0])
        current, render_problem = published(session, self.slot, self.draft, self.layers, live)
        shown = printed(self.slot, self.draft, self.layers, self.approval, current, live)
        text_layer = next((x for x in self.layers if x.type in reconcile.TEXT_LAYERS), None)
        suppressed = any(x.type == "suppress" for x in self.layers)
        recheck = None
        if self.slot.recheck:
            r = self.slot.recheck
            recheck = {
                "reasons": list(r.get("reasons", [])), "changes": list(r.get("changes", [])),
                "proposed": r.get("proposed"), "clean": bool(r.get("clean")),
                "conflicts": list(r.get("conflicts", [])), "severity": r.get("severity", 0),
                "contradicted": contradicted_claims(self.slot, self.draft, self.layers, self.approval),
                "merged": list(r.get("merged") or []),  # merged entities' texts to choose from (stetline.renames)
            }
        return {
            "slot": self.slot.id,
            "kind": self.slot.kind,
            "entity": self.slot.entity,
            "topic": self.slot.topic,
            "status": self.slot.status,
            "text": shown.text,
            "printed": {"source": shown.source, "reason": shown.reason, "notes": shown.notes},
            "current": current,
            "render_error": render_problem,
            "draft": self.draft.text,
            "layer": None if text_layer is None else {
                "type": text_layer.type, "text": text_layer.text, "by": text_layer.by, "at": iso_time(text_layer.at),
            },
            "notes": [{"text": x.text, "by": x.by, "at": iso_time(x.at)} for x in self.layers if x.type == "annotate"],
            "suppressed": suppressed,
            "recheck": recheck,
            "evidence": self.draft.evidence,
            "claims": self.draft.claims,
            "version": self.slot.version,
            "gone": self.slot.gone,
            "interest": self.slot.interest,
        }


def view(session: Session, slot_id: str) -> SlotView:
    """Everything about one slot."""
    slot = ops.get_slot(session, slot_id)
    if slot is None:
        raise NotFound(f"no statement {slot_id!r}; list them with: stetline list")
    draft = ops.get_draft(session, slot.draft_id)
    assert draft is not None
    return SlotView(slot, draft, ops.active_layers(session, slot_id), ops.active_approval(session, slot_id))


def views(session: Session, f: ops.SlotFilter, *, order: str = "id", limit: int | None = None,
          offset: int = 0) -> list[SlotView]:
    """Many slots with their layers, loaded in bulk."""
    rows = ops.list_slots(session, f, order=order, limit=limit, offset=offset)
    layers = ops.layers_for(session, [s.id for s, _ in rows])
    approvals = ops.approvals_for(session, [s.id for s, _ in rows])
    return [SlotView(s, d, layers.get(s.id, []), approvals.get(s.id)) for s, d in rows if d is not None]


def history(session: Session, slot_id: str) -> list[dict[str, Any]]:
    """A slot's events, oldest first, as JSON objects."""
    return [
        {"at": iso_time(e.at), "by": e.by, "action": e.action, "before": e.before, "after": e.after, "detail": e.detail}
        for e in ops.events_for(session, slot_id)
    ]


def clean_proposals(session: Session) -> list[str]:
    """Slots in recheck only because numbers changed, whose proposal merged cleanly."""
    rows = ops.list_slots(session, ops.SlotFilter(status=Status.RECHECK), order="severity")
    return [
        slot.id for slot, _draft in rows
        if slot.recheck and slot.recheck.get("reasons") == [Reason.NUMBERS_CHANGED]
        and slot.recheck.get("clean") and not slot.recheck.get("conflicts") and slot.recheck.get("proposed")
    ]


def accept_all_clean(session: Session, *, by: str) -> list[str]:
    """Accept every clean numbers-changed proposal, each as its own event; return the slots."""
    done = []
    for slot_id in clean_proposals(session):
        approve(session, slot_id, by=by, accept_proposed=True)
        done.append(slot_id)
    return done
