"""The steward's model form: a field for everything a fleet file's model holds, rows for the
ratings, modes and front end, validated by the fleet file's own validator (so its messages and
paths are an import's), each problem beside its field, 400 and nothing written."""

from __future__ import annotations

import re

import pytest
from sqlalchemy import func, select

from helpers.formtools import buttons_of, form_of
from helpers.web import login_as
from registry.engine import spec
from registry.formats.common import read_document
from registry.formats.fleet import model_to_document, parse_fleet
from registry.store import models as m
from registry.store.specs import all_models, model_spec


def get_form(client, path: str) -> dict:
    response = client.get(path)
    assert response.status_code == 200, response.get_data(as_text=True)
    return form_of(response.get_data(as_text=True))


def model_docs(database) -> dict[str, dict]:
    with database.transaction() as s:
        return {x.key: model_to_document(model_spec(x)) for x in all_models(s)}


def counts(database) -> tuple:
    with database.transaction() as s:
        return tuple(s.scalar(select(func.count()).select_from(t))
                     for t in (m.Model, m.Rating, m.Mode, m.FrontEndElement, m.Change))


def post(client, path: str, form: dict, action: str = "save"):
    return client.post(path, data=dict(form, action=action))


def demo_keys() -> list[str]:
    from importlib import resources
    doc = read_document(resources.files("registry.seeddata") / "fleet.yaml")
    return [x["key"] for x in doc["models"]]


def test_every_demo_model_round_trips_through_the_form(client, demo):
    """edit -> save -> edit loses nothing, on every demo model: the form as served, posted
    back unchanged, changes no field and records no change, and the form served again is the
    same; the document the form makes is the one stored, field for field."""
    from registry.web.model_form import document_from_form
    login_as(client, "steward")
    keys = demo_keys()
    assert len(keys) >= 10
    before, n = model_docs(demo), counts(demo)
    for key in keys:
        form = get_form(client, f"/models/{key}/edit")
        # what the form makes validates (with the fleet file's validator) to the stored model
        made = parse_fleet({"format": "withstand-fleet/1",
                            "models": [document_from_form(form, key)]}).models[0]
        assert model_to_document(made) == before[key], key
        response = post(client, f"/models/{key}/edit", form)
        assert response.status_code == 302, (key, response.get_data(as_text=True)[:3000])
        page = client.get(response.headers["Location"]).get_data(as_text=True)
        assert f"Nothing changed in {key}." in page
        again = get_form(client, f"/models/{key}/edit")
        assert again.pop("csrf_token") and form.pop("csrf_token")
        assert again == form, key
    assert model_docs(demo) == before and counts(demo) == n


# -- a model holding every field a fleet file's model can hold --------------------------------

# invented values, each valid for its field (the validator's own bounds judge them)
PARAM_TEXT = {
    "resistance": "2.2 kohm", "power": "3 W", "pulse_energy": "4 J", "max_voltage": "1.5 kV",
    "hold_current": "60 mA", "trip_current": "120 mA", "max_current": "3 A", "trip_time": "5 s",
    "trip_time_current": "1 A", "tripped_power": "900 mW", "varistor_voltage": "1.1 kV",
    "max_dc": "850 V", "max_ac": "680 V", "clamp_voltage": "1.8 kV", "clamp_current": "10 A",
    "energy": "90 J", "peak_current": "4.5 kA", "breakdown_voltage": "1.2 kV",
    "peak_power": "600 W", "sparkover_dc": "1.4 kV", "sparkover_impulse": "2.2 kV",
    "arc_voltage": "15 V", "holdover_voltage": "120 V", "current": "11 A", "voltage": "1 kV",
    "voltage_dc": "1 kV", "breaking_capacity": "20 kA", "i2t": "400 A^2*s", "gap": "3 mm",
    "withstand": "8 kV"}
FUSE = {"current": "11 A", "voltage": "1 kV", "voltage_dc": "800 V",
        "breaking_capacity": "20 kA", "i2t": "400 A^2*s"}
NODES = ["V", "n1", "n2", "n3", "n4", "n5", "n6", "n7", "COM"]
ELEMENTS = [dict({"id": f"E{i}", "type": t, "between": [NODES[i], NODES[i + 1]]},
                 **{p: PARAM_TEXT[p] for p in spec.ELEMENT_PARAMS[t]})
            for i, t in enumerate(spec.ELEMENT_TYPES)]
EVERY = {
    "key": "every-field", "maker": "Quillfeather Labs", "name": "All-fields 9",
    "kind": "multimeter", "connectors": ["4mm-shrouded", "bnc"], "integrated_leads": True,
    "max_altitude": "3000 m", "pollution_degree": 3,
    "ratings": [{"category": "III", "voltage": "1 kV", "transient": "8 kV",
                 "max_altitude": "2000 m"},
                {"category": "none", "voltage": "2 kV", "transient": "12 kV"}],
    "modes": [{"key": "vdc", "label": "DC volts", "measures": "voltage", "waveform": "dc",
               "terminals": ["V", "COM"], "input_resistance": "10 Mohm",
               "input_capacitance": "100 pF", "max_input": "1 kV", "max_current": "2 mA",
               "max_duration": "60 s", "discharge_energy": "3 J", "fuse": FUSE,
               "closes": ["E6"]},
              {"key": "jaws", "label": "Jaws", "measures": "current", "clamp": True}],
    "front_end": ELEMENTS, "connector": "4mm-tip", "current_rating": "10 A",
    "tip_exposure": "4 mm", "fuse": FUSE, "attenuation": "1000:1", "required_load": "1 Mohm",
    "output_resistance": "50 ohm", "min_voltage": "10 V", "resistance": "2 kohm",
    "energy": "500 J", "power": "20 W", "max_voltage": "1 kV"}


def test_the_every_field_model_holds_every_field_the_validator_knows():
    """So that a field added to the fleet format and not to the form fails here."""
    from registry.formats.fleet import FuseDoc, ModeDoc, ModelDoc, RatingDoc
    assert set(EVERY) == set(ModelDoc.model_fields)
    assert set().union(*EVERY["ratings"]) == set(RatingDoc.model_fields)
    assert set().union(*EVERY["modes"]) == set(ModeDoc.model_fields)
    assert set(FUSE) == set(FuseDoc.model_fields)
    assert {e["type"] for e in ELEMENTS} == set(spec.ELEMENT_TYPES)
    assert all(set(e) - {"id", "type", "between"} == set(spec.ELEMENT_PARAMS[e["type"]])
               for e in ELEMENTS)


def form_from_document(doc: dict) -> dict:
    """The fields a steward fills in for ``doc``, by the form's naming (written out here by
    hand, so the test states the names rather than borrowing the app's code)."""
    out = {k: str(doc.get(k, "")) for k in ("key", "kind", "maker", "name")}
    for i, c in enumerate(doc.get("connectors", [])):
        out[f"connectors-{i}"] = c
    if doc.get("integrated_leads"):
        out["integrated_leads"] = "1"
    for k in ("max_altitude", "pollution_degree", "connector", "current_rating",
              "tip_exposure", "attenuation", "required_load", "output_resistance",
              "min_voltage", "resistance", "energy", "power", "max_voltage"):
        if k in doc:
            out[k] = str(doc[k])
    for k, v in (doc.get("fuse") or {}).items():
        out[f"fuse-{k}"] = v
    for i, r in enumerate(doc.get("ratings", [])):
        out.update({f"ratings-{i}-{k}": v for k, v in r.items()})
    for i, md in enumerate(doc.get("modes", [])):
        p = f"modes-{i}-"
        for k, v in md.items():
            if k == "terminals":
                out.update({f"{p}terminals-{j}": t for j, t in enumerate(v)})
            elif k == "fuse":
                out[p + "fused"] = "1"
                out.update({f"{p}fuse-{f}": x for f, x in v.items()})
            elif k == "closes":
                out[p + "closes"] = ", ".join(v)
            elif k == "clamp":
                out[p + "clamp"] = "1"
            else:
                out[p + k] = v
    for i, e in enumerate(doc.get("front_end", [])):
        p = f"front_end-{i}-"
        for k, v in e.items():
            if k == "between":
                out.update({f"{p}between-{j}": t for j, t in enumerate(v)})
            else:
                out[p + k] = v
    return out


def csrf(client, path="/models/_new") -> str:
    return get_form(client, path)["csrf_token"]


def test_a_model_with_every_field_is_created_and_round_trips(client, demo):
    login_as(client, "steward")
    data = dict(form_from_document(EVERY), csrf_token=csrf(client))
    response = post(client, "/models/_new", data)
    assert response.status_code == 302, response.get_data(as_text=True)[:4000]
    assert response.headers["Location"].endswith("/models/every-field")
    expected = model_to_document(parse_fleet({"format": "withstand-fleet/1",
                                              "models": [EVERY]}).models[0])
    assert model_docs(demo)["every-field"] == expected
    with demo.transaction() as s:
        changes = s.scalars(select(m.Change).where(m.Change.entity_key == "every-field")).all()
        # the new model is on the change chain, every field, and who added it
        assert {c.actor for c in changes} == {"steward"} and len(changes) > 100
        assert any(c.field == "front_end[E6].gap" and c.new == "3 mm" for c in changes)
    form = get_form(client, "/models/every-field/edit")
    n = counts(demo)
    response = post(client, "/models/every-field/edit", form)
    assert response.status_code == 302
    assert "Nothing changed in every-field." in client.get(
        response.headers["Location"]).get_data(as_text=True)
    assert model_docs(demo)["every-field"] == expected and counts(demo) == n


# -- edits and their records ------------------------------------------------------------------

def test_steward_edits_a_rating_and_the_change_is_recorded(client, demo):
    login_as(client, "steward")
    form = get_form(client, "/models/kx-7/edit")
    stored = model_docs(demo)["kx-7"]["ratings"][0]
    # the stored quantity, with its unit, and the stored category chosen
    assert form["ratings-0-voltage"] == stored["voltage"]
    assert form["ratings-0-category"] == stored["category"]
    response = post(client, "/models/kx-7/edit", dict(form, **{"ratings-0-voltage": "1100 V"}))
    assert response.status_code == 302
    page = client.get(response.headers["Location"]).get_data(as_text=True)
    assert "Saved kx-7: 1 field changed." in page
    assert f"CAT {stored['category']} 1.1 kV" in page
    with demo.transaction() as s:
        change = s.scalar(select(m.Change).where(m.Change.entity == "model",
                                                 m.Change.entity_key == "kx-7"))
        assert (change.actor, change.field, change.old, change.new) == (
            "steward", "ratings[0].voltage", stored["voltage"], "1.1 kV")


def test_rows_are_added_and_removed_without_saving(client, demo):
    login_as(client, "steward")
    form = get_form(client, "/models/kx-7/edit")
    before, n = model_docs(demo), counts(demo)
    modes = sum(1 for k in form if re.fullmatch(r"modes-\d+-key", k))
    # "Add a mode" shows the form again with one more, empty, mode row; nothing is saved
    response = post(client, "/models/kx-7/edit", form, action="add-modes")
    assert response.status_code == 200
    grown = form_of(response.get_data(as_text=True))
    assert grown[f"modes-{modes}-key"] == "" and f"modes-{modes + 1}-key" not in grown
    assert ("action", f"remove-modes-{modes}") in buttons_of(response.get_data(as_text=True))
    # saved as it stands, the empty row is dropped: nothing changes
    response = post(client, "/models/kx-7/edit", grown)
    assert response.status_code == 302 and model_docs(demo) == before and counts(demo) == n
    # filled in and saved, the new mode is stored
    grown.update({f"modes-{modes}-key": "ohm2", f"modes-{modes}-label": "Ohms",
                  f"modes-{modes}-measures": "resistance", f"modes-{modes}-terminals-0": "V",
                  f"modes-{modes}-terminals-1": "COM", f"modes-{modes}-max_input": "600 V"})
    response = post(client, "/models/kx-7/edit", grown)
    assert response.status_code == 302, re.findall(r'field-error" role="alert">(.*?)<',
                                                    response.get_data(as_text=True))
    after = model_docs(demo)["kx-7"]["modes"]
    assert after[-1] == {"key": "ohm2", "label": "Ohms", "measures": "resistance",
                         "terminals": ["V", "COM"], "max_input": "600 V"}
    # "Remove" takes the row out of the form; saving then removes it from the model
    form = get_form(client, "/models/kx-7/edit")
    response = post(client, "/models/kx-7/edit", form, action=f"remove-modes-{modes}")
    assert response.status_code == 200 and len(model_docs(demo)["kx-7"]["modes"]) == modes + 1
    shrunk = form_of(response.get_data(as_text=True))
    assert f"modes-{modes}-key" not in shrunk
    assert post(client, "/models/kx-7/edit", shrunk).status_code == 302
    assert model_docs(demo)["kx-7"] == before["kx-7"]


def test_changing_an_elements_type_shows_that_types_fields(client, demo):
    login_as(client, "steward")
    form = get_form(client, "/models/kx-7/edit")
    i = next(int(k.split("-")[1]) for k, v in form.items()
             if re.fullmatch(r"front_end-\d+-type", k) and v == "resistor")
    response = post(client, "/models/kx-7/edit", dict(form, **{f"front_end-{i}-type": "ptc"}),
                    action="refresh")
    assert response.status_code == 200
    shown = form_of(response.get_data(as_text=True))
    for name in spec.ELEMENT_PARAMS["ptc"]:
        assert f"front_end-{i}-{name}" in shown
    # the resistor's power, typed before, is still shown (and would be refused on saving)
    assert f"front_end-{i}-power" in shown
    # a row just added keeps its place while its type changes, though nothing is typed yet
    response = post(client, "/models/kx-7/edit", form, action="add-front_end")
    grown = form_of(response.get_data(as_text=True))
    n = sum(1 for k in grown if re.fullmatch(r"front_end-\d+-type", k)) - 1
    assert grown[f"front_end-{n}-type"] == "resistor" and grown[f"front_end-{n}-new"] == "1"
    response = post(client, "/models/kx-7/edit",
                    dict(grown, **{f"front_end-{n}-type": "switch"}), action="refresh")
    shown = form_of(response.get_data(as_text=True))
    assert shown[f"front_end-{n}-type"] == "switch" and f"front_end-{n}-gap" in shown


# -- every error path: 4xx, the import's message beside its field, nothing written -----------

def import_problems(doc: dict) -> dict[str, str]:
    """What an import of a file holding ``doc`` as its only model says, path -> message."""
    from registry.errors import InvalidInput
    with pytest.raises(InvalidInput) as exc:
        parse_fleet({"format": "withstand-fleet/1", "models": [doc]},
                    known_models={"kx-7"}, known_sites=set())
    return {p.path.removeprefix("models[0].").removeprefix("models[0]"): p.message
            for p in exc.value.problems}


def message_beside(page: str, field_id: str) -> list[str]:
    """The messages shown beside ``field_id``: inside the label of an input or a select, or
    inside the element (a pair of boxes, a row) that carries the id."""
    import html
    at = page.index(f'id="{field_id}"')
    tag = page.rfind("<", 0, at)
    if page.startswith(("<input", "<select"), tag):
        start, end = page.rfind("<label", 0, at), page.find("</label>", at)
    else:
        name = re.match(r"<(\w+)", page[tag:]).group(1)
        start, end = tag, page.find(f"</{name}>", at)
    return [html.unescape(x) for x in re.findall(
        r'<span class="field-error" role="alert">(.*?)</span>', page[start:end])]


EDIT_ERRORS = [
    # (form changes, the path the validator names, the field beside which it is shown)
    ({"ratings-0-voltage": "2 kA"}, "ratings[0].voltage", "f-ratings-0-voltage"),
    ({"ratings-0-voltage": ""}, "ratings[0].voltage", "f-ratings-0-voltage"),
    ({"ratings-0-category": "V"}, "ratings[0].category", "f-ratings-0-category"),
    ({"modes-1-max_input": "12 furlongs"}, "modes[1].max_input", "f-modes-1-max_input"),
    ({"modes-1-max_input": "1e400 V"}, "modes[1].max_input", "f-modes-1-max_input"),
    ({"modes-1-closes": "S9"}, "modes[1].closes[0]", "f-modes-1-closes"),
    ({"modes-0-terminals-1": ""}, "modes[0].terminals", "f-modes-0-terminals"),
    ({"modes-0-key": "vac"}, "modes[1].key", "f-modes-1-key"),
    ({"modes-0-clamp": "1"}, "modes[0].terminals", "f-modes-0-terminals"),
    ({"modes-0-fuse-current": "11 V"}, "modes[0].fuse.current", "f-modes-0-fuse-current"),
    ({"front_end-0-resistance": "1 kV"}, "front_end[0].resistance", "f-front_end-0-resistance"),
    ({"front_end-0-gap": "1 mm"}, "front_end[0].gap", "f-front_end-0-gap"),
    ({"front_end-1-id": "PT1!"}, "front_end[1].id", "f-front_end-1-id"),
    ({"front_end-0-between-1": ""}, "front_end[0].between[1]", "f-front_end-0-between"),
    ({"max_altitude": "nan m"}, "max_altitude", "f-max_altitude"),
    ({"pollution_degree": "9"}, "pollution_degree", "f-pollution_degree"),
    ({"pollution_degree": "9" * 400}, "pollution_degree", "f-pollution_degree"),
    ({"kind": "toaster"}, "kind", "f-kind"),
    ({"attenuation": "1:1000"}, "attenuation", "f-attenuation"),
    ({"maker": "Quill\x00feather"}, "maker", "f-maker"),
    ({"name": "x" * 1001}, "name", "f-name"),
    ({"connectors-0": "4mm\u202eshrouded"}, "connectors[0]", "f-connectors-0"),
    ({"fuse-i2t": "3 J"}, "fuse.i2t", "f-fuse-i2t"),
]


@pytest.mark.parametrize("change,path,field", EDIT_ERRORS,
                         ids=[e[1] + "-" + str(i) for i, e in enumerate(EDIT_ERRORS)])
def test_a_refused_edit_shows_the_import_message_beside_its_field(client, demo, change, path,
                                                                  field):
    from registry.web.model_form import document_from_form
    login_as(client, "steward")
    form = get_form(client, "/models/kx-7/edit")
    before, n = model_docs(demo), counts(demo)
    bad = dict(form, **change)
    response = post(client, "/models/kx-7/edit", bad)
    page = response.get_data(as_text=True)
    assert response.status_code == 400, page[:3000]
    assert model_docs(demo) == before and counts(demo) == n  # nothing written
    expected = import_problems(document_from_form(bad, "kx-7"))
    assert path in expected, expected
    assert f"{path}: {expected[path]}" in message_beside(page, field)
    # what was typed stays in its box
    for name, value in change.items():
        if value.isprintable() and name not in ("pollution_degree", "kind") and (
                "category" not in name):
            assert form_of(page)[name] == value


def test_a_new_model_needs_a_new_key(client, demo):
    login_as(client, "steward")
    token = csrf(client)
    n = counts(demo)
    doc = {"key": "kx-7", "kind": "test-leads", "maker": "Quillfeather Labs", "name": "Copy",
           "ratings": [{"category": "III", "voltage": "1 kV"}]}
    response = post(client, "/models/_new", dict(form_from_document(doc), csrf_token=token))
    page = response.get_data(as_text=True)
    assert response.status_code == 400
    assert "key: &#39;kx-7&#39; is already a model" in page
    assert model_docs(demo)["kx-7"]["kind"] == "multimeter" and counts(demo) == n
    for key in ("", "-lead", "_new", "x" * 65):
        response = post(client, "/models/_new", dict(form_from_document(dict(doc, key=key)),
                                                     csrf_token=token))
        page = response.get_data(as_text=True)
        assert response.status_code == 400, key
        assert f"key: {import_problems(dict(doc, key=key))['key']}" in message_beside(
            page, "f-key"), key
    assert counts(demo) == n


def test_an_instrument_needs_a_mode_and_a_divider_its_attenuation(client, demo):
    login_as(client, "steward")
    token = csrf(client)
    n = counts(demo)
    for doc, path in (({"key": "m-1", "kind": "multimeter"}, "modes"),
                      ({"key": "d-1", "kind": "hv-divider"}, "attenuation")):
        response = post(client, "/models/_new", dict(form_from_document(doc), csrf_token=token))
        page = response.get_data(as_text=True)
        assert response.status_code == 400
        message = import_problems(doc)[path]
        assert f"{path}: {message}" in {__import__("html").unescape(x) for x in re.findall(
            r'<span class="field-error" role="alert">(.*?)</span>', page)}
    assert counts(demo) == n


def test_the_form_refuses_odd_requests_and_writes_nothing(client, demo):
    login_as(client, "steward")
    form = get_form(client, "/models/kx-7/edit")
    n, before = counts(demo), model_docs(demo)
    for data, says in (
            (dict(form, action="launch"), "is not a button of this form"),
            (dict(form, **{"ratings-0-x\x00": "1"}), "the name holds"),
            ({**form, **{f"ratings-{i}-voltage": "1 kV" for i in range(250)}},
             "ratings: holds more than 200 rows"),
            (dict(form, key="kx-8"), None)):  # the key is the URL's: a posted one is ignored
        response = client.post("/models/kx-7/edit", data=data)
        page = response.get_data(as_text=True)
        if says is None:
            assert response.status_code == 302 and "kx-8" not in model_docs(demo)
            continue
        assert response.status_code == 400 and says in __import__("html").unescape(page), says
    assert counts(demo) == n and model_docs(demo) == before
    # without the CSRF token nothing is taken
    form.pop("csrf_token")
    assert client.post("/models/kx-7/edit", data=dict(form, **{
        "ratings-0-voltage": "1100 V"})).status_code == 400
    assert model_docs(demo) == before


def test_only_a_steward_may_create_or_edit(client, demo):
    login_as(client, "technician")
    assert client.get("/models/_new").status_code == 403
    assert client.get("/models/kx-7/edit").status_code == 403
    assert client.post("/models/_new", data={"key": "x"}).status_code in (400, 403)
    page = client.get("/models/").get_data(as_text=True)
    assert "/models/_new" not in page


def test_the_form_has_no_raw_document_box(client, demo):
    login_as(client, "steward")
    for path in ("/models/_new", "/models/kx-7/edit", "/models/ks-hv30/edit"):
        page = client.get(path).get_data(as_text=True)
        assert "<textarea" not in page and "YAML" not in page and "JSON" not in page
        assert '<select name="kind"' in page
    page = client.get("/models/ks-hv30/edit").get_data(as_text=True)
    assert form_of(page)["attenuation"] == "1000:1"


@pytest.mark.parametrize("ratio,value", [("10:1", 10.0), ("100:1", 100.0), ("1000:1", 1000.0),
                                         ("2000:2", 1000.0), ("1000", 1000.0)])
def test_a_ratio_is_read_as_that_ratio(client, demo, ratio, value):
    # YAML 1.1 would read 1000:1 as the base-60 number 60001; the form takes the fleet
    # file's ratio parser (input:output, at least 1)
    login_as(client, "steward")
    form = get_form(client, "/models/ks-hv30/edit")
    response = post(client, "/models/ks-hv30/edit", dict(form, attenuation=ratio))
    assert response.status_code == 302, response.get_data(as_text=True)[:3000]
    with demo.transaction() as s:
        assert s.scalar(select(m.Model.attenuation).where(m.Model.key == "ks-hv30")) == value
