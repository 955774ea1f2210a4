"""Every statement kind and branch: tables of (data, expected sentence), and outside references.

References: the composite score is checked against a worked example computed by hand from the
formulas of the OECD/JRC Handbook on Constructing Composite Indicators (2008, min-max
normalisation, equal weights, arithmetic mean); compound annual growth against the textbook
formula (end/start)^(1/years) - 1 (common practice); the average yearly change of a linear
series against scipy.stats.linregress; significance against sqrt(m1² + m2²) of 95% half-widths
(common practice; 1.96 from scipy.stats.norm.ppf(0.975)).
"""

from __future__ import annotations

import math

import pandas as pd
import pytest
from scipy import stats

from stetline import periods
from stetline.drafting import Context, Draft, draft_all
from stetline.facts import compute_facts
from stetline.kinds import KINDS
from stetline.phrasing import HouseStyle
from stetline.rendering import Renderer

ENTITIES = pd.DataFrame({
    "entity": ["a", "b", "c", "d"], "name": ["Ashby", "Brill", "Colne", "Dunmere"],
    "group": ["North", "North", "South", "South"], "position": range(4),
})


def topic(key: str, unit: str = "percent", better: str = "higher", decimals: int = 1,
          target: float = float("nan"), weight: float = 1.0) -> dict:
    return {"topic": key, "label": key.capitalize() + " rate" if unit == "percent" else key.capitalize(),
            "unit": unit, "better": better, "decimals": decimals, "category": "", "target": target,
            "weight": weight, "source": "", "position": 0}


def draft_texts(rows: list[tuple], topics: list[dict], entities: pd.DataFrame = ENTITIES,
                earlier: pd.DataFrame | None = None, noun: str = "town") -> dict[str, tuple[str, dict, dict]]:
    """Draft every slot of a tiny dataset: rows are (entity, topic, period, value[, margin[, status]])."""
    full = [tuple(r) + (float("nan"), "")[len(r) - 4:] for r in rows]
    drafted = draft_panel(full, topics, entities, earlier, noun)
    return {d.slot: (d.text, d.evidence, d.claims) for d in drafted}


def draft_panel(full: list[tuple], topics: list[dict], entities: pd.DataFrame = ENTITIES,
                earlier: pd.DataFrame | None = None, noun: str = "town") -> list[Draft]:
    """Every draft of every kind for rows (entity, topic, period, value, margin, status); periods are years,
    quarters or months, each label read in its own format."""
    obs = pd.DataFrame(full, columns=["entity", "topic", "period", "value", "margin", "status"])
    obs["period"] = obs["period"].astype("str")
    obs["value"] = obs["value"].astype("float64")
    obs["margin"] = obs["margin"].astype("float64")
    obs["time"] = periods.times(obs["period"])
    obs["row"] = range(2, len(obs) + 2)
    t = pd.DataFrame(topics)
    t["position"] = range(len(t))
    facts = compute_facts(obs, t, entities, earlier)
    style = HouseStyle()
    ctx = Context(facts, t.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, noun)
    return list(draft_all(ctx, Renderer(style), KINDS))


REC = [topic("recycling", target=50.0)]
BASE_ROWS = [
    ("a", "recycling", 2024, 40.0), ("a", "recycling", 2025, 52.0),
    ("b", "recycling", 2024, 45.0), ("b", "recycling", 2025, 44.0),
    ("c", "recycling", 2024, 30.0), ("c", "recycling", 2025, 30.04),
    ("d", "recycling", 2024, 35.0), ("d", "recycling", 2025, 36.5),
]


@pytest.fixture(scope="module")
def base() -> dict:
    return draft_texts(BASE_ROWS, REC)


@pytest.mark.parametrize("slot, expected", [
    # best of all, meeting the target
    ("standing/a/recycling", "the best of four towns"),
    ("standing/a/recycling", "52.0%"),
    # the comparison wording varies by slot (one of three), its facts do not
    ("standing/a/recycling", "above the North average (48.0%) and meeting the target of 50.0%"),
    # worst of all, missing the target by the gap in points
    ("standing/c/recycling", "missing the target of 50.0% by 20.0 percentage points"),
    ("standing/c/recycling", "the worst of four towns"),
    # percentages change in percentage points (ONS Service Manual, "Percentages")
    ("change/a/recycling", "from 40.0% in 2024 to 52.0% in 2025"),
    ("change/a/recycling", "12.0 percentage points"),
    # a change that rounds to nothing at display precision is no change (Eurostat rounding tutorial)
    ("change/c/recycling", "was unchanged at 30.0% in 2025"),
    ("change/b/recycling", "a deterioration"),
    ("leaders/recycling", "22.0 percentage points apart"),
])
def test_sentences(base: dict, slot: str, expected: str) -> None:
    assert expected in base[slot][0]


@pytest.mark.parametrize("slot, claims", [
    ("standing/a/recycling", {"rank_band": "top", "vs_group": "above", "target": "met"}),
    ("standing/c/recycling", {"rank_band": "bottom", "vs_group": "below", "target": "missed"}),
    ("change/a/recycling", {"direction": "up", "better": "improved", "significant": None}),
    ("change/c/recycling", {"direction": "flat", "better": "steady", "significant": None}),
    ("leaders/recycling", {"leader": "a", "laggard": "c"}),
    ("movement/recycling", {"majority": "improved", "exceptions": []}),
])
def test_claims(base: dict, slot: str, claims: dict) -> None:
    assert base[slot][2] == claims


def test_lower_is_better_falls_are_improvements() -> None:
    rows = [(e, "wait", y, v) for e, vals in {"a": (9.0, 8.0), "b": (7.0, 7.5), "c": (10.0, 10.0)}.items()
            for y, v in zip((2024, 2025), vals)]
    out = draft_texts(rows, [topic("wait", unit="minutes", better="lower", target=8.0)], ENTITIES.iloc[:3])
    assert out["change/a/wait"][2]["better"] == "improved"
    # the wording the engine chooses for this slot (phrasing is picked by a stable hash of the slot)
    assert out["change/a/wait"][0].startswith(
        "Ashby's wait fell by 11% to 8.0 minutes in 2025, from 9.0 minutes in 2024, an improvement.")
    assert out["standing/b/wait"][2]["rank_band"] == "top"  # 7.5 minutes is the best
    assert out["standing/a/wait"][2]["target"] == "met"  # 8.0 meets an 8-minute target


def test_ties_share_a_rank_and_are_named_together() -> None:
    rows = [("a", "recycling", 2025, 50.0), ("b", "recycling", 2025, 50.0), ("c", "recycling", 2025, 40.0),
            ("d", "recycling", 2025, 30.0)]
    out = draft_texts(rows, REC)
    assert "joint best of four towns" in out["standing/a/recycling"][0]
    assert out["leaders/recycling"][2]["leader"] == ["a", "b"]
    assert out["leaders/recycling"][0] == (
        "In 2025, Ashby and Brill shared the best recycling rate of four towns at 50.0%, and Dunmere the worst "
        "at 30.0%, 20.0 percentage points apart.")


def test_fewer_than_three_reporting_gets_no_ranking() -> None:
    out = draft_texts([("a", "recycling", 2025, 50.0), ("b", "recycling", 2025, 40.0)], REC)
    assert "best" not in out["standing/a/recycling"][0]
    assert out["standing/a/recycling"][2]["rank_band"] is None
    assert "leaders/recycling" not in out


def test_missing_withheld_provisional_and_break() -> None:
    rows = BASE_ROWS[:6] + [("d", "recycling", 2024, 35.0), ("d", "recycling", 2025, float("nan"))]
    rows[1] = ("a", "recycling", 2025, 52.0, float("nan"), "provisional")
    rows[3] = ("b", "recycling", 2025, 44.0, float("nan"), "break")
    rows[5] = ("c", "recycling", 2025, 30.0, float("nan"), "confidential")
    out = draft_texts(rows, REC)
    assert "No 2025 figure for the recycling rate is available for Dunmere" in out["standing/d/recycling"][0]
    assert "so no change can be given" in out["change/d/recycling"][0]
    assert "withheld for confidentiality" in out["standing/c/recycling"][0]
    assert "52.0% (provisional)" in out["standing/a/recycling"][0]
    assert "the series has a break in 2025" in out["change/b/recycling"][0]
    assert out["change/b/recycling"][2]["direction"] == "unknown"
    # missing and withheld values are never treated as zero: two towns report, too few to rank
    assert "rank" not in out["standing/a/recycling"][1]
    assert "best" not in out["standing/a/recycling"][0]


def test_revised_previous_figure_is_said_to_be_revised() -> None:
    earlier = pd.DataFrame({"entity": ["a"], "topic": ["recycling"], "period": ["2024"], "value": [41.0]})
    out = draft_texts(BASE_ROWS, REC, earlier=earlier)
    assert "40.0% (revised from 41.0%)" in out["change/a/recycling"][0]


def test_significance_from_margins() -> None:
    z = stats.norm.ppf(0.975)
    assert round(z, 2) == 1.96  # a 95% half-width is 1.96 standard errors
    rows = [("a", "parks", 2024, 60.0, 3.0), ("a", "parks", 2025, 63.0, 3.0),   # 3 < sqrt(18) = 4.24
            ("b", "parks", 2024, 50.0, 2.0), ("b", "parks", 2025, 56.0, 2.0),   # 6 > sqrt(8) = 2.83
            ("c", "parks", 2024, 55.0, 2.0), ("c", "parks", 2025, 55.5, 2.0)]
    out = draft_texts(rows, [topic("parks", decimals=0)], ENTITIES.iloc[:3])
    a, b = out["change/a/parks"], out["change/b/parks"]
    assert a[2] == {"direction": "flat", "better": "steady", "significant": False}
    assert "broadly unchanged" in a[0] and "rose" not in a[0]
    assert b[2]["significant"] is True and "statistically significant" in b[0]
    # the same verdict from the standard errors and the normal distribution
    se = lambda m: m / z  # noqa: E731
    assert bool(abs(6.0) / math.hypot(se(2.0), se(2.0)) > z)
    assert not bool(abs(3.0) / math.hypot(se(3.0), se(3.0)) > z)


def test_composite_matches_a_worked_example_by_hand() -> None:
    """OECD/JRC Handbook (2008) min-max: x' = (x - min) / (max - min), inverted when lower is better."""
    topics = [topic("recycling"), topic("wait", unit="minutes", better="lower"),
              topic("people", unit="persons", better="neutral")]
    rows = [("a", "recycling", 2025, 60.0), ("b", "recycling", 2025, 40.0), ("c", "recycling", 2025, 50.0),
            ("a", "wait", 2025, 10.0), ("b", "wait", 2025, 6.0), ("c", "wait", 2025, 8.0),
            ("a", "people", 2025, 1.0), ("b", "people", 2025, 9.0), ("c", "people", 2025, 5.0)]
    out = draft_texts(rows, topics, ENTITIES.iloc[:3])
    # by hand: a = mean(1.0, 0.0) = 50; b = mean(0.0, 1.0) = 50; c = mean(0.5, 0.5) = 50 → all tie
    for e in "abc":
        assert out[f"profile/{e}"][1]["composite"]["value"] == pytest.approx(50.0)
        assert out[f"profile/{e}"][1]["composite_rank"]["value"] == 1
    rows[0] = ("a", "recycling", 2025, 70.0)  # a: (1.0 + 0.0)/2 = 50; c: (10/30 + 0.5)/2 = 41.67; b: 50
    out = draft_texts(rows, topics, ENTITIES.iloc[:3])
    assert out["profile/c"][1]["composite"]["value"] == pytest.approx(100 * (10 / 30 + 0.5) / 2)
    assert "two indicators" in out["profile/c"][0]  # the neutral topic takes no part


def test_trend_streaks_records_and_growth() -> None:
    values = {"a": [10.0, 11.0, 12.1, 13.31], "b": [20.0, 19.0, 18.0, 17.0], "c": [15.0, 16.0, 14.0, 15.5]}
    rows = [(e, "loans", y, v) for e, vs in values.items() for y, v in zip(range(2022, 2026), vs)]
    out = draft_texts(rows, [topic("loans", unit="loans", decimals=2)], ENTITIES.iloc[:3])
    a = out["trend/a/loans"]
    assert a[2] == {"streak": "improved:3", "record": "highest-on-record"}
    assert "has improved for three years in a row" in a[0]
    cagr = (13.31 / 10.0) ** (1 / 3) - 1  # compound annual growth rate: (end/start)^(1/years) - 1
    assert a[1]["yearly_growth"]["value"] == pytest.approx(cagr)
    assert "compound rate of 10% a year" in a[0]
    assert out["trend/b/loans"][2]["streak"] == "worsened:3"
    # 15.5 tops every value since 2023's 16.0
    assert out["trend/c/loans"][2] == {"streak": "none", "record": "highest-since:2023"}
    assert "the highest since 2023" in out["trend/c/loans"][0]


def test_average_yearly_change_in_points_matches_linregress_for_a_linear_series() -> None:
    years = [2019, 2021, 2022, 2025]  # unevenly spaced: rates use the real distance
    rows = [("a", "recycling", y, 40.0 + 0.5 * (y - 2019)) for y in years]
    rows += [("b", "recycling", y, 30.0) for y in years] + [("c", "recycling", y, 20.0 + y - 2019) for y in years]
    out = draft_texts(rows, REC, ENTITIES.iloc[:3])
    slope = stats.linregress(years, [40.0 + 0.5 * (y - 2019) for y in years]).slope
    assert out["trend/a/recycling"][1]["yearly_change"]["value"] == pytest.approx(slope)
    assert "risen by an average of 0.5 percentage points a year" in out["trend/a/recycling"][0]


def test_movement_names_the_exceptions() -> None:
    ents = pd.DataFrame({"entity": list("abcde"), "name": ["A1", "B1", "C1", "D1", "E1"], "group": [""] * 5,
                         "position": range(5)})
    rows = [(e, "recycling", y, v) for e, (v0, v1) in
            {"a": (40, 42), "b": (41, 43), "c": (42, 44), "d": (43, 45), "e": (44, 41)}.items()
            for y, v in ((2024, v0), (2025, v1))]
    out = draft_texts(rows, REC, ents)
    text, _ev, claims = out["movement/recycling"]
    assert claims == {"majority": "improved", "exceptions": ["e"]}
    assert "improved in four and worsened in one of five towns" in text
    assert "The exception was E1." in text


def test_headline_names_the_composite_leader(base: dict) -> None:
    text, _ev, claims = base["headline"]
    assert claims["composite_leader"] == "a"
    assert "Ashby has the highest composite score, 100 out of 100." in text
