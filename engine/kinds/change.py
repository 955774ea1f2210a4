"""``change`` (entity × topic): the change since the previous period of the series.

Percentages change in percentage points, other units in per cent, unless the topic's ``change``
column says relative or absolute (figures.change_in). When both values carry
margins (95% half-widths) a change counts only if its size exceeds sqrt(m1² + m2²); otherwise the
statement says the value was broadly unchanged. A break in series, a missing or withheld value
stops the change from being stated and the statement says why. A change is steady when the
change itself, rounded as it prints (points at the topic's decimals, or per cent), is zero; the
statement then says "unchanged", or "little changed" when the two figures show differently. A
current value revised since the last edition is said as such ("revised from 61.2%").

A quarter or a month is also compared with the same period a year earlier (seasons.py); the
workspace's ``compare_with`` setting says which comparison leads (``year-earlier``, the default, or
``previous``) and the other follows in a sentence of its own. When there is no usable value a year
earlier, the previous period leads and the statement says the year-earlier figure is missing or
withheld (never a number it does not have).

Claims: ``direction`` (up | down | flat | unknown), ``better`` (improved | worsened | steady |
n/a: neutral topics and unknown changes), ``significant`` (true | false | null without margins),
all against the previous period; for quarters and months also ``year_earlier.direction``,
``year_earlier.better`` and ``year_earlier.significant``, the same against a year earlier.
"""

from __future__ import annotations

import math
from collections.abc import Iterator

from stetline import phrasing
from stetline.drafting import Candidate, Context, ev, phrasing_index, slot_id
from stetline.kinds.common import caveat, cell_wide, missing, prints_as_zero, status_shown
from stetline.seasons import year_earlier_facts

KIND = "change"
PHRASINGS = 4
#: wordings of the sentence on the average, picked per slot like the phrasing
AVERAGE_WORDINGS = 3


def evaluative_word(ctx: Context, variables: dict[str, object]) -> str:
    """'Fortunately' or 'Unfortunately' for a change that improved or worsened, when the house style asks ('')."""
    if not ctx.evaluative_words or variables["state"] not in ("up", "down"):
        return ""
    return "Fortunately" if variables["improved"] else ("Unfortunately" if variables["worsened"] else "")


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One change statement per entity × topic cell, including those that cannot state one."""
    style = ctx.style
    topic_facts = ctx.facts.topics
    spread = (topic_facts["best_value"] - topic_facts["worst_value"]).abs().to_dict()
    mean_changes = topic_facts["mean_change"].to_dict()
    known = ctx.facts.cells.loc[ctx.facts.cells["change_known"]]
    mean_rels = known.groupby("topic")["change_rel"].mean().to_dict()  # the average of the relative changes
    compared_counts = topic_facts["compared"].to_dict()
    nouns = ctx.entity_nouns
    years = year_earlier_facts(ctx.facts.cells, ctx.facts.series)
    for c, y in zip(ctx.facts.cells.itertuples(index=False), years.itertuples(index=False)):
        slot = slot_id(KIND, c.entity, c.topic)
        wide = cell_wide(c)  # one form for the figures of a statement: "45.7 thousand" beside "2.4 million"
        evidence = {"period": ev(c.period, str(c.period)), "status": ev(c.status, status_shown(c.status))}
        prev_period = None if missing(c.prev_period) else str(c.prev_period)
        significant = None if missing(c.significant) else bool(c.significant)
        claims: dict[str, object] = {"direction": c.direction, "better": c.better_change, "significant": significant}
        variables: dict[str, object] = {
            "name": ctx.name(c.entity), "prep": ctx.preposition, "label": ctx.label(c.topic),
            "lower_label": ctx.lower_label(c.topic), "the_label": ctx.the_label(c.topic),
            "period": ctx.when(c.period), "prev_period": None if prev_period is None else ctx.when(prev_period),
            "period_adj": ctx.when(c.period, "adjective"),
            "prev_period_adj": None if prev_period is None else ctx.when(prev_period, "adjective"),
            "lead": "previous", "other": {"state": ""},
            "caveat": caveat(c.status),
            "state": "", "improved": False, "worsened": False, "significant": False,
            "revised": "", "evaluative": "", "neutral": c.better == "neutral", "nouns": nouns,
            "average_move": "", "average_wording": 0,
        }
        interest = 0.1
        variables["now_revised"] = ""
        if c.usable:
            evidence["value"] = ev(float(c.value), ctx.value(c.topic, float(c.value), wide))
            if not missing(c.value_revised_from):
                held = ctx.value(c.topic, float(c.value_revised_from), wide)
                evidence["value_revised_from"] = ev(float(c.value_revised_from), held)
                variables["now_revised"] = f" (revised from {held})"
        else:
            evidence["value"] = ev(None, "withheld" if c.status == "confidential" else "missing")
        evidence["previous_period"] = ev(prev_period, prev_period or "none")
        if missing(c.prev_value):
            prev_withheld = (c.prev_status == "confidential")
            evidence["previous"] = ev(None, "withheld" if prev_withheld else "missing")
        else:
            evidence["previous"] = ev(float(c.prev_value), ctx.value(c.topic, float(c.prev_value), wide))
            if not missing(c.revised_from):
                revised = ctx.value(c.topic, float(c.revised_from), wide)
                variables["revised"] = revised
                evidence["revised_from"] = ev(float(c.revised_from), revised)
        if not c.usable:
            variables["state"] = "withheld" if c.status == "confidential" else "missing"
        elif c.status == "break":
            variables["state"] = "break"
        elif prev_period is None:
            variables["state"] = "first"
        elif missing(c.prev_value):
            variables["state"] = "prev_withheld" if c.prev_status == "confidential" else "prev_missing"
        year_stated = y.year_state == "stated"
        if y.year_state != "none":
            _year_earlier(ctx, c, y, evidence, claims, variables, wide)
        if variables["state"]:
            evidence["change"] = ev(None, "not stated")
            if variables["state"] in ("first", "break"):  # nothing to add a year-earlier clause to
                variables["other"] = {"state": ""}
            elif year_stated and ctx.compare_with == "year-earlier" and str(variables["state"]).startswith("prev_"):
                _lead_with_year_earlier(ctx, y, evidence, variables)
                variables["evaluative"] = evaluative_word(ctx, variables)
                interest = 0.3
            yield Candidate(slot, KIND, c.entity, c.topic, evidence, claims, interest, variables)
            continue
        change = float(c.change)
        if ctx.change_in(c.topic) != "relative" or missing(c.change_rel):  # the topic's `change` column
            evidence["change"] = ev(change, ctx.amount(c.topic, change, wide))
        else:
            evidence["change"] = ev(float(c.change_rel), phrasing.relative(abs(float(c.change_rel)), style))
            evidence["change_abs"] = ev(change, ctx.amount(c.topic, change, wide))
        if not missing(c.margin) and not missing(c.prev_margin):
            threshold = math.sqrt(float(c.margin) ** 2 + float(c.prev_margin) ** 2)
            evidence["margin_of_change"] = ev(threshold, ctx.amount(c.topic, threshold, wide))
        variables["state"] = {"up": "up", "down": "down"}.get(str(c.direction), "flat")
        if variables["state"] == "flat" and significant is False:
            variables["state"] = "not_significant"
        compared = int(compared_counts[c.topic])
        variables["average_move"] = variables["average_wording"] = ""
        relative = "change_abs" in evidence
        mean_change = (mean_rels if relative else mean_changes).get(c.topic)
        if compared >= 3 and mean_change is not None and not missing(mean_change):
            mean = float(mean_change)
            shown = phrasing.relative(abs(mean), style) if relative else ctx.amount(c.topic, mean, wide)
            average_move = "flat" if prints_as_zero(ctx, c.topic, mean, relative) else ("up" if mean > 0 else "down")
            # the average is the topic's context, said in its movement statement; an entity's change
            # says it only when the entity went another way than the average (common practice)
            if variables["state"] in ("up", "down", "flat") and average_move != variables["state"]:
                evidence["mean_change"] = ev(mean, shown)
                evidence["compared"] = ev(compared, phrasing.count(compared, style))
                variables["average_move"] = average_move
                variables["average_wording"] = phrasing_index(slot + "#average", AVERAGE_WORDINGS)
        variables["improved"] = c.better_change == "improved"
        variables["worsened"] = c.better_change == "worsened"
        variables["significant"] = significant is True
        if year_stated and ctx.compare_with == "year-earlier":
            _lead_with_year_earlier(ctx, y, evidence, variables)
            variables["evaluative"] = evaluative_word(ctx, variables)
            # the average of all moved since the previous period: not said here
            variables["average_move"] = variables["average_wording"] = ""
            evidence.pop("mean_change", None)
            evidence.pop("compared", None)
            size = abs(float(y.year_change)) / spread[c.topic] if spread.get(c.topic) else 0.0
            interest = 0.2 if variables["state"] in ("flat", "not_significant") else 0.3 + min(0.5, 0.5 * size)
            yield Candidate(slot, KIND, c.entity, c.topic, evidence, claims, interest, variables)
            continue
        variables["evaluative"] = evaluative_word(ctx, variables)
        size = abs(change) / spread[c.topic] if spread.get(c.topic) else 0.0
        interest = 0.3 + min(0.5, 0.5 * size) + (0.2 if significant else 0.0)
        if variables["state"] in ("flat", "not_significant"):
            interest = 0.2
        yield Candidate(slot, KIND, c.entity, c.topic, evidence, claims, interest, variables)


def _state(direction: str, significant: object) -> str:
    """The template's state of a stated comparison: up, down, flat or not_significant."""
    state = {"up": "up", "down": "down"}.get(direction, "flat")
    return "not_significant" if state == "flat" and significant is False else state


def _year_earlier(ctx: Context, c: object, y: object, evidence: dict[str, dict[str, object]],
                  claims: dict[str, object], variables: dict[str, object], wide: bool) -> None:
    """Add the comparison with the same quarter or month a year earlier: evidence, claims and the clause."""
    label = str(getattr(y, "year_period"))
    topic = str(getattr(c, "topic"))
    state = str(getattr(y, "year_state"))
    significant = None if missing(getattr(y, "year_significant")) else bool(getattr(y, "year_significant"))
    claims["year_earlier.direction"] = str(getattr(y, "year_direction"))
    claims["year_earlier.better"] = str(getattr(y, "year_better_change"))
    claims["year_earlier.significant"] = significant
    evidence["year_earlier_period"] = ev(label, label)
    value = getattr(y, "year_value")
    if missing(value):
        evidence["year_earlier"] = ev(None, "withheld" if state == "withheld" else "missing")
    else:
        evidence["year_earlier"] = ev(float(value), ctx.value(topic, float(value), wide))
    change, rel = getattr(y, "year_change"), getattr(y, "year_change_rel")
    if state != "stated":
        evidence["year_earlier_change"] = ev(None, "not stated")
    elif ctx.change_in(topic) != "relative" or missing(rel):
        evidence["year_earlier_change"] = ev(float(change), ctx.amount(topic, float(change), wide))
    else:
        evidence["year_earlier_change"] = ev(float(rel), phrasing.relative(abs(float(rel)), ctx.style))
    if state == "current":
        return
    if state == "stated":
        state = _state(str(getattr(y, "year_direction")), significant)
    better = str(getattr(y, "year_better_change"))
    variables["other"] = {
        "kind": "year-earlier", "state": state, "period": ctx.when(label), "then": evidence["year_earlier"]["shown"],
        "by": evidence["year_earlier_change"]["shown"], "improved": better == "improved",
        "worsened": better == "worsened", "significant": significant is True,
    }


def _lead_with_year_earlier(ctx: Context, y: object, evidence: dict[str, dict[str, object]],
                            variables: dict[str, object]) -> None:
    """Let the year-earlier comparison lead, and the previous period follow in its own sentence."""
    other = dict(variables["other"])  # type: ignore[call-overload]
    state, prev_period = str(variables["state"]), variables["prev_period"]
    variables["other"] = {
        "kind": "previous", "state": state, "period": prev_period, "then": evidence["previous"]["shown"],
        "by": evidence["change"]["shown"], "improved": variables["improved"],
        "worsened": variables["worsened"], "significant": variables["significant"],
    }
    variables.update(
        lead="year-earlier", state=other["state"], prev_period=other["period"], improved=other["improved"],
        worsened=other["worsened"], significant=other["significant"], revised="",
        prev_period_adj=ctx.when(str(getattr(y, "year_period")), "adjective"),
    )
