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
from stetline.drafting import Candidate, Context, ev, slot_id
from stetline.kinds.common import MIN_RANKED, best_word

KIND = "leaders"
PHRASINGS = 3


def _claim(keys: list[str]) -> str | list[str]:
    return keys[0] if len(keys) == 1 else sorted(keys)


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One leaders statement per topic with at least three entities reporting."""
    style = ctx.style
    for topic, t in ctx.facts.topics.iterrows():
        if int(t["reporting"]) < MIN_RANKED or not t["leaders"] or not t["laggards"]:
            continue
        meta = ctx.topics[topic]
        best, worst = float(t["best_value"]), float(t["worst_value"])
        evidence = {
            "period": ev(t["period"], str(t["period"])),
            "reporting": ev(int(t["reporting"]), phrasing.count(int(t["reporting"]), style)),
            "best_value": ev(best, ctx.value(topic, best)),
            "worst_value": ev(worst, ctx.value(topic, worst)),
        }
        gap = abs(best - worst)
        if meta["unit"] == "percent":
            spread = f"{ctx.amount(topic, gap)} apart"
            evidence["spread"] = ev(gap, ctx.amount(topic, gap))
        elif min(best, worst) > 0:
            ratio = max(best, worst) / min(best, worst)
            evidence["spread"] = ev(ratio, phrasing.ratio(ratio, style))
            spread = (
                f"the higher value is {phrasing.ratio(ratio, style)} the lower" if ratio >= 2
                else f"the higher value is {phrasing.relative(ratio - 1, style)} above the lower"
            )
        else:
            evidence["spread"] = ev(gap, ctx.amount(topic, gap))
            spread = f"{ctx.amount(topic, gap)} apart"
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
        yield Candidate(slot_id(KIND, None, topic), KIND, None, topic, evidence, claims, 0.6, variables)
