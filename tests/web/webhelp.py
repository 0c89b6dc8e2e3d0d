"""Helpers for the web tests: CSRF tokens from real pages, logins per role, API tokens."""

import re

from registry.store.users import get_user, issue_token

PASSWORDS = {"steward": "larkspur-steward", "tech": "larkspur-tech", "viewer": "larkspur-viewer"}
ROLE_USER = {"steward": "steward", "technician": "tech", "viewer": "viewer"}


def csrf_from(client, path="/login") -> str:
    page = client.get(path).get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def login_as(client, role: str):
    user = ROLE_USER[role]
    token = csrf_from(client)
    response = client.post("/login", data={"username": user, "password": PASSWORDS[user],
                                           "csrf_token": token})
    assert response.status_code == 302, response.get_data(as_text=True)
    return response


def api_token(database, username: str) -> str:
    with database.transaction() as session:
        return issue_token(session, get_user(session, username))


def bearer(token: str) -> dict:
    return {"Authorization": f"Bearer {token}"}


DISCHARGE_PLAN = {"task": "discharge", "supply": "isolated", "waveform": "dc",
                  "voltage": "800 V", "capacitance": "2 mF", "site": "Battery lab",
                  "discharge_to": "50 V", "title": "DC link discharge"}
MAINS_PLAN = {"task": "verify-absence", "supply": "mains", "category": "III", "waveform": "ac",
              "voltage": "480 V", "voltage_to_earth": "277 V", "frequency": "60 Hz",
              "site": "North bench", "title": "Feeder panel P3"}
