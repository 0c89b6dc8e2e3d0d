"""A front end whose solve fails answers 200 on the check page, the drawing and the API, with
the setup unverified (never a 500). The fleet is the reproduction in
``tests/network/fleets/lowz-ahead.yaml``: the low-Z switch ahead of the limiter, a second PTC
behind it, on a 700 V dc bus with 2 mF."""

import re
from pathlib import Path

import pytest
import yaml

from registry.demo import ensure_demo_logins
from registry.engine.network import cache_clear, scenarios
from registry.formats.common import read_document
from registry.store.fleet import import_fleet
from helpers.web import api_token, bearer, login_as

FLEETS = Path(__file__).parent.parent / "network" / "fleets"
PLAN_DOC = yaml.safe_load((FLEETS / "dc-700.yaml").read_text())
FIELDS = {"task": "measure-voltage", "supply": "isolated", "waveform": "dc",
          "voltage": "700 V", "capacitance": "2 mF", "site": "Test bay", "duration": "60 s",
          "title": "Test bay dc bus", "on": "2026-12-02"}


@pytest.fixture
def fleet(database):
    import_fleet(database, read_document(FLEETS / "lowz-ahead.yaml"), actor="test")
    ensure_demo_logins(database)
    cache_clear()
    yield database
    cache_clear()


@pytest.fixture
def failing(monkeypatch):
    """The failure the reproduction showed, injected where it arose (scipy's ValueError out of
    the tripped-state search), so that the catch is tested apart from the search's fix."""
    def fails(*a, **k):
        raise ValueError("f(a) and f(b) must have different signs")
    monkeypatch.setattr(scenarios, "tripped_resistance", fails)


def _rows(page):
    table = page[page.index('id="verdicts"'):page.index("<h2>Cautions")]
    return re.findall(r'<tr class="v-(\w+)">\s*<td>(\d+)</td>\s*<td><a href="/units/'
                      r'([A-Z]{2}-\d{4})"', table)


def test_check_page_and_api_answer_for_the_reproduction(client, fleet):
    login_as(client, "viewer")
    r = client.get("/checks/result", query_string=FIELDS)
    assert r.status_code == 200
    assert {tag for _v, _i, tag in _rows(r.get_data(as_text=True))} == {"TB-0001", "TB-0003"}
    token = api_token(fleet, "viewer")
    r = client.post("/api/v1/checks?on=2026-12-02&findings=1", headers=bearer(token),
                    json=PLAN_DOC)
    assert r.status_code == 200
    setups = {(s["instrument"], s["mode"]): s for s in r.get_json()["setups"]}
    # with the tripped-state search fixed, the low-Z mode solves: no solve failure is reported
    assert not [f for f in setups[("TB-0001", "lowz")]["findings"]
                if "could not be solved" in f["message"]]


def test_a_failed_solve_is_unverified_on_the_page_drawing_and_api(client, fleet, failing):
    login_as(client, "viewer")
    r = client.get("/checks/result", query_string=dict(FIELDS, all="1"))
    assert r.status_code == 200
    rows = _rows(r.get_data(as_text=True))
    verdicts = {tag: set() for _v, _i, tag in rows}
    for v, _i, tag in rows:
        verdicts[tag].add(v)
    assert verdicts["TB-0001"] == {"unverified"}
    assert verdicts["TB-0003"] == {"suitable"}  # still judged: no PTC to trip
    index = next(i for v, i, tag in rows if tag == "TB-0001")
    svg = client.get("/checks/front-end.svg", query_string=dict(FIELDS, setup=index))
    assert svg.status_code == 200 and "<svg" in svg.get_data(as_text=True)

    token = api_token(fleet, "viewer")
    r = client.post("/api/v1/checks?on=2026-12-02&findings=1", headers=bearer(token),
                    json=PLAN_DOC)
    assert r.status_code == 200
    setups = {(s["instrument"], s["mode"]): s for s in r.get_json()["setups"]}
    lowz = setups[("TB-0001", "lowz")]
    assert lowz["verdict"] == "unverified"
    failed = [f for f in lowz["findings"] if "could not be solved" in f["message"]]
    assert failed and {f["status"] for f in failed} == {"unknown"}
    assert any("fm-20" in f["message"] and "lowz" in f["message"] and "steady" in f["message"]
               and "different signs" in f["message"] for f in failed)
    assert setups[("TB-0003", "vdc")]["verdict"] == "suitable"
