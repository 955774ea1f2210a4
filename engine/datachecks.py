"""Worth a data check: the entities that went against most others on most topics in the current edition.

The pattern finder (kinds/patterns.py) says such a pattern as fact in the entity's profile and in the
headline, and both drafts claim it (``data_check``: the profile the topics, the headline the entities).
This module reads those claims back from the current drafts through the store, so that the recheck
queue (web page and CLI list) can show each flagged entity on a line of its own, whether or not any
statement waits in recheck. A pattern this strong is as often a slip in the data as news: the line
asks the reviewer to check the data. It is never printed in a publication; nothing here renders text
for one, and nothing here writes.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy.orm import Session

from stetline.store import ops

#: the claim the profile and the headline carry for a pattern (kinds/profile.py, kinds/headline.py)
CLAIM = "data_check"
#: what the queue calls the line, on the web page and in the CLI alike
TITLE = "Worth a data check"
#: what the line asks of the reviewer, and that it is not printed
NOTE = ("A pattern this strong is as often a slip in the data as news: check the data behind it before "
        "release. This note is for the people who review the statements; it is never printed.")


@dataclass(frozen=True)
class DataCheck:
    """One flagged entity: the topics where it went against most others, and the statement that says so."""

    entity: str
    name: str
    topics: tuple[tuple[str, str], ...]  # (key, label), in the order the topics are listed
    compared: int | None  # how many topics had a movement to compare (None: not known)
    slot: str  # the statement to read: its profile, or the headline when no profile is drafted

    def summary(self) -> str:
        """What the entity did, in words: "went against most others on 3 of 4 indicators compared: A, B and C"."""
        labels = [label for _key, label in self.topics]
        if not labels:  # only the headline names it: its profile is not drafted
            return "went against most others on most indicators compared"
        listed = labels[0] if len(labels) == 1 else ", ".join(labels[:-1]) + " and " + labels[-1]
        of = f" of {self.compared}" if self.compared else ""
        noun = "indicator" if self.compared == 1 or (not self.compared and len(labels) == 1) else "indicators"
        return f"went against most others on {len(labels)}{of} {noun} compared: {listed}"


def data_checks(session: Session) -> list[DataCheck]:
    """The entities the current edition's drafts flag for a data check, in file order.

    The headline names them (one draft to read); their profiles give the topics. A workspace that
    does not draft the headline has its profiles read instead.
    """
    headline = ops.current_of_kind(session, "headline")
    compared: int | None = None
    if headline:
        flagged = [str(k) for k in headline[0].claims.get(CLAIM) or []]
        compared = _compared(headline[0].evidence)
        profiles = ops.current_of_kind(session, "profile", flagged) if flagged else []
    else:
        profiles = [d for d in ops.current_of_kind(session, "profile") if d.claims.get(CLAIM)]
        flagged = [str(d.entity) for d in profiles]
    by_entity = {str(d.entity): d for d in profiles if d.claims.get(CLAIM)}
    checks: list[tuple[int, DataCheck]] = []
    for key in flagged:
        entity = ops.get_entity(session, key)
        profile = by_entity.get(key)
        topics: tuple[tuple[str, str], ...] = ()
        if profile is not None:
            rows = [(str(t), ops.get_topic(session, str(t))) for t in profile.claims[CLAIM]]
            rows.sort(key=lambda r: r[1].position if r[1] is not None else 0)
            topics = tuple((t, row.label if row is not None else t) for t, row in rows)
        checks.append((entity.position if entity is not None else 0, DataCheck(
            key, entity.name if entity is not None else key, topics,
            _compared(profile.evidence) if profile is not None else compared,
            profile.slot if profile is not None else "headline")))
    return [c for _p, c in sorted(checks, key=lambda pc: (pc[0], pc[1].entity))]


def _compared(evidence: dict[str, object]) -> int | None:
    fact = evidence.get("topics_compared")
    value = fact.get("value") if isinstance(fact, dict) else None
    return int(value) if isinstance(value, (int, float)) else None

