"""Page details a user notices: a placeholder escaped once (an attribute string escaped as
text showed its quotes, `"480` for `480 V`), overdue units marked, a favicon, sites on the
result page, and a unit history that names people one way and shows the hold an event opened."""

import re
from html.parser import HTMLParser

from helpers.web import login_as

from registry.web.checks import EXAMPLES


class _Inputs(HTMLParser):
    def __init__(self):
        super().__init__()
        self.inputs: dict[str, dict[str, str | None]] = {}

    def handle_starttag(self, tag, attrs):
        if tag == "input":
            a = dict(attrs)
            if a.get("name"):
                self.inputs[a["name"]] = a


def inputs_of(page: str) -> dict[str, dict]:
    parser = _Inputs()
    parser.feed(page)
    return parser.inputs


def test_check_form_placeholders_are_the_example_text(client, demo):
    login_as(client, "technician")
    inputs = inputs_of(client.get("/checks/").get_data(as_text=True))
    for name, example in EXAMPLES.items():
        assert inputs[name]["placeholder"] == example, name
    assert inputs["title"]["placeholder"] == "Feeder panel P3, verify absence"


def test_fleet_and_event_form_placeholders_and_size(client, demo):
    login_as(client, "technician")
    fleet = inputs_of(client.get("/").get_data(as_text=True))
    assert fleet["voltage"]["placeholder"] == "600 V" and fleet["voltage"]["size"] == "8"
    event = inputs_of(client.get("/units/NB-0002/events/new").get_data(as_text=True))
    assert event["voltage"]["placeholder"] == "1.2 kV"
    assert event["energy"]["placeholder"] == "15 J"


def test_fleet_list_marks_overdue_units_by_the_engine_rule(client, demo):
    # NB-0007's verification fell due 2026-10-01 (demo fleet); overdue means due before the
    # day (common practice, no source), the rule the engine excludes units by.
    from datetime import date
    from registry.engine.rules import unit_overdue
    login_as(client, "viewer")
    page = client.get("/?q=NB-000").get_data(as_text=True)
    rows = {m.group(1): m.group(0) for m in re.finditer(
        r'<td class="tag"><a [^>]*>(NB-\d{4})</a></td>.*?</tr>', page, re.S)}
    assert rows, page
    overdue_today = unit_overdue("in-service", date(2026, 10, 1), date.today())
    assert ("overdue</span>" in rows["NB-0007"]) == overdue_today
    assert "overdue</span>" not in rows["NB-0002"]


def test_pages_carry_a_favicon_that_is_served(client, demo):
    login_as(client, "viewer")
    page = client.get("/").get_data(as_text=True)
    href = re.search(r'<link rel="icon" type="image/svg\+xml" href="([^"]+)"', page).group(1)
    icon = client.get(href)
    assert icon.status_code == 200 and b"<svg" in icon.data


def test_result_page_shows_sites_and_flags_a_pairing_across_sites(client, demo):
    login_as(client, "viewer")
    page = client.get("/checks/result", query_string={
        "task": "verify-absence", "supply": "mains", "category": "III", "waveform": "ac",
        "voltage": "480 V", "voltage_to_earth": "277 V", "source_impedance": "0.02 ohm",
        "site": "Substation yard", "duration": "30 s", "all": "1"}).get_data(as_text=True)
    assert "at Corrie Ridge field station" in page
    assert re.search(r'class="cross-site">.*from another site: <span class="tag">PR-0010</span>',
                     page)


def test_unit_history_names_people_one_way_and_shows_the_hold_an_event_opened(client, demo):
    from registry.services.events import log_event
    from registry.store.fleet import import_fleet  # noqa: F401  (the demo loaded by import)
    # a stress within rating but with a symptom opens a hold (the hold rule)
    log_event(demo, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=400.0,
              symptoms=["smell"], by="tech")
    login_as(client, "viewer")
    page = client.get("/units/NB-0002").get_data(as_text=True)
    assert re.search(r"This event opened hold \d+ \(still open\)", page)
    names = set(re.findall(r"</strong> · ([^<\n]+)", page))
    # every name in the history is "Display Name (username)" or a non-login actor's word
    assert names and all(re.fullmatch(r".+ \([a-z0-9._-]+\)|import|demo", n.strip())
                         for n in names), names
