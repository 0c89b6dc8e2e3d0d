"""The result page on a large fleet: the verdict grid, the accessory units and the units not
offered come a page at a time, with a count for each verdict and each reason, and each count a
link to exactly those units; every unit's verdict stays reachable, nothing that forbids a use
(unsuitable, unverified, a hold) is summarised without its count and its link, and the
cautions stay. The page sizes are made small so the demo lab is "large"."""

import html
import re

import pytest
from helpers.web import MAINS_PLAN, login_as

from registry.services.checks import plan_from, run_check
from registry.store.loading import engine_fleet
from registry.web import checks


@pytest.fixture
def small_pages(monkeypatch):
    monkeypatch.setattr(checks, "GRID_ROWS", 2)
    monkeypatch.setattr(checks, "LIST_ROWS", 2)
    monkeypatch.setattr(checks, "EXCLUDED_INLINE", 1)


def _result(demo):
    """The check the page shows, run here through the service."""
    with demo.session() as s:
        doc = checks.doc_from_fields(checks.fields_from(MAINS_PLAN))
        return run_check(plan_from(doc, s), engine_fleet(s))


def _get(client, url: str, query=None) -> str:
    response = client.get(html.unescape(url), query_string=query)
    assert response.status_code == 200, url
    return response.get_data(as_text=True)


def _section(page: str, start: str, end: str) -> str:
    i = page.index(start)
    return page[i:page.index(end, i)]


def _walk(client, url: str, start: str, end: str) -> list[str]:
    """The unit tags of a paged list (section from ``start`` to ``end``), page after page
    through its "next" links."""
    tags: list[str] = []
    while url:
        page = _get(client, url)
        part = _section(page, start, end)
        tags += re.findall(r'<th scope="row"><a href="/units/([^"]+)"', part) or \
            re.findall(r'<tr class="v-\w+">\s*<td><a href="/units/([^"]+)"', part) or \
            re.findall(r'<li><a href="/units/([^"]+)"', part)
        nxt = re.search(r'<a href="([^"]+)" rel="next">', part)
        url = nxt.group(1) if nxt else ""
    return tags


def test_every_units_verdict_is_a_link_away(client, demo, small_pages):
    res = _result(demo)
    cells = {}
    for s in res.setups:
        cells.setdefault((s.instrument, s.mode), s.verdict)
    units = list(dict.fromkeys(s.instrument for s in res.setups))
    assert len(units) > 2  # more than a page: the grid is summarised
    login_as(client, "viewer")
    page = _get(client, "/checks/result", MAINS_PLAN)
    counts = _section(page, 'id="grid-counts"', "</table>")
    # every unit of the grid, page by page, in the ranked order
    first = re.search(r'<a href="([^"]+)">1</a>', _section(page, 'id="grid"', "<h3>Ranked"))
    assert first is None  # page 1 is this one
    assert _walk(client, "/checks/result?" + _qs(MAINS_PLAN), 'id="grid"', "<h3>Ranked") == units
    # each count is a link to exactly the units with that verdict (in that mode)
    links = re.findall(r'<a href="([^"]+#grid)">(\d+)</a>', counts)
    assert links
    for url, n in links:
        query = dict(re.findall(r"[?&](grid(?:_mode)?)=([^&#]+)", html.unescape(url)))
        verdict, mode = query["grid"], query.get("grid_mode")
        want = [u for u in units if any(v == verdict and (mode is None or k == mode)
                                        for (t, k), v in cells.items() if t == u)]
        assert len(want) == int(n)
        assert _walk(client, url, 'id="grid"', "<h3>Ranked") == want
    # the verdicts no setup has are counted as 0, not left out
    for verdict in ("suitable", "conditional", "unverified", "unsuitable"):
        assert f"verdict-{verdict}" in counts
    assert "Cautions" in page and "does not replace" in page


def _qs(query: dict) -> str:
    from urllib.parse import urlencode
    return urlencode(query)


def test_accessories_counted_by_verdict_each_with_its_list(client, demo, small_pages):
    res = _result(demo)
    assert len(res.accessories) > 2
    login_as(client, "viewer")
    page = _get(client, "/checks/result", MAINS_PLAN)
    counts = _section(page, 'id="accessory-counts"', "</p>")
    for verdict in ("suitable", "conditional", "unverified", "unsuitable"):
        want = [a.unit for a in res.accessories if a.verdict == verdict]
        link = re.search(r'<a href="([^"]+acc=' + verdict + r'[^"]*)">.*?(\d+)</a>', counts,
                         re.S)
        if not want:
            assert link is None
            continue
        assert int(link.group(2)) == len(want)
        listed = _walk(client, link.group(1), 'id="accessories"', "<h2")
        assert listed == want
    # the demo's CAT II leads on a CAT III job (IEC 61010-031:2015): unsuitable, each with
    # its reason not to use it on the list that the count links to
    unsuitable = re.search(r'<a href="([^"]+acc=unsuitable[^"]*)"', counts).group(1)
    part = _section(_get(client, unsuitable), 'id="accessories"', "<h2")
    assert "Do not use" in part


def test_units_not_offered_counted_by_reason_each_with_its_list(client, demo, small_pages):
    res = _result(demo)
    reasons: dict[str, list[str]] = {}
    for e in res.excluded:
        reasons.setdefault(e.reason, []).append(e.unit)
    # the demo's NB-0003 is on hold (seeddata/fleet.yaml): never offered, always counted
    assert any("NB-0003" in tags for tags in reasons.values())
    login_as(client, "viewer")
    page = _get(client, "/checks/result", MAINS_PLAN)
    part = _section(page, 'id="excluded"', "<h2>Cautions")
    for reason, tags in reasons.items():
        item = re.search(r"<li><strong>" + re.escape(html.escape(reason)) + r"</strong>:(.*?)</li>",
                         part, re.S).group(1)
        if len(tags) > 1:
            url, n = re.search(r'<a href="([^"]+)">all (\d+)</a>', item).groups()
            assert int(n) == len(tags)
            assert _walk(client, url, 'id="excluded-list"', "<h2>Cautions") == tags
        else:
            assert f"/units/{tags[0]}" in item


def test_a_filter_that_is_no_verdict_is_refused_naming_it(client, demo):
    login_as(client, "viewer")
    for arg in ("grid", "acc"):
        response = client.get("/checks/result", query_string=dict(MAINS_PLAN, **{arg: "fine"}))
        assert response.status_code == 400
        page = html.unescape(response.get_data(as_text=True))
        assert f"{arg}: 'fine' is not a verdict" in page
        assert 'value="480 V"' in page  # the plan as typed, on its form
    for arg in ("rank", "grid_page", "acc_page", "ex_page"):
        bad = client.get("/checks/result", query_string=dict(MAINS_PLAN, **{arg: "two"}))
        assert bad.status_code == 400
        assert f"{arg}: " in html.unescape(bad.get_data(as_text=True))


def test_ranked_pages_keep_the_job_card_numbers(client, demo, monkeypatch):
    monkeypatch.setattr(checks, "SHOWN", 5)
    res = _result(demo)
    assert len(res.setups) > 2 * checks.SHOWN
    login_as(client, "viewer")
    second = _get(client, "/checks/result", dict(MAINS_PLAN, rank="2"))
    table = _section(second, 'id="verdicts"', 'aria-label="pages of setups"')
    rows = re.findall(r'<tr class="v-\w+">\s*<td>(\d+)</td>\s*<td><a href="/units/([^"]+)"', table)
    # the second page goes on from the first, in the ranked order, numbered as ranked
    assert rows == [(str(i + 1), res.setups[i].instrument)
                    for i in range(checks.SHOWN, 2 * checks.SHOWN)]
    # and its job cards are those setups' cards
    card = re.search(r'href="(/checks/card\?setup=6[^"]*)"', table).group(1)
    assert res.setups[5].instrument in _get(client, card)
