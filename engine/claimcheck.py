"""Which claims of a statement the new data contradict, and the deliberate act that approving it
against them takes (every contradicted claim confirmed by name, or all at once).

Pure: reads the slot, its draft, layers and approval handed in; writes nothing.
"""

from __future__ import annotations

from collections.abc import Collection
from typing import Any

from stetline import factwords, reconcile
from stetline.errors import StetlineError
from stetline.reconcile import Basis
from stetline.status import Reason
from stetline.store.models import Approval, Draft, Layer, Slot


class ClaimsNotConfirmed(StetlineError):
    """Approving a statement whose claims the new data contradict, without confirming each claim."""


def _word(value: Any) -> str:
    if value is None:
        return "none"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, list | tuple):
        return ", ".join(str(x) for x in value) or "none"
    return str(value)


def claim_words(change: dict[str, Any]) -> str:
    """One contradicted claim in words: ``direction: up → down`` (for ``direction`` or ``change.direction``)."""
    name = factwords.claim_name(str(change["fact"]))
    return f"{name.replace('_', ' ')}: {_word(change['old'])} → {_word(change['new'])}"


def contradicted_claims(slot: Slot, draft: Draft, layers: list[Layer],
                        approval: Approval | None) -> list[dict[str, Any]]:
    """The claims a person's work or sign-off was made against that the current draft contradicts.

    Only a slot in recheck for ``claim-changed`` has any; each is ``{fact, old, new, words}``.
    """
    if Reason.CLAIM_CHANGED not in (slot.recheck or {}).get("reasons", []):
        return []
    found: dict[str, dict[str, Any]] = {}
    bases = [x.basis for x in layers if x.type != reconcile.MERGED_LAYER]  # texts to choose from claim nothing
    bases += [approval.basis] if approval is not None else []
    for basis in bases:
        for change in reconcile.claim_changes(Basis.from_json(basis or {}).claims, draft.claims):
            found.setdefault(change["fact"], {**change, "words": claim_words(change)})
    return list(found.values())


def check_claims(slot_id: str, contradicted: list[dict[str, Any]], confirm: bool | Collection[str]) -> None:
    """Refuse an approval unless every contradicted claim was confirmed (``True`` confirms them all)."""
    if not contradicted or confirm is True:
        return
    confirmed = set() if confirm is False else {str(x) for x in confirm}
    missing = [c for c in contradicted if c["fact"] not in confirmed]
    if not missing:
        return
    listed = "; ".join(c["words"] for c in missing)
    raise ClaimsNotConfirmed(
        f"the new data contradict {len(missing)} claim(s) of {slot_id} that it was written or approved against "
        f"({listed}); read the text again and confirm each claim to approve it as it reads "
        "(stetline approve --confirm-claims, or tick each claim on the web page), or rewrite it"
    )
