"""``breakdown`` (entity × topic × breakdown, and topic): the best and worst subgroup and the gap.

Per entity × topic × breakdown (slot ``breakdown/ENTITY/TOPIC/BREAKDOWN``): at the breakdown's
latest period, the subgroup with the best value and the one with the worst (by the topic's
``better``; highest and lowest for neutral topics) and the gap between them in the topic's unit
(percentage points for percent topics). When both carry margins, the gap counts as larger than
its margins by the test used for changes (stetline.facts.significance). When shares are given it
says how common the best and worst subgroups are, and when the largest subgroup is the best or
the worst. A gap that prints as zero is said as no difference, naming no best or worst.

Per topic (slot ``breakdown/TOPIC``, with two breakdowns or more at the latest period): where the
gap between subgroups is widest and where narrowest.

Claims, per entity: ``best`` and ``worst`` (lists of subgroups, as written; empty when the gap
prints as zero), ``difference`` (none | some: whether the gap prints as more than zero),
``significant`` (true | false | null without margins), ``largest`` (best | worst | neither, or
null unless every subgroup has a share). Per topic: ``widest`` and ``narrowest`` (lists of
``ENTITY/BREAKDOWN``).
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.kinds.common import best_word, missing

KIND = "breakdown"
PHRASINGS = 2


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One statement per entity × topic × breakdown with two subgroups or more, then one per topic."""
    facts = ctx.facts.breakdowns
    if facts.empty:
        return
    for b in facts.itertuples(index=False):
        yield _one(ctx, b)
    for topic in ctx.topics:
        rows = facts.loc[facts["topic"] == topic]
        if len(rows) >= 2:
            yield _roundup(ctx, topic, rows)


def _one(ctx: Context, b: Any) -> Candidate:
    style = ctx.style
    best, worst = list(b.best), list(b.worst)
    none = bool(b.gap_zero)
    significant = None if missing(b.significant) else bool(b.significant)
    evidence: dict[str, dict[str, Any]] = {"period": ev(b.period, str(b.period))}
    evidence["value"] = (ev(None, "missing") if missing(b.total)
                         else ev(float(b.total), ctx.value(b.topic, float(b.total))))
    evidence["best_value"] = ev(float(b.best_value), ctx.value(b.topic, float(b.best_value)))
    evidence["worst_value"] = ev(float(b.worst_value), ctx.value(b.topic, float(b.worst_value)))
    evidence["gap"] = ev(abs(float(b.gap)), ctx.amount(b.topic, float(b.gap)))
    if not missing(b.best_margin) and not missing(b.worst_margin):
        threshold = (float(b.best_margin) ** 2 + float(b.worst_margin) ** 2) ** 0.5
        evidence["margin_of_gap"] = ev(threshold, ctx.amount(b.topic, threshold))
    evidence["subgroups"] = ev(int(b.subgroups), phrasing.count(int(b.subgroups), style))
    single = len(best) == 1 and len(worst) == 1 and not none
    shares = single and not missing(b.best_share) and not missing(b.worst_share)
    if shares:
        evidence["best_share"] = ev(float(b.best_share), phrasing.value(float(b.best_share), "percent", 0, style))
        evidence["worst_share"] = ev(float(b.worst_share), phrasing.value(float(b.worst_share), "percent", 0, style))
    largest = None
    if b.largest is not None and not none:
        largest = "best" if b.largest in best else ("worst" if b.largest in worst else "neither")
    claims: dict[str, Any] = {
        "best": [] if none else best, "worst": [] if none else worst, "difference": "none" if none else "some",
        "significant": significant, "largest": largest,
    }
    neutral = b.better == "neutral"
    variables: dict[str, Any] = {
        "scope": "entity", "name": ctx.name(b.entity), "label": ctx.label(b.topic), "the_label": ctx.the_label(b.topic),
        "lower_label": ctx.lower_label(b.topic), "period": ctx.when(b.period), "breakdown": b.breakdown,
        "best": phrasing.join_names(best, style), "worst": phrasing.join_names(worst, style),
        "groups_best": "groups" if len(best) > 1 else "group", "groups_worst": "groups" if len(worst) > 1 else "group",
        "top": best_word(b.better, True), "bottom": best_word(b.better, False), "neutral": neutral,
        "even": none, "significant": significant, "shares": shares,
        "largest": largest if shares else None, "total": not missing(b.total),
    }
    interest = 0.15 if none else 0.35 + (0.2 if significant else 0.0) + (0.1 if largest == "worst" else 0.0)
    slot = f"{slot_id(KIND, b.entity, b.topic)}/{b.breakdown}"
    return Candidate(slot, KIND, b.entity, b.topic, evidence, claims, interest, variables)


def _roundup(ctx: Context, topic: str, rows: Any) -> Candidate:
    latest = rows["time"].max()
    rows = rows.loc[rows["time"] == latest]
    size = rows["gap"].abs()
    widest, narrowest = rows.loc[size == size.max()], rows.loc[size == size.min()]

    def keys(frame: Any) -> list[str]:
        return [f"{e}/{b}" for e, b in zip(frame["entity"], frame["breakdown"])]

    def where(frame: Any) -> str:
        return phrasing.join_names([f"{ctx.name(e)} by {b}" for e, b in zip(frame["entity"], frame["breakdown"])],
                                   ctx.style)

    period = str(rows["period"].iloc[0])
    evidence = {
        "period": ev(period, period), "compared": ev(len(rows), phrasing.count(len(rows), ctx.style)),
        "widest_gap": ev(float(size.max()), ctx.amount(topic, float(size.max()))),
        "narrowest_gap": ev(float(size.min()), ctx.amount(topic, float(size.min()))),
    }
    claims = {"widest": keys(widest), "narrowest": keys(narrowest)}
    variables = {
        "scope": "topic", "label": ctx.label(topic), "the_label": ctx.the_label(topic), "period": ctx.when(period),
        "widest": where(widest), "narrowest": where(narrowest), "same": bool(size.max() == size.min()),
        "no_gap": bool(narrowest["gap_zero"].all()),
    }
    return Candidate(slot_id(KIND, None, topic), KIND, None, topic, evidence, claims, 0.5, variables)
