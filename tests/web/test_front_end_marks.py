"""The result page draws a setup's front end with its failing and nearest-to-limit elements
marked by a symbol and a text label, here for the KX-3 whose ohms contact sits ahead
of its limiter (the finding itself is checked against the clearance table in tests/network)."""

import re

from helpers.web import login_as

PLAN = {"task": "verify-absence", "supply": "mains", "category": "III", "waveform": "ac",
        "voltage": "480 V", "voltage_to_earth": "277 V", "source_impedance": "0.02 ohm",
        "site": "Substation yard", "duration": "30 s", "on": "2026-12-02"}


def test_result_page_links_a_marked_drawing(client, demo):
    login_as(client)
    page = client.get("/checks/result", query_string=dict(PLAN, all="1")).get_data(as_text=True)
    rows = re.findall(r'/checks/front-end\.svg\?[^"]+', page)
    assert rows
    kx3 = [u for u in rows if "setup=" in u]
    svgs = [client.get(u.replace("&amp;", "&")) for u in kx3]
    assert all(r.status_code == 200 and r.mimetype == "image/svg+xml" for r in svgs)
    texts = [r.get_data(as_text=True) for r in svgs]
    failing = [t for t in texts if "✖" in t and "S1" in t]
    assert failing, "the KX-3's contact S1 should be drawn as failing under the impulse"
    assert any("fail:" in t for t in failing)  # a word beside the symbol, not colour alone
    assert any("▲" in t and "✖" not in t for t in texts)  # a sound meter: closest limits only


def test_drawing_needs_a_valid_plan(client, demo):
    login_as(client)
    assert client.get("/checks/front-end.svg?setup=1&task=nonsense").status_code == 400
    assert client.get("/checks/front-end.svg", query_string=dict(PLAN, setup="999")) \
        .status_code == 404
