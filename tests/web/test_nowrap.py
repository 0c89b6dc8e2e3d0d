"""Tags (NB-0001) and dates (2026-12-02) never break at their hyphens: on every page that lists
them, each one sits in an element the style sheet keeps on one line (a link to its unit, a
<time>, or an element of class tag or date). The rule itself is CSS white-space: nowrap (CSS
Text Module Level 3, 'white-space')."""

from __future__ import annotations

import re
from datetime import datetime
from html.parser import HTMLParser
from importlib import resources

from registry.services.events import log_event
from helpers.web import MAINS_PLAN, login_as

ID = re.compile(r"\b(?:[A-Z]{2}-\d{4}|\d{4}-\d{2}-\d{2})\b")
VOID = {"br", "img", "input", "meta", "link", "hr", "wbr", "source", "col", "area", "base"}


class _Walker(HTMLParser):
    """Each text that holds a tag or a date, with whether an enclosing element keeps it on
    one line."""

    def __init__(self):
        super().__init__()
        self.stack: list[tuple[str, dict]] = []
        self.found: list[tuple[str, bool]] = []

    def handle_starttag(self, tag, attrs):
        if tag not in VOID:
            self.stack.append((tag, dict(attrs)))

    def handle_endtag(self, tag):
        for i in range(len(self.stack) - 1, -1, -1):
            if self.stack[i][0] == tag:
                del self.stack[i:]
                break

    def handle_data(self, data):
        names = [t for t, _ in self.stack]
        if any(n in ("title", "script", "style", "option", "textarea", "svg") for n in names):
            return
        for m in ID.finditer(data):
            self.found.append((m.group(0), any(_keeps_one_line(t, a) for t, a in self.stack)))


def _keeps_one_line(tag: str, attrs: dict) -> bool:
    classes = (attrs.get("class") or "").split()
    return (tag == "time" or "tag" in classes or "date" in classes
            or (tag == "a" and "/units/" in (attrs.get("href") or "")))


def _breakable(page: str) -> list[str]:
    walker = _Walker()
    walker.feed(page)
    assert walker.found, "the page shows no tag or date to check"
    return [text for text, kept in walker.found if not kept]


def test_the_style_sheet_keeps_those_elements_on_one_line():
    css = (resources.files("registry") / "static" / "style.css").read_text("utf-8")
    rule = next(line for line in css.splitlines() if "white-space: nowrap" in line
                and 'a[href*="/units/"]' in line)
    for selector in (".tag", ".date", "time", 'a[href*="/units/"]'):
        assert selector in rule


def test_every_tag_and_date_on_the_pages_keeps_to_one_line(client, demo):
    log_event(demo, unit="NB-0002", kind="overvoltage", mode="ohm", voltage=480.0,
              symptoms=["arc"], by="tech", at=datetime(2026, 11, 20, 9, 0))
    login_as(client, "viewer")
    plan = dict(MAINS_PLAN, on="2026-12-02")
    pages = ["/", "/dashboard", "/units/NB-0002", "/units/NB-0002/label", "/events", "/holds",
             "/models/kx-7"]
    broken = {}
    for path, query in [(p, None) for p in pages] + [("/checks/result", plan),
                                                      ("/checks/card", plan)]:
        page = client.get(path, query_string=query)
        assert page.status_code == 200, path
        broken[path] = _breakable(page.get_data(as_text=True))
    assert broken == {path: [] for path in broken}
