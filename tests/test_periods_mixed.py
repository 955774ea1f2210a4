"""One workspace, topics of different period formats: a yearly and a quarterly indicator side by side.

Each topic keeps one period format (all years, all quarters or all months); one observations file
may hold topics of different formats. Quarters and months are compared with the same period a
year earlier by default (the ``compare_with`` setting); the movement statement, the headline and
the profile's biggest moves follow that setting and name the periods they compare.

References:
- Eurostat Statistics Explained, glossary "Growth rate: year-on-year" (from memory): a quarter is
  compared with the same quarter of the previous year, which removes the seasonal pattern. The
  series below are invented with a seasonal peak in the third quarter; the counts are worked by
  hand from the formula in ``visits``.
- CLDR plural rules for English (Unicode CLDR, "Language Plural Rules"; read through Babel's
  ``Locale.plural_form``): "one" when the integer part is 1 and no decimals are shown (i = 1 and
  v = 0); every other number, "1.0" included, is "other".
"""

from __future__ import annotations

from decimal import Decimal
from pathlib import Path

import pytest
from babel import Locale
from helpers import Cli

from stetline import figures
from stetline.store import ops
from stetline.workspace import Workspace, open_workspace

#: the part kinds these tests read, set explicitly (new workspaces draft fewer by default)
KINDS = "headline,profile,change,trend,movement"
TOPICS = (
    "topic,label,unit,better,decimals,category,target\n"
    "recycling,Household recycling rate,percent,higher,1,Environment,\n"
    'visits,Library visit rate,"per 1,000 residents",higher,0,Culture,\n'
)
ENTITIES = "entity,name,group\na,Avonby,North\nb,Brill,North\nc,Cray,South\n"
RECYCLING = {"a": (40.0, 42.0, 43.0), "b": (50.0, 49.0, 48.0), "c": (30.0, 31.0, 33.0)}  # 2023, 2024, 2025
BASE = {"a": 500, "b": 600, "c": 700}
SEASON = {1: 0, 2: 10, 3: 30, 4: 5}  # visits peak in the third quarter


def visits(entity: str, year: int, quarter: int) -> int:
    """Base + season + 5 a year; Avonby loses 20 from the first quarter of 2025."""
    drop = 20 if entity == "a" and year == 2025 else 0
    return BASE[entity] + SEASON[quarter] + 5 * (year - 2023) - drop


def observations(last_year: int) -> str:
    """An edition's file: recycling 2023 to ``last_year``, visits 2023-Q1 to the third quarter of ``last_year``."""
    lines = ["entity,topic,period,value"]
    for e in BASE:
        lines += [f"{e},recycling,{y},{RECYCLING[e][y - 2023]}" for y in range(2023, last_year + 1)]
        lines += [f"{e},visits,{y}-Q{q},{visits(e, y, q)}" for y in range(2023, last_year + 1) for q in range(1, 5)
                  if (y, q) <= (last_year, 3)]
    return "\n".join(lines) + "\n"


@pytest.fixture
def mixed(cli: Cli, tmp_path: Path) -> Cli:
    """A workspace with both editions loaded: a yearly and a quarterly topic in each file."""
    files = {name: tmp_path / name for name in ("topics.csv", "entities.csv", "obs-2024.csv", "obs-2025.csv")}
    files["topics.csv"].write_text(TOPICS, encoding="utf-8")
    files["entities.csv"].write_text(ENTITIES, encoding="utf-8")
    files["obs-2024.csv"].write_text(observations(2024), encoding="utf-8")
    files["obs-2025.csv"].write_text(observations(2025), encoding="utf-8")
    cli("init")
    cli("settings", "kinds", KINDS)
    cli("settings", "entity_noun", "town")
    cli("load", str(files["obs-2024.csv"]), "--topics", str(files["topics.csv"]),
        "--entities", str(files["entities.csv"]))
    cli("load", str(files["obs-2025.csv"]))
    return cli


def text(cli: Cli, slot: str) -> str:
    """The current text of a slot."""
    return str(cli.json("show", slot)["text"])


def test_each_topic_names_its_own_periods(mixed: Cli) -> None:
    assert "2025" in text(mixed, "change/a/recycling") and "quarter" not in text(mixed, "change/a/recycling")
    change = text(mixed, "change/a/visits")
    # Avonby: 2024-Q3 = 500 + 30 + 5 = 535; 2025-Q3 = 500 + 30 + 10 - 20 = 520; 2025-Q2 = 500 + 10 + 10 - 20 = 500
    assert "535 per 1,000 residents in the third quarter of 2024" in change and "520 per 1,000 residents" in change
    assert "the third quarter of 2025" in change and "2025-Q3" not in change
    assert "Against the second quarter of 2025 (500 per 1,000 residents), it rose" in change
    trend = text(mixed, "trend/c/visits")
    assert "third quarter of 2025" in trend and "2025-Q3" not in trend
    # the yearly topic's trend counts years, the quarterly one quarters: the two calendars never mix
    assert "quarter" not in text(mixed, "trend/c/recycling")


def test_the_edition_is_named_by_the_format_most_topics_use_and_lists_the_others(mixed: Cli) -> None:
    ws = open_workspace(mixed.path)
    try:
        with ws.session() as s:
            editions = ops.editions(s)
            assert [e.label for e in editions] == ["2024", "2025"]  # one topic each: years win the tie
            assert [e.period_format for e in editions] == ["mixed", "mixed"]
            assert editions[-1].periods_shown == "2025 (quarterly topics to 2025-Q3)"
    finally:
        ws.close()
    # the headline says the edition's year and which indicators it compares with a year earlier
    headline = mixed.json("show", "headline")
    assert headline["text"].startswith("In 2025, ")
    assert "Quarterly indicators are compared with the same quarter a year earlier." in headline["text"]
    assert headline["claims"]["compared_with"] == "year-earlier"


def test_movement_compares_quarters_with_a_year_earlier_by_default(mixed: Cli) -> None:
    moved = mixed.json("show", "movement/visits")
    # a year earlier: Avonby 535 -> 520 worsened; Brill 635 -> 640 and Cray 735 -> 740 improved
    assert moved["text"].startswith("Between the third quarter of 2024 and the third quarter of 2025, ")
    assert "improved in two and worsened in one" in moved["text"]
    assert moved["claims"]["majority"] == "improved"
    assert moved["claims"]["compared_with"] == "year-earlier"
    yearly = mixed.json("show", "movement/recycling")
    assert yearly["text"].startswith("Between 2024 and 2025, ") and "compared_with" not in yearly["claims"]
    # the profile's biggest setback is the year-earlier fall, said with the period it is measured on
    assert "library visit rate (down 2.8% on the third quarter of 2024)" in text(mixed, "profile/a")


def test_movement_and_headline_follow_the_setting_for_the_previous_period(mixed: Cli) -> None:
    mixed("settings", "compare_with", "previous")
    mixed("redraft")
    moved = mixed.json("show", "movement/visits")
    # the previous quarter: every town rose from the second to the third quarter (the seasonal peak)
    assert moved["text"].startswith("Between the second quarter of 2025 and the third quarter of 2025, ")
    assert moved["claims"]["majority"] == "improved" and "compared_with" not in moved["claims"]
    headline = mixed.json("show", "headline")
    assert "a year earlier" not in headline["text"] and "compared_with" not in headline["claims"]


def test_a_redraft_of_a_mixed_workspace_changes_nothing(mixed: Cli) -> None:
    before = {i["slot"]: i["text"] for i in mixed.json("list")}
    out = mixed("redraft").stdout
    assert "sent to recheck:            0" in out
    assert {i["slot"]: i["text"] for i in mixed.json("list")} == before


def test_a_topic_that_changes_format_between_rows_is_refused_and_nothing_is_written(
    mixed: Cli, tmp_path: Path,
) -> None:
    bad = tmp_path / "bad.csv"
    bad.write_text(observations(2025) + "a,visits,2025,1\n", encoding="utf-8")
    before = {i["slot"]: (i["status"], i["text"]) for i in mixed.json("list")}
    result = mixed("load", str(bad), ok=False)
    row = observations(2025).count("\n") + 1  # the header is row 1
    assert result.exit_code == 1
    assert ("Error: 1 problem(s) in the input; nothing was written" in result.stderr)
    assert (f"bad.csv, row {row}, column 'period': topic 'visits' mixes period formats: most of its rows are "
            "quarters (like 2025-Q1) but this one is a year ('2025'); a topic's series must be all years, "
            "all quarters or all months") in result.stderr
    assert {i["slot"]: (i["status"], i["text"]) for i in mixed.json("list")} == before
    assert mixed.json("status")["editions"] == 2


@pytest.mark.parametrize(("change", "decimals", "expected"), [
    (1.0, 0, "1 percentage point"),
    (1.0, 1, "1.0 percentage points"),
    (1.04, 1, "1.0 percentage points"),
    (0.96, 0, "1 percentage point"),
    (2.0, 0, "2 percentage points"),
    (0.5, 1, "0.5 percentage points"),
])
def test_percentage_points_agree_with_cldr_plural_rules(change: float, decimals: int, expected: str) -> None:
    shown = figures.points(change, decimals)
    assert shown == expected
    number = shown.split(" ")[0]
    # CLDR English: "one" only for i = 1 with no visible decimals ("1"); "1.0" is "other" (Babel)
    form = Locale("en").plural_form(Decimal(number))
    assert shown.endswith("point" if form == "one" else "points")


def test_the_demo_quarterly_indicator_names_quarters_and_its_year_earlier_change_is_rechecked(demo_cli: Cli) -> None:
    # seed_data/README.md: in four towns the third quarter of 2025 falls below the third quarter of 2024
    demo_cli("settings", "kinds", "headline,profile,roundup,blurb,change,movement")
    demo_cli("redraft")
    for town in ("heronsford", "tidemere", "gorse-point", "cairnbrook"):
        change = demo_cli.json("show", f"change/{town}/library-visits")
        assert "the third quarter of 2025" in change["text"] and "the third quarter of 2024" in change["text"]
        assert change["claims"]["year_earlier.better"] == "worsened"
        assert change["claims"]["better"] == "improved"  # on the second quarter it rose: the season's peak
    recheck = demo_cli.json("show", "blurb/heronsford/library-visits")  # approved on the first edition
    assert recheck["status"] == "recheck" and "claim-changed" in recheck["recheck"]["reasons"]
    changes = {c["fact"]: (c["old"], c["new"]) for c in recheck["recheck"]["changes"]}
    assert changes["change.year_earlier.better"] == ("improved", "worsened")
    assert "1,034 per 1,000 residents in the third quarter of 2024, it was down 4.1%" in recheck["text"]
    assert "blurb/heronsford/library-visits" in {i["slot"] for i in demo_cli.json("list", "--status", "recheck")}
    roundup = text(demo_cli, "roundup/library-visits")
    assert roundup.startswith("Between the third quarter of 2024 and the third quarter of 2025, ")
    # the yearly indicators keep their years
    assert "2025" in text(demo_cli, "change/heronsford/recycling")
    assert "quarter" not in text(demo_cli, "change/heronsford/recycling")


def test_the_data_page_lists_the_latest_period_of_each_format(demo_ws: Workspace) -> None:
    from stetline.web import create_app

    client = create_app(demo_ws, {"TESTING": True, "WTF_CSRF_ENABLED": False}).test_client()
    html = client.get("/data").get_data(as_text=True)
    assert "(latest period 2025 (quarterly topics to 2025-Q3))" in html
    assert "<td>2024 (quarterly topics to 2024-Q3)</td>" in html


def test_a_provisional_quarter_is_named_in_words_in_the_published_caveat(mixed: Cli, tmp_path: Path) -> None:
    lines = observations(2025).splitlines()
    rows = [lines[0] + ",status"] + [f"{line},provisional" if line.startswith("c,visits,2025-Q3,") else f"{line},"
                                     for line in lines[1:]]
    third = tmp_path / "obs-2025-r2.csv"
    third.write_text("\n".join(rows) + "\n", encoding="utf-8")
    mixed("load", str(third))
    out = tmp_path / "report.md"
    mixed("publish", "--format", "md", "-o", str(out), "--allow-recheck")
    report = out.read_text(encoding="utf-8")
    assert "The third-quarter 2025 figure is provisional." in report
    assert "2025-Q3 figure" not in report


def test_a_monthly_topic_beside_a_yearly_one_is_compared_with_the_same_month_a_year_earlier(
    cli: Cli, tmp_path: Path,
) -> None:
    from babel.dates import get_month_names

    def monthly(e: str, y: int, m: int) -> int:
        # March is the peak; Avonby's March 2025 falls 15 below March 2024 but rises on February 2025
        return BASE[e] + (20 if m == 3 else 0) + 5 * (y - 2024) - (20 if e == "a" and y == 2025 else 0)

    lines = ["entity,topic,period,value"]
    for e in BASE:
        lines += [f"{e},recycling,{y},{RECYCLING[e][y - 2023]}" for y in (2024, 2025)]
        lines += [f"{e},visits,{y}-{m:02d},{monthly(e, y, m)}" for y in (2024, 2025) for m in (1, 2, 3)]
    for name, content in (("t.csv", TOPICS), ("e.csv", ENTITIES), ("o.csv", "\n".join(lines) + "\n")):
        (tmp_path / name).write_text(content, encoding="utf-8")
    cli("init")
    cli("settings", "kinds", KINDS)
    cli("settings", "entity_noun", "town")
    cli("load", str(tmp_path / "o.csv"), "--topics", str(tmp_path / "t.csv"), "--entities", str(tmp_path / "e.csv"))
    march = get_month_names("wide", locale="en_GB")[3]  # CLDR, via Babel
    moved = cli.json("show", "movement/visits")
    assert moved["text"].startswith(f"Between {march} 2024 and {march} 2025, ")
    assert "improved in two and worsened in one" in moved["text"]  # a: 520 -> 505; b, c: +5
    headline = cli.json("show", "headline")["text"]
    assert headline.startswith("In 2025, ")
    assert "Monthly indicators are compared with the same month a year earlier." in headline
