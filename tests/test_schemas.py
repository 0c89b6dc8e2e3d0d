"""The JSON Schema files shipped in the package: generated from the validating models, kept in
step with them, and accepting the demo files (checked with the jsonschema reference library)."""

import json
from importlib import resources

import jsonschema

from registry.demo import demo_fleet_path
from registry.formats.common import read_document
from registry.formats.fleet import fleet_json_schema
from registry.plans import plan_json_schema


def shipped(name):
    return json.loads((resources.files("registry") / "schemas" / name).read_text())


def test_fleet_schema_is_current():
    # regenerate with: python -c "from registry.formats.fleet import fleet_json_schema ..."
    assert shipped("fleet.schema.json") == json.loads(json.dumps(fleet_json_schema()))


def test_plan_schema_is_current():
    # regenerate with: python -c "from registry.plans import plan_json_schema ..."
    # (DEVELOPERS.md, Conventions)
    assert shipped("plan.schema.json") == json.loads(json.dumps(plan_json_schema()))


def test_demo_fleet_validates_against_shipped_schema():
    # read as the package reads it (YAML 1.2 core schema): the ratio 1000:1 is text here
    doc = json.loads(json.dumps(read_document(demo_fleet_path()), default=str))
    jsonschema.validate(doc, shipped("fleet.schema.json"))


def test_schema_rejects_a_bare_number_quantity():
    doc = {"format": "withstand-fleet/1", "sites": [{"name": "Bench", "altitude": 40}]}
    errors = list(jsonschema.Draft202012Validator(shipped("fleet.schema.json")).iter_errors(doc))
    assert errors


def _defaults(node):
    if isinstance(node, dict):
        for key, value in node.items():
            if key == "properties":
                for prop in value.values():
                    if "default" in prop and prop.get("type") == "string":
                        yield prop
            yield from _defaults(value)
    elif isinstance(node, list):
        for item in node:
            yield from _defaults(item)


def test_shipped_schemas_are_valid_and_their_defaults_fit():
    for name in ("fleet.schema.json", "plan.schema.json"):
        schema = shipped(name)
        jsonschema.Draft202012Validator.check_schema(schema)
        for prop in _defaults(schema):
            assert isinstance(prop["default"], str), prop  # "2000 m", not 2000.0
