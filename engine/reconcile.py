"""Reconcile: a pure function from (previous slot states, new drafts) to decisions.

For every slot of the new edition and every slot that carries human work (a layer or an
approval), decide what the refresh does: update the draft silently, keep it, send the slot to
recheck with reasons, changes and a proposed text, or update the bases of its human work when
only digits below display precision moved. No I/O happens here; nothing is ever deleted.
"""

from __future__ import annotations

import json
from collections.abc import Collection, Iterable
from dataclasses import dataclass, field
from typing import Any

from stetline import numbers, textmerge
from stetline.drafting import Draft
from stetline.livefields import has_live_fields
from stetline.status import REASONS as REASONS  # re-exported: callers import the reasons from here
from stetline.status import SEVERITY, Reason, Status

TEXT_LAYERS = ("rewrite", "pin")
#: the layer a merger leaves on its new slot: the merged texts (JSON) a person chooses between; it holds
#: the slot in recheck (``merged``) until a choice, a rewrite or a revert drops it (stetline.renames)
MERGED_LAYER = "merged"


@dataclass(frozen=True)
class Basis:
    """The evidence, claims and draft text a layer or an approval was made against."""

    evidence: dict[str, dict[str, Any]]
    claims: dict[str, Any]
    text: str

    def to_json(self) -> dict[str, Any]:
        """The basis as stored."""
        return {"evidence": self.evidence, "claims": self.claims, "text": self.text}

    @classmethod
    def from_json(cls, data: dict[str, Any]) -> Basis:
        """A basis from its stored form."""
        return cls(data.get("evidence", {}), data.get("claims", {}), data.get("text", ""))

    @classmethod
    def of(cls, draft: Draft) -> Basis:
        """The basis a draft offers."""
        return cls(draft.evidence, draft.claims, draft.text)


@dataclass(frozen=True)
class HumanWork:
    """One piece of human work with a basis: a layer (by id) or the approval."""

    id: int
    type: str  # rewrite | pin | annotate | suppress | merged | approval
    text: str | None
    base_text: str | None
    basis: Basis


@dataclass(slots=True)  # one per slot of the workspace: no __dict__ each
class SlotState:
    """What the store knows of a slot before the refresh."""

    slot: str
    digest: str
    gone: bool
    status: str
    work: list[HumanWork] = field(default_factory=list)
    version: int = 0  # the slot row's version, which a refresh's write increments

    @property
    def human(self) -> bool:
        """True when the slot carries a layer or an approval."""
        return bool(self.work)

    @property
    def suppressed(self) -> bool:
        """True when the slot is suppressed."""
        return any(w.type == "suppress" for w in self.work)

    @property
    def merged(self) -> list[dict[str, Any]] | None:
        """The merged texts still to choose from (a ``merged`` layer), if any."""
        layer = next((w for w in self.work if w.type == MERGED_LAYER), None)
        return None if layer is None else merged_texts(layer.text)

    @property
    def text_layer(self) -> HumanWork | None:
        """The slot's rewrite or pin, if any."""
        return next((w for w in self.work if w.type in TEXT_LAYERS), None)


@dataclass
class Decision:
    """What the refresh does to one slot."""

    slot: str
    status: str
    write_draft: bool = False
    gone: bool = False
    recheck: dict[str, Any] | None = None
    severity: int = 0
    rebase: list[HumanWork] = field(default_factory=list)
    silent: bool = False  # the draft changed and no human work was touched

    @property
    def reasons(self) -> list[str]:
        """The recheck reasons, empty when the slot is not sent to recheck."""
        return list(self.recheck["reasons"]) if self.recheck else []


def merged_texts(text: str | None) -> list[dict[str, Any]]:
    """The texts to choose from that a ``merged`` layer holds."""
    return list(json.loads(text or "[]"))


def claim_changes(old: dict[str, Any], new: dict[str, Any]) -> list[dict[str, Any]]:
    """The claims that differ, as {fact, old, new}."""
    return [
        {"fact": k, "old": old.get(k), "new": new.get(k)}
        for k in sorted(set(old) | set(new)) if old.get(k) != new.get(k)
    ]


def _live_only(work: HumanWork, changes: list[dict[str, Any]]) -> bool:
    """True when a rewrite's changed facts reach its text only through live fields."""
    if work.type != "rewrite" or not work.text or not has_live_fields(work.text):
        return False
    changed = {c["fact"] for c in changes}
    typed = {f for n in numbers.find_numbers(work.text) for f in numbers.trace(n, work.basis.evidence)}
    return not (typed & changed)


def propose(work: HumanWork | None, draft: Draft) -> dict[str, Any]:
    """A proposed text for a slot in recheck: a three-way merge of the rewrite, else the draft."""
    if work is None or work.type == "pin" or work.text is None:
        return {"proposed": draft.text, "clean": True, "conflicts": []}
    old = work.basis.evidence
    if draft.facts is not None:  # composed: keep the rewrite's own order of facts, with the new numbers
        return {"proposed": numbers.substitute(work.text, old, draft.facts["evidence"]).text, "clean": True,
                "conflicts": []}
    mine = numbers.substitute(work.text, old, draft.evidence).text
    base = numbers.substitute(work.base_text or work.basis.text, old, draft.evidence).text
    merged = textmerge.merge3(base, mine, draft.text)
    return {"proposed": merged.text, "clean": merged.clean, "conflicts": [list(c) for c in merged.conflicts]}


def judged(basis: Basis, draft: Draft) -> tuple[dict[str, Any], dict[str, dict[str, Any]]]:
    """The new claims and evidence a basis is compared with.

    A composed draft (blurb, roundup) is judged on the facts its earlier text stated: the new
    value of each of those claims and numbers, whether or not the new draft states them, and
    nothing it did not state (a new lead is not a contradiction). Other drafts: all of theirs.
    """
    if draft.facts is None:
        return draft.claims, draft.evidence
    claims, evidence = draft.facts["claims"], draft.facts["evidence"]
    return ({k: claims.get(k) for k in basis.claims},
            {k: evidence.get(k, {"value": None, "shown": None}) for k in basis.evidence})


def _compare(work: HumanWork, draft: Draft, has_text_layer: bool) -> tuple[set[Reason], list[dict[str, Any]]]:
    if work.type == MERGED_LAYER:  # texts to choose from wait for a person, whatever the data say
        return {Reason.MERGED}, []
    reasons: set[Reason] = set()
    changes: list[dict[str, Any]] = []
    new_claims, new_evidence = judged(work.basis, draft)
    claims = claim_changes(work.basis.claims, new_claims)
    shown = numbers.shown_changes(work.basis.evidence, new_evidence)
    if claims:
        reasons.add(Reason.CLAIM_CHANGED)
        changes += claims
    if shown and not (not claims and _live_only(work, shown)):
        reasons.add(Reason.NUMBERS_CHANGED)
    changes += shown
    if (
        not reasons and work.type == "approval" and not has_text_layer
        and work.basis.text != draft.text
    ):
        reasons.add(Reason.WORDING_CHANGED)
    return reasons, changes


def decide(state: SlotState | None, draft: Draft | None) -> Decision | None:
    """Decide one slot; None when nothing at all changes."""
    if state is None:
        assert draft is not None
        return Decision(draft.slot, Status.DRAFT, write_draft=True, silent=True)
    if draft is None:
        if state.gone:
            return None
        if not state.human:
            return Decision(state.slot, state.status, gone=True)
        if state.suppressed:
            return Decision(state.slot, Status.SUPPRESSED, gone=True)
        gone: dict[str, Any] = {
            "reasons": [Reason.SLOT_GONE], "changes": [], "proposed": None, "clean": False, "conflicts": [],
        }
        return Decision(state.slot, Status.RECHECK, gone=True, recheck=gone, severity=SEVERITY[Reason.SLOT_GONE])
    changed = draft.digest != state.digest
    if not state.human:
        if not changed and not state.gone:
            return None
        return Decision(state.slot, Status.DRAFT, write_draft=changed, silent=changed)
    if state.suppressed:
        return Decision(state.slot, Status.SUPPRESSED, write_draft=changed, rebase=list(state.work))
    has_text = state.text_layer is not None
    reasons: set[Reason] = set()
    changes: dict[str, dict[str, Any]] = {}
    rebase: list[HumanWork] = []
    for work in state.work:
        found, diff = _compare(work, draft, has_text)
        if found:
            reasons |= found
            for c in diff:
                changes.setdefault(c["fact"], c)
        else:
            rebase.append(work)
    if not reasons:
        approved = any(w.type == "approval" for w in state.work)
        status = Status.APPROVED if approved else Status.EDITED
        if not changed and state.status == status and not state.gone and not _needs_rebase(rebase, draft):
            return None
        return Decision(state.slot, status, write_draft=changed, rebase=rebase)
    ordered = [r for r in Reason if r in reasons]
    proposal = propose(state.text_layer, draft)
    severity = max(SEVERITY[r] for r in ordered)
    recheck: dict[str, Any] = {
        "reasons": ordered,
        "changes": list(changes.values()),
        "proposed": proposal["proposed"],
        "clean": proposal["clean"] and not reasons & {Reason.CLAIM_CHANGED, Reason.MERGED},
        "conflicts": proposal["conflicts"],
        "severity": severity,
    }
    if state.merged is not None:
        recheck["merged"] = state.merged
    return Decision(state.slot, Status.RECHECK, write_draft=changed, recheck=recheck, severity=severity, rebase=rebase)


def _needs_rebase(rebase: list[HumanWork], draft: Draft) -> bool:
    return any(w.basis.evidence != draft.evidence or w.basis.text != draft.text for w in rebase)


def reconcile(states: dict[str, SlotState], drafts: Iterable[Draft]) -> tuple[list[Decision], dict[str, Draft]]:
    """Decide every slot of a refresh; returns the decisions and the drafts by slot id."""
    decisions, by_slot = reconcile_drafted(states, drafts)
    return decisions + reconcile_gone(states, by_slot.keys()), by_slot


def reconcile_drafted(states: dict[str, SlotState], drafts: Iterable[Draft]) -> tuple[list[Decision], dict[str, Draft]]:
    """Decide the slots of some drafts (a refresh may pass them a kind at a time); decisions and drafts by slot."""
    by_slot: dict[str, Draft] = {}
    decisions: list[Decision] = []
    for draft in drafts:
        by_slot[draft.slot] = draft
        decision = decide(states.get(draft.slot), draft)
        if decision is not None:
            decisions.append(decision)
    return decisions, by_slot


def reconcile_gone(states: dict[str, SlotState], drafted: Collection[str]) -> list[Decision]:
    """Decide the slots no draft of this refresh has (``drafted``: every slot drafted)."""
    decisions: list[Decision] = []
    for slot, state in states.items():
        if slot not in drafted:
            decision = decide(state, None)
            if decision is not None:
                decisions.append(decision)
    return decisions
