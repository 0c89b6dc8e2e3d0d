"""The role matrix: every route of the app needs a login (or a token, for the API), and every
route marked with a role refuses the roles below it. The test walks the app's URL map, so a
route added later without a role is caught here."""

import pytest

from helpers.web import ROLE_USER, api_token, bearer, login_as

PUBLIC = {"auth.login", "static"}
ROLES = ("viewer", "technician", "steward")
RANK = {r: i for i, r in enumerate(ROLES)}

# Example values for the URL parameters of each rule.
VALUES = {"tag": "NB-0001", "key": "kx-7", "hold_id": "1", "user_id": "1", "id": "1",
          "filename": "style.css"}


def rules(app):
    for rule in app.url_map.iter_rules():
        if rule.endpoint in PUBLIC:
            continue
        for method in sorted(rule.methods - {"HEAD", "OPTIONS"}):
            yield rule, method


def url_of(rule) -> str:
    path = rule.rule
    for arg in rule.arguments:
        path = path.replace(f"<{arg}>", VALUES[arg]).replace(f"<int:{arg}>", VALUES[arg])
    return path


def test_every_route_declares_a_role(app):
    missing = [r.endpoint for r, _m in rules(app)
               if getattr(app.view_functions[r.endpoint], "required_role", None) not in ROLES]
    assert missing == []


def test_no_route_answers_without_a_login(app, client, demo):
    app.config["WTF_CSRF_ENABLED"] = False  # so that a POST reaches the login check
    for rule, method in rules(app):
        response = client.open(url_of(rule), method=method)
        if rule.rule.startswith("/api/"):
            assert response.status_code == 401, (rule.rule, method)
            assert response.get_json()["error"]["status"] == 401
        else:
            assert response.status_code == 302, (rule.rule, method)
            assert "/login" in response.headers["Location"]


def test_api_ignores_the_session_cookie(app, client, demo):
    login_as(client, "steward")
    for rule, method in rules(app):
        if rule.rule.startswith("/api/"):
            assert client.open(url_of(rule), method=method).status_code == 401, rule.rule


@pytest.mark.parametrize("role", ROLES[:-1])
def test_lower_roles_are_refused(app, client, demo, role):
    app.config["WTF_CSRF_ENABLED"] = False
    login_as(client, role)
    token = api_token(demo, ROLE_USER[role])
    checked = 0
    for rule, method in rules(app):
        need = app.view_functions[rule.endpoint].required_role
        if RANK[need] <= RANK[role]:
            continue
        headers = bearer(token) if rule.rule.startswith("/api/") else {}
        response = client.open(url_of(rule), method=method, headers=headers, json={}
                               if rule.rule.startswith("/api/") and method == "POST" else None)
        assert response.status_code == 403, (rule.rule, method, role)
        checked += 1
    assert checked > 0  # the matrix has restricted routes above every lower role


def test_roles_of_the_main_actions(app):
    need = {e: getattr(f, "required_role", None) for e, f in app.view_functions.items()}
    assert need["events.new"] == "technician"
    assert need["api.log"] == "technician"
    assert need["events.release"] == "steward"
    assert need["api.release"] == "steward"
    assert need["library.edit"] == "steward"
    assert need["users.index"] == "steward"
    assert need["checks.result"] == "viewer"
