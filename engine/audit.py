"""The number audit: every number in the text that would be published, with the fact it comes from.

A number is traced when it sits inside a fact's displayed text ("45.2%", "4.7 per 1,000
residents"), or inside a label (the topic label, its unit, the entity name: "per 1,000 residents"
is a label, not a figure), or inside the product's own fixed wording (the "out of 100" of a
composite score), or else when it matches a fact by value within display rounding.
Anything else is *untraced*: a number a person typed that no fact backs.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from stetline.actions import views
from stetline.livefields import LiveFields
from stetline.loading import house_style
from stetline.numbers import find_numbers, trace
from stetline.store import ops

LABEL = "(label)"
#: the product's own fixed wording that holds a number: the scale of the composite score
SCALE = "(scale)"
FIXED_WORDING = ("out of 100",)


@dataclass(frozen=True)
class NumberUse:
    """One number in a published text and its source: a fact name, LABEL, or None (untraced)."""

    text: str
    fact: str | None
    where: str  # "text" or "note"

    def to_json(self) -> dict[str, Any]:
        """The use as a JSON object."""
        return {"text": self.text, "fact": self.fact, "where": self.where}


@dataclass
class SlotAudit:
    """The numbers of one slot's published text and notes."""

    slot: str
    uses: list[NumberUse] = field(default_factory=list)

    @property
    def untraced(self) -> list[NumberUse]:
        """The numbers that match no fact."""
        return [u for u in self.uses if u.fact is None]

    def to_json(self) -> dict[str, Any]:
        """The audit of a slot as a JSON object."""
        return {"slot": self.slot, "numbers": [u.to_json() for u in self.uses],
                "untraced": [u.text for u in self.untraced]}


def audit_text(
    text: str, evidence: dict[str, dict[str, Any]], labels: list[str], where: str = "text",
) -> list[NumberUse]:
    """Trace every number of a text to the evidence, a label, or nothing."""
    covered: dict[int, str] = {}
    spans = sorted(
        [(str(e.get("shown", "")), name) for name, e in evidence.items()] + [(lab, LABEL) for lab in labels]
        + [(words, SCALE) for words in FIXED_WORDING],
        key=lambda pair: -len(pair[0]),
    )
    folded = text.casefold()  # a label starts lower case mid-sentence ("topic 2 rate")
    for shown, source in spans:
        if not shown or not any(ch.isdigit() for ch in shown):
            continue
        if source == LABEL:
            shown, haystack = shown.casefold(), folded
        else:
            haystack = text
        start = haystack.find(shown)
        while start >= 0:
            for pos in range(start, start + len(shown)):
                covered.setdefault(pos, source)
            start = haystack.find(shown, start + len(shown))
    uses = []
    for number in find_numbers(text):
        found: str | None = covered.get(number.start)
        if found is None:
            facts = trace(number, evidence)
            found = facts[0] if facts else None
        uses.append(NumberUse(number.text, found, where))
    return uses


def audit(session: Session, f: ops.SlotFilter | None = None) -> list[SlotAudit]:
    """Audit every published slot (not suppressed, not gone) of the workspace."""
    style, _values = house_style(session)
    live = LiveFields(style)
    topics = {t.key: t for t in ops.topic_rows(session)}
    entities = {e.key: e for e in ops.entity_rows(session)}
    subgroups = _subgroup_names(session)
    out = []
    for v in views(session, f or ops.SlotFilter(), order="interest"):
        if v.slot.gone:
            continue
        shown = v.printed(session, live)  # the text and notes a publication prints, as the gate would
        text = shown.text
        if text is None:
            continue
        labels = [entities[v.slot.entity].name] if v.slot.entity in entities else []
        if v.slot.topic in topics:
            labels += [topics[v.slot.topic].label, topics[v.slot.topic].unit]
        labels += [e.name for e in entities.values()] if v.slot.entity is None else []
        labels += [t.label for t in topics.values()] if v.slot.topic is None else []
        labels += subgroups.get((v.slot.topic, v.slot.id.rsplit("/", 1)[-1]), []) if v.slot.kind == "breakdown" else []
        result = SlotAudit(v.slot.id, audit_text(text, v.draft.evidence, labels))
        for note in shown.notes:
            if note:
                result.uses += audit_text(note, v.draft.evidence, labels, where="note")
        out.append(result)
    return out


def _subgroup_names(session: Session) -> dict[tuple[str | None, str], list[str]]:
    """The subgroups' names (as written in the file) of each topic × breakdown in the current data."""
    frame = ops.breakdowns_frame(session)
    if frame is None or frame.empty:
        return {}
    names = frame.drop_duplicates(["topic", "breakdown", "subgroup"])
    out: dict[tuple[str | None, str], list[str]] = {}
    for topic, breakdown, subgroup in zip(names["topic"], names["breakdown"], names["subgroup"], strict=True):
        out.setdefault((str(topic), str(breakdown)), []).append(str(subgroup))
    return out
