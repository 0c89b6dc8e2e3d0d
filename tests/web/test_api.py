"""The JSON API: tokens, each endpoint, the errors, and the OpenAPI document (checked with the
openapi-spec-validator reference library, and its schemas with jsonschema)."""

import io
import json
from pathlib import Path

import jsonschema
import openpyxl
import pytest
import yaml
from openapi_spec_validator import validate as validate_openapi

from registry.store.users import get_user, revoke_tokens
from helpers.web import api_token, bearer

PLAN = yaml.safe_load(Path("seeddata/plans/dc-link-discharge.yaml").read_text())


@pytest.fixture
def tokens(demo):
    return {role: api_token(demo, user) for role, user in
            (("viewer", "viewer"), ("technician", "tech"), ("steward", "steward"))}


def test_openapi_document_is_valid_and_generated(client, tokens):
    response = client.get("/api/v1/openapi.json", headers=bearer(tokens["viewer"]))
    doc = response.get_json()
    validate_openapi(doc)  # OpenAPI 3.1 meta-schema, by the reference validator
    schemas = doc["components"]["schemas"]
    for name in ("ModelDoc", "Unit", "EventRequest", "HoldRelease", "Plan", "Error", "Result"):
        assert name in schemas
    for path in ("/units", "/units/{tag}", "/models", "/models/{key}", "/checks", "/events",
                 "/holds", "/holds/{hold_id}/release", "/audit/workbook"):
        assert path in doc["paths"], path
    # the request schemas are the validating models' own (spectree generates the document)
    from registry.plans import PlanDoc
    from registry.web.schemas import EventRequest
    assert set(schemas["EventRequest"]["properties"]) == set(EventRequest.model_fields)
    assert set(schemas["Plan"]["properties"]) == set(PlanDoc.model_fields)
    # every route is in the document, with its methods, and answers 401 and 403 as an Error
    rules = {r.rule.removeprefix("/api/v1") for r in client.application.url_map.iter_rules()
             if r.endpoint.startswith("api.")}
    assert {p.replace("{", "<").replace("}", ">") for p in doc["paths"]} == {
        r.replace("<int:", "<") for r in rules}
    for item in doc["paths"].values():
        for op in item.values():
            assert {"401", "403", "400"} <= set(op["responses"]), op["summary"]


def test_query_models_name_what_the_readers_read(client, tokens):
    # the document's query parameters (schemas.py, for the document only) are the ones the
    # views' readers read, and a typed one with a bad value is refused naming it
    from werkzeug.datastructures import MultiDict

    from registry.web import schemas
    from registry.web.forms import FieldErrors
    from registry.web.params import audit_args, fleet_query
    with client.application.test_request_context():
        _, typed = fleet_query(MultiDict(), FieldErrors())
        assert set(schemas.UnitsQuery.model_fields) == set(typed) | {"page", "size"}
        *_, typed = audit_args(MultiDict(), FieldErrors())
        assert set(schemas.AuditQuery.model_fields) == set(typed)
    h = bearer(tokens["viewer"])
    for path, name, bad in (("/units", "category", "V"), ("/units", "voltage", "3 ohm"),
                            ("/units", "page", "x"), ("/units", "size", "x"),
                            ("/events", "since", "2026-13-99"),
                            ("/audit/workbook", "since", "2026-13-99"),
                            ("/audit/workbook", "site", "Nowhere")):
        assert name in {"/units": schemas.UnitsQuery, "/events": schemas.EventsQuery,
                        "/audit/workbook": schemas.AuditQuery}[path].model_fields
        r = client.get(f"/api/v1{path}", query_string={name: bad}, headers=h)
        assert r.status_code == 400, (path, name, r.get_json())
        assert r.get_json()["error"]["problems"][0]["field"] == name
    r = client.post("/api/v1/checks?on=2026-13-99", json=PLAN, headers=h)
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "on"
    r = client.post("/api/v1/checks?findings=2", json=PLAN, headers=h)
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "findings"
    assert set(schemas.CheckQuery.model_fields) == {"on", "findings"}


def test_answers_fit_the_response_models(client, tokens):
    from registry.web import responses
    h = bearer(tokens["viewer"])
    responses.UnitPage.model_validate(client.get("/api/v1/units", headers=h).get_json())
    responses.ModelList.model_validate(client.get("/api/v1/models", headers=h).get_json())
    responses.EventList.model_validate(client.get("/api/v1/events", headers=h).get_json())
    responses.HoldList.model_validate(client.get("/api/v1/holds?open=0", headers=h).get_json())
    result = client.post("/api/v1/checks", json=PLAN, headers=h).get_json()
    responses.Result.model_validate(result)
    result = responses.Result.model_validate(
        client.post("/api/v1/checks?findings=1", json=PLAN, headers=h).get_json())
    assert result.setups and all(s.findings for s in result.setups)
    responses.Error.model_validate(client.get("/api/v1/units/NOPE", headers=h).get_json())


def _resolver_schema(doc, name):
    # a schema with the document's components beside it, so that $refs resolve
    return dict(doc["components"]["schemas"][name],
                components=doc["components"])


def test_openapi_schemas_accept_the_demo_documents(client, tokens):
    doc = client.get("/api/v1/openapi.json", headers=bearer(tokens["viewer"])).get_json()
    jsonschema.validate(json.loads(json.dumps(PLAN)), _resolver_schema(doc, "Plan"))
    bad = dict(PLAN, circuit=dict(PLAN["circuit"], supply="battery"))
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(bad, _resolver_schema(doc, "Plan"))
    model = client.get("/api/v1/models/kx-7", headers=bearer(tokens["viewer"])).get_json()
    jsonschema.validate(model, _resolver_schema(doc, "ModelDoc"))
    event = {"unit": "NB-0001", "kind": "overvoltage", "voltage": "2 kV", "symptoms": ["arc"]}
    jsonschema.validate(event, _resolver_schema(doc, "EventRequest"))


def test_tokens_missing_wrong_and_revoked(client, demo, tokens):
    r = client.get("/api/v1/units")
    assert r.status_code == 401 and "Bearer" in r.headers["WWW-Authenticate"]
    assert r.get_json()["error"]["status"] == 401
    assert client.get("/api/v1/units", headers=bearer("wst_not-a-token")).status_code == 401
    assert client.get("/api/v1/units", headers={"Authorization": "Basic abc"}).status_code == 401
    assert client.get("/api/v1/units", headers=bearer(tokens["viewer"])).status_code == 200
    with demo.transaction() as s:
        revoke_tokens(s, get_user(s, "viewer"))
    assert client.get("/api/v1/units", headers=bearer(tokens["viewer"])).status_code == 401


def test_units_and_models(client, tokens):
    h = bearer(tokens["viewer"])
    body = client.get("/api/v1/units?q=halden", headers=h).get_json()
    assert {u["tag"] for u in body["units"]} == {"SY-0001", "SY-0002", "SY-0003", "SY-0004",
                                                 "CR-0002"}
    body = client.get("/api/v1/units?category=IV&voltage=600 V&size=5", headers=h).get_json()
    assert len(body["units"]) <= 5 and body["total"] >= len(body["units"])
    r = client.get("/api/v1/units?voltage=3 ohm", headers=h)
    assert r.status_code == 400
    assert r.get_json()["error"]["problems"] == [
        {"field": "voltage", "reason": "'3 ohm' is a resistance; this field needs a voltage"}]
    unit = client.get("/api/v1/units/NB-0001", headers=h).get_json()
    assert unit["model"] == "kx-7" and unit["open_hold"] is None
    r = client.get("/api/v1/units/NOPE", headers=h)
    assert r.status_code == 404 and "NOPE" in r.get_json()["error"]["message"]
    models = client.get("/api/v1/models", headers=h).get_json()["models"]
    assert "kx-7" in {x["key"] for x in models}
    model = client.get("/api/v1/models/kx-7", headers=h).get_json()
    assert {"category": "IV", "voltage": "500 V"} in model["ratings"]
    assert client.get("/api/v1/models/nope", headers=h).status_code == 404


def test_post_checks_returns_the_result_format(client, tokens):
    h = bearer(tokens["viewer"])
    r = client.post("/api/v1/checks?on=2026-12-01", headers=h, json=PLAN)
    body = r.get_json()
    assert r.status_code == 200 and body["format"] == "withstand-result/1"
    assert body["setups"][0]["instrument"] == "BL-0002"
    # conditional: the DR-1's 400 W rating against V0**2/R = 800**2/1000 = 640 W at the start
    # (common practice (no source))
    assert body["setups"][0]["verdict"] == "conditional"
    # E = C V^2 / 2 = 2e-3 F * 800^2 V^2 / 2 = 640 J (docs/rules.md, check 9)
    assert body["plan"]["energy"] == pytest.approx(640.0)
    assert body["cautions"]
    # findings only when asked; the deciding one always
    assert "findings" not in body["setups"][0] and body["setups"][0]["deciding"]["message"]
    full = client.post("/api/v1/checks?on=2026-12-01&findings=1", headers=h, json=PLAN)
    first = full.get_json()["setups"][0]
    assert first["instrument"] == "BL-0002" and first["findings"]
    assert first["deciding"]["message"] in [f["message"] for f in first["findings"]]


def test_post_checks_errors(client, tokens):
    h = bearer(tokens["viewer"])
    bad = dict(PLAN, circuit=dict(PLAN["circuit"], voltage="2 kA"))
    r = client.post("/api/v1/checks", headers=h, json=bad)
    assert r.status_code == 400
    assert {"field": "circuit.voltage", "reason": "'2 kA' is a current; this field needs a "
            "voltage"} in r.get_json()["error"]["problems"]
    r = client.post("/api/v1/checks", headers=h, data="{not json",
                    content_type="application/json")
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == ""
    r = client.post("/api/v1/checks?on=tomorrow", headers=h, json=PLAN)
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "on"
    r = client.post("/api/v1/checks?findings=yes", headers=h, json=PLAN)
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "findings"
    big = json.dumps(dict(PLAN, title="x" * (1024 * 1024 + 10)))
    r = client.post("/api/v1/checks", headers=h, data=big, content_type="application/json")
    assert r.status_code == 413 and r.get_json()["error"]["status"] == 413
    assert client.get("/api/v1/checks", headers=h).status_code == 405


def test_events_post_roles_and_hold_release(client, tokens):
    event = {"unit": "NB-0001", "kind": "transient", "mode": "vdc", "voltage": "9 kV",
             "symptoms": ["arc"], "note": "arc at the tip"}
    r = client.post("/api/v1/events", headers=bearer(tokens["viewer"]), json=event)
    assert r.status_code == 403
    r = client.post("/api/v1/events", headers=bearer(tokens["technician"]), json=event)
    body = r.get_json()
    assert r.status_code == 201 and body["hold"] is not None and body["voltage"] == "9 kV"
    listed = client.get("/api/v1/events?unit=NB-0001", headers=bearer(tokens["viewer"])).get_json()
    assert [e["note"] for e in listed["events"]] == ["arc at the tip"]
    holds = client.get("/api/v1/holds", headers=bearer(tokens["viewer"])).get_json()["holds"]
    # the demo file's two on-hold units (NB-0003, LD-0011) and the new one
    assert sorted(h["unit"] for h in holds) == ["LD-0011", "NB-0001", "NB-0003"]
    hold_id = next(h["id"] for h in holds if h["unit"] == "NB-0001")
    path = f"/api/v1/holds/{hold_id}/release"
    assert client.post(path, headers=bearer(tokens["technician"]),
                       json={"result": "pass"}).status_code == 403
    r = client.post(path, headers=bearer(tokens["steward"]), json={"result": "maybe"})
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "result"
    r = client.post(path, headers=bearer(tokens["steward"]), json={"result": "fail",
                                                                  "note": "cracked"})
    assert r.status_code == 200 and r.get_json()["status"] == "retired"
    assert client.post(path, headers=bearer(tokens["steward"]),
                       json={"result": "pass"}).status_code == 409
    assert client.post("/api/v1/holds/999/release", headers=bearer(tokens["steward"]),
                       json={"result": "pass"}).status_code == 404


def test_events_post_errors_name_the_field(client, tokens):
    h = bearer(tokens["technician"])
    r = client.post("/api/v1/events", headers=h, json={"unit": "NB-0001", "kind": "nope",
                                                       "voltage": 400, "colour": "red"})
    problems = {p["field"]: p["reason"] for p in r.get_json()["error"]["problems"]}
    assert r.status_code == 400
    assert "kind" in problems and "voltage" in problems and "colour" in problems
    assert "has no unit" in problems["voltage"]
    r = client.post("/api/v1/events", headers=h, json={"unit": "NOPE", "kind": "other"})
    assert r.status_code == 404
    r = client.post("/api/v1/events", headers=h, json=["not", "an", "object"])
    assert r.status_code == 400


def test_audit_workbook_download(client, tokens):
    client.post("/api/v1/events", headers=bearer(tokens["technician"]),
                json={"unit": "NB-0002", "kind": "mechanical", "note": "dropped"})
    r = client.get("/api/v1/audit/workbook?since=2000-01-01", headers=bearer(tokens["viewer"]))
    assert r.status_code == 200 and r.mimetype.endswith("spreadsheetml.sheet")
    assert r.headers["Content-Disposition"].startswith("attachment")
    book = openpyxl.load_workbook(io.BytesIO(r.data))
    assert any("NB-0002" in str(c.value) for ws in book.worksheets for row in ws.iter_rows()
               for c in row if c.value)
    r = client.get("/api/v1/audit/workbook?site=Nowhere", headers=bearer(tokens["viewer"]))
    assert r.status_code == 400 and r.get_json()["error"]["problems"][0]["field"] == "site"


def test_unknown_api_path_is_json_404(client, tokens):
    r = client.get("/api/v1/nothing", headers=bearer(tokens["viewer"]))
    assert r.status_code == 404 and r.get_json()["error"]["status"] == 404
