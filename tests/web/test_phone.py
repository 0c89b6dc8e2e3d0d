"""Every page at a phone's width (390 px, a common handset viewport): the document is no wider
than the viewport, so nothing (a verdict above all) is off-screen; tables turn into stacked
cards with the verdict first. Headless Chromium (Debian's package) through Playwright, against
the real server; screenshots go to tests/artifacts/browser/phone/."""

import pytest

from helpers import live_server
from helpers.browser import ARGS, ARTIFACTS, CHROMIUM, require_chromium

pytestmark = pytest.mark.browser

PHONE = {"width": 390, "height": 844}
PAGES = [
    "/", "/dashboard", "/units/NB-0002", "/units/NB-0002/label", "/models/",
    "/models/kx-7", "/checks/", "/events", "/holds", "/audit/", "/rules/", "/users/",
    "/checks/result?task=verify-absence&supply=mains&category=III&waveform=ac&voltage=480+V"
    "&voltage_to_earth=277+V&source_impedance=0.02+ohm&site=Substation+yard&duration=30+s",
    "/checks/result?task=discharge&supply=isolated&waveform=dc&voltage=800+V"
    "&capacitance=2+mF&discharge_to=50+V&site=Battery+lab",
    "/checks/card?task=verify-absence&supply=mains&category=III&waveform=ac&voltage=480+V"
    "&voltage_to_earth=277+V&source_impedance=0.02+ohm&site=Substation+yard&duration=30+s",
    # the steward's model forms: rows of fields in one column
    "/models/_new", "/models/kx-7/edit", "/models/ks-hv30/edit",
]
# the board's result, found by its address so that a page added to the list cannot shift it
BOARD_RESULT = next(p for p in PAGES if p.startswith("/checks/result?task=verify-absence"))


@pytest.fixture(scope="module")
def phone(tmp_path_factory, templates):
    require_chromium()
    from playwright.sync_api import sync_playwright
    base, proc = live_server.start(tmp_path_factory.mktemp("phone"), templates)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        context = browser.new_context(viewport=PHONE, device_scale_factor=1)
        page = context.new_page()
        page.goto(base + "/login")
        page.fill("input[name=username]", "steward")
        page.fill("input[name=password]", "larkspur-steward")
        page.click("button[type=submit]")
        page.wait_for_selector("header nav")
        yield base, page
        browser.close()
    live_server.stop(proc)


@pytest.mark.parametrize("path", PAGES)
def test_page_fits_a_phone(phone, path):
    base, page = phone
    response = page.goto(base + path)
    assert response is not None and response.status < 400, (path, response and response.status)
    folder = ARTIFACTS / "phone"
    folder.mkdir(parents=True, exist_ok=True)
    name = f"{PAGES.index(path):02d}-" + (path.strip("/").split("?")[0].replace("/", "_")
                                          or "fleet")
    page.screenshot(path=str(folder / f"{name}.png"))
    wide = page.evaluate("""() => {
        const w = document.documentElement.clientWidth;
        const over = [...document.querySelectorAll('body *')]
            .filter(e => e.getBoundingClientRect().right > w + 1 && e.offsetParent !== null)
            .slice(0, 5)
            .map(e => e.tagName + '.' + e.className + ' '
                      + Math.round(e.getBoundingClientRect().right));
        return {scroll: document.documentElement.scrollWidth, width: w, over};
    }""")
    assert wide["scroll"] <= wide["width"], (path, wide)


def test_result_rows_are_cards_with_the_verdict_first(phone):
    base, page = phone
    page.goto(base + BOARD_RESULT)
    row = page.locator("#verdicts tbody tr").first
    cells = row.locator("td")
    # the row is a column of cards; the verdict cell is laid out above the others
    assert row.evaluate("tr => getComputedStyle(tr).flexDirection") == "column"
    verdict_top = row.locator("td:has(.verdict)").first.bounding_box()["y"]
    others = [cells.nth(i).bounding_box()["y"] for i in range(cells.count())
              if not cells.nth(i).locator(".verdict").count()]
    assert others and verdict_top < min(others)
    # each cell says which column it is
    assert cells.first.get_attribute("data-label")


def test_result_grid_and_bars(phone):
    base, page = phone
    page.goto(base + BOARD_RESULT)
    grid = page.locator("#grid")
    # the VT2 tester SY-0003 in its detect mode: a symbol and a word, not colour alone
    row = grid.locator("tbody tr", has_text="SY-0003")
    cell = row.locator("td").first
    assert "✔" in cell.inner_text() and "suitable" in cell.inner_text()
    assert page.locator("figure.needs-has svg rect.bar").count() > 0
    # the grid scrolls inside its box; the page itself stays the phone's width
    assert page.evaluate("document.documentElement.scrollWidth") <= 390
