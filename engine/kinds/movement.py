"""``movement`` (topic): how many entities improved, worsened or held steady, and the exceptions.

Held steady: the change itself, rounded as a change statement prints it, is zero (never two
rounded values compared), or it is not significant when margins are known. A count of zero is
never printed; the biggest movers are named among those counted as moving. When at least
three quarters of the entities that moved went the same way, the others are named as exceptions.
Neutral topics count rises and falls instead. A quarterly or monthly topic is compared as the
``compare_with`` setting says (by default with the same period a year earlier; the previous
period when no year-earlier figure is stated for any entity), and the statement names both periods.

The average change of the entities compared is said here, once for the topic (in per cent when
the topic's changes are relative, else in its own terms); when every exception is in one group,
that is said too ("all in the Coast group").

Claims: ``majority`` (improved | worsened for directed topics, rose | fell for neutral ones, or
mixed when neither side has more than half of those that moved), ``exceptions`` (sorted keys),
``exceptions_group`` (the group every exception is in, when there are two or more),
``compared_with`` (``year-earlier``, only when a quarter or month is compared with a year earlier).
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import Any

import pandas as pd

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, phrasing_index, topic_slot
from stetline.kinds.common import MIN_RANKED, missing, with_leading_changes
from stetline.words import others_count

KIND = "movement"
PHRASINGS = 2
EXCEPTION_SHARE = 0.75


def in_per_cent(ctx: Context, topic: str, frame: pd.DataFrame) -> bool:
    """True when a topic's changes are said in per cent (and every one compared has a relative change)."""
    return ctx.change_in(topic) == "relative" and bool(frame["change_rel"].notna().all())


def shows(text: str) -> bool:
    """True when a figure as printed is not zero ("0.0%" is)."""
    return any(c in "123456789" for c in text)


def average_move(ctx: Context, topic: str, frame: pd.DataFrame, evidence: dict[str, Any],
                 variables: dict[str, Any]) -> None:
    """Add the average change of the entities compared, in the unit their own changes are said in."""
    relative = in_per_cent(ctx, topic, frame)
    mean = float((frame["change_rel"] if relative else frame["change"]).mean())
    if missing(mean):
        return
    shown = (phrasing.relative(abs(mean), ctx.style) if relative
             else ctx.amount(topic, mean, ctx.wide(frame["change"].abs().max())))
    evidence["mean_change"] = ev(mean, shown)
    variables["average_move"] = "flat" if not shows(shown) else ("up" if mean > 0 else "down")


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One movement statement per topic with changes known for at least three entities."""
    for level, level_ctx in ctx.levels():
        yield from _level(level_ctx, level)


def _level(ctx: Context, level: str) -> Iterator[Candidate]:
    """The statements of one level's entities (level: its slot token, empty for the main level)."""
    style = ctx.style
    cells = with_leading_changes(ctx)
    known = cells.loc[cells["change_known"]]
    by_topic = {topic: frame for topic, frame in known.groupby("topic")}
    for topic, t in ctx.facts.topics.iterrows():
        frame = by_topic.get(topic)
        if frame is None or len(frame) < MIN_RANKED:
            continue
        meta = ctx.topics[topic]
        neutral = meta["better"] == "neutral"
        good, bad = ("up", "down") if neutral else ("improved", "worsened")
        column = "direction" if neutral else "better_change"
        ups = frame.loc[frame[column] == good]
        downs = frame.loc[frame[column] == bad]
        n_up, n_down = len(ups), len(downs)
        steady = len(frame) - n_up - n_down
        moved = n_up + n_down
        words = ("rose", "fell") if neutral else ("improved", "worsened")
        majority = "mixed"
        if moved and n_up * 2 > moved:
            majority = words[0]
        elif moved and n_down * 2 > moved:
            majority = words[1]
        exceptions: list[str] = []
        if moved and max(n_up, n_down) >= EXCEPTION_SHARE * moved and min(n_up, n_down) > 0:
            exceptions = sorted((downs if n_up > n_down else ups)["entity"])
        prev = frame["prev_period"].dropna()
        prev_period = str(prev.mode().iloc[0]) if len(prev) else ""
        evidence = {
            "period": ev(t["period"], str(t["period"])),
            "previous_period": ev(prev_period, prev_period),
            "compared": ev(len(frame), phrasing.count(len(frame), style)),
            "improved" if not neutral else "rose": ev(n_up, phrasing.count(n_up, style)),
            "worsened" if not neutral else "fell": ev(n_down, phrasing.count(n_down, style)),
            "steady": ev(steady, phrasing.count(steady, style)),
        }
        # the biggest movers among those counted as moving, named with a figure only when it shows; measured
        # as the changes are said: in per cent for a topic whose changes are relative, else in its own terms
        relative = in_per_cent(ctx, topic, frame)
        measure = frame["change_rel"] if relative else frame["change"]
        signed = measure * (1.0 if neutral else frame["sign"])
        top_up = frame.loc[signed[ups.index].idxmax()] if n_up else None
        top_down = frame.loc[signed[downs.index].idxmin()] if n_down else None

        wide = not relative and ctx.wide(frame["change"].abs().max())

        def size(row: pd.Series) -> str:
            return (phrasing.relative(abs(float(row["change_rel"])), style) if relative
                    else ctx.amount(topic, float(row["change"]), wide))

        if top_up is not None and not shows(size(top_up)):
            top_up = None
        if top_down is not None and not shows(size(top_down)):
            top_down = None
        variables = {
            "label": ctx.label(topic), "lower_label": ctx.lower_label(topic), "the_label": ctx.the_label(topic),
            "period": ctx.when(t["period"]),
            "prev_period": ctx.when(prev_period), "neutral": neutral, "words": words,
            "n_up": n_up, "n_down": n_down, "steady": steady, "nouns": ctx.of_n(len(frame)),
            # named in the order of their names, not of their keys ("Albania, Barbados, Belarus …")
            "exceptions": ctx.names(sorted(exceptions, key=lambda k: str(ctx.entities.get(k, {}).get("name") or k))),
            "n_exceptions": len(exceptions),
            "best_mover": "", "worst_mover": "", "prep": ctx.preposition, "exceptions_group": "",
            "average_move": "", "p_average": phrasing_index(topic_slot(KIND, topic, level) + "#average", 2),
        }
        folded = others_count(len(exceptions))
        if folded:  # "… and 5 others": the count the list folds away is a fact like the rest
            evidence["other_exceptions"] = ev(folded, phrasing.count(folded, ctx.style))  # "and seven others"
        if top_up is not None:
            evidence["biggest_up"] = ev(float(top_up["change_rel" if relative else "change"]), size(top_up))
            variables["best_mover"] = ctx.name(str(top_up["entity"]))
        if top_down is not None:
            evidence["biggest_down"] = ev(float(top_down["change_rel" if relative else "change"]), size(top_down))
            variables["worst_mover"] = ctx.name(str(top_down["entity"]))
        claims: dict[str, object] = {"majority": majority, "exceptions": exceptions}
        groups = {str(ctx.entities.get(k, {}).get("group") or "") for k in exceptions}
        if len(exceptions) >= 2 and len(groups) == 1 and "" not in groups:  # "all in the Coast group"
            variables["exceptions_group"] = groups.pop()
            claims["exceptions_group"] = variables["exceptions_group"]
        average_move(ctx, topic, frame, evidence, variables)
        if (frame["compared_with"] == "year-earlier").any():  # said only when it is not the previous period
            claims["compared_with"] = "year-earlier"
        interest = 0.5 + (0.2 if majority != "mixed" and not missing(majority) else 0.0)
        yield Candidate(topic_slot(KIND, topic, level), KIND, None, topic, evidence, claims, interest, variables)
