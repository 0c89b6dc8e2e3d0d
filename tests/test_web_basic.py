"""Login, the fleet list and the unit page through Flask's test client."""

import re

from helpers.web import login_as


def test_pages_need_a_login(client, demo):
    for path in ("/", "/units/NB-0001"):
        response = client.get(path)
        assert response.status_code == 302
        assert "/login" in response.headers["Location"]


def test_login_refuses_a_wrong_password(client, demo):
    response = login_as(client, password="not the password", ok=False)
    assert response.status_code == 401
    assert "do not match" in response.get_data(as_text=True)


def test_login_without_csrf_token_is_refused(client, demo):
    response = client.post("/login", data={"username": "steward",
                                           "password": "larkspur-steward"})
    assert response.status_code == 400


def test_fleet_list_and_search(client, demo):
    login_as(client)
    page = client.get("/").get_data(as_text=True)
    assert "NB-0001" in page and "35 units" in page
    page = client.get("/?q=halden").get_data(as_text=True)
    tags = set(re.findall(r">([A-Z]{2}-\d{4})<", page))
    assert tags == {"SY-0001", "SY-0002", "SY-0003", "SY-0004", "CR-0002"}
    page = client.get("/?status=retired").get_data(as_text=True)
    assert set(re.findall(r">([A-Z]{2}-\d{4})<", page)) == {"NB-0005", "BL-0003"}


def test_unit_page_shows_ratings_and_modes(client, demo):
    login_as(client, "viewer")
    page = client.get("/units/NB-0001").get_data(as_text=True)
    assert "CAT III 900 V" in page and "CAT IV 500 V" in page
    assert "Low-Z volts" in page and "2.6 kohm" in page
    assert client.get("/units/NOPE").status_code == 404


def test_security_headers(client, demo):
    response = client.get("/login")
    assert "frame-ancestors 'none'" in response.headers["Content-Security-Policy"]
    assert response.headers["X-Content-Type-Options"] == "nosniff"


def test_logout(client, demo):
    login_as(client)
    page = client.get("/").get_data(as_text=True)
    token = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
    assert client.post("/logout", data={"csrf_token": token}).status_code == 302
    assert client.get("/").status_code == 302
