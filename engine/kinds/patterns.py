"""Patterns across statements: an entity that goes against most others on most topics.

An entity is named an exception in a topic's ``movement`` when at least three quarters of the
entities that moved went the other way. When one entity is an exception on more than half of the
topics with a movement (two at least), that is a pattern worth saying in its profile and in the
headline, and worth a data check before publication: the profile and headline claim it
(``data_check``), and the recheck queue shows each such entity on a line of its own
(datachecks.py reads the claims back), never in the printed text.
Nothing here renders text.
"""

from __future__ import annotations

from dataclasses import dataclass

from stetline.drafting import Context
from stetline.kinds import movement

#: at least this many topics with a movement before a pattern is said (one topic is no pattern)
MIN_TOPICS = 2


@dataclass(frozen=True)
class Pattern:
    """One entity's pattern: the topics where it was an exception, and whether it was the only one each time."""

    topics: tuple[str, ...]
    of: int
    alone: bool


def exceptions_by_entity(ctx: Context) -> dict[str, Pattern]:
    """The entities that were an exception on most topics with a movement, with their topics."""
    moves = [c for c in ctx.kept(movement) if c.topic is not None]
    if len(moves) < MIN_TOPICS:
        return {}
    found: dict[str, list[str]] = {}
    alone: dict[str, bool] = {}
    for c in moves:
        exceptions = list(c.claims.get("exceptions") or [])
        for key in exceptions:
            found.setdefault(key, []).append(str(c.topic))
            alone[key] = alone.get(key, True) and len(exceptions) == 1
    return {key: Pattern(tuple(sorted(topics)), len(moves), alone[key]) for key, topics in found.items()
            if len(topics) >= MIN_TOPICS and 2 * len(topics) > len(moves)}
