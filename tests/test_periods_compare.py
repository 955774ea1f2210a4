"""Quarters and months: change on the previous period and on the same period a year earlier, records by season.

References:
- Eurostat Statistics Explained, glossary entries "Growth rate: quarter-on-quarter" and "Growth
  rate: year-on-year" (definitions from memory): the quarter-on-quarter rate compares a quarter
  with the quarter before, (X_t / X_t-1) - 1; the year-on-year rate with the same quarter of the
  previous year, (X_t / X_t-4) - 1, which removes the seasonal pattern. The ONS guidance on
  reading its quarterly releases says the same of "compared with the same quarter a year ago"
  (from memory). The series in the worked example is invented; its rates are worked by hand from
  those definitions in the comments beside the checks.
- Month names: CLDR, through Babel (babel.dates.get_month_names).
- A year-earlier comparison across a break or without a figure a year earlier is not stated:
  DESIGN, "Numbers and words" (a break in series stops a change; missing values are said to be
  missing, never treated as zero).
"""

from __future__ import annotations

import math
import random
from decimal import Decimal

import pandas as pd
from babel.dates import get_month_names
from helpers import half_up, panels, prints_as_zero
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from stetline import periods
from stetline.drafting import Context, Draft, Renderer, draft_all
from stetline.facts import compute_facts
from stetline.kinds import KINDS
from stetline.phrasing import HouseStyle
from stetline.reconcile import Basis, HumanWork, SlotState, decide

#: the part kinds these tests read, set explicitly (new workspaces draft fewer by default)
DRAFTED = ("standing", "change", "trend", "blurb")
TONNES = {"topic": "waste", "label": "Waste collected", "unit": "tonnes", "better": "lower", "decimals": 1}
RATE = {"topic": "rate", "label": "Recycling rate", "unit": "percent", "better": "higher", "decimals": 1}


def draft(rows: list[tuple], topic: dict, fmt: str, compare_with: str = "year-earlier") -> dict[str, Draft]:
    """Draft rows (entity, topic, period, value[, margin, status]) through the engine's real path."""
    full = [tuple(r) + (float("nan"), "")[len(r) - 4:] for r in rows]
    obs = pd.DataFrame(full, columns=["entity", "topic", "period", "value", "margin", "status"])
    obs["period"] = obs["period"].astype("str")
    obs["value"] = obs["value"].astype("float64")
    obs["margin"] = obs["margin"].astype("float64")
    obs["time"] = periods.times(obs["period"], fmt)
    obs["row"] = range(2, len(obs) + 2)
    keys = sorted({r[0] for r in rows})
    entities = pd.DataFrame({"entity": keys, "name": [f"Place {k}" for k in keys], "group": [""] * len(keys),
                             "position": range(len(keys))})
    t = pd.DataFrame([{"category": "", "target": float("nan"), "weight": 1.0, "source": "", "position": 0,
                       **topic}])
    facts = compute_facts(obs, t, entities)
    style = HouseStyle()
    ctx = Context(facts, t.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, "town", kinds=DRAFTED, compare_with=compare_with)
    kinds = [k for k in KINDS if k.KIND in DRAFTED]
    return {d.slot: d for d in draft_all(ctx, Renderer(style), kinds)}


# ---- the worked example -------------------------------------------------------------------------

#: an invented quarterly series: 120.0 tonnes a year before, 110.0 the quarter before, 115.5 now
EXAMPLE = [("a", "waste", "2024-Q3", 120.0), ("a", "waste", "2024-Q4", 112.0), ("a", "waste", "2025-Q1", 108.0),
           ("a", "waste", "2025-Q2", 110.0), ("a", "waste", "2025-Q3", 115.5)]


def test_worked_example_year_on_year_leads_by_default() -> None:
    d = draft(EXAMPLE, TONNES, "quarter")["change/a/waste"]
    # year on year: 115.5 / 120.0 - 1 = -3.75%, one decimal below 10%, half up: 3.8% (Eurostat rounding tutorial)
    assert d.evidence["year_earlier_change"]["shown"] == "3.8%"
    assert math.isclose(d.evidence["year_earlier_change"]["value"], 115.5 / 120.0 - 1)
    # quarter on quarter: 115.5 / 110.0 - 1 = +5.0%
    assert d.evidence["change"]["shown"] == "5.0%"
    assert d.claims == {"direction": "up", "better": "worsened", "significant": None,
                        "year_earlier.direction": "down", "year_earlier.better": "improved",
                        "year_earlier.significant": None}
    first, second = d.text.split(". ", 1)
    assert "third quarter of 2024" in first and "3.8%" in first and "improve" in first
    assert "Against the second quarter of 2025 (110.0 tonnes), it rose by 5.0%" in second


def test_worked_example_previous_period_leads_when_the_setting_says_so() -> None:
    d = draft(EXAMPLE, TONNES, "quarter", compare_with="previous")["change/a/waste"]
    first, second = d.text.split(". ", 1)
    assert "second quarter of 2025" in first and "5.0%" in first
    assert "worsened" in first or "deterioration" in first
    assert "Against the third quarter of 2024 (120.0 tonnes), it fell by 3.8%" in second
    # the claims do not depend on which comparison leads
    assert d.claims == draft(EXAMPLE, TONNES, "quarter")["change/a/waste"].claims


def test_years_are_unaffected_by_the_setting() -> None:
    rows = [("a", "rate", "2024", 40.0), ("a", "rate", "2025", 42.0)]
    d = draft(rows, RATE, "year")["change/a/rate"]
    assert d.claims == {"direction": "up", "better": "improved", "significant": None}
    assert "year_earlier" not in d.evidence
    assert d.text == draft(rows, RATE, "year", compare_with="previous")["change/a/rate"].text


def test_months_are_named_by_cldr() -> None:
    rows = [("a", "rate", f"{y}-{m:02d}", 40.0 + m + (y - 2024)) for y in (2024, 2025) for m in range(1, 4)]
    out = draft(rows, RATE, "month")
    march = get_month_names("wide", locale="en_GB")[3]  # CLDR, via Babel
    text = out["change/a/rate"].text
    assert f"{march} 2025" in text and f"in {march} 2024" in text
    assert "Against February 2025" in text  # the previous month follows
    assert "2025-03" not in text and f"in {march} 2025" in out["standing/a/rate"].text


def test_a_blurb_leads_its_change_with_the_year_earlier() -> None:
    d = draft(EXAMPLE, TONNES, "quarter")["blurb/a/waste"]
    assert "3.8%" in d.text and "third quarter of 2024" in d.text
    assert d.claims["change.year_earlier.direction"] == "down"


# ---- no figure a year earlier, breaks and gaps ----------------------------------------------------

def test_no_figure_a_year_earlier_is_said_and_nothing_is_invented() -> None:
    rows = [r for r in EXAMPLE if r[2] != "2024-Q3"]
    d = draft(rows, TONNES, "quarter")["change/a/waste"]
    assert d.claims["year_earlier.direction"] == "unknown" and d.claims["year_earlier.better"] == "n/a"
    assert d.evidence["year_earlier"] == {"value": None, "shown": "missing"}
    assert "There is no figure for the third quarter of 2024, a year earlier, to compare it with." in d.text
    assert d.text.startswith("Place a's waste collected rose by 5.0%") or "5.0%" in d.text.split(". ")[0]
    assert "3.8%" not in d.text and "120.0" not in d.text


def test_a_withheld_figure_a_year_earlier_is_said_to_be_withheld() -> None:
    rows = [r if r[2] != "2024-Q3" else (*r, float("nan"), "confidential") for r in EXAMPLE]
    d = draft(rows, TONNES, "quarter")["change/a/waste"]
    assert d.claims["year_earlier.direction"] == "unknown"
    assert "The figure for the third quarter of 2024, a year earlier, is withheld." in d.text
    assert "120.0" not in d.text


def test_a_break_since_a_year_earlier_stops_that_comparison() -> None:
    rows = [r if r[2] != "2025-Q1" else (*r, float("nan"), "break") for r in EXAMPLE]
    d = draft(rows, TONNES, "quarter")["change/a/waste"]
    assert d.claims["year_earlier.direction"] == "unknown"
    assert d.claims["direction"] == "up"  # 2025-Q2 to 2025-Q3 lies after the break
    assert "has a break" in d.text and "3.8%" not in d.text


def test_a_missing_quarter_breaks_a_streak() -> None:
    quarters = [f"{y}-Q{q}" for y in (2024, 2025) for q in range(1, 5)]
    rows = [(e, "rate", q, 40.0 + k + (e == "b")) for e in "ab" for k, q in enumerate(quarters)
            if not (e == "a" and q == "2025-Q1")]
    out = draft(rows, RATE, "quarter", compare_with="previous")
    assert out["trend/b/rate"].claims["streak"] == "improved:7"
    assert out["trend/a/rate"].claims["streak"] == "improved:2"  # 2025-Q2 to Q4 only: 2025-Q1 is absent
    text = out["trend/a/rate"].text
    assert "improved quarter on quarter" in text and "two quarters" in text  # the comparison is named
    # against a year earlier: b's four quarters of 2025 each beat 2024's; a has no 2025-Q1 to compare
    out = draft(rows, RATE, "quarter")
    assert out["trend/b/rate"].claims["streak"] == "improved:4:year-earlier"
    assert out["trend/a/rate"].claims["streak"] == "improved:3:year-earlier"
    text = out["trend/a/rate"].text
    assert "better than in the same quarter a year earlier" in text and "three quarters" in text
    assert "quarter on quarter" not in text


# ---- records by season ----------------------------------------------------------------------------

def seasonal(third: dict[int, float], other: float = 70.0) -> list[tuple]:
    """A quarterly series whose third quarters are given by year; other quarters sit at ``other``."""
    return [("a", "rate", f"{y}-Q{q}", third[y] if q == 3 else other)
            for y in range(min(third), max(third) + 1) for q in range(1, 5)
            if (q != 3 or y in third) and (y, q) <= (max(third), 3)]


def test_the_highest_third_quarter_since_2019() -> None:
    out = draft(seasonal({2019: 60.0, 2020: 50.0, 2021: 52.0, 2022: 51.0, 2023: 55.0, 2024: 56.0, 2025: 58.0}),
                RATE, "quarter")
    trend = out["trend/a/rate"]
    assert trend.claims["record"] == "highest-since:2019-Q3"
    assert "the highest third-quarter figure since 2019" in trend.text
    # the second quarter of 2025 (70.0%) is higher: a record that ignored the season would say lowest


def test_a_season_on_record_and_a_year_without_a_figure() -> None:
    out = draft(seasonal({2021: 52.0, 2022: 51.0, 2023: 55.0, 2024: 56.0, 2025: 58.0}), RATE, "quarter")
    assert out["trend/a/rate"].claims["record"] == "highest-on-record"
    assert "the highest third-quarter figure on record (since 2021)" in out["trend/a/rate"].text
    # 2022's third quarter is absent: no record reaches back across it
    out = draft(seasonal({2019: 60.0, 2020: 50.0, 2021: 52.0, 2023: 55.0, 2024: 56.0, 2025: 58.0}), RATE, "quarter")
    assert out["trend/a/rate"].claims["record"] == "none"
    assert "third-quarter figure since" not in out["trend/a/rate"].text


# ---- rechecks -------------------------------------------------------------------------------------

def test_a_changed_year_earlier_claim_sends_human_work_to_recheck() -> None:
    before = draft(EXAMPLE, TONNES, "quarter")["change/a/waste"]
    # edition 2 revises the year-earlier figure below this quarter's: the year-on-year fall becomes a rise
    revised = [r if r[2] != "2024-Q3" else (*r[:3], 100.0) for r in EXAMPLE]
    after = draft(revised, TONNES, "quarter")["change/a/waste"]
    work = HumanWork(1, "rewrite", "Waste fell on a year earlier.", before.text, Basis.of(before))
    decision = decide(SlotState(before.slot, before.digest, False, "edited", [work]), after)
    assert decision is not None and decision.status == "recheck"
    assert "claim-changed" in decision.reasons
    assert {"fact": "year_earlier.direction", "old": "down", "new": "up"} in decision.recheck["changes"]


# ---- properties over generated quarterly and monthly panels ----------------------------------------

def panel_frame(draw: st.DrawFn, extra: tuple[int, int]) -> tuple[random.Random, str, int, list[str], dict]:
    """A generated panel's randomness, format, periods a year, labels (from 2019, a year and ``extra[0]``
    to ``extra[1]`` more periods) and topic (a percentage or tonnes, any direction, 0 or 1 decimals)."""
    rnd = random.Random(draw(st.integers(0, 2**32 - 1)))
    fmt = draw(st.sampled_from(["quarter", "month"]))
    per_year = 4 if fmt == "quarter" else 12
    n = draw(st.integers(per_year + extra[0], per_year + extra[1] * per_year // 4))
    labels = [f"{2019 + i // 4}-Q{i % 4 + 1}" if fmt == "quarter" else f"{2019 + i // 12}-{i % 12 + 1:02d}"
              for i in range(n)]
    topic = {"topic": "t", "label": "Topic", "unit": rnd.choice(["percent", "tonnes"]),
             "better": rnd.choice(["higher", "lower", "neutral"]), "decimals": rnd.choice([0, 1])}
    return rnd, fmt, per_year, labels, topic


def expected_year_earlier(rows: list[tuple], latest: str, meta: dict) -> tuple[str, str]:
    """(direction, better) against the same period a year earlier, recomputed from the rows."""
    by_label = {r[2]: r for r in rows}
    year_label = f"{int(latest[:4]) - 1}{latest[4:]}"
    now, before = by_label.get(latest), by_label.get(year_label)
    t_now, t_before = periods.period_time(latest), periods.period_time(year_label)

    def usable(r: tuple | None) -> bool:
        return r is not None and not math.isnan(r[3]) and r[5] != "confidential"

    broken = any(r[5] == "break" and t_before < periods.period_time(r[2]) <= t_now for r in rows)
    if not usable(now) or not usable(before) or broken:
        return "unknown", "n/a"
    assert now is not None and before is not None
    change = now[3] - before[3]
    flat = prints_as_zero(change, before[3], meta["unit"], meta["decimals"], meta.get("change", ""))
    if not math.isnan(now[4]) and not math.isnan(before[4]):
        flat = flat or abs(change) <= math.sqrt(now[4] ** 2 + before[4] ** 2)
    direction = "flat" if flat else ("up" if change > 0 else "down")
    if meta["better"] == "neutral":
        return direction, "n/a"
    if flat:
        return direction, "steady"
    return direction, "improved" if (change > 0) == (meta["better"] == "higher") else "worsened"


def expected_season_record(rows: list[tuple], latest: str, decimals: int) -> str:
    """The record among the same season of earlier years, back through years with a usable figure."""
    start = max((i for i, r in enumerate(rows) if r[5] == "break"), default=0)
    rows = rows[start:]
    by_label = {r[2]: r for r in rows}
    now = by_label.get(latest)
    if now is None or math.isnan(now[3]) or now[5] == "confidential":
        return "absent"
    shown = half_up(now[3], decimals)
    season = latest[4:]
    chain: list[tuple[str, Decimal]] = []
    year = int(latest[:4]) - 1
    while (r := by_label.get(f"{year}{season}")) is not None and not math.isnan(r[3]) and r[5] != "confidential":
        chain.append((r[2], half_up(r[3], decimals)))
        year -= 1
    firsts = [r[2] for r in rows if r[2][4:] == season and r[2] != latest]
    complete = bool(chain) and chain[-1][0] == min(firsts)
    higher = [label for label, v in chain if v >= shown]
    lower = [label for label, v in chain if v <= shown]
    if len(chain) >= 2 and complete and not higher:
        return "highest-on-record"
    if len(chain) >= 2 and complete and not lower:
        return "lowest-on-record"
    if higher and higher[0] != chain[0][0]:
        return f"highest-since:{higher[0]}"
    if lower and lower[0] != chain[0][0]:
        return f"lowest-since:{lower[0]}"
    return "none"


#: quarterly and monthly panels (the shared generator) over one to four years, one topic, with
#: seasons, gaps, missing, withheld and broken readings, ties and changes that print as zero
SUB_YEARLY = panels(spacings=("quarter", "month"), periods=(1, 4), in_years=True, entities=(2, 40), topics=(1, 1))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(SUB_YEARLY, st.sampled_from(["year-earlier", "previous"]))
def test_year_earlier_claims_and_season_records_match_a_recomputation(panel: dict, compare_with: str) -> None:
    topic = panel["topics"][0]
    key = topic["topic"]
    out = draft(panel["rows"], topic, panel["fmt"], compare_with)
    latest = max((r[2] for r in panel["rows"]), key=periods.period_time)
    series: dict[str, list[tuple]] = {}
    for r in panel["rows"]:
        series.setdefault(r[0], []).append(r)
    for e, rows in series.items():
        d = out[f"change/{e}/{key}"]
        direction, better = expected_year_earlier(rows, latest, topic)
        assert (d.claims["year_earlier.direction"], d.claims["year_earlier.better"]) == (direction, better), d.text
        year_label = f"{int(latest[:4]) - 1}{latest[4:]}"
        year_name = periods.period_name(year_label)
        if direction == "unknown":
            # never a number for a year earlier that the statement does not have
            assert d.evidence["year_earlier_change"]["shown"] == "not stated"
        elif compare_with == "year-earlier":
            assert year_name in d.text.split(". ")[0], d.text  # the year-earlier comparison leads
        else:
            assert f"Against {year_name}" in d.text or f"against {year_name}" in d.text, d.text
        trend = out.get(f"trend/{e}/{key}")
        if trend is not None:
            expected = expected_season_record(rows, latest, topic["decimals"])
            assert trend.claims["record"] == expected, (trend.text, rows)
