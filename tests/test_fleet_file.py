"""The fleet file format: every kind of validation error names its path; the round trip is
lossless in YAML and JSON. (The format is the project's own.)"""

import json

import pytest

from registry.demo import demo_fleet_path
from registry.formats.common import dump_document, read_document
from registry.formats.fleet import fleet_to_document, parse_fleet
from registry.errors import InvalidInput


@pytest.fixture
def doc():
    return read_document(demo_fleet_path())


def problems(data, **kw):
    with pytest.raises(InvalidInput) as err:
        parse_fleet(data, **kw)
    return {p.path: p.message for p in err.value.problems}


def model(doc, key):
    return next(m for m in doc["models"] if m["key"] == key)


def index_of(doc, key):
    return next(i for i, m in enumerate(doc["models"]) if m["key"] == key)


def test_demo_fleet_is_valid_and_large_enough(doc):
    content = parse_fleet(doc)
    kinds = {m.kind for m in content.models}
    assert len(content.models) >= 10 and len(content.units) >= 30
    assert {"multimeter", "clamp-meter", "voltage-tester", "test-leads", "probe",
            "hv-divider", "discharge-tool"} <= kinds
    assert sum(1 for m in content.models if m.front_end) >= 2
    assert {u.status for u in content.units} == {"in-service", "on-hold", "away", "retired"}
    assert sum(1 for m in content.models if m.kind == "discharge-tool") >= 2
    lead_categories = {r.category for m in content.models if m.kind == "test-leads"
                       for r in m.ratings}
    assert len(lead_categories) >= 2
    assert any(m.tip_exposure and m.tip_exposure > 0.004 for m in content.models
               if m.kind == "probe")
    lowz = [m for m in content.models if m.kind == "multimeter"
            and any(x.input_resistance and x.input_resistance < 100e3 for x in m.modes
                    if x.measures == "voltage")]
    assert lowz and len(lowz) < sum(1 for m in content.models if m.kind == "multimeter")


def test_wrong_format_tag(doc):
    doc["format"] = "withstand-fleet/9"
    assert "format" in problems(doc)


def test_mode_quantity_of_wrong_dimension(doc):
    i = index_of(doc, "kx-7")
    model(doc, "kx-7")["modes"][1]["max_input"] = "2 kA"
    got = problems(doc)
    assert got[f"models[{i}].modes[1].max_input"] == \
        "'2 kA' is a current; this field needs a voltage"


def test_every_problem_is_reported_at_once(doc):
    i, j = index_of(doc, "kx-7"), index_of(doc, "kx-3")
    model(doc, "kx-7")["ratings"][0]["category"] = "V"
    model(doc, "kx-3")["modes"][0]["closes"] = ["S9"]
    model(doc, "kx-3")["front_end"][0]["gapp"] = "1 mm"
    doc["units"][3]["model"] = "no-such-model"
    doc["units"][4]["verified_on"] = "yesterday"
    doc["models"][0]["colour"] = "red"
    got = problems(doc)
    assert "is not allowed" in got[f"models[{i}].ratings[0].category"]
    assert "not a switch" in got[f"models[{j}].modes[0].closes[0]"]
    assert "has no parameter 'gapp'" in got[f"models[{j}].front_end[0].gapp"]
    assert "not a model" in got["units[3].model"]
    assert "date" in got["units[4].verified_on"]
    assert "not a field" in got["models[0].colour"]


@pytest.mark.parametrize("mutate, path, words", [
    (lambda d: d["models"][0].pop("kind"), "models[0].kind", "is required"),
    (lambda d: d["models"][0]["modes"][0].update(terminals=["V"]), "models[0].modes[0].terminals",
     "two different terminals"),
    (lambda d: d["models"][0]["modes"][0].update(measures="smell"), "models[0].modes[0].measures",
     "is not allowed"),
    (lambda d: d["models"][0]["ratings"][0].update(voltage="-5 V"), "models[0].ratings[0].voltage",
     "negative"),
    (lambda d: d["models"][0]["ratings"][0].update(voltage="0 V"), "models[0].ratings[0].voltage",
     "more than zero"),
    (lambda d: d["models"][0]["front_end"][0].update(type="capacitor"),
     "models[0].front_end[0].type", "is not allowed"),
    (lambda d: d["models"][0]["front_end"][0].update(resistance="1 kV"),
     "models[0].front_end[0].resistance", "is a voltage; this field needs a resistance"),
    (lambda d: d["models"][0]["front_end"][3].pop("gap"), "models[0].front_end[3]",
     "contact gap"),
    (lambda d: d["models"][0].update(max_altitude="2000"), "models[0].max_altitude", "no unit"),
    (lambda d: d["units"][0].update(status="lost"), "units[0].status", "is not allowed"),
    (lambda d: d["units"][0].update(site="Moon base"), "units[0].site", "not a site"),
    (lambda d: d["units"].append(dict(d["units"][0])), "units[35].tag", "appears twice"),
    (lambda d: d["models"].append(dict(d["models"][1])), "models[15].key", "appears twice"),
    (lambda d: d["units"][0].update(verification_due="2020-01-01"),
     "units[0].verification_due", "before verified_on"),
])
def test_single_problem_paths(doc, mutate, path, words):
    assert doc["models"][0]["key"] == "kx-7"
    mutate(doc)
    got = problems(doc)
    assert path in got, got
    assert words in got[path]


def test_unit_may_name_a_model_already_in_the_registry(doc):
    fragment = {"format": "withstand-fleet/1",
                "units": [{"tag": "NB-0100", "model": "kx-7", "site": "North bench"}]}
    problems(fragment)  # unknown without the registry
    content = parse_fleet(fragment, known_models={"kx-7"}, known_sites={"North bench"})
    assert content.units[0].model == "kx-7"


def test_a_model_key_that_is_a_list_is_a_problem_not_a_crash(doc):
    # found by comparing the split model reader with the one before it on generated files:
    # the set of model keys the units may name took the list and raised a TypeError
    doc["models"][0]["key"] = ["kx", "7"]
    got = problems(doc)
    assert "models[0].key" in got, got


@pytest.mark.parametrize("suffix", [".yaml", ".json"])
def test_round_trip_is_lossless(doc, tmp_path, suffix):
    first = fleet_to_document(parse_fleet(doc))
    path = tmp_path / f"fleet{suffix}"
    dump_document(first, path)
    again = fleet_to_document(parse_fleet(read_document(path)))
    assert again == first
    if suffix == ".json":
        json.loads(path.read_text())  # it really is JSON


def test_odd_precision_survives_round_trip(doc):
    model(doc, "kx-7")["modes"][0]["input_resistance"] = "10.0123456789 Mohm"
    first = parse_fleet(doc)
    back = parse_fleet(fleet_to_document(first))
    assert back.models[0].modes[0].input_resistance == pytest.approx(10.0123456789e6, rel=1e-12)


def test_malformed_text_is_a_message_not_a_traceback(tmp_path):
    bad = tmp_path / "broken.yaml"
    bad.write_text("format: withstand-fleet/1\nmodels: [\n")
    with pytest.raises(InvalidInput, match="not valid YAML"):
        read_document(bad)
    with pytest.raises(InvalidInput, match="does not exist"):
        read_document(tmp_path / "missing.yaml")
