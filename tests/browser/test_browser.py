"""The web editor in a real browser: the recheck queue, a rewrite with a live preview, a refused
upload, a Markdown download, keyboard access, and screenshots of the main pages."""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

import pytest
from playwright.sync_api import Page, expect

from browser.livesite import TABLET, Live
from stetline import actions

pytestmark = [
    pytest.mark.browser,
    # pytest-playwright's own base_url fixture is a session-scoped instance method, which pytest 9 warns about
    pytest.mark.filterwarnings(
        "ignore:Session-scoped fixtures defined as instance methods:pytest.PytestRemovedIn10Warning"),
]

HERONSFORD = "blurb/heronsford/parks-satisfaction"
GORSE = "blurb/gorse-point/recycling"


def status(live: Live, slot: str) -> str:
    with live.ws.session() as s:
        return actions.view(s, slot).slot.status


def test_accepting_a_proposed_text_from_the_recheck_queue(page: Page, live: Live) -> None:
    page.goto(live("/recheck"))
    expect(page.get_by_role("heading", name="Recheck queue")).to_be_visible()
    item = page.locator("article.recheck-item", has=page.locator(f'a[href="/statements/{HERONSFORD}"]'))
    expect(item.get_by_text("Proposed text")).to_be_visible()
    item.get_by_role("button", name=f"Accept the proposed text of {HERONSFORD}").click()
    expect(page.get_by_role("status").filter(has_text="Proposed text accepted and approved")).to_be_visible()
    assert page.url.endswith("/recheck")
    expect(page.locator(f'article a[href="/statements/{HERONSFORD}"]')).to_have_count(0)
    assert status(live, HERONSFORD) == "approved"


def test_a_rewrite_with_a_live_field_previews_the_number_and_saves(page: Page, live: Live) -> None:
    page.goto(live(f"/statements/{GORSE}"))
    area = page.get_by_label("Rewrite")
    area.fill("Gorse Point recycled **{{ value }}** of household waste in {{ period }}.")
    preview = page.locator("#rewrite-preview")
    expect(preview).to_contain_text("Gorse Point recycled 40.4% of household waste in 2025.")
    expect(preview.locator("strong")).to_have_text("40.4%")
    area.fill("Broken {{ nosuchfact }}")
    expect(preview).to_contain_text("unknown live field")
    area.fill("Gorse Point recycled {{ value }} of household waste in {{ period }}.")
    page.get_by_role("button", name="Save rewrite").click()
    expect(page.get_by_role("status").filter(has_text="Rewrite saved")).to_be_visible()
    expect(page.locator(".published")).to_have_text("Gorse Point recycled 40.4% of household waste in 2025.")


def test_a_bad_upload_shows_the_problems_table(page: Page, live: Live) -> None:
    page.goto(live("/data"))
    bad = b"entity,topic,period,value\nheronsford,recycling,2026,lots\nheronsford,recycling,2026,5\n"
    page.get_by_label("Observations (CSV or XLSX, required)").set_input_files(
        files=[{"name": "bad.csv", "mimeType": "text/csv", "buffer": bad}])
    # while the check runs, the form shows that it is busy (the submit is held back here to look)
    busy = page.evaluate("""() => {
        const form = document.querySelector("form.upload");
        form.addEventListener("submit", (e) => e.preventDefault(), { once: true });
        form.querySelector("button[type=submit]").click();
        return new Promise((done) => setTimeout(() => done({
            disabled: form.querySelector("button[type=submit]").disabled,
            message: form.querySelector(".busy-message").textContent,
        }), 50));
    }""")
    assert busy == {"disabled": True, "message": "Checking the files…"}
    page.reload()
    page.get_by_label("Observations (CSV or XLSX, required)").set_input_files(
        files=[{"name": "bad.csv", "mimeType": "text/csv", "buffer": bad}])
    page.get_by_role("button", name="Check these files").click()
    alert = page.locator("section.error-summary")
    expect(alert).to_contain_text("nothing was loaded")
    rows = alert.locator("table.problems tbody tr")
    expect(rows.first).to_contain_text("bad.csv")
    expect(alert.locator("td", has_text="the value is not a number: 'lots'")).to_be_visible()
    expect(page.get_by_role("button", name="Load this edition")).to_have_count(0)
    with live.ws.session() as s:
        from stetline.store import ops

        assert [e.label for e in ops.editions(s)] == ["2024", "2025"]


def test_publishing_markdown_downloads_the_file(page: Page, live: Live, tmp_path: Path) -> None:
    page.goto(live("/publish"))
    expect(page.locator(".caution")).to_contain_text("A qualified person must check them before release")
    # the demo's 18 (`stetline list --status recheck`), the approved quarterly blurb and the renamed town's
    # rewrite among them
    expect(page.get_by_role("heading", name=re.compile("18 statements wait in recheck"))).to_be_visible()
    page.get_by_label("Markdown").check()
    page.get_by_label("Publish even though statements wait in recheck").check()
    with page.expect_download() as info:
        page.get_by_role("button", name="Publish and download").click()
    download = info.value
    assert download.suggested_filename == "kestrel-sound-regional-council-service-scorecard-2025.md"
    target = tmp_path / download.suggested_filename
    download.save_as(target)
    text = target.read_text(encoding="utf-8")
    assert text.startswith("# Kestrel Sound Regional Council: Service Scorecard")
    assert "qualified person must check" in text
    page.reload()
    expect(page.get_by_role("heading", name="Recent publications")).to_be_visible()


UNLABELLED = """() => [...document.querySelectorAll("input:not([type=hidden]), select, textarea, button")]
    .filter((el) => el.tagName === "BUTTON" ? !el.textContent.trim() && !el.getAttribute("aria-label")
                                           : !(el.labels && el.labels.length) && !el.getAttribute("aria-label"))
    .map((el) => el.outerHTML.slice(0, 80))"""


def test_signing_in_once_the_workspace_has_accounts(browser: Any, live: Live, screens: Path) -> None:
    from stetline import demo

    page = browser.new_page()  # a fresh browser, not signed in
    page.goto(live("/recheck?reason=slot-gone"))
    expect(page.get_by_role("heading", name="Sign in")).to_be_visible()
    page.screenshot(path=str(screens / "sign-in-1280.png"), full_page=True)
    page.get_by_label("Account name").fill("reviewer")
    page.get_by_label("Password").fill("not the password")
    page.get_by_role("button", name="Sign in").click()
    expect(page.get_by_role("alert")).to_contain_text("the name or the password is wrong")
    page.get_by_label("Password").fill(demo.demo_passwords(live.ws.path)["reviewer"])
    page.get_by_role("button", name="Sign in").click()
    expect(page.get_by_role("heading", name="Recheck queue")).to_be_visible()
    assert page.url.endswith("/recheck?reason=slot-gone")
    expect(page.locator(".who")).to_contain_text("Signed in as reviewer (reviewer)")
    page.get_by_role("button", name="Sign out").click()
    expect(page.get_by_role("heading", name="Sign in")).to_be_visible()
    page.close()


def test_the_pages_are_reachable_by_keyboard(page: Page, live: Live) -> None:
    page.goto(live("/"))
    page.keyboard.press("Tab")
    assert page.evaluate("document.activeElement.textContent") == "Skip to content"
    page.keyboard.press("Enter")
    assert page.evaluate("document.activeElement.id") == "main"
    page.goto(live(f"/statements/{HERONSFORD}"))
    page.keyboard.press("Tab")  # skip link
    page.keyboard.press("Tab")
    assert page.evaluate("document.activeElement.className") == "brand"
    area = page.get_by_label("Rewrite")
    area.focus()
    page.keyboard.press("Tab")  # on to the next control: the filters' summary
    assert page.evaluate("document.activeElement.tagName") == "SUMMARY"


def test_screenshots_of_the_main_pages(page: Page, live: Live, screens: Path) -> None:
    shots = {
        "overview": "/",
        "entity": "/entities/heronsford",
        "statement": f"/statements/{HERONSFORD}",
        "recheck-queue": "/recheck",
        "publish": "/publish",
        "data": "/data",
        "settings": "/settings",
        "search": "/search?q=recycling+heronsford",
    }
    for size, viewport in (("1280", {"width": 1280, "height": 900}), ("tablet", TABLET)):
        page.set_viewport_size(viewport)
        for name, path in shots.items():
            page.goto(live(path))
            expect(page.locator("main h1")).to_be_visible()
            overflow = page.evaluate("document.documentElement.scrollWidth > window.innerWidth")
            assert not overflow, f"{name} is wider than the {size} screen"
            assert page.evaluate(UNLABELLED) == [], f"{name} has controls without a label"
            page.screenshot(path=str(screens / f"{name}-{size}.png"), full_page=True)
    made = sorted(p.name for p in screens.glob("*.png"))
    assert {"overview-1280.png", "entity-1280.png", "statement-1280.png", "recheck-queue-1280.png"} <= set(made)
    print(f"screenshots of {len(made)} pages in {screens}")
