"""The browser tests' fixtures (tests/web/test_browser.py, test_model_form_browser.py): the
real server on a copy of the demo template (one per module), headless Chromium (Debian's
package, through Playwright) and a screenshot per step into tests/artifacts/browser/."""

import shutil

import pytest

from helpers import live_server
from helpers.browser import ARGS, ARTIFACTS, CHROMIUM, require_chromium


@pytest.fixture(scope="module")
def server(tmp_path_factory, templates):
    require_chromium()
    base, proc = live_server.start(tmp_path_factory.mktemp("live"), templates)
    yield base
    live_server.stop(proc)


@pytest.fixture(scope="module")
def browser():
    require_chromium()
    from playwright.sync_api import sync_playwright
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=CHROMIUM, args=ARGS)
        yield b
        b.close()


@pytest.fixture
def shots(request):
    folder = ARTIFACTS / request.node.name
    shutil.rmtree(folder, ignore_errors=True)
    folder.mkdir(parents=True)
    count = [0]

    def shot(page, name):
        # a whole long page (the ranked setups) is slow to capture headless: its top is kept
        count[0] += 1
        tall = page.evaluate("document.documentElement.scrollHeight") > 4000
        page.screenshot(path=str(folder / f"{count[0]:02d}-{name}.png"), full_page=not tall)
    return shot
