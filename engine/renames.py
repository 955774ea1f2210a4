"""Renamed and merged entities at a load: the mapping file, and where their human work goes.

A mapping file (CSV, columns ``old,new``) names entity keys that leave the data and the keys that
take their place. One old key to a new key is a rename; several old keys to one new key, or an
old key to a key the workspace already holds, is a merger. The rules, each checked before
anything is written (a problem names the file, row and column):

- an old key is in the workspace and no longer in the new data;
- a new key is in the new data;
- an old key is mapped once;
- no chains or cycles: a key that is new on one row is never old on another (map each old key
  straight to its final key).

A rename gives every slot of the old entity (``profile/OLD``, ``blurb/OLD/TOPIC``, any slot with
the entity in its key) to the same slot of the new entity: its layers, approvals, comments and
history move, and reconcile then judges that work against the new draft as on any refresh.
Claims that named the old key (a leader) are read as naming the new one. A slot whose
counterpart the new edition does not draft keeps its work (``slot-gone``, as without a mapping).

A merger moves notes, suppressions, comments and history likewise; the rewrites, pins and
approvals of the merged slots are dropped (kept, as every dropped layer is) and listed in the new
slot's recheck (reason ``merged``) beside its draft, with who wrote them, for a person to choose
one (:func:`choose`) or keep the draft. This module plans in memory; ``stetline.store.ops`` moves
the rows.
"""

from __future__ import annotations

import dataclasses
import difflib
import json
import re
from collections.abc import Collection
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from sqlalchemy.orm import Session

from stetline.errors import Conflict, Problem, StetlineError, ValidationError
from stetline.inputfiles import Source, read_csv_table
from stetline.reconcile import MERGED_LAYER, TEXT_LAYERS, Basis, Decision, HumanWork, SlotState, merged_texts
from stetline.status import SEVERITY, Reason, Status
from stetline.store import ops

if TYPE_CHECKING:  # only named in annotations: the web app and the CLI import this without pandas
    import pandas as pd

COLUMNS = ("old", "new")


@dataclass(frozen=True)
class RenameMap:
    """A checked mapping of old entity keys to new ones, with the file row of each."""

    file: str
    pairs: dict[str, str]
    rows: dict[str, int]

    def olds_of(self, new: str) -> list[str]:
        """The old keys mapped to a new key, in file order."""
        return [old for old, n in self.pairs.items() if n == new]


def read_renames(source: Source) -> RenameMap:
    """Read a mapping file and check it on its own: columns, empty keys, keys mapped twice, chains."""
    table = read_csv_table(source)
    name, frame = table.name, table.frame
    columns = [str(c).strip() for c in frame.columns]
    missing = [c for c in COLUMNS if c not in columns]
    if missing:
        raise ValidationError([Problem(name, 1, None, (
            f"the mapping needs the columns old and new; missing: {', '.join(missing)} "
            f"(found: {', '.join(columns) or 'none'})"))])
    frame = frame.set_axis(columns, axis=1)
    problems: list[Problem] = []
    pairs: dict[str, str] = {}
    rows: dict[str, int] = {}
    for index, old_cell, new_cell in zip(frame.index, frame["old"], frame["new"], strict=True):
        row = int(index) + 2
        old, new = str(old_cell).strip(), str(new_cell).strip()
        if not old or not new:
            problems.append(Problem(name, row, "old" if not old else "new", "the key is empty"))
        elif old == new:
            problems.append(Problem(name, row, "new", f"{old!r} is mapped to itself"))
        elif old in pairs:
            problems.append(Problem(name, row, "old", f"{old!r} is mapped twice (rows {rows[old]} and {row})"))
        else:
            pairs[old], rows[old] = new, row
    for old, new in pairs.items():
        if new in pairs:
            problems.append(Problem(name, rows[old], "new", (
                f"{new!r} is itself mapped to {pairs[new]!r} on row {rows[new]}: a chain or cycle; "
                f"map {old!r} straight to the key it ends as")))
    if problems:
        raise ValidationError(problems)
    if not pairs:
        raise ValidationError([Problem(name, None, None, "the mapping holds no rows")])
    return RenameMap(name, pairs, rows)


def check_renames(mapping: RenameMap, known: Collection[str], new_keys: Collection[str]) -> None:
    """Check a mapping against the workspace's entities (``known``) and the new data's (``new_keys``)."""
    problems: list[Problem] = []
    for old, new in mapping.pairs.items():
        row = mapping.rows[old]
        if old not in known:
            close = difflib.get_close_matches(old, list(known), n=1)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            problems.append(Problem(mapping.file, row, "old", f"the workspace holds no entity {old!r}{hint}"))
        elif old in new_keys:
            problems.append(Problem(mapping.file, row, "old", (
                f"{old!r} is still in the new data: only a key that leaves the data can be renamed")))
        if new not in new_keys:
            problems.append(Problem(mapping.file, row, "new", f"the new data hold no entity {new!r}"))
    if problems:
        raise ValidationError(problems)


def read_checked(session: Session, source: Source, observations: pd.DataFrame) -> RenameMap:
    """Read a mapping file and check it against the workspace's entities and the new observations."""
    mapping = read_renames(source)
    known = ops.entities_frame(session)
    check_renames(mapping, set() if known is None else set(known["entity"]), set(observations["entity"]))
    return mapping


@dataclass
class Move:
    """One slot whose human work goes to another slot at this load."""

    old: str
    new: str
    merger: bool
    layers: int = 0
    approvals: int = 0
    comments: int = 0

    def line(self) -> str:
        """The move for people: old slot → new slot and what goes with it."""
        what = f"{_n(self.layers, 'layer')}, {_n(self.approvals, 'approval')}, {_n(self.comments, 'comment')}"
        return f"{self.old} → {self.new}: {what}" + (" (merged)" if self.merger else "")


def _n(count: int, word: str) -> str:
    return f"{count} {word}" + ("" if count == 1 else "s")


@dataclass
class Plan:
    """What a load with a mapping moves, drops and re-bases, and the merged slots' choices."""

    label: str
    moves: list[Move] = field(default_factory=list)
    merged: dict[str, list[dict[str, Any]]] = field(default_factory=dict)  # new slot → candidates
    drop_layers: set[int] = field(default_factory=set)
    drop_approvals: set[int] = field(default_factory=set)
    bases: dict[tuple[bool, int], dict[str, Any]] = field(default_factory=dict)  # (approval?, id) → basis

    def lines(self) -> list[str]:
        """Each move that carries human work (layers, approvals, comments), for people."""
        return [m.line() for m in self.moves if m.layers or m.approvals or m.comments]


def new_slot_id(slot_id: str, kind: str, old: str, new: str) -> str:
    """The id of a slot with its entity key replaced (``blurb/OLD/T`` → ``blurb/NEW/T``)."""
    prefix = f"{kind}/{old}"
    assert slot_id == prefix or slot_id.startswith(prefix + "/"), slot_id
    return f"{kind}/{new}{slot_id[len(prefix):]}"


def plan(session: Session, mapping: RenameMap, states: dict[str, SlotState], drafted: Collection[str],
         label: str, entities: pd.DataFrame) -> Plan:
    """Plan the moves of a load and give the moved work to the new slots in ``states`` (in memory).

    ``entities`` is the metadata in force for the new edition (the old keys' names are stored).
    """
    result = Plan(label)
    targets: dict[str, list[str]] = {}  # new slot → old slots, in mapping order
    for old, slots in ops.entity_slots(session, mapping.pairs).items():
        for sid, kind in slots:
            target = new_slot_id(sid, kind, old, mapping.pairs[old])
            if target in drafted:  # else its counterpart is not drafted: the work stays (slot-gone)
                result.moves.append(Move(sid, target, False))
                targets.setdefault(target, []).append(sid)
    for move in result.moves:  # several slots into one, or into a slot that carries work of its own
        move.merger = len(targets[move.new]) > 1 or (move.new in states and states[move.new].human)
    counts = ops.comment_counts(session, [m.old for m in result.moves])
    for move in result.moves:
        work = states[move.old].work if move.old in states else []
        move.layers = sum(w.type != "approval" for w in work)
        move.approvals = sum(w.type == "approval" for w in work)
        move.comments = counts.get(move.old, 0)
    merged: dict[str, list[str]] = {}
    for target, olds in targets.items():
        if any(m.merger for m in result.moves if m.new == target):
            sources = ([target] if target in states and states[target].human else []) + olds
            if any(w.type in TEXT_LAYERS or w.type == "approval" for sid in sources for w in states[sid].work):
                merged[target] = sources
    result.merged = _candidates(session, states, merged)
    for target, olds in targets.items():
        _give(result, states, target, olds, target in merged)
    names = dict(zip(entities["entity"], entities["name"], strict=True))
    stored = ops.entities_frame(session)
    old_names = {} if stored is None else dict(zip(stored["entity"], stored["name"], strict=True))
    renamed = {str(old_names[o]): str(names[n]) for o, n in mapping.pairs.items()
               if o in old_names and n in names and old_names[o] != names[n] and str(old_names[o]).strip()}
    _translate(result, states, mapping.pairs, renamed)
    return result


def _candidates(session: Session, states: dict[str, SlotState],
                merged: dict[str, list[str]]) -> dict[str, list[dict[str, Any]]]:
    """Each merged slot's texts to choose from: what each source slot printed, and who wrote it."""
    sources = [sid for group in merged.values() for sid in group]
    drafts = {d.slot: d.text for d in ops.current_drafts(session, sources)}
    texts = {sid: next((w for w in states[sid].work if w.type in TEXT_LAYERS), None) for sid in sources}
    authors = ops.layer_authors(session, [w.id for w in texts.values() if w is not None])
    out: dict[str, list[dict[str, Any]]] = {}
    for target, group in merged.items():
        out[target] = []
        for sid in group:
            w = texts[sid]
            approved = any(x.type == "approval" for x in states[sid].work)
            if w is None:
                out[target].append({"slot": sid, "type": "draft", "text": drafts.get(sid, ""), "by": None,
                                    "author": None, "approved": approved})
                continue
            by, author = authors[w.id]
            author = author if author is not None or w.type != "rewrite" else by
            out[target].append({"slot": sid, "type": w.type, "text": w.text or "", "by": by, "author": author,
                                "approved": approved})
    return out


def _give(result: Plan, states: dict[str, SlotState], target: str, olds: list[str], merger: bool) -> None:
    """Give the old slots' work to the target slot's state; in a merger, drop the texts set aside."""
    moved: list[HumanWork] = []
    for sid in olds:
        old = states[sid]
        moved += old.work
        states[sid] = SlotState(sid, old.digest, old.gone, Status.DRAFT)  # nothing of a person's left on it
    current = states.get(target)
    if current is None and not moved:
        return  # nothing of a person's moves: the new slot is drafted as new (its rows still move)
    work = (current.work if current is not None else []) + moved
    if merger:
        for w in work:
            if w.type in TEXT_LAYERS:
                result.drop_layers.add(w.id)
            elif w.type == "approval":
                result.drop_approvals.add(w.id)
        work = [w for w in work if w.type not in TEXT_LAYERS and w.type != "approval"]
    if current is None:  # a slot new to the workspace: its first draft is written
        states[target] = SlotState(target, "", False, Status.DRAFT, work)
    else:
        states[target] = dataclasses.replace(current, work=work)


def _translate(result: Plan, states: dict[str, SlotState], pairs: dict[str, str], names: dict[str, str]) -> None:
    """Read every basis (stored so at the load) as if made with the new keys and names.

    Claims naming an old key name its new key; the draft text a basis holds says the new name, so
    an approved draft whose only change is the entity's new name is not a change of wording.
    """
    pattern = re.compile("|".join(rf"(?<!\w){re.escape(n)}(?!\w)" for n in sorted(names, key=len, reverse=True)))
    for state in states.values():
        for i, w in enumerate(state.work):
            claims = {k: _renamed(v, pairs) for k, v in w.basis.claims.items()}
            text = pattern.sub(lambda m: names[m.group(0)], w.basis.text) if names else w.basis.text
            if claims != w.basis.claims or text != w.basis.text:
                basis = Basis(w.basis.evidence, claims, text)
                state.work[i] = dataclasses.replace(w, basis=basis)
                result.bases[(w.type == "approval", w.id)] = basis.to_json()


def _renamed(value: Any, pairs: dict[str, str]) -> Any:
    if isinstance(value, str):
        return pairs.get(value, value)
    if isinstance(value, list) and all(isinstance(v, str) for v in value):
        out = [pairs.get(v, v) for v in value]
        return sorted(out) if value == sorted(value) else out
    return value


def mark_merged(result: Plan, decisions: list[Decision]) -> None:
    """Send each merged slot to recheck with reason ``merged`` and the texts to choose from."""
    by_slot = {d.slot: d for d in decisions}
    for target, choices in result.merged.items():
        d = by_slot.get(target)
        if d is None:
            d = Decision(target, Status.RECHECK)
            decisions.append(d)
        recheck = d.recheck or {"reasons": [], "changes": [], "proposed": None, "conflicts": []}
        reasons = [r for r in Reason if r in recheck["reasons"] or r == Reason.MERGED]
        d.severity = max(d.severity, SEVERITY[Reason.MERGED])
        d.recheck = {**recheck, "reasons": reasons, "clean": False, "severity": d.severity, "merged": choices}
        d.status = Status.RECHECK


def record(session: Session, result: Plan, edition_id: int, by: str) -> None:
    """Before a load's decisions are written: re-based claims, set-aside texts dropped, move events."""
    ops.write_bases(session, [(b, i) for (appr, i), b in result.bases.items() if not appr],
                    [(b, i) for (appr, i), b in result.bases.items() if appr])
    ops.drop_work(session, result.drop_layers, result.drop_approvals, by)
    for m in result.moves:
        ops.add_event(session, by, "move", m.new, edition_id=edition_id, before=m.old, after=m.new, detail={
            "from": m.old, "edition": result.label, "merged": m.merger, "layers": m.layers,
            "approvals": m.approvals, "comments": m.comments,
            "words": f"moved from {m.old} on load of edition {result.label}"})


def move(session: Session, result: Plan, by: str) -> None:
    """After a load's decisions are written (the new slots exist): give the old slots' rows to the new,
    and leave each merged slot a ``merged`` layer holding its texts to choose from."""
    ops.move_rows(session, [(m.old, m.new) for m in result.moves])
    drafts = {d.slot: d for d in ops.current_drafts(session, list(result.merged))}
    for target, choices in result.merged.items():
        draft = drafts[target]
        basis = {"evidence": draft.evidence, "claims": draft.claims, "text": draft.text}
        ops.add_layer(session, target, MERGED_LAYER, json.dumps(choices), draft.text, basis, by)


def choose(session: Session, slot_id: str, pick: int | None, *, by: str, version: int | None = None) -> None:
    """Resolve a merged slot: make one of its merged texts the rewrite (``pick``, from 0), or keep the draft."""
    from stetline import actions
    from stetline.accounts import authorize
    from stetline.slotstatus import merged_layer, restatus

    authorize(session, by, "rewrite")
    slot = ops.get_slot(session, slot_id, lock=True)
    if slot is None:
        raise StetlineError(f"no statement {slot_id!r}")
    layer = merged_layer(session, slot_id)
    choices: list[dict[str, Any]] = []
    if layer is not None:
        choices = merged_texts(layer.text)
    elif slot.status == Status.RECHECK:  # a workspace merged before the choice was a layer keeps it in the recheck
        choices = list((slot.recheck or {}).get("merged") or [])
    if not choices:
        raise StetlineError(f"{slot_id} holds no merged texts to choose from")
    if version is not None and version != slot.version:
        raise Conflict(f"{slot_id} changed since you opened it; reload and choose again")
    if pick is not None and not 0 <= pick < len(choices):
        raise StetlineError(f"{slot_id} has merged texts 1 to {len(choices)}; there is no text {pick + 1}")
    if layer is not None:
        ops.drop(session, layer, by)
    if pick is None:
        draft = ops.get_draft(session, slot.draft_id)
        assert draft is not None
        slot.recheck, slot.severity = None, 0
        session.flush()
        restatus(session, slot, draft)
        slot.version += 1
        ops.add_event(session, by, "keep-draft", slot_id, after=draft.text, detail={"merged": choices})
        return
    chosen = choices[pick]
    actions.rewrite(session, slot_id, chosen["text"], by=by)
    ops.add_event(session, by, "choose-merged", slot_id, after=chosen["text"],
                  detail={"from": chosen["slot"], "author": chosen["author"]})
