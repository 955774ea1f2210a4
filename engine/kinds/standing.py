"""``standing`` (entity × topic): the latest value, its rank, the gap to the group mean and target.

Ranks are counted from the nearer end ("fourth worst of 50"), ties said as ties ("joint
second best"); a quarter ("in the top quarter") is added only with 12 or more ranked and a place
five or more from its end. Claims: ``rank_band`` (top | upper | lower | bottom quarter of the
ranking, or null when fewer than three entities report), ``vs_group`` (above | below | level with
the group mean, level when the gap rounds to zero; null without a group to compare), ``target`` (met | missed | none).

Ranks compare an entity with the entities of its own level (see ``stetline.nesting``). An entity
with a parent also says where it stands among its siblings and how it compares with the parent:
with the parent's own value for the topic and period when the data hold one, else with the mean of
its siblings. Claims, only for an entity with a parent: ``parent_basis`` (parent | siblings, null
when neither reports), ``vs_parent`` (above | below | level, level when the gap rounds to zero),
``sibling_band`` (the quarter of the ranking among siblings, null under three).
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, phrasing_index, slot_id
from stetline.kinds.common import (
    MIN_RANKED,
    band,
    band_note,
    caveat,
    cell_wide,
    missing,
    place,
    rank_phrase,
    status_shown,
)
from stetline.words import with_the

KIND = "standing"
PHRASINGS = 4
#: wordings of the comparison with the group average and of the target, picked per slot like the phrasing
_GROUP_WORDINGS = 3
_TARGET_WORDINGS = 2
#: a quarter band is said beside a placing only past this share of the ranked from the nearer end (common practice)
BAND_PAST_SHARE = 0.1


def _average_text(wording: int, where: str, average: str, mean: str, gap: str, joined: str = " of ") -> str:
    """Against an average ("the North average", "the average of all 14 towns"), in one of three wordings picked
    per slot, so that a page of them reads less like a form; ``joined`` puts the mean after the average's name."""
    if where == "level":
        return f"level with {average} ({mean})" if wording == 1 else f"level with {average}{joined}{mean}"
    if wording == 0:
        return f"{where} {average}{joined}{mean}"
    if wording == 1:
        return f"{where} {average} ({mean})"
    return f"{gap} {where} {average}{joined}{mean}" if joined == " of " else f"{gap} {where} {average} ({mean})"


def _target_text(wording: int, met: bool, target: str, gap: str) -> str:
    if wording == 0:
        return f"meeting the target of {target}" if met else f"missing the target of {target} by {gap}"
    return f"against a target of {target}, which it met" if met else f"against a target of {target}, missed by {gap}"


def _parent_part(ctx: Context, c: Any, tied: int, evidence: dict[str, Any], claims: dict[str, object]) -> str:
    """Where a cell stands within its parent, and how it compares with it: a sentence without its full stop.

    "North Quay was third best of five towns in Westward District, above the Westward District
    figure of 46.8%"; without a parent's value, "… above the average of the other four towns, 46.8%".
    """
    claims.update({"parent_basis": None, "vs_parent": None, "sibling_band": None})
    parent = ctx.name(str(c.parent))
    depth = int(c.depth)
    rank_text = ""
    if int(c.sibling_rank_of) >= MIN_RANKED and not missing(c.sibling_rank):
        rank, of = int(c.sibling_rank), int(c.sibling_rank_of)
        evidence["sibling_rank"] = ev(rank, phrasing.ordinal(rank))
        evidence["sibling_rank_of"] = ev(of, phrasing.count(of, ctx.style))
        claims["sibling_band"] = band(rank, of)
        rank_text = f"{with_the(rank_phrase(rank, of, tied, c.better, ctx.of_level(of, depth), ctx.style))} in {parent}"
    compare = ""
    if c.parent_basis and not missing(c.parent_gap):
        ref = float(c.parent_ref)
        gap = float(c.parent_gap)
        where = "level" if phrasing.round_half_up(abs(gap), int(c.decimals)) == 0 else ("above" if gap > 0 else "below")
        claims["parent_basis"], claims["vs_parent"] = str(c.parent_basis), where
        evidence["parent_ref"] = ev(ref, ctx.value(c.topic, ref))
        shown = evidence["parent_ref"]["shown"]
        where_text = "level with" if where == "level" else where
        if c.parent_basis == "parent":
            compare = f"{where_text} the {parent} figure of {shown}"
        else:
            n = int(c.siblings_counted)
            evidence["siblings_counted"] = ev(n, phrasing.count(n, ctx.style))
            others = ctx.of_level(n, depth)
            inside = "" if rank_text else f" in {parent}"
            compare = f"{where_text} the average of the other {others}{inside}, {shown}"
    if not rank_text and not compare:
        return ""
    return f"{c.name} was " + ", ".join(x for x in (rank_text, compare) if x)


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One standing statement per entity × topic cell."""
    style = ctx.style
    cells = ctx.facts.cells
    tied_counts = cells.groupby(["topic", "depth", "rank"]).size()
    tied = {k: int(n) for k, n in tied_counts.items() if n > 1}
    nested = cells.loc[cells["parent"] != ""]
    sibling_ties = nested.groupby(["topic", "parent", "sibling_rank"]).size()
    sibling_tied = {k: int(n) for k, n in sibling_ties.items() if n > 1}
    prep = ctx.preposition
    for c in cells.itertuples(index=False):
        d = int(c.decimals)
        wide = cell_wide(c)  # one form for the figures of a statement: "45.7 thousand" beside "2.4 million"
        evidence = {"period": ev(c.period, str(c.period)), "status": ev(c.status, status_shown(c.status))}
        claims: dict[str, object] = {"rank_band": None, "vs_group": None, "target": "none"}
        variables: dict[str, object] = {
            "name": ctx.name(c.entity), "label": ctx.label(c.topic), "lower_label": ctx.lower_label(c.topic),
            "the_label": ctx.the_label(c.topic), "prep": prep, "period": ctx.when(c.period),
            "period_adj": ctx.when(c.period, "adjective"), "caveat": caveat(c.status),
            "state": c.status,
            "ranked": False, "rank_text": "", "group_text": "", "target_text": "", "parent_text": "",
            "now_revised": "",
        }
        interest = 0.1
        if not c.usable:
            evidence["value"] = ev(None, "withheld" if c.status == "confidential" else "missing")
            yield Candidate(slot_id(KIND, c.entity, c.topic), KIND, c.entity, c.topic, evidence, claims, interest,
                            variables)
            continue
        value = float(c.value)
        evidence["value"] = ev(value, ctx.value(c.topic, value, wide))
        if not missing(c.value_revised_from):  # this period's figure was revised since the last edition
            held = ctx.value(c.topic, float(c.value_revised_from), wide)
            evidence["value_revised_from"] = ev(float(c.value_revised_from), held)
            variables["now_revised"] = f" (revised from {held})"
            variables["caveat"] = f"{variables['caveat']}{variables['now_revised']}"  # blurbs read it too
        interest = 0.3
        if int(c.rank_of) >= MIN_RANKED and not missing(c.rank):
            rank, of = int(c.rank), int(c.rank_of)
            evidence["rank"] = ev(rank, phrasing.ordinal(rank))
            evidence["rank_of"] = ev(of, phrasing.count(of, style))
            claims["rank_band"] = band(rank, of)
            variables["ranked"] = True
            shared = tied.get((c.topic, int(c.depth), float(rank)), 1)
            _top, counted = place(rank, of, shared)
            # "the fourth worst of 50 countries": a placing said after "was" or a comma takes "the"; the quarter
            # is said only past the first tenth ("sixth worst of 142" says it already)
            note = band_note(rank, of, shared) if counted > BAND_PAST_SHARE * of else ""
            variables["rank_text"] = with_the(rank_phrase(rank, of, shared, c.better, ctx.of_level(of, int(c.depth)),
                                                          style)) + note
            if counted not in (1, rank):  # counted from the nearer end: "28th worst" is a fact too
                evidence["place"] = ev(counted, phrasing.ordinal_word(counted, style))
            if rank == 1 or bool(c.worst):
                interest += 0.4
            elif claims["rank_band"] in ("top", "bottom"):
                interest += 0.15
        if c.group and int(c.group_rank_of) >= 2 and not missing(c.group_mean):  # no group: none to compare
            gap = float(c.group_gap)
            shown_gap = phrasing.round_half_up(abs(gap), d)
            where = "level" if shown_gap == 0 else ("above" if gap > 0 else "below")
            claims["vs_group"] = where
            evidence["group_mean"] = ev(float(c.group_mean), ctx.value(c.topic, float(c.group_mean), wide))
            evidence["group_gap"] = ev(gap, ctx.amount(c.topic, gap, wide))
            variables["group_text"] = _average_text(
                phrasing_index(slot_id(KIND, c.entity, c.topic) + "#group", _GROUP_WORDINGS), where,
                f"the {c.group} average", evidence["group_mean"]["shown"], evidence["group_gap"]["shown"])
        if not missing(c.all_mean):
            evidence["all_mean"] = ev(float(c.all_mean), ctx.value(c.topic, float(c.all_mean), wide))
            evidence["all_gap"] = ev(float(c.all_gap), ctx.amount(c.topic, float(c.all_gap), wide))
            if not variables["group_text"] and int(c.rank_of) >= 2:
                gap = float(c.all_gap)
                where = "level" if phrasing.round_half_up(abs(gap), d) == 0 else ("above" if gap > 0 else "below")
                variables["group_text"] = _average_text(
                    phrasing_index(slot_id(KIND, c.entity, c.topic) + "#group", _GROUP_WORDINGS), where,
                    f"the average of all {ctx.of_level(int(c.rank_of), int(c.depth))}", evidence["all_mean"]["shown"],
                    evidence["all_gap"]["shown"], ", ")
        if not missing(c.target):
            target = float(c.target)
            gap = value - target
            met = gap >= 0 if c.better != "lower" else gap <= 0
            claims["target"] = "met" if met else "missed"
            evidence["target"] = ev(target, ctx.value(c.topic, target, wide))
            evidence["target_gap"] = ev(gap, ctx.amount(c.topic, gap, wide))
            variables["target_text"] = _target_text(
                phrasing_index(slot_id(KIND, c.entity, c.topic) + "#target", _TARGET_WORDINGS), met,
                evidence["target"]["shown"], evidence["target_gap"]["shown"])
            interest += 0.1
        if c.parent:
            shared = sibling_tied.get((c.topic, c.parent, c.sibling_rank), 1)
            variables["parent_text"] = _parent_part(ctx, c, shared, evidence, claims)
        yield Candidate(slot_id(KIND, c.entity, c.topic), KIND, c.entity, c.topic, evidence, claims, interest,
                        variables)
