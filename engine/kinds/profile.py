"""``profile`` (entity): composite score and rank, the best and worst placings, biggest moves.

The placings are said as ranks, counted from the nearer end ("second best of 14 towns", "fourth
worst of 50 countries"), over the entity's ranked topics with a direction; topics sharing the best
(or worst) placing are all named, or counted when there are more than three ("the worst of 14
towns on 8 of its 10 ranked indicators"). The composite score follows the OECD/JRC Handbook on
Constructing Composite Indicators (2008): min-max normalisation over the entities' latest values
(lower-is-better topics inverted), the topics' weights (1 unless given), arithmetic mean, 0 to 100.

Ranks, placings and the composite compare an entity with the entities of its own level (a district
among districts, a town among towns; see ``stetline.nesting``), so each level with data has profiles.

When the entity was an exception on most topics with a movement (kinds.patterns), that is
said ("It was the only town to go against most towns on three of the four indicators compared").

Claims: ``strongest`` and ``weakest`` (topic keys: the first in file order of the best and of the
worst placing), ``composite_band`` (the quarter of the composite ranking: top | upper | lower |
bottom), ``data_check`` (the topics where it was an exception, when that is a pattern; worth a
check of the data before publication).

The biggest moves of a quarterly or monthly topic follow the ``compare_with`` setting: against the
same period a year earlier by default, which the statement names ("down 4.1% on the third quarter of 2024").
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import NamedTuple

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.facts import biggest_moves
from stetline.kinds import patterns
from stetline.kinds.common import MIN_RANKED, band, missing, rank_phrase, with_leading_changes
from stetline.words import with_the, without_the

KIND = "profile"
PHRASINGS = 3
#: at most this many topics are named for one placing; more are counted
NAMED_TOPICS = 3


class _Placed(NamedTuple):
    """One ranked, directed topic of an entity: its rank, how many share it and its percentile."""

    topic: str
    rank: float
    rank_of: float
    tied: int
    better: str
    depth: int
    percentile: float


def _placings(ctx: Context) -> dict[str, list[_Placed]]:
    """Each entity's ranked, directed topics, best placing first (then file order), in one pass over the cells."""
    cells = ctx.facts.cells
    ranked = cells.loc[(cells["better"] != "neutral") & cells["rank"].notna() & (cells["rank_of"] >= MIN_RANKED)]
    position = {t: int(m.get("position", 0)) for t, m in ctx.topics.items()}
    ranked = ranked.assign(tied=ranked.groupby(["topic", "depth", "rank"])["entity"].transform("size"),
                           order=ranked["topic"].map(position))
    # a stable sort keeps each entity's rows in the order its own sort would give them
    ranked = ranked.sort_values(["percentile", "order"], ascending=[False, True])
    out: dict[str, list[_Placed]] = {}
    columns = [ranked[c].tolist() for c in ("entity", "topic", "rank", "rank_of", "tied", "better", "depth",
                                            "percentile")]
    for entity, topic, rank, of, tied, better, depth, percentile in zip(*columns):
        out.setdefault(str(entity), []).append(
            _Placed(str(topic), rank, of, int(tied), str(better), int(depth), percentile))
    return out


def _placing(ctx: Context, rows: list[_Placed], total: int, said_of: int = 0) -> tuple[str, str, str]:
    """(rank text, topics text, first topic) of topics sharing one placing ("of 14 towns" once a sentence)."""
    first = rows[0]
    of = int(first.rank_of)
    text = rank_phrase(int(first.rank), of, first.tied, first.better,
                       "" if of == said_of else ctx.of_level(of, first.depth), ctx.style)
    topics = [r.topic for r in rows]
    if len(topics) <= NAMED_TOPICS:
        named = phrasing.join([ctx.the_label(t) for t in topics], ctx.style)
    else:
        named = f"{phrasing.count(len(topics), ctx.style)} of its {phrasing.count(total, ctx.style)} ranked indicators"
    return text, named, topics[0]


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One profile statement per entity that reports at least one ranked topic."""
    style = ctx.style
    period = ctx.facts.latest_period
    placings = _placings(ctx)
    composite_ties = ctx.facts.entities[["depth", "composite_rank"]].value_counts().to_dict()
    lead = with_leading_changes(ctx)
    moves = dict(zip(zip(lead["entity"].tolist(), lead["topic"].tolist()),
                     zip(lead["change"].tolist(), lead["prev_value"].tolist(), lead["prev_period"].tolist(),
                         lead["compared_with"].tolist())))
    against = patterns.exceptions_by_entity(ctx)
    entities = ctx.facts.entities
    if (lead["compared_with"] == "year-earlier").any():  # quarters and months as the compare_with setting says
        entities = entities.drop(columns=["improvement", "setback"]).join(biggest_moves(lead))
    for entity, e in entities.iterrows():
        key = str(entity)
        rows = placings.get(key)
        if not rows or missing(e["composite"]):
            continue
        top_p, bottom_p = rows[0].percentile, min(r.percentile for r in rows)
        best_rows = [r for r in rows if r.percentile == top_p]
        worst_rows = [r for r in rows if r.percentile == bottom_p]
        total = len(rows)
        best_text, best_topics, strongest = _placing(ctx, best_rows, total)
        worst_text, worst_topics, weakest = _placing(ctx, worst_rows, total, int(best_rows[0].rank_of))
        rank, of, depth = int(e["composite_rank"]), int(e["composite_of"]), int(e["depth"])
        composite_text = rank_phrase(rank, of, int(composite_ties.get((depth, e["composite_rank"]), 1)), "neutral",
                                     ctx.of_level(of, depth), style)
        evidence = {
            "period": ev(period, period),
            "composite": ev(float(e["composite"]), phrasing.number(float(e["composite"]), 0, style)),
            "composite_rank": ev(rank, composite_text),
            "composite_of": ev(of, phrasing.count(of, style)),
            "composite_topics": ev(int(e["composite_topics"]), phrasing.count(int(e["composite_topics"]), style)),
            "strongest_rank": ev(int(best_rows[0].rank), best_text),
            "weakest_rank": ev(int(worst_rows[0].rank), worst_text),
        }
        claims: dict[str, object] = {
            "strongest": strongest, "weakest": weakest,
            "composite_band": band(rank, of) if of >= MIN_RANKED else None,
        }
        variables = {
            "name": ctx.name(key), "period": ctx.when(period), "nouns": ctx.of_level(of, depth),
            "same": top_p == bottom_p, "ranked_count": total, "ranked_topics": phrasing.count(total, style),
            "best_topics": best_topics, "worst_topics": worst_topics,
            "topics_used": phrasing.plural(int(e["composite_topics"]), "indicator", style),
            "improvement": "" if missing(e["improvement"]) else ctx.the_label(str(e["improvement"])),
            "setback": "" if missing(e["setback"]) else ctx.the_label(str(e["setback"])),
            "improvement_up": False, "setback_down": False, "improvement_since": "", "setback_since": "",
        }
        for which in ("improvement", "setback"):
            if not missing(e[which]):
                moved, previous, prev_period, compared_with = moves[(key, str(e[which]))]
                size = ctx.change_size(str(e[which]), float(moved), float(previous))
                evidence[f"{which}_change"] = ev(float(moved), size)
                if compared_with == "year-earlier":  # the period it is measured on is a fact it prints
                    since = str(prev_period)
                    evidence[f"{which}_since"] = ev(since, ctx.when(since))
                    variables[f"{which}_since"] = f" on {ctx.when(since)}"
                variables["improvement_up" if which == "improvement" else "setback_down"] = (
                    float(moved) > 0 if which == "improvement" else float(moved) < 0)
        # a placing after "is" or a comma takes "the" ("the second lowest of 11 firms"), after "ranks" or in
        # brackets it does not ("ranks best of 11 firms"); the evidence keeps the placing as computed
        shown = {k: str(evidence[k]["shown"]) for k in ("composite_rank", "strongest_rank", "weakest_rank")}
        variables["the_placing"] = {k: with_the(v) for k, v in shown.items()}
        variables["placing"] = {k: without_the(v) for k, v in shown.items()}
        variables.update(pattern="", pattern_all=False, nouns_all=ctx.entity_nouns)
        pattern = against.get(key)
        if pattern is not None:  # an exception on most topics: said as fact, and flagged for a data check
            evidence["exception_topics"] = ev(len(pattern.topics), phrasing.count(len(pattern.topics), style))
            evidence["topics_compared"] = ev(pattern.of, phrasing.count(pattern.of, style))
            claims["data_check"] = list(pattern.topics)
            variables["pattern"] = "alone" if pattern.alone else "among"
            variables["pattern_all"] = len(pattern.topics) == pattern.of
        interest = 0.7 + (0.2 if claims["composite_band"] in ("top", "bottom") else 0.0)
        yield Candidate(slot_id(KIND, key, None), KIND, key, None, evidence, claims, interest, variables)
