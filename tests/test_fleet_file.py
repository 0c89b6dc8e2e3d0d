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


# Values of every unit field that the plain fast path (formats.fleet._PlainUnit) must either
# read as UnitDoc reads them or leave to UnitDoc: YAML numbers kept as text, Unicode space,
# format and control characters (Unicode general categories Zs, Cf, Cc, Cs, Co), the
# bidirectional overrides (CVE-2021-42574), the length limits on both sides, and dates that
# date.fromisoformat reads in other forms (Python 3.11 documentation: YYYYMMDD, week dates)
# or that fall outside the years the package takes.
def _yaml_scalar(text):
    from registry.formats.common import load_yaml
    return load_yaml(f"v: {text}")["v"]


TRICKY_UNIT_VALUES = {
    "tag": ["B-1", "b 1", "B-1\n", "", "x" * 64, "x" * 65, 5, _yaml_scalar("0123"), True,
            None, "Ä-1"],
    "serial": [_yaml_scalar("0123"), _yaml_scalar("1.50"), 1.5, True, "a\u00a0b", "a\u200bb",
               "a\u202eb", "a\x00b", "a\tb", "x" * 1000, "x" * 1001, "", "\u65e5\u672c",
               "a\ud800b", "\U0001f600", "\ue000", "a\u2028b", " spaced "],
    "site": [None, "North bench", "", "North\u00a0bench"],
    "status": ["in-service", "on-hold", "broken", None, ""],
    "verified_on": ["2026-03-01", " 2026-03-01", "20260301", "2026-W09-1", "2026-02-30",
                    "1899-12-31", "1900-01-01", "2200-12-31", "2201-01-01", 20260301,
                    __import__("datetime").date(2026, 3, 1), "2026-03-01T00:00", None, "",
                    "2026-03-01\n"],
    "notes": ["line 1\nline 2", "a\r\nb", "a\x0bb", "x" * 10000, "x" * 10001, "tab\t",
              "a\u2029b", _yaml_scalar("42")],
    "colour": ["red"],  # not a field of the format
}


def test_the_units_fast_path_reads_every_entry_as_unitdoc_alone_does():
    from pydantic import ValidationError

    from registry.formats.common import problems_from
    from registry.formats.fleet import UnitDoc, UnitRecord, _unit_records
    base = {"tag": "T-0", "model": "kx-7", "serial": "S1", "site": "North bench",
            "custodian": "Ines Marrow", "status": "in-service", "verified_on": "2026-03-01",
            "verification_due": "2027-03-01", "notes": ""}
    entries = [dict(base, tag=f"T-{i}") for i in range(5)]
    for name, values in TRICKY_UNIT_VALUES.items():
        for v in values:
            entries.append({**base, "tag": f"T-{len(entries)}", name: v})
            entries.append(dict(base, tag=f"T-{len(entries)}"))  # a plain one between
    entries += ["B-9", None, [], {"tag": "T-x"}]
    expected_records, expected_problems = [], []
    for i, entry in enumerate(entries):  # the oracle: UnitDoc, entry by entry
        try:
            expected_records.append(UnitRecord(**UnitDoc.model_validate(entry).model_dump()))
        except ValidationError as exc:
            expected_records.append(None)
            expected_problems += problems_from(exc, ("units", i))
    got_problems = []
    got = _unit_records({"units": entries}, got_problems)
    assert got == expected_records
    assert got_problems == expected_problems
    assert sum(r is None for r in got) >= 30 and sum(r is not None for r in got) >= 60
    # and the plain list alone takes the fast path whole, with the same records
    plain = [e for e, r in zip(entries, expected_records, strict=True) if r is not None
             and all(type(v) in (str, type(None)) for v in e.values())]
    assert _unit_records({"units": plain}, []) == [
        UnitRecord(**UnitDoc.model_validate(e).model_dump()) for e in plain]


def test_a_quantity_text_is_judged_by_each_field_that_holds_it(doc):
    # formats.common.quantity_of_text keeps a text's value for the next field holding it:
    # the same text must still meet each field's own bound (engine.quantity.FIELD_BOUNDS:
    # a site's altitude up to 20 000 m, IEC 60664-1 Table A.2's last row; a probe's exposed
    # tip up to 0.1 m, common practice (no source)), and a refused text is refused at every
    # path that holds it, not only the first.
    doc["sites"][0]["altitude"] = "0.5 m"
    probe = next(i for i, m in enumerate(doc["models"]) if m["kind"] == "probe")
    doc["models"][probe]["tip_exposure"] = "0.5 m"
    copies = [dict(doc["models"][index_of(doc, "kx-7")], key=f"kx-7-c{c}") for c in range(3)]
    for c in (0, 2):
        copies[c]["modes"] = [dict(x) for x in copies[c]["modes"]]
        copies[c]["modes"][1]["max_input"] = "2 kA"
    doc["models"] += copies
    got = problems(doc)
    first = len(doc["models"]) - 3
    assert set(got) == {f"models[{probe}].tip_exposure", f"models[{first}].modes[1].max_input",
                        f"models[{first + 2}].modes[1].max_input"}, got
    assert "more than" in got[f"models[{probe}].tip_exposure"]
    assert got[f"models[{first}].modes[1].max_input"] == \
        got[f"models[{first + 2}].modes[1].max_input"]
    del doc["models"][probe]["tip_exposure"]
    for c in (0, 2):
        doc["models"][first + c]["modes"][1]["max_input"] = "1 kV"
    content = parse_fleet(doc)
    assert content.sites[0].altitude == 0.5


def _front_end_index(doc):
    return next(i for i, m in enumerate(doc["models"]) if m.get("front_end"))


def _set(doc, where, value):
    """Set the field at ``where`` (a path of keys and indexes) in ``doc``."""
    *parents, last = where
    node = doc
    for part in parents:
        node = node[part]
    node[last] = value


def test_every_text_field_is_held_to_the_length_of_its_column(doc):
    # the reference is the database schema (store/models.py): a text one character longer
    # than its column is refused by the format with its path, never by the database at the
    # INSERT (PostgreSQL refuses it there: "value too long for type character varying")
    from registry.store import models as m
    fe = _front_end_index(doc)
    fields = [
        (("units", 0, "tag"), m.Unit.tag), (("units", 0, "serial"), m.Unit.serial),
        (("units", 0, "custodian"), m.Unit.custodian), (("sites", 0, "name"), m.Site.name),
        (("models", 0, "maker"), m.Model.maker), (("models", 0, "name"), m.Model.name),
        (("models", 0, "connector"), m.Model.connector), (("models", 0, "key"), m.Model.key),
        (("models", 0, "modes", 0, "label"), m.Mode.label),
        (("models", 0, "modes", 0, "key"), m.Mode.key),
        (("models", fe, "front_end", 0, "id"), m.FrontEndElement.element_id),
        (("models", fe, "front_end", 0, "between", 0), m.FrontEndElement.node_a),
    ]
    for where, column in fields:
        longest = column.type.length
        path = "".join(f"[{p}]" if isinstance(p, int) else f".{p}" for p in where)[1:]
        path = path.replace(".[", "[")
        for size, refused in ((longest, False), (longest + 1, True)):
            again = read_document(demo_fleet_path())
            _set(again, where, "x" * size)
            try:
                parse_fleet(again)
                got = {}
            except InvalidInput as exc:
                got = {p.path: p.message for p in exc.problems}
            assert (path in got) is refused, (path, size, got.get(path))
            if refused:
                assert got[path] == (f"is {longest + 1} characters long; this field takes "
                                     f"at most {longest}")


def test_a_serial_too_long_for_its_column_is_refused_on_postgres(pg_url, doc):
    from registry.store import db as store_db
    from registry.store import models as m
    from registry.store.fleet import import_fleet
    from sqlalchemy import func, select
    database = store_db.Database(pg_url)
    try:
        store_db.upgrade(database.engine)
        doc["units"][0]["serial"] = "x" * (m.Unit.serial.type.length + 1)
        with pytest.raises(InvalidInput) as err:
            import_fleet(database, doc)
        assert [p.path for p in err.value.problems] == ["units[0].serial"]
        with database.transaction() as s:
            assert s.scalar(select(func.count()).select_from(m.Unit)) == 0
    finally:
        database.dispose()
