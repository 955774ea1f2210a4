"""Three-way merge of texts at word level (difflib), for proposing updated rewrites.

base = the draft the editor started from, theirs = the new draft, mine = the editor's rewrite.
Edits from base to theirs are applied where the editor left the text untouched; where both
changed the same region differently, the result marks a conflict showing both sides and is not
clean. Nothing is resolved silently.

Matching is roughly quadratic in the number of words, so both are bounded: past
``MAX_DIFF_WORK`` (tokens of one text times tokens of the other) a diff compares whole lines,
and past that again it shows the old text removed and the new one added; a merge that large
takes the one side that changed, or marks the whole text as one conflict.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass, field

# white space, numbers (kept whole: "1,234.5%"), words, and each punctuation mark on its own
TOKEN = re.compile(r"\s+|[£$€]?(?:\d{1,3}(?:,\d{3})+|\d+)(?:\.\d+)?%?|[\w'’-]+|[^\w\s]")
CONFLICT_OPEN = "[[conflict: yours «"
CONFLICT_MID = "» / new draft «"
CONFLICT_CLOSE = "»]]"
MAX_DIFF_WORK = 400_000  # tokens x tokens: some 300 words each way, a few hundredths of a second


@dataclass
class Merge:
    """A merged text, whether it merged cleanly, and each conflict as (yours, new draft)."""

    text: str
    clean: bool
    conflicts: list[tuple[str, str]] = field(default_factory=list)


def tokens(text: str) -> list[str]:
    """Split a text into words and the white space between them."""
    return TOKEN.findall(text)


def _matches(a: list[str], b: list[str]) -> dict[int, int]:
    matcher = difflib.SequenceMatcher(None, a, b, autojunk=False)
    mapping: dict[int, int] = {}
    for block in matcher.get_matching_blocks():
        for k in range(block.size):
            mapping[block.a + k] = block.b + k
    return mapping


def merge3(base: str, mine: str, theirs: str) -> Merge:
    """Merge the editor's changes (base → mine) with the new draft's (base → theirs)."""
    b, m, t = tokens(base), tokens(mine), tokens(theirs)
    if len(b) * max(len(m), len(t)) > MAX_DIFF_WORK:  # too long to match word by word
        if mine == base or mine == theirs:
            return Merge(theirs, True)
        if theirs == base:
            return Merge(mine, True)
        yours, new = mine.strip(), theirs.strip()
        return Merge(f"{CONFLICT_OPEN}{yours}{CONFLICT_MID}{new}{CONFLICT_CLOSE}", False, [(yours, new)])
    to_mine, to_theirs = _matches(b, m), _matches(b, t)
    out: list[str] = []
    conflicts: list[tuple[str, str]] = []
    i = j = k = 0

    def resolve(bc: list[str], mc: list[str], tc: list[str]) -> None:
        if mc == bc:
            out.extend(tc)
        elif tc == bc or mc == tc:
            out.extend(mc)
        else:
            yours, new = "".join(mc).strip(), "".join(tc).strip()
            lead = "".join(mc)[: len("".join(mc)) - len("".join(mc).lstrip())]
            trail = "".join(mc)[len("".join(mc).rstrip()):]
            out.append(f"{lead}{CONFLICT_OPEN}{yours}{CONFLICT_MID}{new}{CONFLICT_CLOSE}{trail}")
            conflicts.append((yours, new))

    while True:
        sync = next(
            (s for s in range(i, len(b)) if s in to_mine and s in to_theirs and to_mine[s] >= j and to_theirs[s] >= k),
            None,
        )
        if sync is None:
            resolve(b[i:], m[j:], t[k:])
            break
        if sync == i and to_mine[sync] == j and to_theirs[sync] == k:
            out.append(b[i])
            i, j, k = i + 1, j + 1, k + 1
            continue
        resolve(b[i:sync], m[j:to_mine[sync]], t[k:to_theirs[sync]])
        i, j, k = sync, to_mine[sync], to_theirs[sync]
    return Merge("".join(out), not conflicts, conflicts)


def word_diff(old: str, new: str) -> list[tuple[str, str]]:
    """A word-level diff as (op, text) pairs, op one of 'same', 'del', 'add'."""
    a, b = tokens(old), tokens(new)
    if len(a) * len(b) > MAX_DIFF_WORK:  # too long to match word by word: whole lines, else none
        a, b = old.splitlines(keepends=True), new.splitlines(keepends=True)
        if len(a) * len(b) > MAX_DIFF_WORK or len(a) < 2 and len(b) < 2:
            return [(op, text) for op, text in (("del", old), ("add", new)) if text] if old != new else [("same", old)]
    ops: list[tuple[str, str]] = []
    for tag, i1, i2, j1, j2 in difflib.SequenceMatcher(None, a, b, autojunk=False).get_opcodes():
        if tag == "equal":
            ops.append(("same", "".join(a[i1:i2])))
            continue
        if i2 > i1:
            ops.append(("del", "".join(a[i1:i2])))
        if j2 > j1:
            ops.append(("add", "".join(b[j1:j2])))
    return ops
