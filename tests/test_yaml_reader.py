"""The one YAML reader (``formats.common.load_yaml``): plain scalars resolve by the YAML 1.2 core
schema, so a divider's ratio stays text and is parsed as a ratio; text fields keep the text a
number was written as; aliases are refused; a file that is not UTF-8 is a message.

The reference for what each scalar means is the YAML 1.2.2 specification, 10.3 "Core Schema"
(null, bool true/false only, int [-+]?[0-9]+ / 0o / 0x, float), against YAML 1.1's
"Sexagesimal" int and bool types (yaml.org/type/int.html, yaml.org/type/bool.html), which
PyYAML's safe_load follows."""

import time

import pytest
import yaml

from registry.demo import demo_fleet_path
from registry.errors import InvalidInput
from registry.formats.common import load_json, load_yaml, read_document
from registry.formats.fleet import load_fleet_file, parse_fleet, parse_ratio
from registry.plans import load_plan, parse_plan

FLEET = """\
format: withstand-fleet/1
sites: [{{name: North bench, altitude: 40 m}}]
models:
  - key: dv-1
    kind: hv-divider
    connector: 4mm-shrouded
    ratings: [{{category: none, voltage: 40 kV, transient: 48 kV}}]
    attenuation: {ratio}
units:
  - {{tag: {tag}, model: dv-1, serial: {serial}, site: North bench}}
"""

PLAN = """\
format: withstand-plan/1
title: {title}
task: measure-voltage
circuit: {{supply: isolated, waveform: dc, voltage: 20 kV}}
site: {{name: {site}, altitude: 40 m{extra}}}
"""


def fleet_text(ratio="1000:1", tag="DV-0001", serial='"A1"'):
    return FLEET.format(ratio=ratio, tag=tag, serial=serial)


def problems_of(fn, *args, **kw):
    with pytest.raises(InvalidInput) as err:
        fn(*args, **kw)
    return {p.path: p.message for p in err.value.problems}


def test_yaml_1_1_reads_a_ratio_as_base_60_and_the_core_schema_does_not():
    # YAML 1.1 sexagesimal int: 1000:1 = 1000*60 + 1 = 60001 (yaml.org/type/int.html); the 1.2
    # core schema has no such form, so the scalar is a string.
    assert yaml.safe_load("a: 1000:1")["a"] == 60001
    assert load_yaml("a: 1000:1")["a"] == "1000:1"


@pytest.mark.parametrize("text,value", [
    # YAML 1.2.2 10.3.2: only true/false spellings are booleans; 0123 is decimal 123 (1.1:
    # octal 83), 0o17 is octal 15, 0x1F is 31, 1e3 a float; ~ and null are null.
    ("NO", "NO"), ("yes", "yes"), ("on", "on"), ("off", "off"), ("y", "y"),
    ("true", True), ("False", False), ("0123", 123), ("0o17", 15), ("0x1F", 31),
    ("1e3", 1000.0), ("~", None), ("null", None), ("1_000", "1_000"),
    ("2026-03-01", "2026-03-01"), ("1:30", "1:30"),
])
def test_plain_scalars_follow_the_yaml_1_2_core_schema(text, value):
    got = load_yaml(f"a: {text}")["a"]
    assert got == value
    assert isinstance(got, bool) == isinstance(value, bool)


@pytest.mark.parametrize("ratio,value", [("10:1", 10.0), ("100:1", 100.0),
                                         ("1000:1", 1000.0)])
def test_an_unquoted_ratio_in_a_fleet_file_is_that_ratio(tmp_path, ratio, value):
    path = tmp_path / "fleet.yaml"
    path.write_text(fleet_text(ratio))
    (m,) = load_fleet_file(path).models
    assert m.attenuation == value  # N:1 is N (the ratio as written, input over output)


@pytest.mark.parametrize("written,value", [
    ("1000", 1000.0), ('"1000"', 1000.0), ("2000:2", 1000.0), ("'1000 : 1'", 1000.0),
    ("1:1", 1.0), ("12.5:1", 12.5)])
def test_the_ratio_parser_takes_n_to_1_n_to_m_and_a_bare_number(written, value):
    (m,) = parse_fleet(load_yaml(fleet_text(written))).models
    assert m.attenuation == value  # N:M is N/M by definition of a ratio


@pytest.mark.parametrize("written", ["1:1000", "10:0", "ten", "true", "0.5", "1000:1:1",
                                     "-10:1", ".inf"])
def test_anything_else_is_refused_with_its_path(written):
    problems = problems_of(parse_fleet, load_yaml(fleet_text(written)))
    assert "attenuation" in problems["models[0].attenuation"] \
        or "ratio" in problems["models[0].attenuation"]


def test_a_ratio_is_never_taken_from_a_true_false_value():
    with pytest.raises(ValueError):
        parse_ratio(True)  # True == 1 in Python: it must not pass as 1:1


def test_the_demo_divider_reads_as_1000_to_1():
    # seeddata/fleet.yaml: ks-hv30, "attenuation: 1000:1" unquoted (a 1000:1 divider)
    models = {m.key: m for m in load_fleet_file(demo_fleet_path()).models}
    assert models["ks-hv30"].attenuation == 1000.0


def test_text_fields_keep_the_text_a_number_was_written_as():
    content = parse_fleet(load_yaml(fleet_text(tag="NO", serial="0123")))
    (unit,) = content.units
    assert unit.tag == "NO"         # YAML 1.1 would make this the boolean false
    assert unit.serial == "0123"    # YAML 1.1 octal 83, 1.2 decimal 123: the text stays
    assert str(load_yaml("a: 0123")["a"]) == "0123"  # and a number prints as it was written
    unit = parse_fleet(load_yaml(fleet_text(serial="0o17"))).units[0]
    assert unit.serial == "0o17"
    unit = parse_fleet(load_yaml(fleet_text(serial="1.50"))).units[0]
    assert unit.serial == "1.50"
    # JSON: numbers keep their text too
    unit = parse_fleet(load_json(
        '{"format": "withstand-fleet/1", "models": [{"key": "dv-1", "kind": "hv-divider",'
        ' "attenuation": 1000}], "units": [{"tag": "D1", "model": "dv-1", "serial": 1.50}]}'
    )).units[0]
    assert unit.serial == "1.50"


def test_a_true_false_value_in_a_text_field_is_refused_with_a_hint_to_quote_it():
    problems = problems_of(parse_fleet, load_yaml(fleet_text(tag="true", serial="false")))
    assert "quotes" in problems["units[0].tag"] and "true" in problems["units[0].tag"]
    assert "quotes" in problems["units[0].serial"]


def test_plan_text_fields_keep_their_text_and_a_yes_is_not_a_boolean(tmp_path):
    path = tmp_path / "plan.yaml"
    path.write_text(PLAN.format(title="1000:1", site="0123", extra=""))
    plan = load_plan(path)
    assert plan.title == "1000:1" and plan.site == "0123"
    path.write_text(PLAN.format(title="DB-2", site="North bench", extra=", wet: yes"))
    # 'yes' is text in YAML 1.2; wet takes true or false only, so it is refused, not guessed
    assert "true or false" in problems_of(load_plan, path)["site.wet"]
    path.write_text(PLAN.format(title="true", site="North bench", extra=""))
    assert "quotes" in problems_of(load_plan, path)["title"]


def test_plan_site_name_given_as_a_number_matches_the_fleet_site():
    doc = load_yaml(PLAN.format(title="x", site="7", extra="").replace(", altitude: 40 m", ""))
    assert parse_plan(doc, sites={"7": 1200.0}).altitude == 1200.0


def test_an_alias_bomb_is_refused_before_it_expands():
    # The "billion laughs" shape: nine levels of ten aliases each would be 10**9 strings.
    lines = ['a0: &a0 "lol"']
    lines += [f"a{i}: &a{i} [{', '.join([f'*a{i - 1}'] * 10)}]" for i in range(1, 10)]
    start = time.process_time()
    with pytest.raises(InvalidInput, match="anchors and aliases"):
        load_yaml("\n".join(lines))
    assert time.process_time() - start < 5  # refused at once, not after expanding
    with pytest.raises(InvalidInput, match="line 2"):
        load_yaml("a: 1\nb: *x\n")


def test_anchor_alone_and_duplicate_keys_are_refused():
    with pytest.raises(InvalidInput, match="anchors and aliases"):
        load_yaml("a: &x 1\n")
    with pytest.raises(InvalidInput, match="given twice"):
        load_yaml("attenuation: 10:1\nattenuation: 1000:1\n")


def test_a_tag_outside_the_core_schema_is_refused():
    with pytest.raises(InvalidInput, match="not accepted"):
        load_yaml("a: !!binary aGk=\n")


@pytest.mark.parametrize("name", ["fleet.yaml", "plan.json"])
def test_a_file_that_is_not_utf8_is_a_message_naming_it(tmp_path, name):
    path = tmp_path / name
    path.write_bytes("format: withstand-fleet/1\nsites: [{name: Bänk}]\n".encode("latin-1"))
    with pytest.raises(InvalidInput, match="not UTF-8") as err:
        read_document(path)
    assert str(path) in str(err.value)
    with pytest.raises(InvalidInput, match="not UTF-8"):
        load_plan(path)


SAME_EITHER_WAY = [
    "a: 1000:1\nb: 0123\nc: 1.50\nd: NO\ne: on\nf: ~\ng: 0x1F\nh: .inf\n",
    "- {tag: B-1, serial: 0123}\n- [1, 2, [3, {x: y}]]\n",
    "a: &x 1\nb: *x\n",  # refused: an alias
    "a: 1\na: 2\n",  # refused: a key given twice
    "a: !!binary aGVsbG8=\n",  # refused: a tag outside the core schema
    "a: [1, 2\n",  # refused: malformed
    "text: 'quoted: yes'\nnote: |\n  two\n  lines\n",
    "[" * 70 + "]" * 70,  # refused: deeper than MAX_DEPTH
    "[" * 63 + "x" + "]" * 63,  # the deepest taken: 64 levels with the scalar
    "[" * 64 + "x" + "]" * 64,  # refused: one more
    "a: !!str 0123\nb: ! 12\nc: !!int '12'\nd: !!bool yes\ne: !!null ''\nf: !!float 1\n",
    "a: !!map {b: 1}\nc: !!seq [1]\nd: !!str x\n",
    "a: !!set {b}\n",  # refused: a tag outside the core schema
    "a: !!omap [b: 1]\n",  # refused
    "a: !local x\n",  # refused
    "? [a, b]\n: c\n",  # refused: an unhashable key
    "{a: {b: 1, b: 2}}",  # refused: a key given twice, nested
    "1: a\n1.0: b\n",  # refused: the same key (1 == 1.0)
    "a: 1\n---\nb: 2\n",  # refused: two documents
    "",
    "---\n",
    "--- x\n...\n",
    "'plain text'",
    "a: \"\\u00e9 \\t\"\nb: 'it''s'\nc: >\n  folded\n  text\n",
    "a:\n  - b: 1\n    c: [x, {d: e}]\n  - []\n  - {}\n",
    "<<: {a: 1}\n",  # a plain key named <<: the core schema has no merge type
]


def _read(loader, text):
    try:
        value = yaml.load(text, Loader=loader)  # noqa: S506 - the package's safe loaders
    except yaml.YAMLError:
        return "refused"

    def plain(v):  # the value with each number's written text, which text fields take
        if isinstance(v, dict):
            return {plain(k): plain(x) for k, x in v.items()}
        if isinstance(v, list):
            return [plain(x) for x in v]
        return (type(v).__name__, getattr(v, "text", None), v)
    return plain(value)


@pytest.mark.parametrize("text", SAME_EITHER_WAY + [demo_fleet_path().read_text()])
def test_libyaml_events_give_what_the_pure_python_parser_gives(text):
    # formats.common.CCoreLoader takes its events from libyaml and everything else from
    # CoreLoader: the two must read every document alike (values, the text kept with each
    # number, and what is refused)
    from registry.formats.common import CCoreLoader, CoreLoader
    assert _read(CCoreLoader, text) == _read(CoreLoader, text)
