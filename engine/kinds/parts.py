"""The part facts a composed kind (blurb, roundup) states: the candidates of the part kinds, keyed by slot.

Each part kind is asked once per drafting pass (``Context.kept``), so the part kinds, when a
workspace drafts them too, and the composed kinds share the answers. Nothing here renders text.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping, Sequence
from types import ModuleType
from typing import Any

from stetline.drafting import Candidate, Context


def by_key(ctx: Context, kind: ModuleType) -> dict[tuple[str | None, str | None], Candidate]:
    """A part kind's candidates by (entity, topic), computed once per drafting pass."""
    return {(c.entity, c.topic): c for c in ctx.kept(kind)}


def aligned(ctx: Context, lead: ModuleType, others: Sequence[ModuleType],
            ) -> Iterator[tuple[Candidate, list[Candidate | None]]]:
    """Each candidate of ``lead`` with the candidates of ``others`` for its (entity, topic), read side by side.

    The cell kinds yield their cells in the fact table's order (``lead`` every cell, the others
    the cells they have something for), so a candidate is matched as it comes and none is held
    past its cell: memory stays flat however many cells an edition has. A part left unmatched
    (a kind yielding out of that order) is an error, never a part silently dropped.
    """
    streams = [iter(ctx.part(kind)) for kind in others]
    heads = [next(stream, None) for stream in streams]
    for c in ctx.part(lead):
        matched: list[Candidate | None] = []
        for i, head in enumerate(heads):
            if head is not None and head.entity == c.entity and head.topic == c.topic:
                matched.append(head)
                heads[i] = next(streams[i], None)
            else:
                matched.append(None)
        yield c, matched
    unmatched = [f"{kind.KIND} {head.slot}" for kind, head in zip(others, heads) if head is not None]
    if unmatched:
        raise RuntimeError(f"part candidates out of the fact table's order: {', '.join(unmatched)}")


def compose(stated: list[Candidate], known: list[Candidate], printed: Mapping[str, tuple[str, ...]] | None = None,
            ) -> tuple[dict[str, Any], dict[str, Any], dict[str, Any]]:
    """The evidence and namespaced claims of the stated parts, and every known part's facts.

    ``printed`` names, per part kind, the evidence a composed text can print (others are left out
    of its evidence, so a number it never shows cannot send it to recheck); a kind not named: all.
    Returns (evidence, claims, facts): evidence is flat (the part kinds' evidence names do not
    clash; value and period agree between them), claims are ``kind.claim``; ``facts`` holds the
    claims and evidence of every known part, stated or not, for rechecks of the stated ones.
    """
    evidence: dict[str, Any] = {}
    claims: dict[str, Any] = {}
    for part in stated:
        names = (printed or {}).get(part.kind)
        for name, entry in part.evidence.items():
            if names is None or name in names:
                evidence.setdefault(name, entry)
        claims.update({f"{part.kind}.{k}": v for k, v in part.claims.items()})
    all_evidence: dict[str, Any] = {}
    all_claims: dict[str, Any] = {}
    for part in known:
        for name, entry in part.evidence.items():
            all_evidence.setdefault(name, entry)
        all_claims.update({f"{part.kind}.{k}": v for k, v in part.claims.items()})
    return evidence, claims, {"evidence": all_evidence, "claims": all_claims}
