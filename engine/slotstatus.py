"""A slot's status from its human work, its current draft, and whether its rewrite still renders.

A rewrite's live fields are checked when it is saved, but a later load or settings change can
make a branch of it run that never ran before, and that branch may fail (a macro that calls
itself, a loop over too much). Such a slot goes to recheck with the reason ``render-failed`` and
the error; until someone edits, reverts or suppresses it, its text is shown as written, with a
warning, and never rendered again on a page. A merged slot's texts to choose from are a layer too
(``merged``, see stetline.renames): edits of other kinds keep it; a rewrite or a revert sets it
aside (:func:`set_aside`). Nothing here imports ``actions`` or ``loading``.
"""

from __future__ import annotations

from typing import Any

from sqlalchemy.orm import Session

from stetline import reconcile
from stetline import settings as settings_mod
from stetline.drafting import Draft as DraftText
from stetline.livefields import LiveFieldError, LiveFields, has_live_fields
from stetline.phrasing import HouseStyle
from stetline.reconcile import MERGED_LAYER, Basis, HumanWork, SlotState, merged_texts
from stetline.status import Reason, Status
from stetline.store import ops
from stetline.store.models import Draft, Layer, Slot, utcnow


def house_style(session: Session) -> tuple[HouseStyle, dict[str, Any]]:
    """The workspace's house style and all its settings."""
    values = settings_mod.with_defaults(ops.get_settings(session))
    style = HouseStyle(
        locale=values["locale"], serial_comma=bool(values["serial_comma"]),
        percent_word=values["percent_word"], small_numbers_in_words=bool(values["small_numbers_in_words"]),
        possessive_after_s=str(values["possessive_after_s"]),
    )
    return style, values


def live_rewrite(layers: list[Layer]) -> Layer | None:
    """The slot's rewrite when it holds live fields and the slot is not suppressed."""
    if any(x.type == "suppress" for x in layers):
        return None
    return next((x for x in layers if x.type == "rewrite" and x.text and has_live_fields(x.text)), None)


def marked_unrenderable(slot: Slot) -> str | None:
    """The render error a slot was sent to recheck with, if it was."""
    recheck = slot.recheck or {}
    return str(recheck.get("error") or "the rewrite cannot be rendered") if Reason.RENDER_FAILED in recheck.get(
        "reasons", []) else None


def render_error(live: LiveFields, layers: list[Layer], draft: Draft) -> str | None:
    """Why the slot's rewrite cannot be rendered against its draft's evidence, or None."""
    layer = live_rewrite(layers)
    if layer is None or layer.text is None:
        return None
    try:
        live.render(layer.text, draft.evidence)
    except LiveFieldError as exc:
        return str(exc)
    return None


def _mark(session: Session, slot: Slot, error: str, by: str) -> bool:
    """Put a slot in recheck for a render failure; True when it was not in recheck before."""
    recheck = dict(slot.recheck or {"changes": [], "proposed": None, "clean": False, "conflicts": []})
    was_waiting = slot.status == Status.RECHECK
    if Reason.RENDER_FAILED in recheck.get("reasons", []) and recheck.get("error") == error:
        return False
    reasons = set(recheck.get("reasons", [])) | {Reason.RENDER_FAILED}
    recheck["reasons"] = [r for r in reconcile.REASONS if r in reasons]
    recheck["error"] = error
    recheck["clean"] = False
    recheck["severity"] = max(reconcile.SEVERITY[r] for r in recheck["reasons"])
    slot.recheck, slot.severity, slot.status = recheck, recheck["severity"], Status.RECHECK
    slot.version += 1
    slot.updated_at = utcnow()
    ops.add_event(session, by, "recheck", slot.id, detail={"reasons": [Reason.RENDER_FAILED], "error": error})
    return not was_waiting


def _as_text(draft: Draft) -> DraftText:
    return DraftText(draft.slot_id, "", None, None, draft.text, draft.evidence, draft.claims, draft.interest,
                     draft.phrasing)


def restatus(session: Session, slot: Slot, draft: Draft, live: LiveFields | None = None, by: str = "") -> None:
    """Re-derive a slot's status and recheck from its human work and current draft.

    With ``live``, a rewrite that cannot be rendered also sends the slot to recheck.
    """
    layers = ops.active_layers(session, slot.id)
    approval = ops.active_approval(session, slot.id)
    work = [HumanWork(x.id, x.type, x.text, x.base_text, Basis.from_json(x.basis)) for x in layers]
    if approval is not None:
        work.append(HumanWork(approval.id, "approval", approval.text, None, Basis.from_json(approval.basis)))
    state = SlotState(slot.id, slot.digest, False, "", work)
    if slot.gone:
        if not work:
            slot.status, slot.recheck, slot.severity = Status.DRAFT, None, 0
        return
    decision = reconcile.decide(state, _as_text(draft))
    if decision is None:
        slot.status = Status.DRAFT if not work else slot.status
        if not work:  # nothing of a person's is left to wait on (the last of it was set aside)
            slot.recheck, slot.severity = None, 0
        if marked_unrenderable(slot):  # nothing else holds it in recheck
            slot.status = Status.DRAFT if not work else Status.APPROVED if approval is not None else Status.EDITED
            slot.recheck, slot.severity = None, 0
    else:
        slot.status = decision.status
        slot.recheck = decision.recheck
        slot.severity = decision.severity
    if live is not None:
        error = render_error(live, layers, draft)
        if error is not None:
            _mark(session, slot, error, by)


def recheck_unrenderable(session: Session, *, by: str) -> list[str]:
    """Send every slot whose rewrite no longer renders to recheck; return those newly sent."""
    live = LiveFields(house_style(session)[0])
    by_slot: dict[str, list[Layer]] = {}
    for layer in ops.all_active_layers(session):
        by_slot.setdefault(layer.slot_id, []).append(layer)
    sent = []
    for slot_id, layers in by_slot.items():
        if live_rewrite(layers) is None:
            continue
        slot = ops.get_slot(session, slot_id)
        if slot is None or slot.gone:
            continue
        draft = ops.get_draft(session, slot.draft_id)
        if draft is None:
            continue
        error = render_error(live, layers, draft)
        if error is None:
            if marked_unrenderable(slot):  # it renders again (a setting changed back)
                restatus(session, slot, draft)
                slot.version += 1
            continue
        if _mark(session, slot, error, by):
            sent.append(slot_id)
    return sent


def merged_layer(session: Session, slot_id: str) -> Layer | None:
    """The slot's ``merged`` layer (its texts to choose from), if it has one."""
    return next((x for x in ops.active_layers(session, slot_id) if x.type == MERGED_LAYER), None)


def set_aside(session: Session, slot_id: str, by: str, action: str) -> bool:
    """Drop a slot's merged texts because a person's ``action`` (a rewrite, a revert) replaced the choice;
    the history says so. False when the slot had none."""
    layer = merged_layer(session, slot_id)
    if layer is None:
        return False
    ops.drop(session, layer, by)
    ops.add_event(session, by, "set-aside-merged", slot_id, detail={
        "merged": merged_texts(layer.text), "by_action": action,
        "words": f"the merged texts to choose from were set aside by a {action}"})
    return True
