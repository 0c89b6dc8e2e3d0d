"""Headless Chromium, Debian's package, driven by Playwright for Python (never a downloaded
browser): where it is, how it is started, and where the screenshots go (ignored by git)."""

import os
from pathlib import Path

import pytest

CHROMIUM = "/usr/bin/chromium"
ARTIFACTS = Path(__file__).resolve().parents[1] / "artifacts" / "browser"
ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking",
        "--disable-component-update", "--disable-sync", "--no-first-run"]


def require_chromium():
    if Path(CHROMIUM).exists():
        return
    if os.environ.get("WITHSTAND_REQUIRE_TOOLS") == "1":
        pytest.fail(f"{CHROMIUM} is required (WITHSTAND_REQUIRE_TOOLS=1) but missing")
    pytest.skip(f"no {CHROMIUM}: install the Debian package 'chromium' (.ci/run does)")


def log_in(browser, server, user, password):
    """A new browser context logged in through the real form: (context, page)."""
    context = browser.new_context(accept_downloads=True, viewport={"width": 1100, "height": 900})
    page = context.new_page()
    page.goto(server + "/login")
    page.fill("input[name=username]", user)
    page.fill("input[name=password]", password)
    page.click("button[type=submit]")
    return context, page
