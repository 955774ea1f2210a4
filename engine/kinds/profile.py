"""``profile`` (entity): strongest and weakest topics, composite score and rank, biggest moves.

Strongest and weakest are judged by a direction-aware percentile of the entity's rank in each
non-neutral topic. The composite score follows the OECD/JRC Handbook on Constructing Composite
Indicators (2008): min-max normalisation over the entities' latest values (lower-is-better
topics inverted), the topics' weights (1 unless given), arithmetic mean, 0 to 100.

Claims: ``strongest`` and ``weakest`` (topic keys), ``composite_band`` (the quarter of the
composite ranking: top | upper | lower | bottom).
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.kinds.common import MIN_RANKED, band, missing

KIND = "profile"
PHRASINGS = 2


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One profile statement per entity that reports at least one ranked topic."""
    style = ctx.style
    cells = ctx.facts.cells.set_index(["entity", "topic"])
    period = ctx.facts.latest_period
    for entity, e in ctx.facts.entities.iterrows():
        if missing(e["strongest"]) or missing(e["composite"]):
            continue
        strongest, weakest = str(e["strongest"]), str(e["weakest"])
        rank, of = int(e["composite_rank"]), int(e["composite_of"])
        s_cell, w_cell = cells.loc[(entity, strongest)], cells.loc[(entity, weakest)]
        evidence = {
            "period": ev(period, period),
            "composite": ev(float(e["composite"]), phrasing.number(float(e["composite"]), 0, style)),
            "composite_rank": ev(rank, phrasing.ordinal(rank)),
            "composite_of": ev(of, phrasing.count(of, style)),
            "composite_topics": ev(int(e["composite_topics"]), phrasing.count(int(e["composite_topics"]), style)),
            "strongest_rank": ev(int(s_cell["rank"]), phrasing.ordinal(int(s_cell["rank"]))),
            "weakest_rank": ev(int(w_cell["rank"]), phrasing.ordinal(int(w_cell["rank"]))),
        }
        claims = {
            "strongest": strongest, "weakest": weakest,
            "composite_band": band(rank, of) if of >= MIN_RANKED else None,
        }
        variables = {
            "name": e["name"], "period": period, "nouns": ctx.of_n(of),
            "strongest": ctx.lower_label(strongest), "weakest": ctx.lower_label(weakest),
            "same": strongest == weakest,
            "strongest_of": int(s_cell["rank_of"]), "weakest_of": int(w_cell["rank_of"]),
            "topics_used": phrasing.plural(int(e["composite_topics"]), "indicator", style),
            "all_topics": int(e["composite_topics"]) == int(e["rated_topics"] if not missing(e["rated_topics"]) else 0),
            "improvement": "" if missing(e["improvement"]) else ctx.lower_label(str(e["improvement"])),
            "setback": "" if missing(e["setback"]) else ctx.lower_label(str(e["setback"])),
        }
        interest = 0.7 + (0.2 if claims["composite_band"] in ("top", "bottom") else 0.0)
        key = str(entity)
        yield Candidate(slot_id(KIND, key, None), KIND, key, None, evidence, claims, interest, variables)
