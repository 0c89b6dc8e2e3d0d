"""Stewards edit a unit's record on its page, validated and recorded as an import is."""

import re

from sqlalchemy import select

from registry.store import models as m
from helpers.web import login_as


def token(client, path):
    page = client.get(path).get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def form(client, tag, **changes):
    data = {"serial": "22-0411", "site": "North bench", "custodian": "Ines Marrow",
            "status": "in-service", "verified_on": "2026-03-01",
            "verification_due": "2027-03-01", "notes": ""}
    data.update(changes)
    data["csrf_token"] = token(client, f"/units/{tag}/edit")
    return client.post(f"/units/{tag}/edit", data=data)


def test_steward_edits_and_the_change_is_recorded(client, demo):
    login_as(client)
    r = form(client, "NB-0001", custodian="Maeve Lintott", site="Battery lab")
    assert r.status_code == 302
    with demo.transaction() as s:
        unit = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0001"))
        assert unit.custodian == "Maeve Lintott" and unit.site.name == "Battery lab"
        changes = {c.field: (c.old, c.new, c.actor) for c in s.scalars(
            select(m.Change).where(m.Change.entity_key == "NB-0001"))}
    assert changes["custodian"] == ("Ines Marrow", "Maeve Lintott", "steward")
    assert changes["site"] == ("North bench", "Battery lab", "steward")


def test_bad_date_is_shown_at_the_field_and_nothing_is_written(client, demo):
    login_as(client)
    r = form(client, "NB-0001", verification_due="2020-01-01", custodian="Someone Else")
    page = r.get_data(as_text=True)
    assert r.status_code == 400 and "before verified_on" in page
    assert 'value="Someone Else"' in page  # what was typed stays
    with demo.transaction() as s:
        unit = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0001"))
        assert unit.custodian == "Ines Marrow"


def test_status_of_a_held_unit_changes_only_by_release(client, demo):
    login_as(client)
    r = form(client, "NB-0003", status="in-service", serial="22-0413")
    assert r.status_code == 400 and "open hold" in r.get_data(as_text=True)
    r = form(client, "NB-0001", status="on-hold")
    assert r.status_code == 400 and "opened by logging an event" in r.get_data(as_text=True)


def test_only_stewards_edit(client, demo):
    login_as(client, "technician")
    assert client.get("/units/NB-0001/edit").status_code == 403
