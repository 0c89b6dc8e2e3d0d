"""Security: CSRF refusals on every form, hostile text escaped wherever it is shown, the
session cookie, a new session on login, login throttling, and the response headers."""

import re
from datetime import datetime

import pytest
from sqlalchemy import select

from registry.store import models as m
from registry.web.throttle import LoginThrottle
from helpers.web import DISCHARGE_PLAN, csrf_from, login_as

HOSTILE = '<script>alert("x")</script>"\'><img src=x onerror=alert(1)>'


def post_endpoints(app):
    for rule in app.url_map.iter_rules():
        if "POST" in rule.methods and not rule.rule.startswith("/api/"):
            yield rule


def test_every_form_post_refuses_a_missing_csrf_token(app, client, demo):
    login_as(client, "steward")
    values = {"tag": "NB-0001", "key": "kx-7", "hold_id": "1", "user_id": "1"}
    seen = 0
    for rule in post_endpoints(app):
        path = rule.rule
        for arg in rule.arguments:
            path = path.replace(f"<{arg}>", values[arg]).replace(f"<int:{arg}>", values[arg])
        response = client.post(path, data={"username": "steward"})
        assert response.status_code == 400, path
        assert "did not come from this site" in response.get_data(as_text=True)
        seen += 1
    assert seen >= 8


def test_a_token_from_another_session_is_refused(app, demo):
    one, two = app.test_client(), app.test_client()
    login_as(one, "technician")
    login_as(two, "technician")
    token = csrf_from(one, "/units/NB-0001/events/new")
    response = two.post("/units/NB-0001/events/new", data={"csrf_token": token,
                                                           "kind": "other"})
    assert response.status_code == 400


def _hostile_fleet(demo):
    with demo.transaction() as s:
        unit = s.scalar(select(m.Unit).where(m.Unit.tag == "NB-0001"))
        unit.serial = HOSTILE[:60]
        unit.custodian = HOSTILE
        unit.notes = HOSTILE
        unit.site.name = "Bench " + HOSTILE[:100]
        model = unit.model
        model.maker = HOSTILE
        model.name = HOSTILE
        model.modes[0].label = HOSTILE
        model.connectors = [HOSTILE]
        user = s.scalar(select(m.User).where(m.User.username == "tech"))
        user.display_name = HOSTILE
        s.add(m.Change(at=datetime(2026, 1, 1),
                       actor=HOSTILE, entity="unit", entity_key="NB-0001",
                       field=HOSTILE, old=HOSTILE, new=HOSTILE))


def test_hostile_text_is_escaped_in_every_stored_field(client, demo):
    _hostile_fleet(demo)
    login_as(client, "technician")
    token = csrf_from(client, "/units/NB-0001/events/new")
    assert client.post("/units/NB-0001/events/new", data={
        "csrf_token": token, "kind": "other", "note": HOSTILE}).status_code == 302
    client.post("/logout", data={"csrf_token": csrf_from(client, "/")})
    login_as(client, "steward")
    pages = ["/", "/?q=NB-0001", "/dashboard", "/units/NB-0001", "/units/NB-0001/label",
             "/models/", "/models/kx-7", "/models/kx-7/edit", "/events", "/holds", "/users/",
             "/audit/"]
    with demo.transaction() as s:
        hold = s.scalar(select(m.Hold).join(m.Hold.unit).where(m.Unit.tag == "NB-0001"))
    pages.append(f"/holds/{hold.id}/release")
    pages.append("/checks/result?" + "&".join(f"{k}={v}" for k, v in dict(
        DISCHARGE_PLAN, site="", altitude="40 m", title=HOSTILE).items()))
    for path in pages:
        response = client.get(path)
        page = response.get_data(as_text=True)
        assert response.status_code in (200,), path
        assert "<script>alert" not in page, path
        assert "<img src=x" not in page, path
    unit_page = client.get("/units/NB-0001").get_data(as_text=True)
    assert "&lt;script&gt;alert" in unit_page  # shown, as text
    listed = client.get("/?q=NB-0001").get_data(as_text=True)  # the maker, name and site
    assert listed.count("&lt;script&gt;alert") >= 3
    # the job card and the drawing and the plot carry the title and labels too
    card = client.get("/checks/card?" + "&".join(f"{k}={v}" for k, v in dict(
        DISCHARGE_PLAN, title=HOSTILE).items())).get_data(as_text=True)
    assert "<script>alert" not in card


def test_session_cookie_flags_and_new_session_on_login(app, client, demo):
    client.get("/login")
    before = client.get_cookie("session")
    response = login_as(client, "viewer")
    cookie = response.headers.get("Set-Cookie")
    assert "HttpOnly" in cookie and "SameSite=Lax" in cookie
    after = client.get_cookie("session")
    assert before is None or before.value != after.value
    # a value planted in the session before login does not survive it
    other = app.test_client()
    with other.session_transaction() as sess:
        sess["planted"] = "by someone else"
    login_as(other, "viewer")
    with other.session_transaction() as sess:
        assert "planted" not in sess


def test_login_throttle_locks_after_repeated_failures(client, demo):
    token = csrf_from(client)
    for _ in range(5):
        response = client.post("/login", data={"csrf_token": token, "username": "viewer",
                                               "password": "wrong-password"})
        assert response.status_code == 401
    # now even the right password is refused, before it is looked at
    response = client.post("/login", data={"csrf_token": token, "username": "viewer",
                                           "password": "larkspur-viewer"})
    assert response.status_code == 429
    assert "Too many failed attempts" in response.get_data(as_text=True)
    assert int(response.headers["Retry-After"]) > 0
    # another username from the same address is not locked
    response = client.post("/login", data={"csrf_token": token, "username": "tech",
                                           "password": "larkspur-tech"})
    assert response.status_code == 302


def test_throttle_window_and_lockout_expire():
    now = [1000.0]
    t = LoginThrottle(max_failures=3, window=60, lockout=120, clock=lambda: now[0])
    t.failed("a", "ip")
    now[0] += 61  # the first failure leaves the window
    t.failed("a", "ip")
    assert not t.failed("a", "ip")  # two in the window: not locked
    assert t.failed("a", "ip")  # the third in the window locks
    assert t.retry_after("A ", "ip") == pytest.approx(120)  # usernames compare trimmed, any case
    assert t.retry_after("a", "other-ip") == 0
    now[0] += 121
    assert t.retry_after("a", "ip") == 0
    t.failed("a", "ip")
    t.succeeded("a", "ip")
    t.failed("a", "ip")
    assert t.retry_after("a", "ip") == 0


def test_security_headers_everywhere(client, demo):
    login_as(client, "viewer")
    for path in ("/login", "/", "/units/NB-0001", "/api/v1/units", "/checks/"):
        h = client.get(path).headers
        csp = h["Content-Security-Policy"]
        assert "script-src 'self'" in csp and "unsafe-inline" not in csp
        assert "frame-ancestors 'none'" in csp
        assert h["X-Content-Type-Options"] == "nosniff" and h["X-Frame-Options"] == "DENY"


def test_no_inline_script_or_remote_resources_in_templates():
    from pathlib import Path
    for path in Path("templates").rglob("*.html"):
        text = path.read_text()
        assert not re.search(r"<script(?![^>]*\bsrc=)", text), path
        assert not re.search(r"\son[a-z]+=", text), path  # no inline event handlers
        assert "style=" not in text, path  # the policy forbids inline styles
        assert not re.search(r"(src|href)=\"(https?:)?//", text), path


def test_errors_are_pages_not_500(client, demo):
    login_as(client, "viewer")
    assert client.get("/units/NB-0001/nothing").status_code == 404
    assert client.get("/checks/result?voltage=%ff%fe").status_code == 400
    assert client.get("/checks/card?task=x").status_code == 400
    assert client.get("/?page=-4").status_code == 200
    assert client.get("/?sort=evil&dir=sideways").status_code == 200
