"""``leaders`` (topic): the best and worst entities of a topic and the spread between them.

The spread is said in the topic's own terms: points apart for percentages, otherwise as a ratio
("about 4 times", "27% higher") when both values are positive, else the difference in the unit.
A topic with fewer than three entities reporting gets no leaders statement.

Names are listed with semicolons when one holds a comma, and a long tie is capped ("A, B and 28
others"). Claims: ``leader`` and ``laggard``: the entity key, or a sorted list of keys when tied.
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, topic_slot
from stetline.kinds.common import MIN_RANKED, best_word

KIND = "leaders"
PHRASINGS = 3


def _claim(keys: list[str]) -> str | list[str]:
    return keys[0] if len(keys) == 1 else sorted(keys)


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One leaders statement per topic with at least three entities reporting."""
    for level, level_ctx in ctx.levels():
        yield from _level(level_ctx, level)


def _level(ctx: Context, level: str) -> Iterator[Candidate]:
    """The statements of one level's entities (level: its slot token, empty for the main level)."""
    style = ctx.style
    for topic, t in ctx.facts.topics.iterrows():
        if int(t["reporting"]) < MIN_RANKED or not t["leaders"] or not t["laggards"]:
            continue
        meta = ctx.topics[topic]
        best, worst = float(t["best_value"]), float(t["worst_value"])
        wide = ctx.wide(best, worst)  # "199.6 thousand" beside "1.3 billion", never "199,579"
        evidence = {
            "period": ev(t["period"], str(t["period"])),
            "reporting": ev(int(t["reporting"]), phrasing.count(int(t["reporting"]), style)),
            "best_value": ev(best, ctx.value(topic, best, wide)),
            "worst_value": ev(worst, ctx.value(topic, worst, wide)),
        }
        gap = abs(best - worst)
        if meta["unit"] == "percent":
            spread = f"{ctx.amount(topic, gap, wide)} apart"
            evidence["spread"] = ev(gap, ctx.amount(topic, gap, wide))
        elif min(best, worst) > 0:
            ratio = max(best, worst) / min(best, worst)
            evidence["spread"] = ev(ratio, phrasing.ratio(ratio, style))
            spread = (
                f"the higher value is {phrasing.ratio(ratio, style)} the lower" if ratio >= 2
                else f"the higher value is {phrasing.relative(ratio - 1, style)} above the lower"
            )
        else:
            evidence["spread"] = ev(gap, ctx.amount(topic, gap, wide))
            spread = f"{ctx.amount(topic, gap, wide)} apart"
        claims = {"leader": _claim(list(t["leaders"])), "laggard": _claim(list(t["laggards"]))}
        variables = {
            "label": ctx.label(topic), "lower_label": ctx.lower_label(topic), "the_label": ctx.the_label(topic),
            "prep": ctx.preposition, "period": ctx.when(t["period"]),
            "leaders": ctx.names(t["leaders"]), "laggards": ctx.names(t["laggards"]),
            "shared_top": len(t["leaders"]) > 1, "shared_bottom": len(t["laggards"]) > 1,
            "top": best_word(meta["better"], True), "bottom": best_word(meta["better"], False),
            "spread": spread, "nouns": ctx.of_n(int(t["reporting"])),
            "is_ratio": "spread" in evidence and meta["unit"] != "percent" and min(best, worst) > 0,
        }
        yield Candidate(topic_slot(KIND, topic, level), KIND, None, topic, evidence, claims, 0.6, variables)
