"""``headline`` (dataset): the edition at a glance.

Says on how many topics most entities improved or worsened, and which entity leads the
composite score, and the biggest shift (the topic whose average change is largest against its
spread). Claims: ``composite_leader`` (entity key or sorted keys), ``improving`` (topics where
the majority improved, sorted), ``worsening`` (likewise), ``biggest_shift`` (a topic key, when
the shift shows).
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.kinds.common import missing

KIND = "headline"
PHRASINGS = 1


def candidates(ctx: Context) -> Iterator[Candidate]:
    """The one headline statement of the edition."""
    style = ctx.style
    t = ctx.facts.topics
    directed = t.loc[[ctx.topics[k]["better"] != "neutral" for k in t.index]]
    moved = directed["improved"] + directed["worsened"]
    improving = sorted(directed.index[(directed["improved"] * 2 > moved) & (moved > 0)])
    worsening = sorted(directed.index[(directed["worsened"] * 2 > moved) & (moved > 0)])
    e = ctx.facts.entities
    leaders = sorted(e.index[e["composite_rank"] == 1]) if "composite_rank" in e else []
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
    claims = {
        "composite_leader": (leaders[0] if len(leaders) == 1 else leaders) if leaders else None,
        "improving": improving, "worsening": worsening,
    }
    # the biggest shift: the topic whose average change is largest against its spread
    shift_move, shift_label = "", ""
    spread = (t["best_value"] - t["worst_value"]).abs()
    sized = (t["mean_change"].abs() / spread.where(spread > 0)).dropna()
    if len(sized):
        topic = str(sized.idxmax())
        mean = float(t.at[topic, "mean_change"])
        evidence["biggest_shift"] = ev(mean, ctx.amount(topic, mean))
        if evidence["biggest_shift"]["shown"] and not evidence["biggest_shift"]["shown"].startswith(("0 ", "0.0 ")):
            shift_move, shift_label = ("up" if mean > 0 else "down"), ctx.the_label(topic)
            claims["biggest_shift"] = topic
    variables = {
        "period": period, "nouns": ctx.entity_nouns, "shift_move": shift_move, "shift_label": shift_label,
        "n_topics": len(directed),
        "leaders": ctx.names(leaders), "n_leaders": len(leaders),
        "improving_labels": phrasing.join([ctx.the_label(k) for k in improving][:3], style),
        "n_improving": len(improving), "n_worsening": len(worsening),
    }
    yield Candidate(slot_id(KIND), KIND, None, None, evidence, claims, 1.0, variables)
