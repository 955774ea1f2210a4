"""The changes page on the demo in Chromium: short enough to read at 1280 px, a count per entity first,
each entity's changes folded, every changed value still reached by opening an entity or filtering."""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from playwright.sync_api import Page, expect

from browser.livesite import Live
from browser.test_phones import PHONE, WIDE, too_wide

pytestmark = [
    pytest.mark.browser,
    pytest.mark.filterwarnings(
        "ignore:Session-scoped fixtures defined as instance methods:pytest.PytestRemovedIn10Warning"),
]

TALLEST = 6000  # px at 1280 px wide: a few screens, not the 31,000 px of every change listed open


def test_the_changes_page_is_short_and_every_change_is_reachable(page: Page, live: Live, screens: Path) -> None:
    page.set_viewport_size(WIDE)
    page.goto(live("/changes"))
    page.screenshot(path=str(screens / "changes-1280.png"), full_page=True)
    height = page.evaluate("document.documentElement.scrollHeight")
    assert height < TALLEST, f"the changes page is {height} px tall"
    places = page.locator("section.change-place").count()
    assert places >= 15  # the demo's towns and districts with changes, and the changes across all
    expect(page.locator("table.change-counts tbody tr")).to_have_count(places)  # a count for each
    value = page.locator("#place-gorse-point article.flip",
                         has=page.locator("h4", has_text=re.compile(r"^Household recycling rate$")))
    expect(value).to_be_hidden()  # folded
    # opening a town shows its changes, the changed claim of its recycling rate among them
    page.locator("#place-gorse-point summary").first.click()
    expect(value).to_be_visible()
    expect(value).to_contain_text("direction of the change: up → down")
    expect(value.get_by_role("link", name="Household recycling rate in Gorse Point — blurb")).to_be_visible()

    # the count table's link shows that town alone, opened, with the other filters kept
    page.goto(live("/changes?topic=recycling"))
    page.locator("table.change-counts").get_by_role("link", name="Gorse Point").click()
    assert "entity=gorse-point" in page.url and "topic=recycling" in page.url
    expect(page.locator("section.change-place")).to_have_count(1)
    expect(page.locator("#place-gorse-point article.flip")).to_have_count(1)
    expect(value).to_be_visible()
    # and a value that changed (a printed number) is there too, for a town whose numbers changed
    page.goto(live("/changes?entity=north-quay"))
    expect(page.locator("#place-north-quay article.flip", has_text="Value:").first).to_be_visible()
    page.get_by_role("link", name="Clear filter").click()
    expect(page.locator("table.change-counts tbody tr")).to_have_count(places)


@pytest.mark.parametrize("viewport", [WIDE, PHONE], ids=["1280", "390"])
def test_the_filtered_changes_page_fits_the_screen(page: Page, live: Live, screens: Path,
                                                    viewport: dict[str, int]) -> None:
    page.set_viewport_size(viewport)
    page.goto(live("/changes?entity=gorse-point"))
    expect(page.locator("#place-gorse-point details").first).to_have_attribute("open", "")
    carried = page.locator("table", has=page.get_by_role("columnheader", name="Layers")).locator("tbody tr")
    expect(carried).to_have_count(1)  # the human work carried over is narrowed to the town too
    expect(carried).to_contain_text("Household recycling rate in Gorse Point — blurb")
    assert too_wide(page, "changes-gorse-point", str(viewport["width"]), screens) == []
