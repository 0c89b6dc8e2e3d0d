"""The dashboard at the size of a large lab: it lists the soonest units due and links to the
fleet list's due filter for the rest, and its counts are those of every unit."""

import re
from datetime import date, timedelta

from helpers.web import login_as

from registry.formats.fleet import FORMAT
from registry.store.fleet import import_fleet
from registry.web.dashboard import DUE_DAYS, DUE_SHOWN

EXTRA = DUE_SHOWN + 12


def test_due_list_is_cut_with_a_link_to_the_rest(client, demo):
    soon = date.today() + timedelta(days=5)
    import_fleet(demo, {"format": FORMAT, "units": [
        {"tag": f"DS-{i:04d}", "model": "kx-7", "status": "in-service",
         "verification_due": soon.isoformat()} for i in range(EXTRA)]})
    login_as(client, "viewer")
    page = client.get("/dashboard").get_data(as_text=True)
    due = page[page.index(f"Verification due in the next {DUE_DAYS} days"):]
    due = due[:due.index("</section>")]
    listed = re.findall(r'href="/units/([^"]+)"', due)
    assert len(listed) == DUE_SHOWN
    more = re.search(r'id="due-more">The soonest (\d+) of (\d+): <a href="([^"]+)"', due)
    total = int(more.group(2))
    assert int(more.group(1)) == DUE_SHOWN and total >= EXTRA
    # the link is the fleet list's own due filter, which counts the same units
    fleet = client.get(more.group(3).replace("&amp;", "&")).get_data(as_text=True)
    assert f"{total} unit" in fleet


def _pages_nav(page: str) -> str:
    start = page.index('<nav class="pages"')
    return page[start:page.index("</nav>", start)]


def test_fleet_pages_link_the_ends_and_the_neighbours(app, client, demo):
    app.config["FLEET_PAGE_SIZE"] = 1  # one unit a page: as many pages as units
    login_as(client, "viewer")
    first = client.get("/?sort=tag").get_data(as_text=True)
    total = int(re.findall(r">(\d+)</a>", _pages_nav(first))[-1])
    assert total > 20
    nav = _pages_nav(client.get("/?sort=tag&page=10").get_data(as_text=True))
    linked = [int(n) for n in re.findall(r'page=(\d+)">\d+</a>', nav)]
    assert linked == [1, 7, 8, 9, 11, 12, 13, total]
    assert "<strong>10</strong>" in nav and nav.count('class="gap"') == 2
    assert 'page=9" rel="prev"' in nav and 'page=11" rel="next"' in nav
    # every page is reachable: following "next" from the first page visits each unit once
    seen, url = [], "/?sort=tag"
    while url:
        page = client.get(url).get_data(as_text=True)
        seen += re.findall(r">([A-Z]{2}-\d{4})</a>", page)
        nxt = (re.search(r'href="([^"]+)" rel="next"', _pages_nav(page))
               if '<nav class="pages"' in page else None)
        url = nxt.group(1).replace("&amp;", "&") if nxt else None
    assert len(seen) == total == len(set(seen))
