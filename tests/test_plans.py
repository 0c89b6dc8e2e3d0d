"""Plan files: validation that names every field, defaults of SPEC §4, the round trip, and
the shipped JSON Schema (checked with the jsonschema reference library)."""

import json
from datetime import date
from importlib import resources
from pathlib import Path

import jsonschema
import pytest
import yaml

from registry.errors import InvalidInput
from registry.plans import dump_plan, load_plan, parse_plan, plan_to_dict

PLANS = Path(__file__).resolve().parent.parent / "seeddata" / "plans"
SCHEMA = json.loads((resources.files("registry") / "schemas" / "plan.schema.json").read_text())


def board(**over):
    doc = {"format": "withstand-plan/1", "title": "DB-2", "task": "verify-absence",
           "circuit": {"supply": "mains", "category": "III", "waveform": "ac",
                       "voltage": "480 V", "voltage_to_earth": "277 V", "frequency": "60 Hz",
                       "source_impedance": "0.02 ohm"},
           "site": {"name": "North bench", "altitude": "40 m"}}
    for key, value in over.items():
        if key.startswith("circuit."):
            name = key.split(".", 1)[1]
            if value is None:
                doc["circuit"].pop(name, None)
            else:
                doc["circuit"][name] = value
        elif value is None:
            doc.pop(key, None)
        else:
            doc[key] = value
    return doc


def problems(doc, **kw):
    with pytest.raises(InvalidInput) as e:
        parse_plan(doc, **kw)
    return {p.path: p.message for p in e.value.problems}


def test_a_good_plan_and_its_defaults():
    plan = parse_plan(board(), on=date(2026, 6, 1))
    assert plan.circuit.voltage == 480.0 and plan.circuit.to_earth == 277.0
    assert plan.circuit.source_impedance == pytest.approx(0.02)
    assert plan.duration == 60.0 and plan.altitude == 40.0 and plan.wet is False
    assert plan.on == date(2026, 6, 1)
    plan = parse_plan(board(**{"circuit.voltage_to_earth": None}))
    assert plan.circuit.to_earth == 480.0  # default: the working voltage


@pytest.mark.parametrize("over,path,words", [
    ({"circuit.category": None}, "circuit.category", "needs its measurement category"),
    ({"circuit.waveform": "dc"}, "circuit.frequency", "no frequency"),
    ({"task": "discharge"}, "circuit.capacitance", "needs the capacitance"),
    ({"task": "measure-current"}, "circuit.current", "needs the current"),
    ({"circuit.voltage": "2 kA"}, "circuit.voltage", "is a current; this field needs a voltage"),
    ({"circuit.voltage": 480}, "circuit.voltage", "has no unit"),
    ({"circuit.voltage": "0 V"}, "circuit.voltage", "zero"),
    ({"circuit.prospective_current": "10 kA"}, "circuit.prospective_current", "not both"),
    ({"circuit.colour": "red"}, "circuit.colour", "is not a field"),
    ({"extra": 1}, "extra", "is not a field"),
    ({"format": "plan/2"}, "format", "withstand-plan/1"),
    ({"task": "paint"}, "task", "is not one of"),
    ({"discharge_to": "50 V"}, "discharge_to", "discharge tasks only"),
    ({"site": {"name": "Nowhere"}}, "site.altitude", "is missing"),
    ({"duration": "0 s"}, "duration", "zero"),
])
def test_errors_name_their_field(over, path, words):
    found = problems(board(**over))
    assert path in found, found
    assert words in found[path]


def test_isolated_circuit_with_a_category_is_an_error():
    doc = board(**{"circuit.supply": "isolated"})
    assert "mains circuits only" in problems(doc)["circuit.category"]


def test_every_problem_is_collected():
    doc = board(**{"circuit.category": None, "circuit.voltage": "lots", "extra": 1})
    assert {"circuit.category", "circuit.voltage", "extra"} <= set(problems(doc))


def test_site_altitude_from_the_fleet_sites():
    doc = board(site={"name": "North bench"})
    assert parse_plan(doc, sites={"North bench": 40.0}).altitude == 40.0
    assert "not a site of the fleet" in problems(board(site={"name": "X"}),
                                                 sites={"North bench": 40.0})["site.altitude"]


def test_round_trip_through_text():
    plan = parse_plan(board(duration="30 s", **{"circuit.capacitance": "4.7 uF"}))
    assert parse_plan(plan_to_dict(plan)) == plan
    assert parse_plan(yaml.safe_load(dump_plan(plan))) == plan
    assert plan_to_dict(plan)["circuit"]["voltage"] == "480 V"


def test_load_yaml_and_json_files(tmp_path):
    (tmp_path / "p.yaml").write_text(yaml.safe_dump(board()))
    (tmp_path / "p.json").write_text(json.dumps(board()))
    assert load_plan(tmp_path / "p.yaml") == load_plan(tmp_path / "p.json")
    (tmp_path / "bad.yaml").write_text("circuit: [unclosed")
    with pytest.raises(InvalidInput, match="not valid YAML"):
        load_plan(tmp_path / "bad.yaml")
    with pytest.raises(InvalidInput, match="cannot read"):
        load_plan(tmp_path / "missing.yaml")


def test_demo_plans_are_valid_and_match_the_schema():
    files = sorted(PLANS.glob("*.yaml"))
    assert len(files) >= 6
    for path in files:
        load_plan(path)
        jsonschema.validate(yaml.safe_load(path.read_text()), SCHEMA)


def test_schema_and_parser_agree_on_fields_and_rules():
    from registry import plans
    assert set(SCHEMA["properties"]) == set(plans.TOP_FIELDS)
    assert set(SCHEMA["properties"]["circuit"]["properties"]) == set(plans.CIRCUIT_FIELDS)
    assert set(SCHEMA["properties"]["site"]["properties"]) == set(plans.SITE_FIELDS)
    validator = jsonschema.Draft202012Validator(SCHEMA)
    for over in ({"circuit.category": None}, {"circuit.waveform": "dc"}, {"extra": 1},
                 {"task": "measure-current"}, {"discharge_to": "50 V"}):
        assert list(validator.iter_errors(board(**over))), over
    assert not list(validator.iter_errors(board()))
