"""``blurb`` (entity × topic): one paragraph of one to three sentences composed from the standing,
change and trend facts of a cell.

The parts are ordered by the interest scores their kinds compute, the most newsworthy first: the
lead sentence names the topic, the entity and the latest value; the others say "it" (or join the
lead with a semicolon), so the subject is not repeated. A change is stated when one can be given
(not across a break, nor without a previous value); a trend when the series has a run of two or
more periods or a record. Claims: the claims of the parts the paragraph states, namespaced by their
kind (``standing.rank_band``, ``change.direction``, ``trend.streak`` …); evidence: theirs, by name.
An entity with a parent ends with where it stands within the parent (``standing.vs_parent`` …).
"""

from __future__ import annotations

from collections.abc import Iterator

from stetline.drafting import Candidate, Context, phrasing_index, slot_id
from stetline.kinds import change, parts, standing, trend

KIND = "blurb"
#: the kinds whose facts it states
PARTS = ("standing", "change", "trend")
PHRASINGS = 3
#: wordings of the change clause (a rise or a fall), picked per slot apart from the lead's phrasing
CHANGE_WORDINGS = 4
#: change states that say a change (the others say why none can be given)
STATED_CHANGES = ("up", "down", "flat", "not_significant")
#: the evidence of each part a blurb can print (its claims are all stated)
PRINTED = {
    "standing": ("period", "status", "value", "value_revised_from", "rank", "rank_of", "place", "group_mean",
                 "group_gap", "target", "target_gap", "sibling_rank", "sibling_rank_of", "parent_ref",
                 "siblings_counted"),
    "change": ("period", "value", "previous_period", "previous", "revised_from", "change", "year_earlier_period",
               "year_earlier", "year_earlier_change"),
    "trend": ("period", "value", "streak", "streak_since", "record_since"),
}
#: the average of all is printed only when there is no group to compare with
_ALL_MEAN = ("all_mean", "all_gap")
#: what the template reads of a part that a cell lacks
_NO_CHANGE = {"state": "", "improved": False, "worsened": False, "prev_period": "", "prev_period_adj": "",
              "revised": "", "evaluative": "", "lead": "previous"}
_NO_TREND = {"streak": 0, "record": "none", "since": "", "participle": "", "periods_word": "", "natural": True,
             "run_since": "", "season": "", "against": "", "versus": "", "step_words": ""}


def stated(part: Candidate) -> bool:
    """True when a part has something to say in a blurb."""
    if part.kind == "change":
        return part.variables.get("state") in STATED_CHANGES
    if part.kind == "trend":
        return int(part.variables.get("streak") or 0) >= 2 or part.claims.get("record", "none") != "none"
    return True


def candidates(ctx: Context) -> Iterator[Candidate]:
    """One blurb per entity × topic cell, its parts led by the most newsworthy."""
    for s, (ch, tr) in parts.aligned(ctx, standing, (change, trend)):
        known = [p for p in (s, ch, tr) if p is not None]
        if s.evidence["value"]["value"] is None:  # missing or withheld: the blurb says only that
            chosen = [s]
        else:
            chosen = [p for p in known if stated(p)]
            chosen.sort(key=lambda p: (-p.interest, PARTS.index(p.kind)))
        printed = PRINTED if "group_mean" in s.evidence else {**PRINTED, "standing": PRINTED["standing"] + _ALL_MEAN}
        evidence, claims, facts = parts.compose(chosen, known, printed)
        variables = {
            "name": s.variables["name"], "label": s.variables["label"], "the_label": s.variables["the_label"],
            "lower_label": s.variables["lower_label"], "prep": s.variables["prep"], "period": s.variables["period"],
            "caveat": s.variables["caveat"], "order": [p.kind for p in chosen],
            "s": s.variables, "ch": {**_NO_CHANGE, **(ch.variables if ch is not None else {})},
            "tr": {**_NO_TREND, **(tr.variables if tr is not None else {})},
            "p_change": phrasing_index(slot_id(KIND, s.entity, s.topic) + "#change", CHANGE_WORDINGS),
        }
        yield Candidate(slot_id(KIND, s.entity, s.topic), KIND, s.entity, s.topic, evidence, claims,
                        max(p.interest for p in chosen), variables, facts)
