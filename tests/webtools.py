"""Helpers for tests that use the web app (imported by name: tests/ is on sys.path)."""

import re


def login(client, username="steward", password="larkspur-steward"):
    """Log in through the real form, CSRF token included."""
    import re
    page = client.get("/login").get_data(as_text=True)
    token = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
    return client.post("/login", data={"username": username, "password": password,
                                       "csrf_token": token})
