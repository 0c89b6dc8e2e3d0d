"""Hostile input over the JSON API and the web forms: a corpus generated in code (bad values x
fields x routes). Every case must be refused with a 4xx naming what is wrong, carry no
traceback, and leave the database exactly as it was (every table dumped before and after, and
the event count).

The bad values are the classic ones of input validation (the OWASP Input Validation Cheat
Sheet: type, range, length, encoding and control characters), the ends of the proleptic
Gregorian calendar Python's ``datetime`` covers (0001-01-01 to 9999-12-31), IEEE 754's
overflow to infinity past 1.8e308, and the 64-bit signed range of SQLite's INTEGER
(sqlite.org "Datatypes In SQLite", 2.1: up to 8 bytes) and PostgreSQL's BIGINT.

One demo database serves the whole module: no case may write, and that is what is checked.
"""

from __future__ import annotations

import json
import re
import urllib.parse

import pytest
from sqlalchemy import func, select

from registry import units as u
from registry.app import create_app
from registry.errors import InvalidInput
from registry.formats.common import parse_date
from registry.store import db as store_db
from registry.store import models as m
from registry.store.users import get_user, issue_token

HUGE_ID = "99999999999999999999"  # 20 digits: past 2**63 - 1
IDS = [HUGE_ID, str(2 ** 63), "9" * 5000, "0" * 30 + "1" + "0" * 20]

EVENT = {"unit": "NB-0001", "kind": "overvoltage", "voltage": "2 kV"}
RELEASE = {"result": "pass", "note": "inspected"}
PLAN = {"format": "withstand-plan/1", "task": "measure-voltage",
        "circuit": {"supply": "mains", "category": "III", "waveform": "ac", "voltage": "480 V",
                    "voltage_to_earth": "277 V", "frequency": "60 Hz"},
        "site": {"name": "North bench"}, "duration": "60 s"}
CHECK_FIELDS = {"task": "measure-voltage", "supply": "mains", "category": "III",
                "waveform": "ac", "voltage": "480 V", "duration": "60 s", "site": "North bench"}

CONTROL = ["a\x00b", "\x00", "x\x1b[31mred", "\x7f", "\x08back", "line\x0bfeed", "\x85"]
TIMES = ["0001-01-01T00:00", "0001-01-01T00:00:00+01:00", "9999-12-31T23:59",
         "9999-12-31T23:59:59-01:00", "10000-01-01T00:00", "0000-01-01T00:00",
         "1899-12-31T23:59", "2026-13-01T00:00", "2026-02-30T00:00", "\x00"]
DATES = ["99999-01-01", "0000-01-01", "2026-02-30", "2026-1-1\x00", "-2026-01-01"]


def bad_quantities(unit: str) -> list[str]:
    """Quantities in ``unit`` that overflow a double (past 1.8e308, IEEE 754), are not
    numbers, or carry a NUL."""
    return [f"1e400 {unit}", f"-1e400 {unit}", f"1e308 k{unit}", f"nan {unit}",
            f"inf {unit}", f"{'9' * 400} {unit}", f"1e99999999999999999999 {unit}",
            f"1 {unit}\x00"]


def _bounded(text: str, dim) -> bool:
    try:
        u.parse_quantity(text, dim, "x")
    except InvalidInput:
        return True
    return False


def _dated(text: str) -> bool:
    try:
        parse_date(text, "x")
    except InvalidInput:
        return True
    return False


# Finite but absurd values and dates at the calendar's ends are refused by the physical range
# of every quantity (units.parse_quantity) and the date range of formats.common.parse_date;
# where those bounds are not in this tree yet, the cases depending on them are skipped.
needs_ranges = pytest.mark.skipif(not _bounded("1e300 V", u.VOLTAGE),
                                  reason="parse_quantity has no physical range here")
needs_dates = pytest.mark.skipif(not _dated("0001-01-01"),
                                 reason="parse_date has no date range here")
ABSURD = ["1e300 {}", "1e20 {}", "1e-300 {}"]


# -- the shared database, app and clients ----------------------------------------------------

@pytest.fixture(scope="module")
def env(tmp_path_factory, templates):
    tmp = tmp_path_factory.mktemp("hostile")
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("WITHSTAND_INSTANCE", str(tmp))
        mp.delenv("WITHSTAND_DATABASE_URL", raising=False)
        # a copy of the session's demo template (tests/helpers/databases.py), key included
        url = f"sqlite:///{templates.copy_sqlite(tmp / 'hostile.sqlite3', demo=True)}"
        database = store_db.Database(url)
        app = create_app({"DATABASE_URL": url, "SECRET_KEY": "hostile-test-key",
                          "TESTING": True, "INSTANCE_PATH": str(tmp)})
        # a 500 must come back as an answer to assert on, not as an exception in the test
        app.config["PROPAGATE_EXCEPTIONS"] = False
        with database.transaction() as session:
            token = issue_token(session, get_user(session, "steward"))
            hold = session.scalar(select(m.Hold.id).where(m.Hold.released_at.is_(None))
                                  .order_by(m.Hold.id))
        web = app.test_client()
        page = web.get("/login").get_data(as_text=True)
        csrf = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
        r = web.post("/login", data={"username": "steward", "password": "larkspur-steward",
                                     "csrf_token": csrf})
        assert r.status_code == 302
        page = web.get("/users/").get_data(as_text=True)
        csrf = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
        assert hold is not None
        yield {"app": app, "db": database, "api": app.test_client(), "web": web,
               "auth": {"Authorization": f"Bearer {token}"}, "csrf": csrf, "hold": hold}
        app.extensions["withstand_db"].dispose()
        database.dispose()


def dump(database) -> dict:
    """Every row of every table, in key order."""
    with database.engine.connect() as conn:
        return {t.name: conn.execute(select(t).order_by(*t.primary_key.columns)).all()
                for t in m.Base.metadata.sorted_tables}


def event_count(database) -> int:
    with database.engine.connect() as conn:
        return conn.execute(select(func.count()).select_from(m.Event.__table__)).scalar_one()


def assert_refused(response, before, after, events_before, events_after):
    body = response.get_data(as_text=True)
    assert 400 <= response.status_code < 500, (response.status_code, body[:400])
    assert "Traceback" not in body and 'File "' not in body
    assert events_after == events_before
    assert after == before, "the database changed"
    return body


# -- the API corpus ---------------------------------------------------------------------------

API_POSTS = {"checks": ("/api/v1/checks", PLAN), "events": ("/api/v1/events", EVENT),
             "release": ("/api/v1/holds/{hold}/release", RELEASE)}


def raw_bodies(valid: dict) -> dict[str, tuple[bytes, str]]:
    """(body, content type) of each hostile body, built around a ``valid`` one, so that a
    refusal is the hostile part's doing."""
    text = json.dumps(valid)
    js = "application/json"
    def with_note(s):
        return json.dumps(dict(valid, note="x"))[:-1].replace('"x"', s) + "}"
    return {
        "nested-arrays-2000": ("[" * 2000 + "]" * 2000, js),
        "nested-arrays-100000": ("[" * 100000 + "]" * 100000, js),
        "nested-objects-3000": ('{"a":' * 3000 + "1" + "}" * 3000, js),
        "nested-in-a-field": (text[:-1] + ', "note": ' + "[" * 5000 + "]" * 5000 + "}", js),
        "bom": (b"\xef\xbb\xbf" + text.encode(), js),
        "utf-16": (text.encode("utf-16"), js),
        "latin-1": (json.dumps(dict(valid, note="café"), ensure_ascii=False).encode("latin-1"), js),
        "invalid-utf-8": (text[:-1].encode() + b', "note": "\xff\xfe"}', js),
        "text-plain": (text, "text/plain"),
        "form-encoded": (urllib.parse.urlencode(valid), "application/x-www-form-urlencoded"),
        "list": ("[" + text + "]", js), "string": ('"' + "x" * 100 + '"', js),
        "number": ("1", js), "null": ("null", js), "true": ("true", js),
        "empty": ("", js), "blank": ("  \n ", js), "truncated": (text[:-1], js),
        "nan": (text[:-1] + ', "note": NaN}', js),
        "infinity": (text[:-1] + ', "note": -Infinity}', js),
        "1e999": (text[:-1] + ', "note": 1e999}', js),
        "huge-int": (text[:-1] + ', "note": ' + "9" * 5000 + "}", js),
        "lone-surrogate": (with_note('"\\ud800"'), js),
        "nul-escape": (with_note('"a\\u0000b"'), js),
        "escape-sequence": (with_note('"\\u001b[2J"'), js),
        "control-key": (text[:-1] + ', "no\\u0000te": "x"}', js),
        "over-1-MiB": (text[:-1] + ', "note": "' + "x" * (1024 * 1024 + 10) + '"}', js),
    }


def api_body_cases():
    for route, (path, valid) in API_POSTS.items():
        for name, (body, ctype) in raw_bodies(valid).items():
            yield pytest.param(path, body, ctype, id=f"{route}-{name}")


EVENT_FIELD_VALUES = {
    "voltage": bad_quantities("V") + [1e308, True, [], {"a": 1}, "3 ohm"],
    "energy": bad_quantities("J") + [-1, "2 kV"],
    "duration": bad_quantities("s") + ["-5 s"],
    "at": TIMES + [1e20, -1e20, True],
    "unit": ["", "x" * 5000, "NB-0001\x00", "\x1b[31m", 17, None],
    "mode": ["\x00", "x" * 5000, "vac\x00", ["vac"]],
    "note": CONTROL + ["x" * 5000, 5],
    "kind": ["\x00", "overvoltage\x00", "OVERVOLTAGE", ""],
    "symptoms": [["arc\x00"], "arc", [[]], ["x" * 5000], [None]],
    "waveform": ["\x00", "AC", 1],
    "extra": ["x"],
}


def api_field_cases():
    for field, values in EVENT_FIELD_VALUES.items():
        for i, value in enumerate(values):
            yield pytest.param("/api/v1/events", dict(EVENT, **{field: value}), field,
                               id=f"event-{field}-{i}")
    for i, value in enumerate(CONTROL[:3] + ["x" * 5000, 7]):
        yield pytest.param("/api/v1/holds/{hold}/release", dict(RELEASE, note=value), "note",
                           id=f"release-note-{i}")
    for i, value in enumerate(["\x00", "PASS", "", None, ["pass"]]):
        yield pytest.param("/api/v1/holds/{hold}/release", dict(RELEASE, result=value),
                           "result", id=f"release-result-{i}")
    units = {"voltage": "V", "voltage_to_earth": "V", "frequency": "Hz", "transient": "V",
             "source_impedance": "ohm", "prospective_current": "A", "capacitance": "F",
             "stored_energy": "J", "current": "A"}
    for field, unit in units.items():
        for i, value in enumerate(bad_quantities(unit)[:5]):
            plan = json.loads(json.dumps(PLAN))
            plan["circuit"][field] = value
            yield pytest.param("/api/v1/checks", plan, f"circuit.{field}",
                               id=f"plan-{field}-{i}")
    for field, value in (("title", "a\x00b"), ("duration", "1e400 s"), ("task", "\x00"),
                         ("discharge_to", "nan V")):
        yield pytest.param("/api/v1/checks", dict(PLAN, **{field: value}), field,
                           id=f"plan-{field}")
    yield pytest.param("/api/v1/checks", dict(PLAN, site={"name": "North bench",
                                                          "altitude": "1e400 m"}),
                       "site.altitude", id="plan-altitude")


API_QUERIES = (
    [f"/api/v1/units?page={x}" for x in IDS[:3] + ["abc", "1.5", "\x00"]]
    + [f"/api/v1/units?size={x}" for x in IDS[:2] + ["many"]]
    + ["/api/v1/units?q=\x00", "/api/v1/units?voltage=1e400+V", "/api/v1/units?site=%00",
       "/api/v1/units?category=III%00"]
    + [f"/api/v1/events?since={x}" for x in DATES] + ["/api/v1/events?unit=NB%00"]
    + [f"/api/v1/audit/workbook?since={x}" for x in DATES[:2]]
    + ["/api/v1/audit/workbook?site=%00", "/api/v1/holds?open=%00",
       "/api/v1/units/NB-0001%00", "/api/v1/models/kx-7%1b"]
    + [f"/api/v1/holds/{x}/release" for x in IDS])


@pytest.mark.parametrize("path,body,ctype", list(api_body_cases()))
def test_api_refuses_hostile_bodies(env, path, body, ctype):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["api"].post(path.format(hold=env["hold"]), data=body, content_type=ctype,
                        headers=env["auth"])
    assert_refused(r, before, dump(db), n, event_count(db))
    error = r.get_json()["error"]
    assert error["status"] == r.status_code and error["message"]
    assert isinstance(error["problems"], list)
    if r.status_code == 400:
        assert error["problems"], "a 400 names what is wrong"


@pytest.mark.parametrize("path,doc,field", list(api_field_cases()))
def test_api_refuses_hostile_fields(env, path, doc, field):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["api"].post(path.format(hold=env["hold"]), json=doc, headers=env["auth"])
    assert_refused(r, before, dump(db), n, event_count(db))
    problems = r.get_json()["error"]["problems"]
    assert any(p["field"] == field or p["field"].startswith(field + "[") for p in problems), \
        problems


@pytest.mark.parametrize("path", API_QUERIES)
def test_api_refuses_hostile_queries(env, path):
    db = env["db"]
    before, n = dump(db), event_count(db)
    method = env["api"].post if path.endswith("/release") else env["api"].get
    kwargs = {"json": RELEASE} if path.endswith("/release") else {}
    r = method(path, headers=env["auth"], **kwargs)
    assert_refused(r, before, dump(db), n, event_count(db))
    assert r.get_json()["error"]["status"] == r.status_code


@needs_ranges
@pytest.mark.parametrize("field,unit", [("voltage", "V"), ("energy", "J"), ("duration", "s")])
@pytest.mark.parametrize("value", ABSURD)
def test_api_refuses_absurd_event_quantities(env, field, unit, value):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["api"].post("/api/v1/events", json=dict(EVENT, **{field: value.format(unit)}),
                        headers=env["auth"])
    assert_refused(r, before, dump(db), n, event_count(db))


# -- the web form corpus ----------------------------------------------------------------------

EVENT_FORM = {"kind": "overvoltage", "voltage": "2 kV"}
EVENT_FORM_VALUES = {
    "voltage": bad_quantities("V") + ["3 ohm"], "energy": bad_quantities("J"),
    "duration": bad_quantities("s"), "at": TIMES, "note": CONTROL, "mode": CONTROL[:3],
    "kind": ["\x00", "overvoltage\x00"], "waveform": ["\x00"],
}
UNIT_FORM_VALUES = {"serial": CONTROL, "site": CONTROL[:3], "custodian": CONTROL[:3],
                    "notes": CONTROL[:3], "verified_on": DATES, "verification_due": DATES}
USER_FORM_VALUES = {"username": CONTROL[:3] + ["x" * 5000, ""],
                    "display_name": CONTROL, "role": ["\x00", "steward\x00", "root"]}


def model_form_cases():
    """Fields of the structured model form (registry/web/model_form.py names them)."""
    bad = {"maker": CONTROL, "name": CONTROL + [" \x85 "], "modes-0-label": CONTROL[:3],
           "connectors-0": CONTROL[:3], "front_end-0-id": CONTROL[:3]}
    for field, values in bad.items():
        for i, v in enumerate(values):
            yield pytest.param({field: v}, field, id=f"model-{field}-{i}")
    for field, unit in (("ratings-0-voltage", "V"), ("modes-0-max_input", "V"),
                        ("front_end-0-resistance", "ohm"), ("max_altitude", "m"),
                        ("modes-0-fuse-i2t", "A^2*s")):
        for i, v in enumerate(bad_quantities(unit)):
            yield pytest.param({field: v}, field, id=f"model-{field}-{i}")
    for i, (field, v) in enumerate([("pollution_degree", "9" * 400), ("pollution_degree", "\x00"),
                                    ("kind", "x" * 5000), ("ratings-0-category", "\x00"),
                                    ("front_end-0-type", "capacitor"),
                                    ("attenuation", "1" * 400 + ":1"),
                                    ("modes-0-closes", "S1, S\x00")]):
        yield pytest.param({field: v}, field, id=f"model-other-{i}")


def event_form_cases():
    for field, values in EVENT_FORM_VALUES.items():
        for i, v in enumerate(values):
            yield pytest.param(dict(EVENT_FORM, **{field: v}), field, id=f"{field}-{i}")


def _post(env, path, data):
    return env["web"].post(path, data=dict(data, csrf_token=env["csrf"]))


def _check_form_refused(env, path, data, field=None):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = _post(env, path, data)
    body = assert_refused(r, before, dump(db), n, event_count(db))
    if field is not None:
        assert 'class="field-error"' in body, "the form shows the field's message"
    return body


@pytest.mark.parametrize("data,field", list(event_form_cases()))
def test_event_form_refuses(env, data, field):
    _check_form_refused(env, "/units/NB-0001/events/new", data, field)


@pytest.fixture(scope="module")
def unit_form(env):
    from registry.formats.fleet import unit_to_document
    from registry.store.specs import unit_record
    with env["db"].transaction() as session:
        row = session.scalar(select(m.Unit).where(m.Unit.tag == "NB-0002"))
        doc = unit_to_document(unit_record(row))
    from registry.web.fleet import EDITABLE
    return {k: str(doc.get(k) or "") for k in EDITABLE}


@pytest.mark.parametrize("field,value", [(f, v) for f, vs in UNIT_FORM_VALUES.items()
                                         for v in vs])
def test_unit_edit_form_refuses(env, unit_form, field, value):
    _check_form_refused(env, "/units/NB-0002/edit", dict(unit_form, **{field: value}), field)


@needs_dates
@pytest.mark.parametrize("field", ["verified_on", "verification_due"])
@pytest.mark.parametrize("value", ["0001-01-01", "9999-12-31"])
def test_unit_edit_form_refuses_the_ends_of_the_calendar(env, unit_form, field, value):
    _check_form_refused(env, "/units/NB-0002/edit", dict(unit_form, **{field: value}), field)


@pytest.fixture(scope="module")
def model_form(env):
    from helpers.formtools import form_of
    form = form_of(env["web"].get("/models/kx-7/edit").get_data(as_text=True))
    form.pop("csrf_token")
    assert form["ratings-0-voltage"] and form["front_end-0-id"], "the form holds kx-7"
    return form


@pytest.mark.parametrize("change,field", list(model_form_cases()))
def test_model_edit_form_refuses(env, model_form, change, field):
    _check_form_refused(env, "/models/kx-7/edit", dict(model_form, **change), field)


@pytest.mark.parametrize("field,value", [(f, v) for f, vs in USER_FORM_VALUES.items()
                                         for v in vs])
def test_user_form_refuses(env, field, value):
    data = dict({"username": "newcomer", "display_name": "New Comer", "role": "viewer",
                 "password": "a-long-enough-password"}, **{field: value})
    _check_form_refused(env, "/users/", data, field)


@pytest.mark.parametrize("value", CONTROL[:4] + ["x" * 5000])
def test_hold_release_form_refuses_the_note(env, value):
    _check_form_refused(env, f"/holds/{env['hold']}/release",
                        {"result": "pass", "note": value}, "note")


ID_ROUTES = [("post", "/users/{}/role", {"role": "viewer"}),
             ("post", "/users/{}/active", {"active": "0"}),
             ("post", "/users/{}/tokens", {}), ("post", "/users/{}/tokens/revoke", {}),
             ("get", "/holds/{}/release", None),
             ("post", "/holds/{}/release", {"result": "pass"})]


@pytest.mark.parametrize("method,route,data", ID_ROUTES)
@pytest.mark.parametrize("ident", IDS)
def test_huge_ids_in_routes_are_not_found(env, method, route, data, ident):
    db = env["db"]
    before, n = dump(db), event_count(db)
    if method == "get":
        r = env["web"].get(route.format(ident))
    else:
        r = _post(env, route.format(ident), data)
    assert_refused(r, before, dump(db), n, event_count(db))
    assert r.status_code == 404


CHECK_ROUTES = ["/checks/result", "/checks/card", "/checks/plan.yaml",
                "/checks/discharge.svg", "/checks/front-end.svg"]
CHECK_VALUES = ([("voltage", v) for v in bad_quantities("V")[:4]]
                + [("capacitance", "1e400 F"), ("altitude", "nan m"), ("duration", "inf s"),
                   ("title", "a\x00b"), ("site", "\x1b"), ("on", "99999-01-01"),
                   ("on", "2026-02-30"), ("task", "\x00")])


@pytest.mark.parametrize("route", CHECK_ROUTES)
@pytest.mark.parametrize("field,value", CHECK_VALUES)
def test_check_pages_refuse(env, route, field, value):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["web"].get(route, query_string=dict(CHECK_FIELDS, **{field: value}))
    body = assert_refused(r, before, dump(db), n, event_count(db))
    if route in ("/checks/result", "/checks/card", "/checks/plan.yaml"):
        assert 'class="field-error"' in body


@pytest.mark.parametrize("route,query",
                         [(r, f"setup={x}") for r in ("/checks/card", "/checks/front-end.svg")
                          for x in IDS[:3] + ["abc", "-1"]]
                         + [("/checks/discharge.svg", f"path={x}") for x in IDS[:3] + ["x"]])
def test_check_indexes_out_of_range(env, route, query):
    r = env["web"].get(route + "?" + urllib.parse.urlencode(CHECK_FIELDS) + "&" + query)
    assert r.status_code in (400, 404)
    assert "Traceback" not in r.get_data(as_text=True)


@pytest.mark.parametrize("query", [f"page={x}" for x in IDS[:3] + ["abc"]]
                         + ["q=%00", "voltage=1e400+V", "site=%1b", "sort=tag%00"])
def test_fleet_filters_refuse(env, query):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["web"].get("/?" + query)
    body = assert_refused(r, before, dump(db), n, event_count(db))
    assert 'class="field-error"' in body


@pytest.mark.parametrize("path", ["/events?unit=%00", "/audit/?since=99999-01-01",
                                  "/audit/workbook.xlsx?site=%00", "/models/kx-7%00",
                                  "/units/NB-0001%00/edit"])
def test_other_pages_refuse(env, path):
    db = env["db"]
    before, n = dump(db), event_count(db)
    r = env["web"].get(path)
    assert_refused(r, before, dump(db), n, event_count(db))


@needs_ranges
@pytest.mark.parametrize("field,unit", [("voltage", "V"), ("energy", "J"), ("duration", "s")])
@pytest.mark.parametrize("value", ABSURD)
def test_event_form_refuses_absurd_quantities(env, field, unit, value):
    _check_form_refused(env, "/units/NB-0001/events/new",
                        dict(EVENT_FORM, **{field: value.format(unit)}), field)


# -- the one error path -----------------------------------------------------------------------

def test_an_unexpected_exception_is_a_plain_500_and_logged(env, caplog):
    app = env["app"]
    # a route added for this test only, on a fresh app so the shared one keeps its routes
    from registry.app import create_app as make
    fresh = make({"DATABASE_URL": env["db"].url, "SECRET_KEY": "k", "TESTING": True,
                  "INSTANCE_PATH": app.instance_path})
    fresh.config["PROPAGATE_EXCEPTIONS"] = False

    @fresh.route("/api/v1/boom")
    @fresh.route("/boom")
    def boom():
        raise RuntimeError("secret detail 1234")

    client = fresh.test_client()
    with caplog.at_level("ERROR"):
        page = client.get("/boom")
        api = client.get("/api/v1/boom")
    for r in (page, api):
        assert r.status_code == 500
        text = r.get_data(as_text=True)
        assert "Traceback" not in text and "secret detail" not in text
        assert "RuntimeError" not in text
    assert api.get_json()["error"]["status"] == 500
    assert "logged" in page.get_data(as_text=True)
    logged = "\n".join(rec.getMessage() + (rec.exc_text or "") for rec in caplog.records)
    assert "secret detail 1234" in logged or any(
        rec.exc_info and "secret detail 1234" in str(rec.exc_info[1]) for rec in caplog.records)
    fresh.extensions["withstand_db"].dispose()


# -- the valid inputs the corpus is built around are accepted (so each refusal above is the
# hostile part's doing); these write, so they run last --------------------------------------

def test_the_valid_bases_are_accepted(env, unit_form, model_form):
    api, auth = env["api"], env["auth"]
    assert api.post("/api/v1/checks", json=PLAN, headers=auth).status_code == 200
    assert env["web"].get("/checks/result", query_string=CHECK_FIELDS).status_code == 200
    n = event_count(env["db"])
    assert api.post("/api/v1/events", json=EVENT, headers=auth).status_code == 201
    assert _post(env, "/units/NB-0001/events/new", EVENT_FORM).status_code == 302
    assert event_count(env["db"]) == n + 2
    assert _post(env, "/units/NB-0002/edit", dict(unit_form, notes="checked")).status_code == 302
    assert _post(env, "/models/kx-7/edit", dict(model_form, name="KX-7 meter")).status_code == 302
    assert _post(env, "/users/", {"username": "newcomer", "display_name": "New Comer",
                                  "role": "viewer", "password": "a-long-enough-password"}
                 ).status_code == 302
    assert api.post(f"/api/v1/holds/{env['hold']}/release", json=RELEASE,
                    headers=auth).status_code == 200


# -- NUL on PostgreSQL: its text type cannot hold one, so a NUL reaching a query is an error
# there (PostgreSQL documentation, 8.3 "Character Types": "the character with code zero cannot
# be stored"); every route refuses it before the query --------------------------------------

@pytest.mark.postgres
def test_nul_never_reaches_a_postgresql_query(pg_demo, instance):
    database = pg_demo
    with database.transaction() as session:
        token = issue_token(session, get_user(session, "viewer"))
    app = create_app({"DATABASE_URL": database.url, "SECRET_KEY": "k", "TESTING": True,
                      "INSTANCE_PATH": str(instance)})
    app.config["PROPAGATE_EXCEPTIONS"] = False
    client = app.test_client()
    auth = {"Authorization": f"Bearer {token}"}
    try:
        for path in ("/api/v1/units/NB%00", "/api/v1/models/kx%00", "/api/v1/units?q=%00",
                     "/api/v1/events?unit=NB%00", "/api/v1/units?site=%00"):
            r = client.get(path, headers=auth)
            assert r.status_code == 400, (path, r.status_code)
        page = client.get("/login").get_data(as_text=True)
        csrf = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
        r = client.post("/login", data={"username": "view\x00er", "password": "x",
                                        "csrf_token": csrf})
        assert r.status_code == 401
        r = client.post("/login", data={"username": "viewer", "password": "larkspur-viewer",
                                        "csrf_token": csrf})
        assert r.status_code == 302
        for path in ("/units/NB%00", "/models/kx%00", "/units/NB%00/qr.svg"):
            assert client.get(path).status_code == 404, path
        for path in ("/events?unit=%00", "/?q=%00"):
            assert client.get(path).status_code == 400, path
    finally:
        app.extensions["withstand_db"].dispose()
