"""Logging events, holds and their release, and the audit download, through the web pages."""

import io
import re

import openpyxl
from sqlalchemy import select

from registry.store import models as m
from helpers.web import csrf_from, login_as


def test_event_with_symptom_puts_the_unit_on_hold_and_steward_releases(client, demo):
    login_as(client, "technician")
    token = csrf_from(client, "/units/NB-0001/events/new")
    response = client.post("/units/NB-0001/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "mode": "vdc", "voltage": "400 V",
        "symptoms": ["smell"], "note": "smelt hot after the test"})
    assert response.status_code == 302
    page = client.get("/units/NB-0001").get_data(as_text=True)
    assert "on-hold" in page and "Event: overvoltage" in page and "smelt hot" in page
    assert re.search(r"Hold \d+ opened", page)
    holds = client.get("/holds").get_data(as_text=True)
    assert "NB-0001" in holds
    with demo.transaction() as s:
        hold = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0001",
                                                               m.Hold.released_at.is_(None)))
    assert client.get(f"/holds/{hold.id}/release").status_code == 403  # not a steward

    client.post("/logout", data={"csrf_token": csrf_from(client, "/")})
    login_as(client, "steward")
    token = csrf_from(client, f"/holds/{hold.id}/release")
    response = client.post(f"/holds/{hold.id}/release", data={"csrf_token": token,
                                                             "result": "", "note": "kept"})
    page = response.get_data(as_text=True)
    assert response.status_code == 400 and "is not allowed; use" in page and ">kept<" in page
    response = client.post(f"/holds/{hold.id}/release", data={"csrf_token": token,
                                                             "result": "pass", "note": "ok"})
    assert response.status_code == 302
    page = client.get("/units/NB-0001").get_data(as_text=True)
    assert "in-service" in page and re.search(r"Hold \d+ released: pass", page)
    again = client.post(f"/holds/{hold.id}/release", data={"csrf_token": token,
                                                          "result": "pass"})
    assert again.status_code == 409


def test_event_form_errors_keep_the_typed_values(client, demo):
    login_as(client, "technician")
    token = csrf_from(client, "/units/NB-0001/events/new")
    response = client.post("/units/NB-0001/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "voltage": "2 kA", "energy": "3 J",
        "symptoms": ["none", "arc"], "note": "typed note"})
    page = response.get_data(as_text=True)
    assert response.status_code == 400
    assert "is a current; this field needs a voltage" in page
    assert 'value="2 kA"' in page and 'value="3 J"' in page and "typed note" in page
    response = client.post("/units/NB-0001/events/new", data={"csrf_token": token,
                                                              "voltage": "1 kV"})
    assert response.status_code == 400 and "is not allowed; use" in response.get_data(as_text=True)
    response = client.post("/units/NB-0001/events/new", data={
        "csrf_token": token, "kind": "other", "symptoms": ["none", "arc"]})
    assert "cannot be given with other symptoms" in response.get_data(as_text=True)


def test_event_within_rating_does_not_hold(client, demo):
    login_as(client, "technician")
    token = csrf_from(client, "/units/NB-0001/events/new")
    response = client.post("/units/NB-0001/events/new", data={
        "csrf_token": token, "kind": "overvoltage", "mode": "vdc", "voltage": "400 V",
        "symptoms": ["none"]})
    assert response.status_code == 302
    page = client.get(response.headers["Location"]).get_data(as_text=True)
    assert "within its rating" in page and "A hold is open" not in page
    events = client.get("/events?unit=NB-0001").get_data(as_text=True)
    assert "overvoltage" in events


def test_audit_page_and_workbook(client, demo):
    login_as(client, "technician")
    token = csrf_from(client, "/units/NB-0003/events/new")
    client.post("/units/NB-0003/events/new", data={"csrf_token": token, "kind": "mechanical",
                                                   "note": "dropped"})
    page = client.get("/audit/").get_data(as_text=True)
    assert "The event chain is intact: 1 event" in page
    response = client.get("/audit/workbook.xlsx?site=North+bench")
    assert response.status_code == 200
    assert response.mimetype.endswith("spreadsheetml.sheet")
    book = openpyxl.load_workbook(io.BytesIO(response.data))
    text = " ".join(str(c.value) for ws in book.worksheets for row in ws.iter_rows()
                    for c in row if c.value is not None)
    assert "NB-0003" in text
    bad = client.get("/audit/workbook.xlsx?since=last+week&site=Nowhere")
    page = bad.get_data(as_text=True)
    assert bad.status_code == 400 and "is not a date" in page and "is not a site" in page


def test_audit_page_shows_a_hold_released_by_sql(client, demo):
    # the hold and change chains are shown beside the event chain; a release made directly in
    # the database has no signed link (HMAC, RFC 2104) and is named on the page
    login_as(client, "viewer")
    page = client.get("/audit/").get_data(as_text=True)
    assert "The hold chain is intact" in page and "The change chain is intact" in page
    from sqlalchemy import text
    with demo.engine.begin() as conn:
        conn.execute(text("UPDATE hold SET released_at = '2026-11-02 09:00:00', "
                          "result = 'pass' WHERE released_at IS NULL"))
    page = client.get("/audit/").get_data(as_text=True)
    assert "broken at hold" in page and "released outside the store" in page
