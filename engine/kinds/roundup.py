"""``roundup`` (topic): the leaders and the movement of a topic in one paragraph.

Composed from the ``leaders`` and ``movement`` facts of the topic, the more newsworthy first (by
their interest scores). A topic with neither (fewer than three entities reporting or compared)
gets no roundup. Each level of nested entities with data gets its own roundup (``roundup/TOPIC``
for the main level, ``roundup/level-N/TOPIC`` above it). Claims: those of the parts stated,
namespaced by kind (``leaders.leader``, ``leaders.laggard``, ``movement.majority``,
``movement.exceptions``); evidence: theirs, by name.
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline.drafting import Candidate, Context, topic_slot
from stetline.kinds import leaders, movement, parts

KIND = "roundup"
#: the kinds whose facts it states
PARTS = ("leaders", "movement")
PHRASINGS = 2
#: the evidence of the leaders a roundup can print (the movement's is all printed)
PRINTED = {"leaders": ("period", "reporting", "best_value", "worst_value", "spread")}


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One roundup per topic and level with leaders or movement to state (slot as its parts': see nesting)."""
    tops = {c.slot.split("/", 1)[1]: c for c in ctx.kept(leaders)}
    moves = {c.slot.split("/", 1)[1]: c for c in ctx.kept(movement)}
    for level, _level_ctx in ctx.levels():
        for topic in ctx.topics:
            key = topic_slot(KIND, topic, level).split("/", 1)[1]
            chosen = [p for p in (tops.get(key), moves.get(key)) if p is not None]
            if not chosen:
                continue
            chosen.sort(key=lambda p: (-p.interest, PARTS.index(p.kind)))
            evidence, claims, facts = parts.compose(chosen, chosen, PRINTED)
            variables = {
                "label": ctx.label(topic), "the_label": ctx.the_label(topic), "lower_label": ctx.lower_label(topic),
                "order": [p.kind for p in chosen],
                "ld": tops[key].variables if key in tops else {}, "mv": moves[key].variables if key in moves else {},
            }
            yield Candidate(topic_slot(KIND, topic, level), KIND, None, topic, evidence, claims,
                            max(p.interest for p in chosen), variables, facts)
