"""The edition changelog: what changed between two editions.

Slots added and gone, slots moved to a renamed or merged entity (with what changed in their
numbers and claims, not as gone and added), claims that flipped (with the old and new text), the largest changes in
shown values (each entity and topic's value once, however many statements show it), and the human
layers carried across with their outcome. A slot's draft in an
edition is its latest draft written at or before that edition (drafts are written only when
something changed).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from sqlalchemy.orm import Session

from stetline.errors import StetlineError
from stetline.factwords import claim_name
from stetline.numbers import shown_changes
from stetline.reconcile import claim_changes
from stetline.status import Status
from stetline.store import ops

TOP_NUMBERS = 20


@dataclass
class Changelog:
    """What changed from one edition to another."""

    from_edition: str
    to_edition: str
    added: list[str] = field(default_factory=list)
    gone: list[str] = field(default_factory=list)
    moved: list[dict[str, Any]] = field(default_factory=list)  # {from, to, names, value, numbers, claims}
    flipped: list[dict[str, Any]] = field(default_factory=list)
    numbers: list[dict[str, Any]] = field(default_factory=list)
    carried: list[dict[str, Any]] = field(default_factory=list)

    def to_json(self) -> dict[str, Any]:
        """The changelog as a JSON object."""
        return dict(self.__dict__)

    def to_markdown(self) -> str:
        """The changelog as a Markdown document."""
        lines = [f"# Changes from edition {self.from_edition} to {self.to_edition}", ""]
        lines += [f"- statements added: {len(self.added)}", f"- statements gone: {len(self.gone)}",
                  f"- statements moved to a renamed or merged entity: {len(self.moved)}",
                  f"- claims flipped: {len(self.flipped)}", f"- human layers carried: {len(self.carried)}", ""]
        if self.flipped:
            lines += ["## Claims that flipped", ""]
            for f in self.flipped:
                claims = "; ".join(f"{claim_name(c['fact'])}: {c['old']} → {c['new']}" for c in f["claims"])
                lines += [f"### {f['slot']}", "", f"{claims}", "", f"- before: {f['old_text']}",
                          f"- after: {f['new_text']}", ""]
        if self.numbers:
            lines += ["## Largest changes in values", "",
                      "| statement | before | after | change |", "| --- | --- | --- | --- |"]
            for n in self.numbers:
                lines.append(f"| {n['slot']} | {n['old']} | {n['new']} | {n['relative']:+.1%} |")
            lines.append("")
        if self.carried:
            lines += ["## Human layers carried", "", "| statement | layers | outcome |", "| --- | --- | --- |"]
            for c in self.carried:
                lines.append(f"| {c['slot']} | {', '.join(c['layers'])} | {c['outcome']} |")
            lines.append("")
        if self.moved:
            lines += ["## Statements moved", ""]
            for m in self.moved:
                lines.append(f"- {m['from']} → {m['to']} ({m['names']}): {_moved_words(m)}")
            lines.append("")
        if self.gone:
            lines += ["## Statements gone", ""] + [f"- {s}" for s in self.gone] + [""]
        return "\n".join(lines).rstrip() + "\n"


def changes(session: Session, from_label: str | None = None, to_label: str | None = None) -> Changelog:
    """Compare two editions (default: the last two)."""
    editions = ops.editions(session)
    if len(editions) < 2 and (from_label is None or to_label is None):
        raise StetlineError("a changelog needs two editions; load another edition first")
    by_label = {e.label: e for e in editions}
    for label in (from_label, to_label):
        if label is not None and label not in by_label:
            raise StetlineError(f"no edition {label!r}; editions: {', '.join(by_label)}")
    to_e = by_label[to_label] if to_label else editions[-1]
    earlier = [e for e in editions if e.id < to_e.id]
    from_e = by_label[from_label] if from_label else (earlier[-1] if earlier else None)
    if from_e is None or from_e.id >= to_e.id:
        raise StetlineError("--from must name an edition older than --to")
    before = ops.drafts_as_of(session, from_e.id)
    after = ops.drafts_as_of(session, to_e.id)
    gone_now = ops.gone_as_of(session, to_e.id)
    log = Changelog(from_e.label, to_e.label)
    moves = {old: new for old, new in ops.moves_between(session, from_e.id, to_e.id).items()
             if old in before and new in after}
    log.moved = _moved(session, moves, before, after)
    log.added = sorted(s for s in after if s not in before and s not in moves.values())
    log.gone = sorted(s for s in before if s in gone_now and s not in moves)
    valued: set[str] = set()  # an entity × topic value is listed once, whichever kinds state it
    for slot in sorted(set(before) & set(after)):
        old, new = before[slot], after[slot]
        if slot in gone_now:
            continue
        flipped = claim_changes(old.claims, new.claims)
        if flipped:
            log.flipped.append({"slot": slot, "claims": flipped, "old_text": old.text, "new_text": new.text})
        a, b = old.evidence.get("value", {}), new.evidence.get("value", {})
        if isinstance(a.get("value"), (int, float)) and isinstance(b.get("value"), (int, float)) and a["value"]:
            rel = (b["value"] - a["value"]) / abs(a["value"])
            cell = slot.split("/", 1)[-1] if slot.count("/") == 2 else slot  # KIND/ENTITY/TOPIC → ENTITY/TOPIC
            if a.get("shown") != b.get("shown") and cell not in valued:
                valued.add(cell)
                log.numbers.append({"slot": slot, "old": a["shown"], "new": b["shown"], "relative": rel})
    log.numbers = sorted(log.numbers, key=lambda n: -abs(n["relative"]))[:TOP_NUMBERS]
    layered = ops.layer_types_by_slot(session, before_edition_id=to_e.id)
    statuses = ops.slot_statuses(session, list(layered))
    for slot, types in sorted(layered.items()):
        status, recheck = statuses.get(slot, ("", None))
        outcome = "recheck: " + ", ".join((recheck or {}).get("reasons", [])) if status == Status.RECHECK else status
        log.carried.append({"slot": slot, "layers": types, "outcome": outcome})
    return log


def _count(n: int, what: str) -> str:
    return f"{n} {what}" + ("" if n == 1 else "s")


def _moved_words(m: dict[str, Any]) -> str:
    """What changed on a moved statement, in a few words: its value, then how many claims and other numbers."""
    value, others = m["value"], [c for c in m["numbers"] if c["fact"] != "value"]
    words = [f"value {value['old']} → {value['new']}"] if value else []
    words += [_count(len(m["claims"]), "claim") + " changed"] if m["claims"] else []
    words += [_count(len(others), "other number" if value else "number") + " changed"] if others else []
    return "; ".join(words) or "numbers and claims unchanged"


def _moved(session: Session, moves: dict[str, str], before: dict[str, Any], after: dict[str, Any]
           ) -> list[dict[str, Any]]:
    """Each slot moved to a renamed or merged entity: its old and new ids, the entity's names old → new,
    the change in its value as shown (None when the same or when it states none), every number shown
    that differs ({fact, old, new}), and the claims that differ from its old draft."""
    names = {e.key: e.name for e in ops.entity_rows(session)}
    out = []
    for old, new in sorted(moves.items()):
        a, b = before[old], after[new]
        keys = next(((x, y) for x, y in zip(old.split("/"), new.split("/"), strict=False) if x != y), (old, new))
        was, now = a.evidence.get("value", {}).get("shown"), b.evidence.get("value", {}).get("shown")
        out.append({"from": old, "to": new, "names": f"{names.get(keys[0], keys[0])} → {names.get(keys[1], keys[1])}",
                    "value": None if was == now else {"old": was, "new": now},
                    "numbers": shown_changes(a.evidence, b.evidence),
                    "claims": claim_changes(a.claims, b.claims)})
    return out
