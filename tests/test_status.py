"""Statuses and recheck reasons are one vocabulary: the words DESIGN lists, wherever they are written."""

from __future__ import annotations

import json

import orjson

from stetline.drafting import Draft
from stetline.reconcile import Basis, HumanWork, SlotState, decide
from stetline.status import REASONS, STATUSES, Reason, Status


def test_the_words_are_designs() -> None:
    # DESIGN.md, "Statuses of a slot" and the reconcile table: the words users see and filter by
    assert STATUSES == ("draft", "edited", "approved", "recheck", "suppressed")
    # plus the project's own `merged` (entities merged at a load; README, "Renamed and merged entities")
    # and `render-failed` (a rewrite whose live fields no longer render; README)
    assert REASONS == ("claim-changed", "slot-gone", "merged", "render-failed", "numbers-changed", "wording-changed")
    assert all(type(s) is str for s in STATUSES + REASONS)  # option lists get plain words


def test_a_status_read_back_as_text_equals_its_member() -> None:
    assert Status("recheck") is Status.RECHECK
    assert "recheck" == Status.RECHECK and f"{Status.RECHECK}" == "recheck"
    assert {"approved": 1}[Status.APPROVED] == 1


def test_a_recheck_is_stored_with_plain_words() -> None:
    evidence = {"value": {"value": 4.0, "shown": "4%"}}
    old = Basis(evidence, {"direction": "up"}, "It rose to 4%.")
    approval = HumanWork(1, "approval", "It rose to 4%.", None, old)
    state = SlotState("change/a/t", "old-digest", False, "approved", [approval])
    new = Draft("change/a/t", "change", "a", "t", "It fell to 3%.", {"value": {"value": 3.0, "shown": "3%"}},
                {"direction": "down"}, 0.5, 0)
    decision = decide(state, new)
    assert decision is not None and decision.status == "recheck"
    assert decision.reasons == [Reason.CLAIM_CHANGED, Reason.NUMBERS_CHANGED]  # most urgent first
    for dumped in (json.dumps(decision.recheck), orjson.dumps(decision.recheck).decode()):
        assert json.loads(dumped)["reasons"] == ["claim-changed", "numbers-changed"]
    assert json.loads(json.dumps({"status": decision.status})) == {"status": "recheck"}
