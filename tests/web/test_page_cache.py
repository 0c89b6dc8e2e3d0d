"""Pages kept per fleet version, role and query (registry/web/page_cache.py): a page viewed
again on an unchanged fleet is served as kept, any write through the store shows at once, a
role never sees a page kept for another role, and the frame (the signed-in name, the log-out
form's CSRF token) is each session's own."""

import re

import pytest
from helpers.web import MAINS_PLAN, csrf_from, login_as

from registry.services.events import log_event
from registry.services.fleet import EDITABLE, edit_unit
from registry.services.holds import release_hold
from registry.store.users import add_user
from registry.web.page_cache import RoleOnly


def _kept(app) -> int:
    """How many pages were rendered to be kept (each a miss)."""
    caches = (app.extensions.get(k) for k in ("withstand.pages", "withstand.large_pages"))
    return sum(c.computed for c in caches if c)


def _main(page: str) -> str:
    """The page's own part, the one that is kept (the frame around it is per request)."""
    return page[page.index("<main>"):page.index("</main>")]


def _get(client, url, **query) -> str:
    response = client.get(url, query_string=query)
    assert response.status_code == 200, url
    return response.get_data(as_text=True)


@pytest.mark.parametrize("url", ["/", "/dashboard", "/units/NB-0002", "/checks/result"])
def test_a_page_viewed_again_is_served_as_kept(app, client, demo, url):
    login_as(client, "viewer")
    query = MAINS_PLAN if url == "/checks/result" else {}
    first = _get(client, url, **query)
    kept = _kept(app)
    assert kept >= 1
    again = _get(client, url, **query)
    assert _kept(app) == kept  # nothing rendered again
    assert _main(again) == _main(first)
    # the same text as the page rendered whole, in the frame of this request
    assert "Olek Brandt (viewer)" in again and "does not replace" in again


def test_an_event_a_hold_and_an_edit_show_at_once(app, client, demo):
    login_as(client, "viewer")
    before = _get(client, "/units/NB-0002")
    dashboard = _get(client, "/dashboard")
    assert "On hold" not in before
    # smell after an overvoltage opens a hold (docs/rules.md, check 11: a unit with a
    # symptom is held until inspected, common practice (no source))
    logged = log_event(demo, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=400.0,
                       symptoms=["smell"], by="tech")
    assert logged.hold_id is not None
    held = _get(client, "/units/NB-0002")
    assert "On hold" in held and "smell" in held
    assert _main(_get(client, "/dashboard")) != _main(dashboard)  # the open holds, events
    release_hold(demo, unit="NB-0002", result="pass", by="steward", note="inspected")
    released = _get(client, "/units/NB-0002")
    assert "On hold" not in released and "released" in released
    fields = {k: "" for k in EDITABLE}
    fields.update(status="in-service", custodian="Someone Else", site="North bench",
                  serial="22-0412", verified_on="2026-06-15", verification_due="2027-06-15")
    edit_unit(demo, "NB-0002", fields, by="steward")
    edited = _get(client, "/units/NB-0002")
    assert "Someone Else" in edited
    listed = _get(client, "/", q="NB-0002")
    assert "Someone Else" not in before and "NB-0002" in listed
    # nothing written since: kept
    kept = _kept(app)
    assert _main(_get(client, "/units/NB-0002")) == _main(edited) and _kept(app) == kept


def test_each_role_gets_its_own_page(app, demo):
    pages = {}
    for role in ("technician", "viewer", "steward", "viewer"):
        client = app.test_client()
        login_as(client, role)
        pages.setdefault(role, []).append(_get(client, "/units/NB-0002"))
    tech, viewer, steward = (_main(pages[r][0]) for r in ("technician", "viewer", "steward"))
    # a technician logs events, a steward edits; a viewer does neither, though the
    # technician's and the steward's pages were kept before the viewer asked
    assert "Log an event" in tech and "/edit" not in tech
    assert "Log an event" not in viewer and "/edit" not in viewer
    assert "Log an event" in steward and "/units/NB-0002/edit" in steward
    assert _main(pages["viewer"][1]) == viewer


def test_the_frame_is_each_sessions_own(app, demo):
    with demo.transaction() as session:
        add_user(session, "viewer2", "viewer", "second-viewer-pass", display_name="Rue Calder")
    first, second = app.test_client(), app.test_client()
    login_as(first, "viewer")
    login_as(second, "viewer2", "second-viewer-pass")
    one = _get(first, "/dashboard")
    kept = _kept(app)
    two = _get(second, "/dashboard")
    assert _kept(app) == kept  # the second viewer got the kept page ...
    assert _main(one) == _main(two)
    # ... in a frame of their own: their name, and their own session's CSRF token
    assert "Olek Brandt" in one and "Olek Brandt" not in two and "Rue Calder" in two
    token = re.compile(r'name="csrf_token" value="([^"]+)"')
    assert token.search(one).group(1) != token.search(two).group(1)
    assert "csrf_token" not in _main(one)
    # the second's token is the one its session accepts: the log-out form works
    out = second.post("/logout", data={"csrf_token": csrf_from(second, "/dashboard")})
    assert out.status_code == 302 and "/login" in out.headers["Location"]
    assert first.get("/dashboard").status_code == 200  # the first is still signed in


def test_a_kept_page_knows_the_role_and_nothing_of_the_person():
    user = RoleOnly("technician")
    assert user.may("viewer") and user.may("technician") and not user.may("steward")
    with pytest.raises(AttributeError):
        user.display_name  # noqa: B018 - reading it is the point


def test_fleet_list_rows_as_the_fleet_file_gives_them(client, demo):
    # the ratings as the fleet file states them (seeddata/fleet.yaml): kx-7 CAT III 900 V and
    # CAT IV 500 V; the tm-sc2 bench oscilloscope 300 V with no measurement category, which
    # the list writes as not for mains
    login_as(client, "viewer")
    page = _get(client, "/", q="NB-000")
    row = page[page.index('href="/units/NB-0001"'):]
    row = row[:row.index("</tr>")]
    assert "CAT III 900 V, CAT IV 500 V" in row and "status-in-service" in row
    scope = page[page.index('href="/units/NB-0006"'):]
    assert "300 V (not mains)" in scope[:scope.index("</tr>")]


@pytest.mark.parametrize("tag", ["NB-0001", "a b", "x/y", "ü-1", "50%", "q?r#s", "a&b;c"])
def test_unit_links_are_the_routes_own(app, tag):
    from flask import url_for

    from registry.web.fleet import unit_links
    with app.test_request_context("/"):
        assert unit_links()(tag) == url_for("fleet.unit", tag=tag)


@pytest.mark.parametrize("typed", [{}, {"q": "a b&c", "site": "ü/x?y#z"},
                                   {"q": "50%+1", "dir": "desc"},
                                   {"voltage": "600 V", "sort": "due", "kind": ""}])
@pytest.mark.parametrize("changes", [{}, {"page": 3}, {"sort": "tag", "dir": "asc", "page": None},
                                     {"q": ""}])
def test_list_links_are_url_for_of_the_same_arguments(app, typed, changes):
    from flask import url_for

    from registry.web.params import list_links
    with app.test_request_context("/"):
        args = {k: v for k, v in typed.items() if v}
        args.update(changes)
        expected = url_for("fleet.index",
                           **{k: v for k, v in args.items() if v not in ("", None)})
        assert list_links("fleet.index", typed)(**changes) == expected


@pytest.mark.parametrize("pages", [1, 2, 5, 8, 9, 400])
def test_the_pager_links_the_first_last_and_near_pages(pages):
    # the rule the fleet list's pager states (the first and last pages and those within 3)
    # as a filter over every page, against the list made without walking them
    from registry.web.fleet import shown_pages
    for page in range(1, pages + 1):
        assert shown_pages(page, pages) == [
            p for p in range(1, pages + 1) if p in (1, pages) or abs(p - page) <= 3]
