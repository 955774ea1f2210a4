"""Quarters and months as a reader sees them: short in tables and on chart axes, in words in prose.

Every place that prints a period takes it from ``stetline.periods.period_label``: the short form
("Q3 2025", "Mar 2025") in chart axes, chart titles and the figures' table of a chart, the report's
figure tables and ranked tables, the ``short`` live-field filter; the long form ("the third quarter of
2025", "March 2025") in chart captions, live fields in rewrites and the statements (the breakdown
kind, the profile and headline that say a pattern). Years are printed as written everywhere.

References:
- Unicode CLDR, the "availableFormats" date patterns for the skeletons ``yQQQ`` and ``yMMM``
  (English: "QQQ y" and "MMM y") and the abbreviated quarter and month names ("Q3", "Mar"), read
  through Babel (``Locale.datetime_skeletons``, ``get_quarter_names``, ``get_month_names``); the
  expected short forms below are assembled from those CLDR pieces by hand, not by the formatter.
- The quarters' names in words ("the third quarter of 2025") are common practice of statistical
  releases.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from babel import Locale
from babel.dates import get_month_names, get_quarter_names
from helpers import Cli
from test_breakdowns import ENTITIES as TOWNS
from test_breakdowns import HEADER, TOPICS, _drafts, write
from test_kinds import draft_texts, topic
from test_kinds_patterns import PLACES
from test_periods_mixed import mixed, observations  # noqa: F401  (mixed: a fixture used below)

from stetline import charts, periods, phrasing
from stetline.dataset import load_dataset
from stetline.livefields import LiveFieldError, LiveFields
from stetline.phrasing import HouseStyle

#: a label as the data hold it: "2025-Q3", "2025-03" (not a date's "2026-12-02")
RAW = re.compile(r"\b\d{4}-(Q[1-4]|0[1-9]|1[0-2])\b(?!-\d)")


def cldr_short(label: str, locale: str) -> str:
    """The short form assembled from CLDR's pattern and abbreviated names (Babel's copy of CLDR)."""
    loc = Locale.parse(locale)
    if "-Q" in label:
        pattern = str(loc.datetime_skeletons["yQQQ"])
        name = get_quarter_names("abbreviated", "format", locale)[int(label[-1])]
        return pattern.replace("QQQ", name).replace("y", label[:4])
    pattern = str(loc.datetime_skeletons["yMMM"])
    name = get_month_names("abbreviated", "format", locale)[int(label[5:7])]
    return pattern.replace("MMM", name).replace("y", label[:4])


@pytest.mark.parametrize("locale", ["en_GB", "en_US", "de_DE", "fr_FR"])
@pytest.mark.parametrize("label", ["2025-Q1", "2025-Q3", "2024-Q4", "2025-03", "2025-12", "2019-01"])
def test_the_short_form_is_cldrs(label: str, locale: str) -> None:
    assert periods.period_label(label, "short", locale) == cldr_short(label, locale)


def test_english_forms_and_years_as_written() -> None:
    assert periods.period_label("2025-Q3", "short") == "Q3 2025"  # CLDR en: "QQQ y"
    assert periods.period_label("2025-03", "short") == "Mar 2025"  # CLDR en: "MMM y"
    assert periods.period_label("2025-Q3") == "the third quarter of 2025"
    assert periods.period_label("2025-03") == "March 2025"
    assert periods.period_label("2025", "short") == periods.period_label("2025") == "2025"


# ---- charts ---------------------------------------------------------------------------------------

QUARTERS = ["2024-Q3", "2024-Q4", "2025-Q1", "2025-Q2", "2025-Q3"]
LINES = [("a", "Avonby", [50.0, 52.0, 51.0, 53.0, 55.0]), ("b", "Brill", [60.0, 58.0, None, 57.0, 56.0])]


def fmt(x: float) -> str:
    return phrasing.value(x, "percent", 1)


def test_a_quarterly_series_chart_labels_its_axis_short_and_its_caption_in_words() -> None:
    spec = charts.series_spec("Recycling rate", "percent", QUARTERS, LINES, "a", fmt, "town")
    assert spec is not None
    assert spec.periods == ("Q3 2024", "Q4 2024", "Q1 2025", "Q2 2025", "Q3 2025")
    assert spec.title == "Recycling rate in Avonby, Q3 2024 to Q3 2025"
    assert [r[0] for r in spec.rows] == list(spec.periods)
    assert spec.caption == ("Recycling rate in Avonby: 55.0% in the third quarter of 2025, up from 50.0% in the "
                            "third quarter of 2024. The other 1 town ranged from 56.0% to 56.0% in the third quarter "
                            "of 2025.")
    assert not RAW.search(json.dumps([spec.title, spec.caption, spec.periods, spec.rows]))
    # drawn: the tick labels the reader sees on the x axis
    from matplotlib.text import Text

    figure = charts.figure(spec)
    figure.draw_without_rendering()
    drawn = {t.get_text() for t in figure.findobj(Text)}
    assert {"Q3 2024", "Q3 2025"} <= drawn and not any(RAW.search(t) for t in drawn)


def test_a_monthly_ranking_is_titled_short_and_captioned_in_words() -> None:
    spec = charts.ranking_spec("Recycling rate", "percent", "2025-03", [("a", "Avonby", 55.0), ("b", "Brill", 56.0)],
                               "a", fmt, "town")
    assert spec is not None
    assert spec.title == "Recycling rate, Mar 2025: every town" and spec.periods == ("Mar 2025",)
    assert spec.caption.startswith("Recycling rate in March 2025, 2 towns ranked: best Brill (56.0%)")


def test_yearly_charts_keep_their_years() -> None:
    spec = charts.series_spec("Recycling rate", "percent", ["2023", "2024", "2025"],
                              [("a", "Avonby", [50.0, 52.0, 55.0])], "a", fmt, "town")
    assert spec is not None
    assert spec.periods == ("2023", "2024", "2025") and spec.title == "Recycling rate in Avonby, 2023 to 2025"
    assert spec.caption == "Recycling rate in Avonby: 55.0% in 2025, up from 50.0% in 2023."


# ---- the report's tables ----------------------------------------------------------------------------

def test_the_reports_tables_print_quarters_short(mixed: Cli, tmp_path: Path) -> None:  # noqa: F811
    out = tmp_path / "report.md"
    mixed("publish", "--format", "md", "-o", str(out), "--allow-recheck")
    report = out.read_text(encoding="utf-8")
    # an entity's figure table, and a topic's ranked table, of the quarterly indicator
    assert "| Q3 2025 | Rank | Change since Q2 2025 | Q2 2025 |" in report
    assert "| Rank | Town | Q3 2025 | Change |" in report
    # the yearly indicator's tables are unchanged
    assert "| 2025 | Rank | Change since 2024 | 2024 |" in report and "| Rank | Town | 2025 | Change |" in report
    assert not RAW.search(report)
    # the machine-readable format keeps the labels as the data hold them
    data = tmp_path / "report.json"
    mixed("publish", "--format", "json", "-o", str(data), "--allow-recheck")
    figures = [i["figures"] for i in json.loads(data.read_text(encoding="utf-8")) if i.get("figures")]
    assert {"period": "2025-Q3", "previous_period": "2025-Q2"}.items() <= next(
        f for f in figures if f["period"] != "2025").items()


# ---- live fields in rewrites -------------------------------------------------------------------------

def test_a_live_period_reads_in_words_and_short_on_request() -> None:
    fields = LiveFields(HouseStyle())
    evidence = {"period": {"value": "2025-Q3", "shown": "2025-Q3"}, "year": {"value": "2025", "shown": "2025"},
                "month": {"value": "2025-03", "shown": "2025-03"}, "value": {"value": 45.2, "shown": "45.2%"}}
    text = "In {{ period }} ({{ period | short }}), {{ month }} ({{ month | short }}), {{ year }}: {{ value }}."
    assert fields.render(text, evidence) == (
        "In the third quarter of 2025 (Q3 2025), March 2025 (Mar 2025), 2025: 45.2%.")
    with pytest.raises(LiveFieldError, match="needs a period"):
        fields.render("{{ value | short }}", evidence)


def test_the_demo_rewrite_of_a_quarterly_blurb_names_its_quarter_in_words(demo_cli: Cli) -> None:
    # stetline.demo: "Library visits in the town ran at {{ value }} in {{ period }}, …" on the renamed town
    text = demo_cli.json("show", "blurb/larkholt-vale/library-visits")["current"]  # the rewrite, rendered
    assert text == ("Library visits in the town ran at 1,236 per 1,000 residents in the third quarter of 2025, "
                    "4th of 14 towns.")


# ---- the breakdown kind, and a pattern across quarterly topics ----------------------------------------

def test_a_quarterly_breakdown_names_its_quarter_in_words(tmp_path: Path) -> None:
    rows = "".join(f"{e},parks,{q},{v},,,,,\n" for e, v in (("nq", 80), ("tm", 66), ("cb", 86))
                   for q in ("2025-Q2", "2025-Q3"))
    rows += "tm,parks,2025-Q3,84,,,age,16-34,30\ntm,parks,2025-Q3,55,,,age,65+,40\n"
    data = load_dataset(write(tmp_path, "o.csv", HEADER + rows), write(tmp_path, "t.csv", TOPICS),
                        write(tmp_path, "e.csv", TOWNS))
    out = _drafts(data.observations, data.breakdowns, data.topics, data.entities, kinds=("breakdown",))
    text = out["breakdown/tm/parks/age"].text
    assert "in the third quarter of 2025" in text and not RAW.search(text)
    assert out["breakdown/tm/parks/age"].evidence["period"]["value"] == "2025-Q3"


def test_a_pattern_across_quarterly_topics_is_said_without_raw_labels() -> None:
    # every place is 2 points above the same quarter a year earlier on every topic, but Colne (e5) 2 below
    rows = [(f"e{i}", t, q, 50.0 + i + (0.0 if q == "2024-Q3" else (-2.0 if i == 5 else 2.0)) + (q == "2025-Q2"))
            for t in ("alpha", "beta", "gamma") for i in range(8) for q in ("2024-Q3", "2025-Q2", "2025-Q3")]
    out = draft_texts(rows, [topic("alpha"), topic("beta"), topic("gamma")], PLACES)
    profile, _e, claims = out["profile/e5"]
    assert claims["data_check"] == ["alpha", "beta", "gamma"]  # against a year earlier, as the movement counts
    assert ("On all three indicators compared, it moved the opposite way to most other towns, and it was the only one"
            " to do so.") in profile
    assert "On all three indicators compared, Colne moved the opposite way to most other towns." in out["headline"][0]
    assert not [slot for slot, (text, _e, _c) in out.items() if RAW.search(text)]
    assert "the third quarter of 2024" in out["movement/alpha"][0]
