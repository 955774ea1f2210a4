"""Every page a signed-in person can reach fits a phone's 390 px screen with no sideways scrolling,
and each is photographed at 1280 px and at 390 px (into the screenshot folder, $STETLINE_SCREENS).

390 CSS px is the viewport width of a common current phone (common practice for a narrow test width).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
from playwright.sync_api import Page, expect

from browser.conftest import sign_in
from browser.livesite import Live
from stetline import actions

pytestmark = [
    pytest.mark.browser,
    # pytest-playwright's own base_url fixture is a session-scoped instance method, which pytest 9 warns about
    pytest.mark.filterwarnings(
        "ignore:Session-scoped fixtures defined as instance methods:pytest.PytestRemovedIn10Warning"),
]

PHONE = {"width": 390, "height": 844}
WIDE = {"width": 1280, "height": 900}
SIZES = (("1280", WIDE), ("390", PHONE))
HERONSFORD = "blurb/heronsford/parks-satisfaction"  # a rewrite in recheck, with history

# every page reached by a link or an address (the bulk confirmation and the conflict page need a form)
PAGES = {
    "overview": "/",
    "entities": "/entities",
    "entity": "/entities/heronsford",
    "topics": "/topics",
    "topic": "/topics/recycling",
    "statement": f"/statements/{HERONSFORD}",
    "statement-gone": "/statements/roundup/paper-timetables",
    "recheck-queue": "/recheck",
    "accept-clean": "/recheck/accept-clean",
    "changes": "/changes",
    "data": "/data",
    "publish": "/publish",
    "settings": "/settings",
    "search": "/search?q=recycling",
    "mine": "/mine",
    "not-found": "/no/such/page",
}

# how wide the page is, and the widest element that sticks out past the right edge (to name it in a failure)
WIDTH = """() => {
    const limit = window.innerWidth;
    let worst = null;
    for (const el of document.body.querySelectorAll("*")) {
        const right = el.getBoundingClientRect().right;
        if (right > limit + 0.5 && (!worst || right > worst.right)) {
            let inScroller = false;
            for (let p = el.parentElement; p; p = p.parentElement) {
                const overflow = getComputedStyle(p).overflowX;
                if (overflow === "auto" || overflow === "scroll" || overflow === "hidden") { inScroller = true; break; }
            }
            if (!inScroller) worst = { right: Math.round(right), what: el.outerHTML.slice(0, 120) };
        }
    }
    return { scroll: document.documentElement.scrollWidth, inner: limit, worst };
}"""


def too_wide(page: Page, name: str, size: str, screens: Path) -> list[str]:
    """Photograph the page whole; say so when it scrolls sideways (and what sticks out)."""
    expect(page.locator("main h1")).to_be_visible()
    page.screenshot(path=str(screens / f"{name}-{size}.png"), full_page=True)
    width: dict[str, Any] = page.evaluate(WIDTH)
    if width["scroll"] <= width["inner"]:
        return []
    return [f"{name} is {width['scroll']} px wide on a {width['inner']} px screen; sticking out: {width['worst']}"]


@pytest.mark.parametrize("size,viewport", SIZES, ids=[s for s, _ in SIZES])
def test_every_page_fits_the_screen(page: Page, live: Live, screens: Path, size: str,
                                    viewport: dict[str, int]) -> None:
    page.set_viewport_size(viewport)
    wide: list[str] = []
    for name, path in PAGES.items():
        page.goto(live(path))
        wide += too_wide(page, name, size, screens)
    # the header band spans the whole width of the screen, on a phone as on a desk
    page.goto(live("/"))
    band = page.locator("header.bar").bounding_box()
    assert band is not None and band["x"] == 0 and band["width"] == viewport["width"]
    # the bulk confirmation, reached from the queue's bulk panel
    page.goto(live("/recheck"))
    page.get_by_role("button", name="Approve all 18 shown").click()  # the demo's 18 in recheck
    wide += too_wide(page, "bulk-confirm", size, screens)
    assert not wide, "\n".join(wide)


@pytest.mark.parametrize("size,viewport", SIZES, ids=[s for s, _ in SIZES])
def test_the_conflict_and_sign_in_pages_fit_the_screen(browser: Any, page: Page, live: Live, screens: Path,
                                                       size: str, viewport: dict[str, int]) -> None:
    page.set_viewport_size(viewport)
    page.goto(live(f"/statements/{HERONSFORD}"))
    with live.ws.session() as s:  # someone else saves a rewrite while this page is open
        actions.rewrite(s, HERONSFORD, "Heronsford recycled {{ value }} of its household waste.", by="editor")
    page.get_by_label("Rewrite").fill("Heronsford's recycling rate was {{ value }} in {{ period }}.")
    page.get_by_role("button", name="Save rewrite").click()
    expect(page.get_by_role("heading", name="Someone else changed this statement")).to_be_visible()
    wide = too_wide(page, "conflict", size, screens)

    fresh = browser.new_page(viewport=viewport)  # signed out
    fresh.goto(live("/login"))
    wide += too_wide(fresh, "sign-in", size, screens)
    fresh.close()
    assert not wide, "\n".join(wide)


def test_each_role_sees_the_queue_and_a_statement_fit_a_phone(browser: Any, live: Live, screens: Path) -> None:
    wide: list[str] = []
    for role in ("editor", "expert", "reviewer"):
        page = browser.new_page(viewport=PHONE)
        sign_in(page, live, role)
        for name, path in (("recheck-queue", "/recheck"), ("statement", f"/statements/{HERONSFORD}"),
                           ("mine", "/mine"), ("settings", "/settings")):
            page.goto(live(path))
            wide += too_wide(page, f"{name}-{role}", "390", screens)
        page.close()
    assert not wide, "\n".join(wide)


@pytest.mark.parametrize("size,viewport", SIZES, ids=[s for s, _ in SIZES])
def test_the_queue_with_a_data_check_fits_the_screen(browser: Any, pattern_live: Live, screens: Path, size: str,
                                                     viewport: dict[str, int]) -> None:
    page = browser.new_page(viewport=viewport)
    page.goto(pattern_live("/recheck"))
    checks = page.get_by_role("region", name="Worth a data check")
    expect(checks).to_contain_text("Colne went against most others on 3 of 3 indicators compared")
    expect(page.get_by_role("link", name="Read the profile that says it of Colne")).to_be_visible()
    wide = too_wide(page, "recheck-queue-data-check", size, screens)
    page.close()
    assert not wide, "\n".join(wide)
