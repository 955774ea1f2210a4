"""The demo's HTML report read in Chromium at 1280 px and at 390 px: the contents reach their
sections, nothing scrolls the page sideways, every chart shows with its alternative text and its
labels at a readable size. Screenshots go to the screenshot folder ($STETLINE_SCREENS).

390 CSS px is the viewport width of a common current phone (common practice for a narrow test width).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
from playwright.sync_api import Page

from browser.livesite import Live
from browser.test_phones import PHONE, SIZES, WIDTH
from stetline import charts, publish

pytestmark = [
    pytest.mark.browser,
    pytest.mark.filterwarnings(
        "ignore:Session-scoped fixtures defined as instance methods:pytest.PytestRemovedIn10Warning"),
]

MIN_CHART_TEXT_PX = 10.0  # chart labels drawn smaller than this on screen are hard to read (common practice)

CHARTS = """() => [...document.querySelectorAll("figure.chart img")].map(img => ({
    alt: img.getAttribute("alt") || "", loaded: img.complete && img.naturalWidth > 0,
    shown: img.getBoundingClientRect().width, natural: img.naturalWidth }))"""

CONTENTS = """() => [...document.querySelectorAll("nav.toc a")].map(a => {
    const target = document.getElementById(a.getAttribute("href").slice(1));
    const heading = target && (target.matches("h1, h2") ? target : target.querySelector("h2"));
    return { text: a.textContent.trim(), heading: heading ? heading.textContent.trim() : null };
})"""


@pytest.fixture
def report(live: Live, tmp_path: Path) -> Path:
    """The demo's HTML report as a file (waiting statements printed with their last approved text)."""
    with live.ws.session() as s:
        data, _pub = publish.publish(s, "html", by="admin", allow_recheck=True, chart_dir=live.ws.chart_dir)
    path = tmp_path / "report.html"
    path.write_bytes(data)
    return path


def _shoot(page: Page, screens: Path, name: str, selector: str | None = None) -> None:
    if selector is not None:
        page.locator(selector).first.scroll_into_view_if_needed()
        page.locator(selector).first.evaluate("el => el.scrollIntoView({block: 'start'})")
    page.screenshot(path=str(screens / name))


@pytest.mark.parametrize("size,viewport", SIZES, ids=[s for s, _ in SIZES])
def test_the_report_reads_on_a_wide_screen_and_a_phone(page: Page, report: Path, screens: Path, size: str,
                                                       viewport: dict[str, int]) -> None:
    page.set_viewport_size(viewport)
    page.goto(report.as_uri())
    _shoot(page, screens, f"report-top-{size}.png")
    _shoot(page, screens, f"report-entity-{size}.png", "section.entity .item:has(figure.chart)")
    _shoot(page, screens, f"report-topic-{size}.png", "section.topic:has(table.ranked)")

    width: dict[str, Any] = page.evaluate(WIDTH)
    assert width["scroll"] <= width["inner"], width  # the page body never scrolls sideways

    images: list[dict[str, Any]] = page.evaluate(CHARTS)
    assert len(images) > 100  # a chart per entity and topic, and one per topic
    assert all(i["alt"].strip() and i["loaded"] for i in images)
    points = charts.FONT_SIZE * 4 / 3  # the labels' size in CSS px when the SVG is shown at its own size
    smallest = min(points * i["shown"] / i["natural"] for i in images)
    assert smallest >= MIN_CHART_TEXT_PX, f"chart labels shown at {smallest:.1f} px on a {size} px screen"


def test_every_contents_link_reaches_its_section(page: Page, report: Path) -> None:
    page.set_viewport_size(PHONE)
    page.goto(report.as_uri())
    links: list[dict[str, Any]] = page.evaluate(CONTENTS)
    assert len(links) > 20  # the overview, 14 towns, the topics, the notes
    assert [link["text"] for link in links] == [link["heading"] for link in links]
    last = page.locator("nav.toc a").last
    name = last.inner_text()
    last.click()
    heading = page.get_by_role("heading", name=name, exact=True)
    box = heading.bounding_box()
    assert box is not None and 0 <= box["y"] < PHONE["height"] / 2  # scrolled to the top of the screen


def test_the_statement_page_charts_are_readable_on_a_phone(page: Page, live: Live, screens: Path) -> None:
    page.set_viewport_size(PHONE)
    page.goto(live("/statements/blurb/heronsford/recycling"))  # a blurb: drafted under every kinds setting
    page.locator("#series-chart").scroll_into_view_if_needed()
    page.screenshot(path=str(screens / "statement-charts-390.png"))
    images: list[dict[str, Any]] = page.evaluate(CHARTS.replace("figure.chart img", "#series-chart, #ranking-chart"))
    assert len(images) == 2 and all(i["alt"].strip() and i["loaded"] for i in images)
    points = charts.FONT_SIZE * 4 / 3
    smallest = min(points * i["shown"] / i["natural"] for i in images)
    assert smallest >= MIN_CHART_TEXT_PX, f"chart labels shown at {smallest:.1f} px on a 390 px screen"


RANKED = """() => [...document.querySelectorAll("table.ranked")].map(table => {
    const wrap = table.closest(".table-wrap");
    const lines = [...table.querySelectorAll("tbody td:last-child")].map(td => {
        const range = document.createRange();
        range.selectNodeContents(td);
        const tops = new Set([...range.getClientRects()].map(r => Math.round(r.top)));
        return { text: td.textContent.trim(), lines: tops.size };
    });
    return { heading: table.querySelector("thead th:last-child").textContent.trim(), cells: lines,
             hidden: wrap.scrollWidth - wrap.clientWidth };
})"""


@pytest.mark.parametrize("size,viewport", SIZES, ids=[s for s, _ in SIZES])
def test_the_ranked_tables_change_column_reads_on_one_line(page: Page, report: Path, screens: Path, size: str,
                                                          viewport: dict[str, int]) -> None:
    page.set_viewport_size(viewport)
    page.goto(report.as_uri())
    _shoot(page, screens, f"report-ranked-{size}.png", "table.ranked")
    tables: list[dict[str, Any]] = page.evaluate(RANKED)
    assert len(tables) >= 10  # a ranked table per topic
    wrapped = [(t["heading"], c["text"]) for t in tables for c in t["cells"] if c["lines"] != 1]
    assert not wrapped, wrapped  # "+0.3 percentage points" broke over three lines on a phone
    assert all(t["hidden"] <= 1 for t in tables), [t["heading"] for t in tables if t["hidden"] > 1]  # no scrolling
    # a change in percentage points says its unit once, in the heading (ONS Service Manual, "Percentages")
    assert "Change (percentage points)" in [t["heading"] for t in tables]
    width: dict[str, Any] = page.evaluate(WIDTH)
    assert width["scroll"] <= width["inner"], width
