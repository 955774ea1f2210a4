"""Reconcile as a pure function: DESIGN's table of what a refresh does, case by case."""

from __future__ import annotations

from stetline.drafting import Draft
from stetline.reconcile import Basis, HumanWork, SlotState, decide

EV = {"value": {"value": 45.21, "shown": "45.2%"}, "period": {"value": "2024", "shown": "2024"}}
CLAIMS = {"direction": "up", "better": "improved"}
TEXT = "Recycling rose to 45.2% in 2024."


def draft(evidence=EV, claims=CLAIMS, text=TEXT) -> Draft:
    return Draft("change/a/t", "change", "a", "t", text, evidence, claims, 0.5, 0)


def state(*work: HumanWork, digest: str = "old", status: str = "edited") -> SlotState:
    return SlotState("change/a/t", digest, False, status, list(work))


def rewrite(text: str = "Recycling climbed to 45.2% in 2024.", basis: Basis | None = None) -> HumanWork:
    return HumanWork(1, "rewrite", text, TEXT, basis or Basis(EV, CLAIMS, TEXT))


def approval(basis: Basis | None = None) -> HumanWork:
    return HumanWork(2, "approval", TEXT, None, basis or Basis(EV, CLAIMS, TEXT))


def test_untouched_slot_updates_silently() -> None:
    d = decide(state(status="draft"), draft(text="Recycling rose to 46.0% in 2025."))
    assert d is not None and d.status == "draft" and d.write_draft and d.recheck is None


def test_unchanged_untouched_slot_writes_nothing() -> None:
    d0 = draft()
    assert decide(SlotState("change/a/t", d0.digest, False, "draft"), d0) is None


def test_changed_claim_sends_to_recheck_listing_each_claim() -> None:
    d = decide(state(rewrite()), draft(claims={"direction": "down", "better": "worsened"}))
    assert d.status == "recheck"
    assert d.reasons == ["claim-changed"]
    assert {"fact": "direction", "old": "up", "new": "down"} in d.recheck["changes"]
    assert d.recheck["clean"] is False  # never auto-applied


def test_changed_shown_number_sends_to_recheck_with_a_proposal() -> None:
    new_ev = {"value": {"value": 46.04, "shown": "46.0%"}, "period": {"value": "2024", "shown": "2024"}}
    d = decide(state(rewrite()), draft(evidence=new_ev, text="Recycling rose to 46.0% in 2024."))
    assert d.reasons == ["numbers-changed"]
    assert d.recheck["changes"] == [{"fact": "value", "old": "45.2%", "new": "46.0%"}]
    assert d.recheck["proposed"] == "Recycling climbed to 46.0% in 2024."
    assert d.recheck["clean"] is True


def test_digits_below_display_precision_only_rebase() -> None:
    new_ev = {"value": {"value": 45.24, "shown": "45.2%"}, "period": {"value": "2024", "shown": "2024"}}
    d = decide(state(rewrite()), draft(evidence=new_ev))
    assert d.recheck is None
    assert d.status == "edited"
    assert [w.id for w in d.rebase] == [1]


def test_gone_slot_with_layers_goes_to_recheck_and_keeps_them() -> None:
    d = decide(state(rewrite()), None)
    assert d.reasons == ["slot-gone"] and d.gone
    assert d.rebase == []  # nothing is dropped or rebased


def test_gone_slot_without_layers_just_leaves() -> None:
    d = decide(state(status="draft"), None)
    assert d.gone and d.recheck is None


def test_wording_change_of_an_approved_draft_is_low_severity() -> None:
    d = decide(state(approval(), status="approved"), draft(text="Recycling went up to 45.2% in 2024."))
    assert d.reasons == ["wording-changed"]
    assert d.severity < decide(state(rewrite()), draft(claims={"direction": "down", "better": "worsened"})).severity


def test_wording_change_under_a_rewrite_needs_no_recheck() -> None:
    d = decide(state(rewrite()), draft(text="Recycling went up to 45.2% in 2024."))
    assert d.recheck is None


def test_suppressed_slot_never_rechecks() -> None:
    sup = HumanWork(3, "suppress", None, TEXT, Basis(EV, CLAIMS, TEXT))
    d = decide(state(sup, status="suppressed"), draft(claims={"direction": "down", "better": "worsened"}))
    assert d.status == "suppressed" and d.recheck is None and d.rebase == [sup]


def test_live_fields_absorb_number_changes_but_not_claim_changes() -> None:
    live = rewrite("Recycling reached {{ value }} in {{ period }}.")
    new_ev = {"value": {"value": 46.04, "shown": "46.0%"}, "period": {"value": "2025", "shown": "2025"}}
    assert decide(state(live), draft(evidence=new_ev)).recheck is None
    flipped = decide(state(live), draft(evidence=new_ev, claims={"direction": "down", "better": "worsened"}))
    assert flipped.reasons == ["claim-changed", "numbers-changed"]
