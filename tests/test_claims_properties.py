"""Every claim of every kind against a recomputation written here in plain Python (hypothesis).

The panels (tests/helpers.py, ``panels``, shared with tests/test_periods_compare.py) vary: readings
one, two or five years apart, quarters and months; ties; missing and withheld values, breaks in
series and gaps; changes that round to zero at display precision; percent and other units, changes
sized in points, per cent or the topic's own unit (its `change` column); 2 to 200 entities. Each
claim is recomputed from the rows with Python's ``decimal`` module (never with the engine's own
functions; the rounding rules are helpers.half_up and helpers.prints_as_zero) and compared with the draft.

References for the rules checked:
- steady is decided on the change as it prints, never on two rounded values: DESIGN, "Numbers and
  words" (the project's own rule); the printed change is in percentage points for percentages
  (ONS Service Manual, "Percentages") and in per cent otherwise, whole from 10%, one decimal below
  (DESIGN), the topic's `change` column choosing points or the unit (`absolute`) or per cent
  (`relative`) instead (issue 14, point 6); rounding half-up at the last step (Eurostat Statistics
  Explained, "Tutorial: Rounding of numbers");
- a change is significant when it exceeds sqrt(m1² + m2²) of the 95% half-widths: the usual rule
  for two independent estimates (common practice);
- compound annual growth (end / start) ** (1 / years) - 1 over the real time between periods
  (common practice, as in any finance handbook);
- counts, streaks and "N years in a row" in the series' own spacing: the project's own rule.
"""

from __future__ import annotations

import math
import re
from collections import Counter

import pandas as pd
from helpers import panel_frames, panels, prints_as_zero
from hypothesis import HealthCheck, given, settings

from stetline import periods
from stetline.audit import audit_text
from stetline.drafting import Context, draft_all
from stetline.facts import compute_facts
from stetline.kinds import KINDS
from stetline.phrasing import HouseStyle
from stetline.rendering import Renderer

SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
# a zero change said as a rise or a fall: "a fall of 0.0%", "rose by 0", "down 0.0", "(0 tonnes)"
ZERO_MOVE = re.compile(
    r"\b(rise|fall|rose|fell|risen|fallen|up|down|improvement|deterioration)( of| by)? 0(\.0+)?"
    r"( ?%| percentage points?| [a-z]+)?(?![\d.,]*\d)"
)
ZERO_COUNT = re.compile(r"\b(in|on|of) 0(?![.,]?\d)(?! out of)")  # a composite "score of 0 out of 100" is a score


def drafts_of(panel: dict, compare_with: str = "previous") -> dict[str, tuple[str, dict, dict]]:
    """Draft every slot of a panel through the engine's real path (facts, kinds, templates).

    The previous period leads a change statement here (the claims recomputed below are those);
    tests/test_periods_compare.py checks quarters and months led by the same period a year earlier.
    """
    obs, t, entities = panel_frames(panel)
    facts = compute_facts(obs, t, entities)
    style = HouseStyle()
    ctx = Context(facts, t.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, "town", kinds=tuple(k.KIND for k in KINDS), compare_with=compare_with)
    return {d.slot: (d.text, d.evidence, d.claims) for d in draft_all(ctx, Renderer(style), KINDS)}


# ---- the recomputation: plain Python over the rows ----------------------------------------------

def series_of(panel: dict) -> dict[tuple[str, str], list[tuple]]:
    """Each entity × topic's rows, oldest first: (period, time, value, margin, status)."""
    out: dict[tuple[str, str], list[tuple]] = {}
    for e, t, period, value, margin, status in panel["rows"]:
        out.setdefault((e, t), []).append((period, periods.period_time(period), value, margin, status))
    return out


def usable(row: tuple) -> bool:
    return not math.isnan(row[2]) and row[4] != "confidential"


def expected_change(rows: list[tuple], latest: float, meta: dict) -> tuple[str, str] | None:
    """(direction, better) of the change to the latest period, or None when no change is stated."""
    at = [i for i, r in enumerate(rows) if r[1] == latest]
    if not at or at[0] == 0:
        return None
    now, before = rows[at[0]], rows[at[0] - 1]
    if not usable(now) or not usable(before) or now[4] == "break":
        return None
    change = now[2] - before[2]
    flat = prints_as_zero(change, before[2], meta["unit"], meta["decimals"], meta.get("change", ""))
    if not math.isnan(now[3]) and not math.isnan(before[3]):
        flat = flat or abs(change) <= math.sqrt(now[3] ** 2 + before[3] ** 2)
    direction = "flat" if flat else ("up" if change > 0 else "down")
    if meta["better"] == "neutral":
        return direction, "n/a"
    if flat:
        return direction, "steady"
    good = (change > 0) == (meta["better"] == "higher")
    return direction, "improved" if good else "worsened"


def usual_spacing(series: dict, topic: str) -> float:
    """The most common distance between consecutive rows of a topic (the smaller on a tie)."""
    counts: Counter = Counter()
    for (_e, t), rows in series.items():
        if t == topic:
            counts.update(round(b[1] - a[1], 6) for a, b in zip(rows, rows[1:]))
    best = max(counts.values())
    return min(d for d, n in counts.items() if n == best)


def expected_streak(rows: list[tuple], meta: dict, spacing: float, natural: float) -> str:
    """The streak claim: steps judged as printed, ended by a break, a missing reading or a gap."""
    rows = rows[max([i for i, r in enumerate(rows) if r[4] == "break"], default=0):]
    direction = -1 if meta["better"] == "lower" else 1
    steps: list[tuple[int, float]] = []  # (step sign, distance) from the latest backwards
    for i in range(len(rows) - 1, 0, -1):
        now, before = rows[i], rows[i - 1]
        if not usable(now) or not usable(before) or now[1] - before[1] > spacing + 1e-6:
            break
        change = now[2] - before[2]
        zero = prints_as_zero(change, before[2], meta["unit"], meta["decimals"], meta.get("change", ""))
        if not math.isnan(now[3]) and not math.isnan(before[3]):
            zero = zero or abs(change) <= math.sqrt(now[3] ** 2 + before[3] ** 2)
        sign = 0 if zero else (1 if change > 0 else -1) * direction
        if sign == 0 or (steps and sign != steps[0][0]):
            break
        steps.append((sign, now[1] - before[1]))
    if len(steps) < 2:
        return "none"
    if meta["better"] == "neutral":
        word = "rose" if steps[0][0] > 0 else "fell"
    else:
        word = "improved" if steps[0][0] > 0 else "worsened"
    in_calendar = all(abs(d - natural) < 1e-6 for _s, d in steps)
    return f"{word}:{len(steps)}" if in_calendar else f"{word}:{len(steps)}:readings"


# ---- the properties ---------------------------------------------------------------------------

@SETTINGS
@given(panels())
def test_change_and_movement_claims_match_a_recomputation(panel: dict) -> None:
    drafts = drafts_of(panel)
    series = series_of(panel)
    metas = {t["topic"]: t for t in panel["topics"]}
    for topic, meta in metas.items():
        latest = max(r[1] for (_e, t), rows in series.items() if t == topic for r in rows)
        moves = {}
        for (e, t), rows in series.items():
            if t != topic:
                continue
            expected = expected_change(rows, latest, meta)
            text, _ev, claims = drafts[f"change/{e}/{t}"]
            if expected is None:
                assert claims["direction"] == "unknown", (text, rows)
                continue
            moves[e] = expected
            assert (claims["direction"], claims["better"]) == expected, (text, rows)
            # a change that prints as zero is never said as a rise or a fall
            assert not ZERO_MOVE.search(text), text
            if expected[0] == "flat":
                first = text.split(". ")[0]
                assert not re.search(r"\b(rose|fell|improved|worsened) (from|by)\b", first), text
        slot = f"movement/{topic}"
        if len(moves) < 3:
            assert slot not in drafts
            continue
        text, evidence, claims = drafts[slot]
        column = 0 if meta["better"] == "neutral" else 1
        up_word, down_word = ("up", "down") if column == 0 else ("improved", "worsened")
        n_up = sum(1 for m in moves.values() if m[column] == up_word)
        n_down = sum(1 for m in moves.values() if m[column] == down_word)
        names = ("rose", "fell") if column == 0 else ("improved", "worsened")
        assert evidence[names[0]]["value"] == n_up and evidence[names[1]]["value"] == n_down, text
        assert evidence["steady"]["value"] == len(moves) - n_up - n_down, text
        moved = n_up + n_down
        majority = names[0] if moved and 2 * n_up > moved else (names[1] if moved and 2 * n_down > moved else "mixed")
        assert claims["majority"] == majority, text
        exceptions: list[str] = []
        if moved and max(n_up, n_down) >= 0.75 * moved and min(n_up, n_down) > 0:
            odd = down_word if n_up > n_down else up_word
            exceptions = sorted(e for e, m in moves.items() if m[column] == odd)
        assert claims["exceptions"] == exceptions, text
        # no count of zero printed as a figure, no zero move
        assert not ZERO_COUNT.search(text) and not ZERO_MOVE.search(text), text


@SETTINGS
@given(panels())
def test_trend_streaks_are_counted_in_the_series_own_spacing(panel: dict) -> None:
    drafts = drafts_of(panel)
    series = series_of(panel)
    metas = {t["topic"]: t for t in panel["topics"]}
    natural = {"year": 1.0, "quarter": 0.25, "month": 1 / 12}[panel["fmt"]]
    unit_word = {"year": "years", "quarter": "quarters", "month": "months"}[panel["fmt"]]
    for (e, t), rows in series.items():
        slot = f"trend/{e}/{t}"
        if slot not in drafts:
            continue
        text, _ev, claims = drafts[slot]
        expected = expected_streak(rows, metas[t], usual_spacing(series, t), natural)
        assert claims["streak"] == expected, (text, rows)
        if expected == "none":
            assert "in a row" not in text and "each of the last" not in text, text
        elif expected.endswith(":readings"):
            # readings further apart than the calendar's own step are never counted as years
            assert "readings" in text and "in a row" not in text and unit_word not in text, text
        else:
            assert unit_word in text, text
        assert not ZERO_MOVE.search(text), text


@SETTINGS
@given(panels())
def test_headline_majorities_and_wording_match_a_recomputation(panel: dict) -> None:
    drafts = drafts_of(panel)
    series = series_of(panel)
    metas = {t["topic"]: t for t in panel["topics"]}
    improving, worsening = [], []
    for topic, meta in metas.items():
        if meta["better"] == "neutral":
            continue
        latest = max(r[1] for (_e, t), rows in series.items() if t == topic for r in rows)
        moves = [expected_change(rows, latest, meta) for (_e, t), rows in series.items() if t == topic]
        better = [m[1] for m in moves if m is not None]
        n_up, n_down = better.count("improved"), better.count("worsened")
        if n_up + n_down and 2 * n_up > n_up + n_down:
            improving.append(topic)
        if n_up + n_down and 2 * n_down > n_up + n_down:
            worsening.append(topic)
    text, _ev, claims = drafts["headline"]
    assert claims["improving"] == sorted(improving) and claims["worsening"] == sorted(worsening), text
    assert not ZERO_COUNT.search(text) and "They include" not in text, text
    assert not ZERO_MOVE.search(text), text


@SETTINGS
@given(panels())
def test_every_number_of_every_draft_is_traced(panel: dict) -> None:
    drafts = drafts_of(panel)
    _obs, topics, entities = panel_frames(panel)
    labels = list(topics["label"]) + list(topics["unit"]) + list(entities["name"])
    untraced = {slot: [u.text for u in audit_text(text, evidence, labels) if u.fact is None]
                for slot, (text, evidence, _claims) in drafts.items()}
    assert {slot: found for slot, found in untraced.items() if found} == {}
    # in every kind: no zero change said as a rise or a fall, no count of zero said as a figure
    wrong = {slot: text for slot, (text, _e, _c) in drafts.items() if ZERO_MOVE.search(text) or ZERO_COUNT.search(text)}
    assert wrong == {}


def expected_leaders(series: dict, topic: str, meta: dict, latest: float) -> tuple[object, object] | None:
    """(leader, laggard) claims: the best and worst usable values of the latest period, ties as sorted lists."""
    now = {e: r[2] for (e, t), rows in series.items() if t == topic for r in rows if r[1] == latest and usable(r)}
    if len(now) < 3:
        return None
    high = max(now.values())
    low = min(now.values())
    best, worst = (low, high) if meta["better"] == "lower" else (high, low)
    tops = sorted(e for e, v in now.items() if v == best)
    bottoms = sorted(e for e, v in now.items() if v == worst)
    return (tops[0] if len(tops) == 1 else tops), (bottoms[0] if len(bottoms) == 1 else bottoms)


@SETTINGS
@given(panels())
def test_blurb_and_roundup_claims_match_a_recomputation(panel: dict) -> None:
    """The composed kinds claim what their parts would, recomputed here from the rows."""
    drafts = drafts_of(panel)
    series = series_of(panel)
    metas = {t["topic"]: t for t in panel["topics"]}
    natural = {"year": 1.0, "quarter": 0.25, "month": 1 / 12}[panel["fmt"]]
    groups = {f"e{e:03d}": "North" if e % 2 else "South" for e in range(panel["n_entities"])}
    latest = {t: max(r[1] for (_e, k), rows in series.items() if k == t for r in rows) for t in metas}
    for (e, t), rows in series.items():
        slot = f"blurb/{e}/{t}"
        if slot not in drafts:
            continue
        text, _ev, claims = drafts[slot]
        expected = expected_change(rows, latest[t], metas[t])
        if "change.direction" in claims:
            assert expected is not None and (claims["change.direction"], claims["change.better"]) == expected, text
            if expected[0] == "flat":
                assert not re.search(r"\b(rose|fell) by\b", text), text
        if "trend.streak" in claims:
            assert claims["trend.streak"] == expected_streak(rows, metas[t], usual_spacing(series, t), natural), text
        assert not ZERO_MOVE.search(text) and not ZERO_COUNT.search(text), text
    for topic, meta in metas.items():
        slot = f"roundup/{topic}"
        leaders = expected_leaders(series, topic, meta, latest[topic])
        moves = {e: m for (e, t), rows in series.items() if t == topic
                 for m in [expected_change(rows, latest[topic], meta)] if m is not None}
        if leaders is None and len(moves) < 3:
            assert slot not in drafts
            continue
        text, _ev, claims = drafts[slot]
        if leaders is not None:
            assert (claims["leaders.leader"], claims["leaders.laggard"]) == leaders, text
        if len(moves) >= 3:
            column = 0 if meta["better"] == "neutral" else 1
            up_word, down_word = ("up", "down") if column == 0 else ("improved", "worsened")
            n_up = sum(1 for m in moves.values() if m[column] == up_word)
            n_down = sum(1 for m in moves.values() if m[column] == down_word)
            names = ("rose", "fell") if column == 0 else ("improved", "worsened")
            moved = n_up + n_down
            majority = (names[0] if moved and 2 * n_up > moved else
                        names[1] if moved and 2 * n_down > moved else "mixed")
            exceptions: list[str] = []
            if moved and max(n_up, n_down) >= 0.75 * moved and min(n_up, n_down) > 0:
                odd = down_word if n_up > n_down else up_word
                exceptions = sorted(e for e, m in moves.items() if m[column] == odd)
            assert claims["movement.majority"] == majority and claims["movement.exceptions"] == exceptions, text
            shared = {groups[e] for e in exceptions}
            group = shared.pop() if len(exceptions) >= 2 and len(shared) == 1 else None
            assert claims.get("movement.exceptions_group") == group, text
            if group:
                assert f"all in the {group} group" in text, text
        assert not ZERO_MOVE.search(text) and not ZERO_COUNT.search(text), text


# ---- the cases the issue names ------------------------------------------------------------------

def yearly(rows: list[tuple], topics: list[dict], n: int = 3, earlier: pd.DataFrame | None = None,
           fmt: str = "year") -> dict[str, tuple[str, dict, dict]]:
    """Draft rows (entity, topic, period, value) of n entities through the engine's real path."""
    obs = pd.DataFrame([(*r, float("nan"), "") for r in rows],
                       columns=["entity", "topic", "period", "value", "margin", "status"])
    obs["period"] = obs["period"].astype("str")
    obs["value"] = obs["value"].astype("float64")
    obs["time"] = periods.times(obs["period"], fmt)
    obs["row"] = range(2, len(obs) + 2)
    entities = pd.DataFrame({"entity": [f"e{i}" for i in range(n)], "name": [f"Place {i}" for i in range(n)],
                             "group": [""] * n, "position": range(n)})
    t = pd.DataFrame([{"category": "", "target": float("nan"), "weight": 1.0, "source": "", "position": i, **x}
                      for i, x in enumerate(topics)])
    facts = compute_facts(obs, t, entities, earlier)
    style = HouseStyle()
    ctx = Context(facts, t.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, "town")
    return {d.slot: (d.text, d.evidence, d.claims) for d in draft_all(ctx, Renderer(style), KINDS)}


LIFE = {"topic": "life", "label": "Life expectancy", "unit": "years", "better": "higher", "decimals": 2}


def test_a_change_that_prints_as_zero_is_steady_everywhere() -> None:
    # -0.03 on 71.84 is -0.04%: it prints as 0.0%, so the change is steady (DESIGN, "Numbers and words")
    rows = [("e0", "life", 2024, 71.84), ("e0", "life", 2025, 71.81), ("e1", "life", 2024, 70.0),
            ("e1", "life", 2025, 71.0), ("e2", "life", 2024, 60.0), ("e2", "life", 2025, 61.0)]
    out = yearly(rows, [LIFE])
    text, _e, claims = out["change/e0/life"]
    assert claims == {"direction": "flat", "better": "steady", "significant": None}
    assert "worsened" not in text and "0.0%" not in text
    assert "little changed in 2025: 71.81 years against 71.84 years in 2024" in text
    movement, _e, m = out["movement/life"]
    assert m == {"majority": "improved", "exceptions": []}  # not named as an exception
    assert "improved in two and held steady in one of three towns" in movement


def test_five_yearly_runs_are_counted_in_readings_with_the_year_they_start() -> None:
    rows = [(f"e{i}", "life", y, 50.0 + i + k) for i in range(3) for k, y in enumerate(range(1990, 2011, 5))]
    text, _e, claims = yearly(rows, [LIFE])["trend/e0/life"]
    assert claims["streak"] == "improved:4:readings"
    assert "each of the four readings since 1990" in text
    assert "years in a row" not in text and "last four years" not in text


def test_a_gap_in_the_series_ends_a_run() -> None:
    rows = [(f"e{i}", "life", y, 50.0 + i + y - 2018) for i in range(3) for y in range(2018, 2025)
            if not (i == 0 and y == 2021)]
    out = yearly(rows, [LIFE])
    assert out["trend/e0/life"][2]["streak"] == "improved:2"  # 2023 and 2024 only: 2021 is absent
    assert out["trend/e1/life"][2]["streak"] == "improved:6"


def test_quarters_and_months_are_named_as_such() -> None:
    quarters = ["2024-Q2", "2024-Q3", "2024-Q4", "2025-Q1"]
    rows = [(f"e{i}", "life", q, 50.0 + i + k) for i in range(3) for k, q in enumerate(quarters)]
    out = yearly(rows, [LIFE], fmt="quarter")["trend/e0/life"][0]
    assert "three quarters in a row" in out or "each of the last three quarters" in out
    months = ["2025-01", "2025-02", "2025-03", "2025-04"]
    rows = [(f"e{i}", "life", m, 50.0 + i + k) for i in range(3) for k, m in enumerate(months)]
    out = yearly(rows, [LIFE], fmt="month")["trend/e0/life"][0]
    assert "three months in a row" in out or "each of the last three months" in out


def test_a_revised_current_value_is_said_to_be_revised() -> None:
    rows = [(f"e{i}", "life", y, 60.0 + i + y - 2024) for i in range(3) for y in (2024, 2025)]
    earlier = pd.DataFrame({"entity": ["e0"], "topic": ["life"], "period": ["2025"], "value": [61.2]})
    text, evidence, _c = yearly(rows, [LIFE], earlier=earlier)["change/e0/life"]
    assert "61.00 years (revised from 61.20 years)" in text
    assert evidence["value_revised_from"]["value"] == 61.2


def test_the_headline_says_none_both_and_what_its_biggest_shift_measures() -> None:
    topics = [{**LIFE, "topic": "a", "label": "Alpha"}, {**LIFE, "topic": "b", "label": "Beta"}]
    rows = [(f"e{i}", t, y, 60.0 + i + (y - 2024) * (1 if t == "a" else 2)) for i in range(3) for t in "ab"
            for y in (2024, 2025)]
    text = yearly(rows, topics)["headline"][0]
    assert "most towns improved on both indicators." in text
    assert "They include" not in text and " 0 " not in text
    # Beta rose by 2 years in each town against a gap of 2 years between the best and the worst; life
    # expectancy in years changes in per cent by default (the topic's `change` column): (2/60 + 2/61 + 2/62) / 3
    assert "Measured against the gap between its best and worst towns, Beta moved most" in text
    assert "it rose by 3.3% on average across the towns" in text
    rows = [(f"e{i}", t, y, 60.0 + i + (y - 2024) * (1 if t == "a" else 0)) for i in range(3) for t in "ab"
            for y in (2024, 2025)]
    text = yearly(rows, topics)["headline"][0]
    assert "improved on one of two indicators and worsened on none." in text
    assert "The indicator where most improved is Alpha." in text


def test_a_first_edition_with_one_period_says_what_it_covers() -> None:
    rows = [(f"e{i}", "life", 2025, 60.0 + i) for i in range(3)]
    text = yearly(rows, [LIFE])["headline"][0]
    assert text.startswith("The 2025 figures cover one indicator for three towns; there is no earlier period")
    assert "no indicator moved" not in text


RISE_BY = re.compile(r"\b(rose by|a rise of|up|went up by) [0-9]")  # the four wordings of a rise


def test_steady_follows_the_unit_the_topic_change_column_prints_in() -> None:
    # +0.04 on 42.324%: 0.0 percentage points at one decimal, but 0.0945% (prints "0.1%") as a relative change
    rate = {"topic": "rate", "label": "Take-up rate", "unit": "percent", "better": "higher", "decimals": 1}
    rows = [("e0", "rate", 2024, 42.324), ("e0", "rate", 2025, 42.364), ("e1", "rate", 2024, 50.0),
            ("e1", "rate", 2025, 51.0), ("e2", "rate", 2024, 60.0), ("e2", "rate", 2025, 61.0)]
    assert yearly(rows, [rate])["change/e0/rate"][2]["direction"] == "flat"
    text, _e, claims = yearly(rows, [{**rate, "change": "relative"}])["change/e0/rate"]
    assert claims["direction"] == "up" and RISE_BY.search(text) and "0.1%" in text
    # +0.04 on 900 tonnes: 0.0044% (prints "0.0%"), but 0.04 tonnes at two decimals in the topic's own unit
    waste = {"topic": "w", "label": "Waste", "unit": "tonnes", "better": "lower", "decimals": 2}
    rows = [("e0", "w", 2024, 900.0), ("e0", "w", 2025, 900.04), ("e1", "w", 2024, 500.0),
            ("e1", "w", 2025, 510.0), ("e2", "w", 2024, 600.0), ("e2", "w", 2025, 610.0)]
    assert yearly(rows, [waste])["change/e0/w"][2]["direction"] == "flat"
    text, _e, claims = yearly(rows, [{**waste, "change": "absolute"}])["change/e0/w"]
    assert claims["better"] == "worsened" and RISE_BY.search(text) and "0.04 tonnes" in text
