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
