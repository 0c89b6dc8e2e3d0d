"""What users read carries no internal wording: no references to a design document's
sections, no "from memory" marks (those stay in the code beside the values), in the shipped
schemas, the OpenAPI document and a check's result."""

import json
import re
from importlib import resources

from helpers.web import api_token, bearer, login_as

INTERNAL = re.compile(r"SPEC\b|§|from memory", re.I)


def test_shipped_schemas_have_no_internal_wording():
    folder = resources.files("registry.schemas")
    for name in ("fleet.schema.json", "plan.schema.json"):
        text = (folder / name).read_text(encoding="utf-8")
        assert not INTERNAL.search(json.loads(json.dumps(text))), name


def test_openapi_document_and_a_result_have_no_internal_wording(client, demo):
    login_as(client, "viewer")
    answer = client.get("/api/v1/openapi.json", headers=bearer(api_token(demo, "viewer")))
    assert answer.status_code == 200 and '"openapi"' in answer.get_data(as_text=True)
    assert not INTERNAL.search(answer.get_data(as_text=True))
    page = client.get("/checks/result", query_string={
        "task": "verify-absence", "supply": "mains", "category": "III", "waveform": "ac",
        "voltage": "480 V", "voltage_to_earth": "277 V", "site": "Substation yard",
        "all": "1"}).get_data(as_text=True)
    assert "Best setup" in page or "No setup" in page
    assert not INTERNAL.search(page), INTERNAL.search(page)
