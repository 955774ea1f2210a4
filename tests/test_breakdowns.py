"""Breakdowns by group: the breakdown, subgroup and share columns, the breakdown kind, its rechecks,
the suggestion to turn it on, and the evaluative-words house style.

Outside reference: statsmodels' open dataset `fair` (Fair, R. 1978, "A Theory of Extramarital
Affairs", Journal of Political Economy; shipped with the statsmodels package from PyPI), whose
women's marriage ratings are broken down by religiousness and by occupation. The best and worst
groups, the gap, the 95% margins (1.96 standard errors, 1.96 from scipy.stats.norm.ppf(0.975);
common practice) and the significance test sqrt(m1² + m2²) (the test the design uses for changes)
are recomputed in plain Python beside each check.
"""

from __future__ import annotations

import math
import statistics
from pathlib import Path

import pandas as pd
import pytest
import statsmodels.api as sm
from helpers import Cli
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from stetline import configure, demo, loading, periods
from stetline.breakdowns import breakdown_facts
from stetline.dataset import load_dataset
from stetline.drafting import Context, Draft, draft_all
from stetline.errors import ValidationError
from stetline.facts import compute_facts
from stetline.kinds import BY_NAME
from stetline.phrasing import HouseStyle
from stetline.rendering import Renderer
from stetline.web import create_app
from stetline.workspace import Workspace

HEADER = "entity,topic,period,value,margin,status,breakdown,subgroup,share\n"
TOPICS = ("topic,label,unit,better,decimals,category,target\n"
          "parks,Share of residents satisfied with parks,percent,higher,0,Culture,\n")
ENTITIES = "entity,name,group\nnq,North Quay,Coast\ntm,Tidemere,Estuary\ncb,Cairnbrook,Uplands\n"


def write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def problems_of(tmp_path: Path, rows: str) -> list[str]:
    obs = write(tmp_path, "obs.csv", HEADER + rows)
    with pytest.raises(ValidationError) as caught:
        load_dataset(obs, write(tmp_path, "topics.csv", TOPICS), write(tmp_path, "entities.csv", ENTITIES))
    return [str(p) for p in caught.value.problems]


def test_bad_breakdown_cells_are_named_by_file_row_and_column(tmp_path: Path) -> None:
    found = problems_of(tmp_path, (
        "nq,parks,2025,80,,,,,\n"
        "nq,parks,2025,70,,,,16-34,\n"
        "nq,parks,2025,75,,,age,,\n"
        "nq,parks,2025,75,,,age,65+,120\n"
        "nq,parks,2025,75,,,age,35-64,many\n"
        "tm,parks,2025,66,,,,,50\n"
        "tm,parks,2025,66,,,age/band,65+,\n"
    ))
    assert found == [
        "obs.csv, row 3, column 'breakdown': a subgroup needs a breakdown (the grouping it belongs to, such as "
        "age); the subgroup is: '16-34'",
        "obs.csv, row 4, column 'subgroup': a breakdown row needs a subgroup (such as 65+); the breakdown is: 'age'",
        "obs.csv, row 8, column 'breakdown': a breakdown name may not contain '/' (it is part of the statement's "
        "id): 'age/band'",
        "obs.csv, row 6, column 'share': the share is not a number: 'many'",
        "obs.csv, row 5, column 'share': a share is a per cent of the whole, from 0 to 100: '120'",
        "obs.csv, row 7, column 'share': a share belongs to a subgroup, but this row has no breakdown (a total): "
        "'50'",
    ]


def test_a_subgroup_given_twice_is_a_duplicate_but_the_same_period_in_another_subgroup_is_not(tmp_path: Path) -> None:
    found = problems_of(tmp_path, (
        "nq,parks,2025,80,,,,,\n"
        "nq,parks,2025,84,,,age,16-34,\n"
        "nq,parks,2025,77,,,age,65+,\n"
        "nq,parks,2025,78,,,age,65+,\n"
    ))
    assert found == ["obs.csv, row 5: duplicate subgroup observation (entity='nq', topic='parks', period='2025', "
                     "breakdown='age', subgroup='65+'); first at row 4"]


def test_rows_of_totals_may_leave_the_three_columns_out_and_subgroups_are_kept_as_written(tmp_path: Path) -> None:
    obs = write(tmp_path, "obs.csv", HEADER + "nq,parks,2025,80\nnq,parks,2025,84,,,age, 16-34 ,24\n"
                "nq,parks,2025,77,,,age,65+\n")
    data = load_dataset(obs, write(tmp_path, "t.csv", TOPICS), write(tmp_path, "e.csv", ENTITIES))
    assert data.observations[["entity", "value"]].values.tolist() == [["nq", 80.0]]
    assert data.breakdowns["subgroup"].tolist() == ["16-34", "65+"]
    assert data.breakdowns["share"].iloc[0] == 24.0 and math.isnan(data.breakdowns["share"].iloc[1])


def test_a_file_of_breakdowns_only_is_refused(tmp_path: Path) -> None:
    assert problems_of(tmp_path, "nq,parks,2025,84,,,age,16-34,\nnq,parks,2025,77,,,age,65+,\n") == [
        "obs.csv, column 'breakdown': every row belongs to a breakdown: give the totals too (rows with an empty "
        "breakdown)"]


def _drafts(obs: pd.DataFrame, subgroups: pd.DataFrame | None, topics: pd.DataFrame, entities: pd.DataFrame,
            evaluative: bool = False, kinds: tuple[str, ...] = tuple(BY_NAME)) -> dict[str, Draft]:
    """Draft every kind from frames shaped as load_dataset gives them (the breakdown facts included)."""
    facts = compute_facts(obs, topics, entities)
    facts.breakdowns = breakdown_facts(subgroups, obs, topics)
    ctx = Context(facts, topics.set_index("topic").to_dict("index"), entities.set_index("entity").to_dict("index"),
                  HouseStyle(), "town", evaluative_words=evaluative)
    return {d.slot: d for d in draft_all(ctx, Renderer(HouseStyle()), [BY_NAME[k] for k in kinds])}


def test_the_other_kinds_read_only_the_totals(tmp_path: Path) -> None:
    totals = "nq,parks,2024,80,,,,,\nnq,parks,2025,82,,,,,\ntm,parks,2024,67,,,,,\ntm,parks,2025,66,,,,,\n" \
             "cb,parks,2024,86,,,,,\ncb,parks,2025,88,,,,,\n"
    # subgroups far outside the totals: a kind that read them would rank, average or move differently
    groups = "tm,parks,2025,99,,,age,16-34,18\ntm,parks,2025,1,,,age,65+,15\ntm,parks,2024,2,,,age,16-34,18\n" \
             "tm,parks,2024,98,,,age,65+,15\n"
    meta = write(tmp_path, "t.csv", TOPICS), write(tmp_path, "e.csv", ENTITIES)
    plain = load_dataset(write(tmp_path, "a.csv", HEADER + totals), *meta)
    broken_down = load_dataset(write(tmp_path, "b.csv", HEADER + totals + groups), *meta)
    without = _drafts(plain.observations, plain.breakdowns, plain.topics, plain.entities)
    with_groups = _drafts(broken_down.observations, broken_down.breakdowns, broken_down.topics, broken_down.entities)
    others = {slot: d.text for slot, d in with_groups.items() if d.kind != "breakdown"}
    assert others == {slot: d.text for slot, d in without.items()}
    assert "breakdown/tm/parks/age" in with_groups and "breakdown/tm/parks/age" not in without


# ---- against statsmodels' `fair` dataset ---------------------------------------------------------------

Z95 = stats.norm.ppf(0.975)  # 1.959963984540054 (scipy)


def _fair_rows() -> tuple[str, dict[str, dict[str, list[float]]], list[float]]:
    """The observations file of the `fair` marriage ratings by religiousness and by occupation, and the
    ratings of each group as plain lists (for recomputing), and all ratings."""
    data = sm.datasets.fair.load_pandas().data
    ratings = [float(x) for x in data["rate_marriage"]]
    groups: dict[str, dict[str, list[float]]] = {"religious": {}, "occupation": {}}
    for breakdown in groups:
        for code, rating in zip(data[breakdown], ratings):
            groups[breakdown].setdefault(str(int(code)), []).append(rating)
    n = len(ratings)
    lines = [f"women,rating,1974,{statistics.fmean(ratings)},{_margin(ratings)},,,,"]
    for breakdown, by in groups.items():
        for name, values in by.items():
            lines.append(f"women,rating,1974,{statistics.fmean(values)},{_margin(values)},,{breakdown},{name},"
                         f"{100 * len(values) / n}")
    return HEADER + "\n".join(lines) + "\n", groups, ratings


def _margin(values: list[float]) -> float:
    return Z95 * statistics.stdev(values) / math.sqrt(len(values))


@pytest.fixture(scope="module")
def fair(tmp_path_factory: pytest.TempPathFactory) -> tuple[dict[str, Draft], dict[str, dict[str, list[float]]]]:
    folder = tmp_path_factory.mktemp("fair")
    text, groups, _ratings = _fair_rows()
    topics = ("topic,label,unit,better,decimals,category,target\n"
              "rating,Marriage rating,points,higher,2,Survey,\n")
    data = load_dataset(write(folder, "fair.csv", text), write(folder, "t.csv", topics),
                        write(folder, "e.csv", "entity,name,group\nwomen,the women surveyed,All\n"))
    return _drafts(data.observations, data.breakdowns, data.topics, data.entities), groups


@pytest.mark.parametrize("breakdown", ["religious", "occupation"])
def test_best_worst_and_gap_of_the_fair_dataset(fair: tuple, breakdown: str) -> None:
    drafted, groups = fair
    means = {name: statistics.fmean(values) for name, values in groups[breakdown].items()}
    best = max(means, key=means.__getitem__)
    worst = min(means, key=means.__getitem__)
    gap = means[best] - means[worst]
    margin = math.sqrt(_margin(groups[breakdown][best]) ** 2 + _margin(groups[breakdown][worst]) ** 2)
    sizes = {name: len(values) for name, values in groups[breakdown].items()}
    largest = max(sizes, key=sizes.__getitem__)
    d = drafted[f"breakdown/women/rating/{breakdown}"]
    assert d.claims["best"] == [best] and d.claims["worst"] == [worst]
    assert d.evidence["gap"]["value"] == pytest.approx(gap, abs=1e-9)
    assert d.claims["significant"] is (gap > margin)
    assert d.claims["largest"] == ("best" if largest == best else "worst" if largest == worst else "neither")
    assert f"best in the {best} group ({means[best]:.2f} points)" in d.text or \
        f"the {best} group had the best figure ({means[best]:.2f} points)" in d.text
    assert f"{gap:.2f} points" in d.text


def test_the_fair_dataset_roundup_names_the_widest_gap(fair: tuple) -> None:
    drafted, groups = fair
    gaps = {}
    for breakdown, by in groups.items():
        means = [statistics.fmean(v) for v in by.values()]
        gaps[breakdown] = max(means) - min(means)
    widest = max(gaps, key=gaps.__getitem__)
    d = drafted["breakdown/rating"]
    assert d.claims["widest"] == [f"women/{widest}"]
    assert f"widest in the women surveyed by {widest} ({gaps[widest]:.2f} points)" in d.text


# ---- generated breakdowns ------------------------------------------------------------------------------

SUBGROUP = st.tuples(st.integers(0, 1000).map(lambda x: x / 10),
                     st.one_of(st.none(), st.integers(1, 80).map(lambda x: x / 10)),
                     st.one_of(st.none(), st.integers(1, 100)))


@settings(max_examples=40, deadline=None)
@given(subgroups=st.lists(SUBGROUP, min_size=2, max_size=6), better=st.sampled_from(["higher", "lower", "neutral"]))
def test_generated_breakdowns_name_the_best_and_worst_and_the_gap(subgroups: list[tuple], better: str) -> None:
    names = [f"g{i}" for i in range(len(subgroups))]
    obs = _frame([("nq", "rate", "2025", 50.0, float("nan"), "")])
    rows = [("nq", "rate", "2025", v, float("nan") if m is None else m, "", "band", n,
             float("nan") if s is None else float(s)) for n, (v, m, s) in zip(names, subgroups)]
    groups = _frame(rows, ["breakdown", "subgroup", "share"])
    topics = pd.DataFrame([{"topic": "rate", "label": "Rate", "unit": "percent", "better": better, "decimals": 1,
                            "category": "", "target": float("nan"), "weight": 1.0, "source": "", "position": 0}])
    entities = pd.DataFrame({"entity": ["nq"], "name": ["North Quay"], "group": ["Coast"], "position": [0]})
    d = _drafts(obs, groups, topics, entities, evaluative=True, kinds=("breakdown",))["breakdown/nq/rate/band"]
    values = {n: v for n, (v, _m, _s) in zip(names, subgroups)}
    top = max(values.values()) if better != "lower" else min(values.values())
    bottom = min(values.values()) if better != "lower" else max(values.values())
    gap = abs(top - bottom)
    assert d.evidence["gap"]["value"] == pytest.approx(gap)
    if round(gap, 1) == 0:  # the gap prints as zero: no best or worst is named
        assert d.claims["difference"] == "none" and d.claims["best"] == [] and "the same in all" in d.text
        return
    best = [n for n in names if values[n] == top]
    worst = [n for n in names if values[n] == bottom]
    assert (d.claims["best"], d.claims["worst"], d.claims["difference"]) == (best, worst, "some")
    first_best, first_worst = subgroups[names.index(best[0])], subgroups[names.index(worst[0])]
    if first_best[1] is None or first_worst[1] is None:
        assert d.claims["significant"] is None and "margins" not in d.text
    else:
        assert d.claims["significant"] is (gap > math.sqrt(first_best[1] ** 2 + first_worst[1] ** 2))
    shares = [s for _v, _m, s in subgroups]
    if all(s is not None for s in shares) and shares.count(max(shares)) == 1:  # type: ignore[type-var]
        largest = names[shares.index(max(shares))]  # type: ignore[type-var]
        assert d.claims["largest"] == ("best" if largest in best else "worst" if largest in worst else "neither")
    else:
        assert d.claims["largest"] is None
    assert "ortunately" not in d.text  # never an evaluative word about a gap between subgroups


def _frame(rows: list[tuple], extra: list[str] | None = None) -> pd.DataFrame:
    frame = pd.DataFrame(rows, columns=["entity", "topic", "period", "value", "margin", "status", *(extra or [])])
    frame["time"] = periods.times(frame["period"], "year")
    frame["row"] = range(2, len(frame) + 2)
    return frame


# ---- evaluative words ----------------------------------------------------------------------------------

def test_evaluative_words_open_an_entitys_own_change_only_when_asked() -> None:
    obs = _frame([("nq", "rate", "2024", 40.0, float("nan"), ""), ("nq", "rate", "2025", 45.0, float("nan"), ""),
                  ("tm", "rate", "2024", 50.0, float("nan"), ""), ("tm", "rate", "2025", 42.0, float("nan"), ""),
                  ("cb", "pop", "2024", 100.0, float("nan"), ""), ("cb", "pop", "2025", 120.0, float("nan"), "")])
    topics = pd.DataFrame([
        {"topic": t, "label": label, "unit": unit, "better": better, "decimals": 1, "category": "",
         "target": float("nan"), "weight": 1.0, "source": "", "position": i}
        for i, (t, label, unit, better) in enumerate([("rate", "Recycling rate", "percent", "higher"),
                                                      ("pop", "Population", "persons", "neutral")])])
    entities = pd.DataFrame({"entity": ["nq", "tm", "cb"], "name": ["North Quay", "Tidemere", "Cairnbrook"],
                             "group": ["Coast"] * 3, "position": range(3)})
    on = _drafts(obs, None, topics, entities, evaluative=True)
    off = _drafts(obs, None, topics, entities)
    assert on["change/nq/rate"].text.startswith("Fortunately, ")
    assert on["change/tm/rate"].text.startswith("Unfortunately, ")
    assert "ortunately" not in on["change/cb/pop"].text  # a neutral topic neither improves nor worsens
    assert "Fortunately, the recycling rate in North Quay" in on["blurb/nq/rate"].text \
        or "fortunately, it rose" in on["blurb/nq/rate"].text
    assert not any("ortunately" in d.text for d in off.values())
    assert on["change/nq/rate"].claims == off["change/nq/rate"].claims  # wording only


# ---- a workspace: storing, suggesting, drafting and rechecking ----------------------------------------

def _edition(folder: Path, name: str, tidemere: tuple[int, int, int]) -> Path:
    young, middle, old = tidemere
    return write(folder, name, HEADER + (
        "nq,parks,2025,82,2.5\ntm,parks,2025,66,2.8\ncb,parks,2025,88,4.2\n"
        f"tm,parks,2025,{young},6.8,,age,16-34,18\ntm,parks,2025,{middle},3.4,,age,35-64,67\n"
        f"tm,parks,2025,{old},7.2,,age,65+,15\n"
        "nq,parks,2025,87,5.6,,age,16-34,24\nnq,parks,2025,82,4.0,,age,35-64,49\nnq,parks,2025,77,5.4,,age,65+,27\n"
    ))


def test_a_workspace_suggests_the_kind_then_drafts_versions_and_rechecks_breakdowns(tmp_path: Path) -> None:
    cli = Cli(tmp_path / "ws")
    cli("init")
    first = _edition(tmp_path, "first.csv", (62, 67, 71))
    out = cli("load", str(first), "--topics", str(write(tmp_path, "t.csv", TOPICS)),
              "--entities", str(write(tmp_path, "e.csv", ENTITIES)), "--edition", "one", "--by", "admin").output
    assert "the data hold breakdowns by group (age), but the breakdown kind is off" in out
    assert not [s for s in cli.json("list") if s["kind"] == "breakdown"]
    cli("settings", "kinds", "standing,breakdown", "--by", "admin")
    cli("redraft", "--by", "admin")
    listed = {s["slot"]: s for s in cli.json("list", "--kind", "breakdown")}
    assert set(listed) == {"breakdown/nq/parks/age", "breakdown/tm/parks/age", "breakdown/parks"}
    tm = listed["breakdown/tm/parks/age"]
    assert (tm["claims"]["best"], tm["claims"]["worst"]) == (["65+"], ["16-34"])
    assert "a gap of 9 percentage points" in tm["text"] or "9 percentage points apart" in tm["text"]
    cli("approve", "breakdown/tm/parks/age", "--by", "admin")
    cli("approve", "breakdown/nq/parks/age", "--by", "admin")
    # the same data again: nothing of the subgroups is written, nothing goes to recheck
    again = cli.json("load", str(first), "--edition", "again", "--by", "admin")
    assert (again["breakdowns_written"], again["sent_to_recheck"], again["breakdowns_off"]) == (0, 0, [])
    # Tidemere's 35-64 group, 67% of residents, falls to the bottom: its three rows written, claims changed
    changed = cli.json("load", str(_edition(tmp_path, "second.csv", (70, 64, 69))), "--edition", "two", "--by", "admin")
    assert changed["breakdowns_written"] == 3 and changed["recheck"] == {"claim-changed": 1, "numbers-changed": 1}
    shown = cli.json("show", "breakdown/tm/parks/age")
    assert shown["status"] == "recheck"
    assert {c["fact"]: c["new"] for c in shown["recheck"]["changes"]}["worst"] == ["35-64"]
    assert "The largest group, 35-64 at 67% of the whole, also has the worst figure." in shown["draft"]
    assert cli.json("show", "breakdown/nq/parks/age")["status"] == "approved"


def test_the_data_page_suggests_the_kind_after_a_load_with_breakdowns(ws: Workspace) -> None:
    # the demo's observations hold parks satisfaction by age band; a new workspace does not draft the kind
    loading.load_edition(ws, demo.data_file("observations-2025.csv"), demo.data_file("topics.csv"),
                         demo.data_file("entities.csv"), by="admin")
    html = create_app(ws, {"TESTING": True}).test_client().get("/data?loaded=2025").get_data(as_text=True)
    assert "The data hold breakdowns by group (age), but the <strong>breakdown</strong> kind is off" in html
    assert 'href="/settings#set-kinds"' in html
    with ws.session() as session:
        configure.save(session, {"kinds": "headline,roundup,breakdown"}, by="admin")
    loading.redraft(ws, by="admin")
    client = create_app(ws, {"TESTING": True}).test_client()
    page = client.get("/statements/breakdown/tidemere/parks-satisfaction/age")
    assert page.status_code == 200
    html = page.get_data(as_text=True)
    assert "The largest group, 35-64 at 67% of the whole, also has the worst figure." in html
    assert "— breakdown by age" in html


def test_an_upload_changing_only_subgroups_is_not_called_the_same(demo_ws: Workspace) -> None:
    from test_web_pages import demo_bytes, upload

    same = "This file holds the same data as the current edition (2025); loading it would change nothing."
    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    assert same in upload(client, {"observations": (demo_bytes("observations-2025.csv"), "a.csv")}).get_data(
        as_text=True)
    text = demo_bytes("observations-2025.csv").decode()
    assert "tidemere,parks-satisfaction,2025,64,3.4,,age,35-64,67" in text
    # no breakdown statement carries this subgroup's value, yet the load would store it
    changed = text.replace("tidemere,parks-satisfaction,2025,64,3.4,,age,35-64,67",
                           "tidemere,parks-satisfaction,2025,63,3.4,,age,35-64,67")
    html = upload(client, {"observations": (changed.encode(), "b.csv")}).get_data(as_text=True)
    assert "Check before loading: edition 2025-r2" in html and same not in html
