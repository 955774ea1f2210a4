"""``standing`` (entity × topic): the latest value, its rank, the gap to the group mean and target.

Ranks are counted from the nearer end ("fourth worst of 50"), ties said as ties ("joint
second best"); a quarter ("in the top quarter") is added only with 12 or more ranked and a place
five or more from its end. Claims: ``rank_band`` (top | upper | lower | bottom quarter of the
ranking, or null when fewer than three entities report), ``vs_group`` (above | below | level with
the group mean, level when the gap rounds to zero; null without a group to compare), ``target`` (met | missed | none).
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, phrasing_index, slot_id
from stetline.kinds.common import MIN_RANKED, band, band_note, caveat, missing, place, rank_phrase, status_shown

KIND = "standing"
PHRASINGS = 4
#: wordings of the comparison with the group average and of the target, picked per slot like the phrasing
_GROUP_WORDINGS = 3
_TARGET_WORDINGS = 2


def _group_text(wording: int, where: str, group: str, mean: str, gap: str) -> str:
    if where == "level":
        shown = f"({mean})" if wording == 1 else f"of {mean}"
        return f"level with the {group} average {shown}"
    if wording == 0:
        return f"{where} the {group} average of {mean}"
    if wording == 1:
        return f"{where} the {group} average ({mean})"
    return f"{gap} {where} the {group} average of {mean}"


def _target_text(wording: int, met: bool, target: str, gap: str) -> str:
    if wording == 0:
        return f"meeting the target of {target}" if met else f"missing the target of {target} by {gap}"
    return f"against a target of {target}, which it met" if met else f"against a target of {target}, missed by {gap}"


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One standing statement per entity × topic cell."""
    style = ctx.style
    cells = ctx.facts.cells
    tied_counts = cells.groupby(["topic", "rank"]).size()
    tied = {k: int(n) for k, n in tied_counts.items() if n > 1}
    prep = ctx.preposition
    for c in cells.itertuples(index=False):
        d = int(c.decimals)
        evidence = {"period": ev(c.period, str(c.period)), "status": ev(c.status, status_shown(c.status))}
        claims: dict[str, object] = {"rank_band": None, "vs_group": None, "target": "none"}
        variables: dict[str, object] = {
            "name": c.name, "label": ctx.label(c.topic), "lower_label": ctx.lower_label(c.topic),
            "the_label": ctx.the_label(c.topic), "prep": prep, "period": ctx.when(c.period),
            "period_adj": ctx.when(c.period, "adjective"), "caveat": caveat(c.status),
            "state": c.status,
            "ranked": False, "rank_text": "", "group_text": "", "target_text": "",
        }
        interest = 0.1
        if not c.usable:
            evidence["value"] = ev(None, "withheld" if c.status == "confidential" else "missing")
            yield Candidate(slot_id(KIND, c.entity, c.topic), KIND, c.entity, c.topic, evidence, claims, interest,
                            variables)
            continue
        value = float(c.value)
        evidence["value"] = ev(value, ctx.value(c.topic, value))
        interest = 0.3
        if int(c.rank_of) >= MIN_RANKED and not missing(c.rank):
            rank, of = int(c.rank), int(c.rank_of)
            evidence["rank"] = ev(rank, phrasing.ordinal(rank))
            evidence["rank_of"] = ev(of, phrasing.count(of, style))
            claims["rank_band"] = band(rank, of)
            variables["ranked"] = True
            shared = tied.get((c.topic, float(rank)), 1)
            variables["rank_text"] = rank_phrase(rank, of, shared, c.better, ctx.of_n(of), style) + band_note(
                rank, of, shared)
            _top, counted = place(rank, of, shared)
            if counted not in (1, rank):  # counted from the nearer end: "28th worst" is a fact too
                evidence["place"] = ev(counted, phrasing.ordinal_word(counted, style))
            if rank == 1 or bool(c.worst):
                interest += 0.4
            elif claims["rank_band"] in ("top", "bottom"):
                interest += 0.15
        if int(c.group_rank_of) >= 2 and not missing(c.group_mean):
            gap = float(c.group_gap)
            shown_gap = phrasing.round_half_up(abs(gap), d)
            where = "level" if shown_gap == 0 else ("above" if gap > 0 else "below")
            claims["vs_group"] = where
            evidence["group_mean"] = ev(float(c.group_mean), ctx.value(c.topic, float(c.group_mean)))
            evidence["group_gap"] = ev(gap, ctx.amount(c.topic, gap))
            variables["group_text"] = _group_text(
                phrasing_index(slot_id(KIND, c.entity, c.topic) + "#group", _GROUP_WORDINGS), where, str(c.group),
                evidence["group_mean"]["shown"], evidence["group_gap"]["shown"])
        if not missing(c.all_mean):
            evidence["all_mean"] = ev(float(c.all_mean), ctx.value(c.topic, float(c.all_mean)))
            evidence["all_gap"] = ev(float(c.all_gap), ctx.amount(c.topic, float(c.all_gap)))
            if not variables["group_text"] and int(c.rank_of) >= 2:
                gap = float(c.all_gap)
                where = "level" if phrasing.round_half_up(abs(gap), d) == 0 else ("above" if gap > 0 else "below")
                mean = evidence["all_mean"]["shown"]
                everyone = f"the average of all {ctx.of_n(int(c.rank_of))}"
                variables["group_text"] = (
                    f"level with {everyone}, {mean}" if where == "level" else f"{where} {everyone}, {mean}"
                )
        if not missing(c.target):
            target = float(c.target)
            gap = value - target
            met = gap >= 0 if c.better != "lower" else gap <= 0
            claims["target"] = "met" if met else "missed"
            evidence["target"] = ev(target, ctx.value(c.topic, target))
            evidence["target_gap"] = ev(gap, ctx.amount(c.topic, gap))
            variables["target_text"] = _target_text(
                phrasing_index(slot_id(KIND, c.entity, c.topic) + "#target", _TARGET_WORDINGS), met,
                evidence["target"]["shown"], evidence["target_gap"]["shown"])
            interest += 0.1
        yield Candidate(slot_id(KIND, c.entity, c.topic), KIND, c.entity, c.topic, evidence, claims, interest,
                        variables)
