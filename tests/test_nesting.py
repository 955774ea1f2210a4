"""Nested entities: the `parent` column's load errors, ranks among a level, the place within the
parent and the comparison with it, and the statements of each level (profiles, roundups)."""

from __future__ import annotations

import statistics
from pathlib import Path

import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from scipy.stats import rankdata

from stetline import loading, periods
from stetline.dataset import load_dataset
from stetline.drafting import Context, draft_all
from stetline.errors import ValidationError
from stetline.facts import compute_facts
from stetline.kinds import chosen
from stetline.phrasing import HouseStyle
from stetline.rendering import Renderer
from stetline.store import ops
from stetline.workspace import Workspace

TOPICS = "topic,label,unit,better,decimals,category,target\nrecycling,Recycling rate,percent,higher,1,Env,\n"
#: the kinds these tests read, set explicitly (a workspace's default may differ)
KINDS = ("profile", "standing", "blurb", "leaders", "movement", "roundup")


def write(tmp_path: Path, entities: str, obs: str = "") -> tuple[Path, Path, Path]:
    """Write an edition's three files; observations default to one value per entity key."""
    keys = [line.split(",")[0] for line in entities.strip().splitlines()[1:]]
    rows = obs or "".join(f"{k},recycling,2025,{40 + i}\n" for i, k in enumerate(keys))
    paths = tmp_path / "obs.csv", tmp_path / "topics.csv", tmp_path / "entities.csv"
    paths[0].write_text("entity,topic,period,value\n" + rows)
    paths[1].write_text(TOPICS)
    paths[2].write_text(entities)
    return paths


def problems_of(tmp_path: Path, entities: str) -> list[str]:
    with pytest.raises(ValidationError) as caught:
        load_dataset(*write(tmp_path, entities))
    return [str(p) for p in caught.value.problems]


# --------------------------------------------------------------------------- load errors


def test_a_cycle_of_parents_is_refused_naming_its_keys(tmp_path: Path) -> None:
    entities = "entity,name,group,parent\na,A,,b\nb,B,,c\nc,C,,a\nd,D,,a\n"
    assert problems_of(tmp_path, entities) == [
        "entities.csv, row 2, column 'parent': a cycle of parents: a → b → c → a",
    ]


def test_an_unknown_parent_is_refused_with_a_suggestion(tmp_path: Path) -> None:
    entities = "entity,name,group,parent\ncoast,Coast,,\nquay,Quay,,coats\n"
    assert problems_of(tmp_path, entities) == [
        "entities.csv, row 3, column 'parent': the parent 'coats' of entity 'quay' is not an entity key; "
        "did you mean 'coast'?",
    ]


def test_an_entity_its_own_parent_is_refused(tmp_path: Path) -> None:
    entities = "entity,name,group,parent\ncoast,Coast,,\nquay,Quay,,quay\n"
    assert problems_of(tmp_path, entities) == ["entities.csv, row 3, column 'parent': entity 'quay' is its own parent"]


def test_a_failed_load_writes_nothing(ws: Workspace, tmp_path: Path) -> None:
    with ws.session() as s:
        ops.put_setting(s, "kinds", ",".join(KINDS))
    files = write(tmp_path, "entity,name,group,parent\na,A,,b\nb,B,,a\n")
    with pytest.raises(ValidationError, match="a cycle of parents: a → b → a"):
        loading.load_edition(ws, *files, by="admin")
    with ws.session() as s:
        assert ops.entities_frame(s) is None
        assert ops.get_settings(s)["kinds"] == ",".join(KINDS)


def test_the_parent_is_stored_and_kept_when_a_later_load_gives_no_entities_file(ws: Workspace, tmp_path: Path) -> None:
    with ws.session() as s:
        ops.put_setting(s, "kinds", ",".join(KINDS))
    files = write(tmp_path, "entity,name,group,parent\nd,D,,\na,A,,d\nb,B,,d\nc,C,,d\n")
    loading.load_edition(ws, *files, by="admin")
    (tmp_path / "later.csv").write_text("entity,topic,period,value\na,recycling,2026,1\nb,recycling,2026,2\n")
    loading.load_edition(ws, tmp_path / "later.csv", by="admin")
    with ws.session() as s:
        stored = ops.entities_frame(s)
        assert stored is not None
        assert dict(zip(stored["entity"], stored["parent"], strict=True)) == {"d": "", "a": "d", "b": "d", "c": "d"}


# --------------------------------------------------------------------------- facts against a plain recomputation


@st.composite
def trees(draw: st.DrawFn) -> tuple[pd.DataFrame, pd.DataFrame]:
    """A two-level tree (parents p0.., children c0..) with values; some parents report their own value."""
    n_parents = draw(st.integers(1, 3))
    n_children = draw(st.integers(1, 9))
    parent_of = [draw(st.integers(0, n_parents - 1)) for _ in range(n_children)]
    value = st.one_of(st.none(), st.integers(0, 20).map(float))
    rows = [(f"c{i}", "recycling", "2025", draw(value)) for i in range(n_children)]
    rows += [(f"p{j}", "recycling", "2025", draw(value)) for j in range(n_parents)]
    entities = pd.DataFrame(
        [(f"p{j}", f"P{j}", "", "") for j in range(n_parents)]
        + [(f"c{i}", f"C{i}", "", f"p{parent_of[i]}") for i in range(n_children)],
        columns=["entity", "name", "group", "parent"])
    entities["position"] = range(len(entities))
    obs = pd.DataFrame(rows, columns=["entity", "topic", "period", "value"])
    return entities, obs


def plain_values(obs: pd.DataFrame) -> dict[str, float | None]:
    """Each entity's value as a plain float, None where it is missing."""
    return {str(k): (None if pd.isna(v) else float(v)) for k, v in zip(obs["entity"], obs["value"], strict=True)}


def facts_for(entities: pd.DataFrame, obs: pd.DataFrame, better: str = "higher") -> pd.DataFrame:
    obs = obs.assign(margin=float("nan"), status="", value=obs["value"].astype("float64"),
                     time=periods.times(obs["period"], "year"), row=range(2, len(obs) + 2))
    topics = pd.DataFrame([{"topic": "recycling", "label": "Recycling rate", "unit": "percent", "better": better,
                            "decimals": 1, "category": "", "target": float("nan"), "weight": 1.0, "position": 0}])
    return compute_facts(obs, topics, entities).cells.set_index("entity")


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(trees(), st.sampled_from(["higher", "lower"]))
def test_sibling_ranks_and_parent_comparison_match_a_plain_recomputation(
    tree: tuple[pd.DataFrame, pd.DataFrame], better: str,
) -> None:
    entities, obs = tree
    cells = facts_for(entities, obs, better)
    value = plain_values(obs)
    parent = dict(zip(entities["entity"], entities["parent"], strict=True))
    for key, up in parent.items():
        if not up:
            assert cells.at[key, "parent_basis"] == "" and cells.at[key, "depth"] == 0
            continue
        assert cells.at[key, "depth"] == 1
        siblings = [k for k, p in parent.items() if p == up]
        reporting = [k for k in siblings if value[k] is not None]
        # competition ranking, as scipy.stats.rankdata(method="min") gives it (SciPy reference docs)
        if value[key] is not None:
            scores = [value[k] if better == "higher" else -value[k] for k in reporting]
            expected = rankdata([-x for x in scores], method="min")[reporting.index(key)]
            assert cells.at[key, "sibling_rank"] == expected
        assert cells.at[key, "sibling_rank_of"] == len(reporting)
        others = [value[k] for k in reporting if k != key]
        if value[up] is not None:
            assert cells.at[key, "parent_basis"] == "parent"
            assert cells.at[key, "parent_ref"] == value[up]
        elif others:
            assert cells.at[key, "parent_basis"] == "siblings"
            # the mean of the other siblings, as statistics.fmean computes it (Python standard library)
            assert cells.at[key, "parent_ref"] == pytest.approx(statistics.fmean(others))
        else:
            assert cells.at[key, "parent_basis"] == ""
        if value[key] is not None and cells.at[key, "parent_basis"]:
            assert cells.at[key, "parent_gap"] == pytest.approx(value[key] - cells.at[key, "parent_ref"])


@settings(max_examples=40, deadline=None)
@given(trees())
def test_ranks_compare_entities_of_the_same_level_only(tree: tuple[pd.DataFrame, pd.DataFrame]) -> None:
    entities, obs = tree
    cells = facts_for(entities, obs)
    value = plain_values(obs)
    for depth in (0, 1):
        level = [k for k in entities.loc[(entities["parent"] != "") == bool(depth), "entity"] if value[k] is not None]
        if not level:
            continue
        values = [value[k] for k in level]
        # scipy.stats.rankdata(method="min"): competition ranking, best (highest) first
        expected = rankdata([-v for v in values], method="min")
        assert [cells.at[k, "rank"] for k in level] == list(expected.astype(float))
        assert all(cells.at[k, "rank_of"] == len(level) for k in level)


# --------------------------------------------------------------------------- statements


def drafts_for(entities: pd.DataFrame, obs: pd.DataFrame, nouns: tuple[str, ...] = ("district", "town")) -> dict:
    full = obs.assign(margin=float("nan"), status="", value=obs["value"].astype("float64"),
                      time=periods.times(obs["period"], "year"), row=range(2, len(obs) + 2))
    topics = pd.DataFrame([{"topic": "recycling", "label": "Recycling rate", "unit": "percent", "better": "higher",
                            "decimals": 1, "category": "", "target": float("nan"), "weight": 1.0, "position": 0}])
    facts = compute_facts(full, topics, entities)
    style = HouseStyle()
    ctx = Context(facts, topics.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  style, "town", "2025", KINDS, nouns)
    return {d.slot: d for d in draft_all(ctx, Renderer(style), chosen(KINDS))}


COAST = pd.DataFrame(
    [("coast", "Coast District", "", ""), ("hills", "Hills District", "", ""), ("moor", "Moor District", "", "")]
    + [(f"t{i}", f"Town {i}", "", "coast" if i < 6 else "hills" if i < 9 else "moor") for i in range(12)],
    columns=["entity", "name", "group", "parent"]).assign(position=range(15))


def coast_obs(coast_value: float | None) -> pd.DataFrame:
    values = [50.0, 48.0, 47.0, 45.0, 44.0, 41.0, 60.0, 30.0, 33.0, 35.0, 36.0, 37.0]
    rows = [(f"t{i}", "recycling", "2025", v) for i, v in enumerate(values)]
    rows += [("coast", "recycling", "2025", coast_value), ("hills", "recycling", "2025", 41.0),
             ("moor", "recycling", "2025", 36.0)]
    obs = pd.DataFrame(rows, columns=["entity", "topic", "period", "value"])
    return obs.loc[obs["value"].notna()]


def test_a_standing_says_its_place_within_its_parent_and_compares_with_the_parents_value() -> None:
    d = drafts_for(COAST, coast_obs(46.0))["standing/t2/recycling"]
    # t2 is 47.0: third of the six Coast towns (50, 48, 47, 45, 44, 41); the district's own figure is 46.0
    assert ("Town 2 was the third best of six towns in Coast District, above the Coast District figure of 46.0%."
            in d.text)
    assert d.claims["parent_basis"] == "parent" and d.claims["vs_parent"] == "above"
    assert d.evidence["sibling_rank"]["value"] == 3 and d.evidence["sibling_rank_of"]["value"] == 6
    blurb = drafts_for(COAST, coast_obs(46.0))["blurb/t2/recycling"]
    assert blurb.claims["standing.vs_parent"] == "above" and blurb.claims["standing.parent_basis"] == "parent"
    assert "third best of six towns in Coast District" in blurb.text


def test_without_the_parents_value_a_standing_compares_with_the_other_siblings_mean() -> None:
    d = drafts_for(COAST, coast_obs(None))["standing/t0/recycling"]
    # the other five Coast towns: 48, 47, 45, 44, 41; their mean (statistics.fmean) is 45.0
    assert statistics.fmean([48.0, 47.0, 45.0, 44.0, 41.0]) == 45.0
    assert "the best of six towns in Coast District, above the average of the other five towns, 45.0%" in d.text
    assert d.claims["parent_basis"] == "siblings"


def test_ranks_and_roundups_exist_for_each_level_with_stable_slots() -> None:
    drafts = drafts_for(COAST, coast_obs(46.0))
    # towns rank among the 12 towns, districts among the three districts: like with like
    assert "of 12 towns" in drafts["standing/t6/recycling"].text
    assert "of three districts" in drafts["standing/coast/recycling"].text
    assert "parent_basis" not in drafts["standing/coast/recycling"].claims  # a district has no parent here
    assert {"roundup/recycling", "roundup/level-1/recycling", "leaders/level-1/recycling"} <= set(drafts)
    assert "Coast District" in drafts["roundup/level-1/recycling"].text
    assert "Town 6" in drafts["roundup/recycling"].text and "District" not in drafts["roundup/recycling"].text
    assert "of three districts" in drafts["profile/coast"].text and "of 12 towns" in drafts["profile/t6"].text


def test_a_flat_dataset_drafts_as_before_without_parent_claims() -> None:
    flat = COAST.assign(parent="")
    drafts = drafts_for(flat, coast_obs(46.0), ())
    assert not any(slot.startswith(("roundup/level-", "leaders/level-")) for slot in drafts)
    assert all("parent_basis" not in d.claims for d in drafts.values() if d.kind == "standing")
    assert "of 15 towns" in drafts["standing/t0/recycling"].text


def test_the_demo_report_can_be_sectioned_by_parent(demo_ws: Workspace) -> None:
    from stetline.publish import gather

    with demo_ws.session() as s:
        pub = gather(s, sections="parent", allow_recheck=True)
    headings = [heading for _key, heading, _statements in pub.sections]
    # seed_data/entities.csv: Westreach District holds North Quay … High Ferrow, in file order
    start = headings.index("Westreach District")
    assert headings[start:start + 6] == [
        "Westreach District", "North Quay (Westreach District)", "Shellby Sands (Westreach District)",
        "Gorse Point (Westreach District)", "Cairnbrook (Westreach District)", "High Ferrow (Westreach District)",
    ]
    assert headings.index("Eastmarch District") == start + 6


def test_an_entity_page_links_down_to_its_children_and_up_to_its_parent(demo_ws: Workspace) -> None:
    from stetline.web import create_app

    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    district = client.get("/entities/westreach").get_data(as_text=True)
    assert 'aria-label="Within Westreach District"' in district
    for town in ("north-quay", "shellby-sands", "gorse-point", "cairnbrook", "high-ferrow"):
        assert f'href="/entities/{town}"' in district
    town = client.get("/entities/north-quay").get_data(as_text=True)
    crumbs = town.split('aria-label="Breadcrumb"')[1].split("</nav>")[0]
    assert 'href="/entities/westreach">Westreach District</a>' in crumbs
    listing = client.get("/entities").get_data(as_text=True)
    assert ">Within</th>" in listing and 'href="/entities/eastmarch">Eastmarch District</a>' in listing
