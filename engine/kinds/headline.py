"""``headline`` (dataset): the edition at a glance.

Says on how many topics most entities improved or worsened (a count of zero is said "none"). With
one entity it names that entity instead, and with two it says "one or both … and neither …": a
majority of one or two is no majority. It names which entity leads the composite score (not when
there is only one), and the biggest shift: the topic whose average change is largest measured
against the gap between its best and worst entity, said in those words and in the topic's change
unit (percentage points, per cent or its own unit, as the topic's ``change`` column says). When no
change can be compared (a first edition of data with a single period), it says what the edition
covers instead. Claims: ``composite_leader`` (entity key or sorted keys), ``improving`` (topics where
the majority improved, sorted), ``worsening`` (likewise), ``biggest_shift`` (a topic key, when
the shift shows), ``data_check`` (entities that went against most others on most topics, sorted:
said, and worth a check of the data; see kinds.patterns), ``compared_with`` (``year-earlier`` when
quarterly or monthly indicators are counted against the same period a year earlier, as the
``compare_with`` setting says; the statement then says so).
"""

from __future__ import annotations

from collections.abc import Iterator

import pandas as pd

from stetline import periods, phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.kinds import patterns
from stetline.kinds.common import missing, prints_as_zero, with_leading_changes
from stetline.seasons import topic_moves

KIND = "headline"
PHRASINGS = 1


def candidates(ctx: Context) -> Iterator[Candidate]:
    """The one headline statement of the edition."""
    style = ctx.style
    t = ctx.facts.topics
    lead = with_leading_changes(ctx)
    if "depth" in lead:  # counted among the main level's entities, as the topic facts are (see nesting)
        lead = lead.loc[lead["depth"] == ctx.facts.main_depth]
    moves = topic_moves(lead)
    seasonal = sorted(moves.index[moves["compared_with"] == "year-earlier"])
    if seasonal:  # quarters and months counted against the same period a year earlier
        t = t.copy()
        for col in ("improved", "worsened", "compared", "mean_change"):
            t.loc[seasonal, col] = moves.loc[seasonal, col]
    directed = t.loc[[ctx.topics[k]["better"] != "neutral" for k in t.index]]
    moved = directed["improved"] + directed["worsened"]
    improving = sorted(directed.index[(directed["improved"] * 2 > moved) & (moved > 0)])
    worsening = sorted(directed.index[(directed["worsened"] * 2 > moved) & (moved > 0)])
    e = ctx.facts.entities
    if "depth" in e:  # the edition at a glance is about the main level's entities (see nesting)
        e = e.loc[e["depth"] == ctx.facts.main_depth]
    # the highest score of one entity says nothing: a leader needs others to lead
    leaders = sorted(e.index[e["composite_rank"] == 1]) if "composite_rank" in e and len(e) > 1 else []
    period = ctx.facts.latest_period
    evidence = {
        "period": ev(period, period),
        "topics": ev(len(directed), phrasing.count(len(directed), style)),
        "improving": ev(len(improving), phrasing.count(len(improving), style)),
        "worsening": ev(len(worsening), phrasing.count(len(worsening), style)),
    }
    if leaders and not missing(e.loc[leaders[0], "composite"]):
        score = float(e.loc[leaders[0], "composite"])
        evidence["leader_composite"] = ev(score, phrasing.number(score, 0, style))
    claims: dict[str, object] = {
        "composite_leader": (leaders[0] if len(leaders) == 1 else leaders) if leaders else None,
        "improving": improving, "worsening": worsening,
    }
    shift_move, shift_label = _biggest_shift(ctx, t, lead, evidence, claims)
    if seasonal:
        claims["compared_with"] = "year-earlier"
    against = patterns.exceptions_by_entity(ctx)  # who went against most others on most topics
    if against:
        claims["data_check"] = sorted(against)
        first = against[min(against)]
        evidence["topics_compared"] = ev(first.of, phrasing.count(first.of, style))
        fewest = min(len(a.topics) for a in against.values())  # each went the other way on at least this many
        evidence["exception_topics"] = ev(fewest, phrasing.count(fewest, style))
    if not int(t["compared"].sum()):  # nothing to compare: the statement says what the edition covers
        evidence["entities"] = ev(len(e), phrasing.count(len(e), style))
        evidence["all_topics"] = ev(len(t), phrasing.count(len(t), style))
    variables = {
        "period": ctx.when(period), "period_adj": ctx.when(period, "adjective"),
        "nouns": ctx.entity_nouns, "shift_move": shift_move, "shift_label": shift_label,
        "n_topics": len(directed),
        "leaders": ctx.names(leaders), "n_leaders": len(leaders),
        "against": ctx.names(sorted(against)), "n_against": len(against),
        "against_all": all(len(a.topics) == a.of for a in against.values()),
        "against_same": len({len(a.topics) for a in against.values()}) == 1,
        "only": ctx.name(str(e.index[0])) if len(e) == 1 else "",
        "improving_labels": phrasing.join([ctx.the_label(k) for k in improving][:3], style),
        "n_improving": len(improving), "n_worsening": len(worsening),
        "compared": int(t["compared"].sum()), "n_entities": len(e), "noun": ctx.entity_noun,
        "year_earlier_note": _year_earlier_note(ctx, seasonal),
        "entities_counted": ctx.of_n(len(e)), "topics_counted": phrasing.plural(len(t), "indicator", style),
    }
    yield Candidate(slot_id(KIND), KIND, None, None, evidence, claims, 1.0, variables)


def _year_earlier_note(ctx: Context, seasonal: list[str]) -> str:
    """Which indicators are compared with the same period a year earlier ("" when none are)."""
    if not seasonal:
        return ""
    kinds = {periods.period_format(str(ctx.facts.topics.at[k, "period"])) for k in seasonal}
    words = [w for f, w in (("quarter", "quarterly"), ("month", "monthly")) if f in kinds]
    same = " or ".join(f for f in ("quarter", "month") if f in kinds)
    return f"{' and '.join(words).capitalize()} indicators are compared with the same {same} a year earlier."


def _biggest_shift(ctx: Context, t: pd.DataFrame, lead: pd.DataFrame, evidence: dict[str, dict[str, object]],
                   claims: dict[str, object]) -> tuple[str, str]:
    """The topic whose average change is largest against the gap between its best and worst entity.

    Returns (up or down, the topic's label), or ("", "") when none shows. The average is said in the
    topic's change unit (figures.change_in): percentage points for a percent topic, per cent (the
    average of the entities' relative changes) for a relative one, the topic's unit for an absolute
    one; an average that prints as zero is no shift.
    """
    spread = (t["best_value"] - t["worst_value"]).abs()
    sized = (t["mean_change"].abs() / spread.where(spread > 0)).dropna()
    if not len(sized):
        return "", ""
    topic = str(sized.idxmax())
    mean = float(t.at[topic, "mean_change"])
    known = lead.loc[lead["change_known"].astype("bool") & (lead["topic"] == topic), "change_rel"].dropna()
    relative = ctx.change_in(topic) == "relative" and bool(len(known))
    if relative:
        mean = float(known.mean())
    shown = phrasing.relative(abs(mean), ctx.style) if relative else ctx.amount(topic, mean)
    evidence["biggest_shift"] = ev(mean, shown)
    if prints_as_zero(ctx, topic, mean, relative):  # the average prints as zero: no shift
        return "", ""
    claims["biggest_shift"] = topic
    return ("up" if mean > 0 else "down"), ctx.the_label(topic)
