"""The web tests' helpers: CSRF tokens from real pages, the one login helper, API tokens and
the plans the pages are checked with."""

from __future__ import annotations

import re

from registry.store.users import get_user, issue_token

PASSWORDS = {"steward": "larkspur-steward", "tech": "larkspur-tech", "viewer": "larkspur-viewer"}
ROLE_USER = {"steward": "steward", "technician": "tech", "viewer": "viewer"}


def csrf_from(client, path="/login") -> str:
    page = client.get(path).get_data(as_text=True)
    return re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)


def login_as(client, who: str = "steward", password: str | None = None, *, ok: bool = True):
    """Log in through the real form, CSRF token included, and return the answer.

    ``who`` is a role of the demo logins (``steward``, ``technician``, ``viewer``) or a
    username (``tech``, or one the test added, with its ``password``); a demo login's password
    is known. With ``ok`` (the default) the login must succeed (a redirect); pass ``ok=False``
    to get a refused login's answer back."""
    user = ROLE_USER.get(who, who)
    if password is None:
        password = PASSWORDS[user]
    response = client.post("/login", data={"username": user, "password": password,
                                           "csrf_token": csrf_from(client)})
    if ok:
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
