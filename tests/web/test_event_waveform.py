"""An event's waveform through the web form and the API: stored, shown, listed, validated, and
in the OpenAPI document. The kx-3's Amps input (demo fleet, seeddata/fleet.yaml) has no max
input and a fuse rated 250 V ac, 125 V dc; an event on it is held against the rating for its
waveform, or the lower one when the waveform is not given (a fuse's ac and dc ratings are
separate ratings, IEC 60269-1 rated voltage; from memory)."""

from sqlalchemy import select

from registry.store import models as m
from helpers.web import api_token, bearer, csrf_from, login_as


def _events(demo):
    with demo.transaction() as s:
        return [(e.waveform, e.within_rating)
                for e in s.scalars(select(m.Event).order_by(m.Event.id))]


def test_form_offers_and_records_the_waveform(client, demo):
    login_as(client, "technician")
    page = client.get("/units/NB-0004/events/new").get_data(as_text=True)
    assert 'name="waveform"' in page and '<option value="dc"' in page
    token = csrf_from(client, "/units/NB-0004/events/new")
    r = client.post("/units/NB-0004/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "mode": "amp", "voltage": "200 V",
        "waveform": "ac", "symptoms": ["none"]})
    assert r.status_code == 302
    r = client.post("/units/NB-0004/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "mode": "amp", "voltage": "200 V",
        "symptoms": ["none"]})
    assert r.status_code == 302
    # 200 V ac <= 250 V ac; without a waveform the lower rating, 125 V, is below 200 V
    assert _events(demo) == [("ac", True), (None, False)]
    listing = client.get("/events?unit=NB-0004").get_data(as_text=True)
    assert "200 V ac" in listing
    r = client.post("/units/NB-0004/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "voltage": "200 V", "waveform": "square"})
    page = r.get_data(as_text=True)
    assert r.status_code == 400 and len(_events(demo)) == 2
    start = page.index('name="waveform"')
    field = page[start:page.index("</label>", start)]
    assert "&#39;square&#39; is not allowed; use &#39;ac&#39; or &#39;dc&#39;" in field


def test_api_takes_and_returns_the_waveform(client, demo):
    h = bearer(api_token(demo, "tech"))
    r = client.post("/api/v1/events", headers=h, json={
        "unit": "NB-0004", "kind": "overvoltage", "mode": "amp", "voltage": "200 V",
        "waveform": "dc", "symptoms": ["none"]})
    body = r.get_json()
    assert r.status_code == 201 and body["waveform"] == "dc"
    assert body["within_rating"] is False  # 125 V dc fuse rating below 200 V
    listed = client.get("/api/v1/events?unit=NB-0004", headers=h).get_json()["events"]
    assert [e["waveform"] for e in listed] == ["dc"]
    r = client.post("/api/v1/events", headers=h, json={
        "unit": "NB-0004", "kind": "overvoltage", "voltage": "200 V", "waveform": "square"})
    assert r.status_code == 400
    assert [p["field"] for p in r.get_json()["error"]["problems"]] == ["waveform"]
    assert len(_events(demo)) == 1
    doc = client.get("/api/v1/openapi.json", headers=h).get_json()
    assert "waveform" in doc["components"]["schemas"]["EventRequest"]["properties"]
