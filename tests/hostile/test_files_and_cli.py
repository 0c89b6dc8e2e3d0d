"""A hostile corpus over the fleet file, the plan file and the CLI's own inputs (event add,
model spice, user add): generated bad values x fields, each run through the real command in
Click's runner. Every case must exit 2 with a message (no traceback, no "internal error") and
leave the database as it was (every table dumped before and after).

What counts as bad comes from outside the project where it can: IEEE 754 binary64 tops out
near 1.8e308, so 1e400 does not fit a float (IEEE 754-2019, 3.6); Python's ``int`` to ``str``
conversion refuses more than 4300 digits (the Python documentation, "Integer string
conversion length limitation"); YAML anchors and aliases (YAML 1.2.2, 3.2.2.2) are what an
alias bomb is built from; UTF-8 forbids surrogates and overlong forms (RFC 3629, 3 and 10);
control characters are Unicode general category Cc (The Unicode Standard, 4.5). The bounds of
each field are the table in ``registry/engine/quantity.py`` (reasons beside each bound).
"""

from __future__ import annotations

import copy
import json
import os

import pytest
import sqlalchemy as sa
from registry.formats.common import load_yaml

from registry.app import create_app
from registry.cli import main
from registry.demo import demo_fleet_path
from registry.store import db as store_db
from registry.store import models as m

# -- one migrated demo database for the module (no case may write to it) ------------------------


@pytest.fixture(scope="module")
def env(tmp_path_factory, templates):
    instance = tmp_path_factory.mktemp("hostile")
    mp = pytest.MonkeyPatch()
    mp.setenv("WITHSTAND_INSTANCE", str(instance))
    mp.delenv("WITHSTAND_DATABASE_URL", raising=False)
    mp.setenv("WITHSTAND_USER", "tech")
    # a copy of the session's demo template (tests/helpers/databases.py), key included
    database = store_db.Database(
        f"sqlite:///{templates.copy_sqlite(instance / 'hostile.sqlite3', demo=True)}")
    app = create_app({"DATABASE_URL": database.url, "SECRET_KEY": "test-only-key",
                      "TESTING": True, "INSTANCE_PATH": str(instance)})
    yield {"runner": app.test_cli_runner(), "database": database, "dir": instance}
    app.extensions["withstand_db"].dispose()
    database.dispose()
    mp.undo()


def dump(database) -> dict:
    """Every row of every table, in primary-key order."""
    out = {}
    with database.engine.connect() as conn:
        for table in m.Base.metadata.sorted_tables:
            rows = conn.execute(sa.select(table).order_by(*table.primary_key.columns))
            out[table.name] = [tuple(r) for r in rows]
    return out


def refused(env, args, input=None):
    """Run the command; it must exit 2 with a message and write nothing."""
    before = dump(env["database"])
    result = env["runner"].invoke(main, args, input=input)
    out = result.output
    assert result.exit_code == 2, (args, out, result.exception)
    assert isinstance(result.exception, SystemExit), result.exception
    assert "Traceback" not in out and "internal error" not in out, out
    assert "withstand: error:" in out or "Error:" in out, out  # ours, or Click's usage error
    assert "\x00" not in out and "\x1b" not in out, out  # no raw control character echoed
    assert dump(env["database"]) == before
    return out


# -- the bad values --------------------------------------------------------------------------

UNITS = {"voltage": "V", "current": "A", "resistance": "ohm", "capacitance": "F",
         "energy": "J", "power": "W", "duration": "s", "length": "m", "frequency": "Hz",
         "I²t": "A^2*s"}
WRONG = {"voltage": "2 A", "current": "2 V", "resistance": "2 F", "capacitance": "2 ohm",
         "energy": "2 W", "power": "2 J", "duration": "2 m", "length": "2 s",
         "frequency": "2 V", "I²t": "2 A"}

# text templates ({u}: the field's unit); each is refused for every quantity field
BAD_QUANTITIES = [
    "1e400 {u}",            # beyond binary64 (IEEE 754): not finite
    "-1e400 {u}",
    "10**400 {u}",          # arithmetic pint would evaluate into an int too large for a float
    "9**9**9 {u}",          # arithmetic that would run for hours
    "nan {u}", "inf {u}", "-inf {u}",
    "1e999999999 {u}",      # a huge exponent
    "9" * 5000 + " {u}",    # more digits than Python converts to int
    "1e30 {u}",             # finite, far beyond every field's bound
    "-5 {u}",               # negative
    "2 {u} + 1 {u}",        # arithmetic is not a quantity
    "1/0 {u}",
    "2\x00 {u}",            # NUL
    "\x1b[2J2 {u}",         # a terminal escape
    "{wrong}",              # the wrong dimension
]


def bad_quantities(dim: str) -> list[str]:
    return [t.format(u=UNITS[dim], wrong=WRONG[dim]) for t in BAD_QUANTITIES]


def ids(values):
    return [repr(v)[:40] for v in values]


# -- the fleet file --------------------------------------------------------------------------

DEMO = load_yaml(demo_fleet_path().read_text())  # our own file, read as the CLI reads it

# (path in the demo document, dimension); models[0] is kx-7 (see seeddata/fleet.yaml)
FLEET_QUANTITY_FIELDS = [
    (("models", 0, "modes", 0, "max_input"), "voltage"),
    (("models", 0, "modes", 4, "max_current"), "current"),
    (("models", 0, "modes", 0, "input_resistance"), "resistance"),
    (("models", 0, "modes", 1, "input_capacitance"), "capacitance"),
    (("models", 0, "front_end", 3, "gap"), "length"),
    (("sites", 3, "altitude"), "length"),
    (("models", 0, "front_end", 1, "trip_time"), "duration"),
    (("models", 0, "front_end", 0, "pulse_energy"), "energy"),
]


def mutate(doc, path, value):
    out = copy.deepcopy(doc)
    node = out
    for part in path[:-1]:
        node = node[part]
    node[path[-1]] = value
    return out


def write_json(env, name, doc) -> str:
    path = env["dir"] / name
    path.write_text(json.dumps(doc), encoding="ascii")  # NUL and surrogates as \u escapes
    return str(path)


FLEET_QUANTITY_CASES = [(path, v) for path, dim in FLEET_QUANTITY_FIELDS
                        for v in bad_quantities(dim)]


@pytest.mark.parametrize("path, value", FLEET_QUANTITY_CASES,
                         ids=[f"{'.'.join(map(str, p))}={ids([v])[0]}"
                              for p, v in FLEET_QUANTITY_CASES])
def test_fleet_quantity(env, path, value):
    out = refused(env, ["import", write_json(env, "fleet.json", mutate(DEMO, path, value))])
    assert str(path[-1]) in out  # the message names the field


# numbers written as JSON numbers: 1e400 reads as inf, a huge int is refused before a float
@pytest.mark.parametrize("raw", ["1e400", "-1e400", "1" + "0" * 400, "1" * 5000, "-0"])
@pytest.mark.parametrize("field", ["max_input", "input_resistance"])
def test_fleet_json_numbers(env, field, raw):
    doc = mutate(DEMO, ("models", 0, "modes", 0, field), "PLACEHOLDER")
    text = json.dumps(doc).replace('"PLACEHOLDER"', raw)
    path = env["dir"] / "numbers.json"
    path.write_text(text)
    refused(env, ["import", str(path)])


def test_fleet_negative_zero_is_zero(env):
    # "-0 V" reads as zero (IEEE 754 signed zero compares equal to 0), which a rating refuses
    doc = mutate(DEMO, ("models", 0, "ratings", 0, "voltage"), "-0 V")
    out = refused(env, ["import", write_json(env, "zero.json", doc)])
    assert "ratings[0].voltage" in out and "zero" in out


@pytest.mark.parametrize("value, words", [
    ("1:1e-300", "most"), ("1e400:1", "attenuation"), (10 ** 400, "attenuation"),
    ("1e12:1", "most"), ("0.5:1", "at least 1:1"), ("1000:0", "divides by zero"),
])
def test_fleet_ratio(env, value, words):
    i = next(i for i, x in enumerate(DEMO["models"]) if x["kind"] == "hv-divider")
    doc = mutate(DEMO, ("models", i, "attenuation"), value)
    out = refused(env, ["import", write_json(env, "ratio.json", doc)])
    assert words in out and "attenuation" in out


# text fields: one line of printable text; the unit's notes may hold tabs and line breaks
BAD_TEXT = ["a\x00b", "\x00", "a\x1b[31mred", "a\x07bell", "a\x7fdel", "a\x85next",
            "a\u202eevil", "a\u2028b", "\ud800"]
BAD_LINE = ["a\nb", "a\tb", "a\rb"]
FLEET_TEXT_FIELDS = [("models", 0, "name"), ("models", 0, "maker"), ("units", 0, "serial"),
                     ("units", 0, "custodian"), ("sites", 0, "name"),
                     ("models", 0, "modes", 0, "label")]
FLEET_TEXT_CASES = ([(p, v) for p in FLEET_TEXT_FIELDS for v in BAD_TEXT + BAD_LINE]
                    + [(("units", 0, "notes"), v) for v in BAD_TEXT])


@pytest.mark.parametrize("path, value", FLEET_TEXT_CASES,
                         ids=[f"{'.'.join(map(str, p))}={ids([v])[0]}"
                              for p, v in FLEET_TEXT_CASES])
def test_fleet_text(env, path, value):
    out = refused(env, ["import", write_json(env, "text.json", mutate(DEMO, path, value))])
    assert str(path[-1]) in out


def test_fleet_notes_keep_line_breaks(env):
    # the one multi-line field: a note with a tab and line breaks is accepted as it is
    from registry.formats.fleet import parse_fleet
    doc = mutate(DEMO, ("units", 0, "notes"), "line one\n\tline two\r\n")
    assert parse_fleet(doc).units[0].notes == "line one\n\tline two\r\n"


# dates: YYYY-MM-DD in the years 1900 to 2200 (ISO 8601 calendar dates)
BAD_DATES = ["0000-01-01", "0001-01-01", "1899-12-31", "2201-01-01", "9999-12-31",
             "10000-01-01", "2026-02-30", "2026-13-01", "-2026-01-01", "2026-01-01\x00", 0,
             1700000000, True]


@pytest.mark.parametrize("value", BAD_DATES, ids=ids(BAD_DATES))
@pytest.mark.parametrize("field", ["verified_on", "verification_due"])
def test_fleet_dates(env, field, value):
    out = refused(env, ["import", write_json(env, "dates.json",
                                             mutate(DEMO, ("units", 0, field), value))])
    assert field in out


# structure: nesting, size, aliases, encodings, shapes
def _deep_json(n):
    return '{"format": "withstand-fleet/1", "sites": ' + "[" * n + "]" * n + "}"


def _deep_yaml_block(n):
    return "format: withstand-fleet/1\nsites:\n" + "".join(
        "  " * (i + 1) + "- \n" for i in range(n))


BILLION_LAUGHS = "format: withstand-fleet/1\na: &a [x, x, x, x, x, x, x, x, x]\n" + "".join(
    f"{chr(98 + i)}: &{chr(98 + i)} [" + ", ".join([f"*{chr(97 + i)}"] * 9) + "]\n"
    for i in range(8))

STRUCTURE = {
    "deep-json-2000": ("fleet.json", _deep_json(2000).encode()),
    "deep-json-5000": ("fleet.json", _deep_json(5000).encode()),
    "deep-json-100000": ("fleet.json", _deep_json(100_000).encode()),
    "brackets-in-a-string-are-not-nesting": ("fleet.json",
                                               b'{"format": "' + b"[" * 5000 + b'"}'),
    "deep-yaml-flow-2000": ("fleet.yaml", _deep_json(2000).encode()),
    "deep-yaml-block-2000": ("fleet.yaml", _deep_yaml_block(2000).encode()),
    "deep-yaml-mappings-2000": ("fleet.yaml", ("format: withstand-fleet/1\nx:\n" + "".join(
        "  " * (i + 1) + f"k{i}:\n" for i in range(2000))).encode()),
    "alias-bomb": ("fleet.yaml", BILLION_LAUGHS.encode()),
    "anchor-on-root": ("fleet.yaml", b"&top {format: withstand-fleet/1}"),
    "merge-key": ("fleet.yaml", b"format: withstand-fleet/1\nbase: &b {x: 1}\nm: {<<: *b}\n"),
    "python-tag": ("fleet.yaml", b"!!python/object/apply:os.system [echo hi]"),
    "binary-tag": ("fleet.yaml", b"format: !!binary aGVsbG8=\n"),
    "repeated-key": ("fleet.yaml", b"format: withstand-fleet/1\nformat: withstand-fleet/1\n"),
    "utf16": ("fleet.yaml", "format: withstand-fleet/1\n".encode("utf-16")),
    "latin1": ("fleet.yaml", "format: withstand-fleet/1\nsites: [{name: Caf\xe9}]\n"
                             .encode("latin-1")),
    "surrogate-bytes": ("fleet.yaml", b"format: withstand-fleet/1 \xed\xa0\x80\n"),
    "overlong-utf8": ("fleet.yaml", b"format: withstand-fleet/1\xc0\xaf\n"),
    "raw-nul-yaml": ("fleet.yaml", b"format: withstand-fleet/1\x00\n"),
    "raw-nul-json": ("fleet.json", b'{"format": "withstand-fleet/1\x00"}'),
    "escaped-nul-site": ("fleet.json", b'{"format": "withstand-fleet/1", "sites": '
                                       b'[{"name": "a\\u0000b", "altitude": "1 m"}]}'),
    "lone-surrogate-site": ("fleet.json", b'{"format": "withstand-fleet/1", "sites": '
                                          b'[{"name": "\\ud800", "altitude": "1 m"}]}'),
    "huge-int-yaml": ("fleet.yaml", b"format: " + b"9" * 5000 + b"\n"),
    "top-is-list": ("fleet.yaml", b"[1, 2, 3]\n"),
    "top-is-text": ("fleet.yaml", b"hello\n"),
    "empty": ("fleet.yaml", b""),
    "no-format": ("fleet.json", b'{"models": []}'),
    "models-not-list": ("fleet.json", b'{"format": "withstand-fleet/1", "models": {"a": 1}}'),
    "model-is-number": ("fleet.json", b'{"format": "withstand-fleet/1", "models": [1e400]}'),
    "element-param-list": ("fleet.json", json.dumps(mutate(
        DEMO, ("models", 0, "front_end", 0, "resistance"), [[["1 ohm"]]])).encode()),
    "category-huge": ("fleet.json", json.dumps(mutate(
        DEMO, ("models", 0, "ratings", 0, "category"), "X" * 100_000)).encode()),
}


@pytest.mark.parametrize("name", sorted(STRUCTURE))
def test_fleet_structure(env, name):
    filename, data = STRUCTURE[name]
    path = env["dir"] / filename
    path.write_bytes(data)
    out = refused(env, ["import", str(path)])
    if name.startswith("deep"):
        assert "nest more than 64 levels" in out
    if name == "alias-bomb":
        assert "anchors and aliases" in out
    assert len(out) < 2000  # a bad value is not echoed whole


def test_fleet_oversized(env):
    from registry.formats.common import MAX_DOCUMENT_BYTES
    path = env["dir"] / "big.yaml"
    path.write_bytes(b"format: withstand-fleet/1\n" + b"#" * MAX_DOCUMENT_BYTES + b"\n")
    assert "too large" in refused(env, ["import", str(path)])


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="no /dev/zero")
def test_fleet_endless_device(env):
    # an endless file: read no further than the size limit
    assert "too large" in refused(env, ["import", "/dev/zero"])


@pytest.mark.parametrize("args", [["import", "fleet\x00.yaml"], ["export", "out\x00.yaml"],
                                  ["check", "plan\x00.yaml"], ["backup", "b\x00.sqlite3"]],
                         ids=["import", "export", "check", "backup"])
def test_nul_in_file_names(env, args):
    refused(env, args)


# -- the plan file ---------------------------------------------------------------------------

PLAN = {"format": "withstand-plan/1", "title": "Inverter rig DC link", "task": "discharge",
        "circuit": {"supply": "isolated", "waveform": "dc", "voltage": "800 V",
                    "capacitance": "2 mF"},
        "site": {"name": "Battery lab", "altitude": "40 m"}, "duration": "60 s",
        "discharge_to": "50 V"}
AC_PLAN = {"format": "withstand-plan/1", "task": "measure-voltage",
           "circuit": {"supply": "mains", "category": "III", "waveform": "ac",
                       "voltage": "230 V", "frequency": "50 Hz"},
           "site": {"altitude": "40 m"}}

PLAN_QUANTITY_FIELDS = [
    (PLAN, ("circuit", "voltage"), "voltage"),
    (PLAN, ("circuit", "capacitance"), "capacitance"),
    (PLAN, ("site", "altitude"), "length"),
    (PLAN, ("duration",), "duration"),
    (PLAN, ("discharge_to",), "voltage"),
    (AC_PLAN, ("circuit", "frequency"), "frequency"),
    (AC_PLAN, ("circuit", "source_impedance"), "resistance"),
]
PLAN_QUANTITY_CASES = [(base, path, v) for base, path, dim in PLAN_QUANTITY_FIELDS
                       for v in bad_quantities(dim)]


@pytest.mark.parametrize("base, path, value", PLAN_QUANTITY_CASES,
                         ids=[f"{'.'.join(p)}={ids([v])[0]}"
                              for _, p, v in PLAN_QUANTITY_CASES])
def test_plan_quantity(env, base, path, value):
    out = refused(env, ["check", write_json(env, "plan.json", mutate(base, path, value))])
    assert ".".join(path) in out


PLAN_TEXT_CASES = [(path, v) for path in (("title",), ("site", "name"))
                   for v in BAD_TEXT + BAD_LINE]


@pytest.mark.parametrize("path, value", PLAN_TEXT_CASES,
                         ids=[f"{'.'.join(p)}={ids([v])[0]}" for p, v in PLAN_TEXT_CASES])
def test_plan_text(env, path, value):
    out = refused(env, ["check", write_json(env, "plan.json", mutate(PLAN, path, value))])
    assert ".".join(path) in out


PLAN_STRUCTURE = {
    "deep-json": ("plan.json", ('{"format": "withstand-plan/1", "circuit": ' + "[" * 3000
                                + "]" * 3000 + "}").encode()),
    "deep-yaml": ("plan.yaml", ("format: withstand-plan/1\ncircuit:\n" + "".join(
        "  " * (i + 1) + "- \n" for i in range(2000))).encode()),
    "oversized": ("plan.yaml", b"format: withstand-plan/1\n" + b"#" * (1024 * 1024) + b"\n"),
    "alias": ("plan.yaml", b"format: withstand-plan/1\ntitle: &t x\nsite: {name: *t}\n"),
    "latin1": ("plan.yaml", "title: Caf\xe9\n".encode("latin-1")),
    "top-is-list": ("plan.yaml", b"- 1\n"),
}


@pytest.mark.parametrize("name", sorted(PLAN_STRUCTURE))
def test_plan_structure(env, name):
    filename, data = PLAN_STRUCTURE[name]
    path = env["dir"] / filename
    path.write_bytes(data)
    refused(env, ["check", str(path)])


@pytest.mark.parametrize("day", ["0000-01-01", "0001-01-01", "9999-12-31", "10000-01-01",
                                 "1899-12-31", "2201-01-01", "2026-02-30", "\x00"])
def test_check_on_date(env, day):
    path = write_json(env, "plan.json", PLAN)
    assert "--on" in refused(env, ["check", path, "--on", day])


# -- event add -------------------------------------------------------------------------------

EVENT = ["event", "add", "--unit", "NB-0001", "--kind", "overvoltage", "--mode", "vdc",
         "--by", "tech"]
EVENT_CASES = [(option, v) for option, dim in (("--voltage", "voltage"), ("--energy", "energy"),
                                               ("--duration", "duration"))
               for v in bad_quantities(dim)]


@pytest.mark.parametrize("option, value", EVENT_CASES,
                         ids=[f"{o}={ids([v])[0]}" for o, v in EVENT_CASES])
def test_event_quantity(env, option, value):
    assert option in refused(env, EVENT + [option, value])


BAD_TIMES = ["0001-01-01T00:00", "0001-01-01T00:00+05:00", "9999-12-31T23:59:59-05:00",
             "9999-12-31T23:59:59+00:00", "1899-12-31T23:59", "2201-01-01T00:00",
             "10000-01-01T00:00", "2026-02-30T00:00", "2026-03-01T25:00", "yesterday",
             "2026-03-01T14:30\x00"]


@pytest.mark.parametrize("at", BAD_TIMES, ids=ids(BAD_TIMES))
def test_event_time(env, at):
    assert "--at" in refused(env, EVENT + ["--voltage", "1 kV", "--at", at])


@pytest.mark.parametrize("note", BAD_TEXT, ids=ids(BAD_TEXT))
def test_event_note(env, note):
    assert "note" in refused(env, EVENT + ["--voltage", "1 kV", "--note", note])


# -- model spice -----------------------------------------------------------------------------

SPICE = ["model", "spice", "kx-7", "--mode", "vdc"]
SPICE_CASES = [(option, v) for option, dim in (("--voltage", "voltage"),
                                               ("--source-impedance", "resistance"),
                                               ("--capacitance", "capacitance"),
                                               ("--duration", "duration"))
               for v in bad_quantities(dim)]


@pytest.mark.parametrize("option, value", SPICE_CASES,
                         ids=[f"{o}={ids([v])[0]}" for o, v in SPICE_CASES])
def test_spice_quantity(env, option, value):
    extra = ["--scenario", "discharge"] + (["--capacitance", "1 mF"]
                                           if option != "--capacitance" else [])
    assert option in refused(env, SPICE + extra + [option, value])


def test_spice_voltage_at_the_bound_is_written(env):
    # the largest voltage the table takes (10 MV) still gives a deck: the bound is not off
    # by one, and the refusals above are the bound's, not a broken command
    result = env["runner"].invoke(main, SPICE + ["--voltage", "10 MV"])
    assert result.exit_code == 0, result.output
    assert "1e+07" in result.output or "10000000" in result.output or "10M" in result.output


# -- user add --------------------------------------------------------------------------------

BAD_PASSWORDS = ["abc\x00defghijklmn", "\x00" * 12, "a long pass\x1b[31mword", "tab\tseparated",
                 "bell\x07bell-bell", "del\x7fdeldeldel", "right\u202eto-left-pass",
                 "x" * 300, "short", ""]


@pytest.mark.parametrize("password", BAD_PASSWORDS, ids=ids(BAD_PASSWORDS))
def test_user_password(env, password):
    out = refused(env, ["user", "add", "newcomer", "--role", "viewer", "--password-stdin"],
                  input=password + "\n")
    assert "password" in out


BAD_USERNAMES = ["bob\x00", "\x00", "b\x1bb", "bob\n", "BOB", "a", "x" * 65, "bob smith",
                 "-bob", "b\u202eb"]


@pytest.mark.parametrize("name", BAD_USERNAMES, ids=ids(BAD_USERNAMES))
def test_user_name(env, name):
    if name == "bob\n":
        name = "bo\nb"  # (a trailing line break is trimmed as space is)
    refused(env, ["user", "add", name, "--role", "viewer", "--password-stdin"],
            input="a long enough password\n")


@pytest.mark.parametrize("display", ["Ines\x00Marrow", "a\x1b[2J", "two\nlines", "x" * 200,
                                     "a\u202eb"])
def test_user_display_name(env, display):
    out = refused(env, ["user", "add", "newcomer", "--role", "viewer", "--display-name",
                        display, "--password-stdin"], input="a long enough password\n")
    assert "display_name" in out


def test_user_password_not_utf8(env):
    out = refused(env, ["user", "add", "newcomer", "--role", "viewer", "--password-stdin"],
                  input=b"a long \xff\xfe password\n")
    assert "password" in out


# -- the corpus is large enough --------------------------------------------------------------

def test_corpus_size():
    generated = (len(FLEET_QUANTITY_CASES) + 10 + 1 + 6 + len(FLEET_TEXT_CASES)
                 + 2 * len(BAD_DATES) + len(STRUCTURE) + 2 + 4 + len(PLAN_QUANTITY_CASES)
                 + len(PLAN_TEXT_CASES) + len(PLAN_STRUCTURE) + 8 + len(EVENT_CASES)
                 + len(BAD_TIMES) + len(BAD_TEXT) + len(SPICE_CASES) + len(BAD_PASSWORDS)
                 + len(BAD_USERNAMES) + 5 + 1)
    assert generated >= 200, generated


# -- the one error path and the one table ----------------------------------------------------

def test_unexpected_error_is_one_line_not_a_traceback(env, monkeypatch):
    # a fault inside a command (not bad input) still ends in one line and a non-zero code
    import registry.store.fleet as store_fleet

    def broken(session):
        raise RuntimeError("simulated fault\nsecond line")
    monkeypatch.setattr(store_fleet, "export_fleet", broken)
    result = env["runner"].invoke(main, ["export", str(env["dir"] / "out.yaml")])
    assert result.exit_code == 2 and isinstance(result.exception, SystemExit)
    assert "Traceback" not in result.output and "second line" not in result.output
    lines = result.output.strip().splitlines()
    assert len(lines) == 1 and "internal error (RuntimeError: simulated fault)" in lines[0]


def test_bounds_follow_the_altitude_table():
    # the altitude bound is the last row of IEC 60664-1 Table A.2 as the package holds it
    from registry.engine.quantity import FIELD_BOUNDS, bound_for
    from registry.standards.altitude import TABLE
    assert FIELD_BOUNDS["altitude"].largest == TABLE[-1][0]
    assert bound_for("length", "site.altitude") is FIELD_BOUNDS["altitude"]
    assert bound_for("length", "--max-altitude") is FIELD_BOUNDS["max_altitude"]


@pytest.mark.parametrize("build", [
    lambda s: s.Rating("III", 2e7),                                  # above 10 MV
    lambda s: s.Mode("v", "V", "voltage", terminals=("V", "COM"), input_capacitance=1e5),
    lambda s: s.Element.of("S1", "switch", ("a", "b"), gap=5.0),     # a 5 m contact gap
    lambda s: s.Fuse(i2t=1e12),
    lambda s: s.ModelSpec("k", "probe", tip_exposure=0.5),
    lambda s: s.Circuit("isolated", "dc", 800.0, capacitance=1e-30),  # below the least
], ids=["rating", "mode", "element", "fuse", "model", "circuit"])
def test_spec_dataclasses_hold_the_same_bounds(build):
    # the engine's dataclasses refuse what parse_quantity refuses, for specs built in code
    from registry.engine import spec
    with pytest.raises(spec.SpecError, match="this field takes"):
        build(spec)


@pytest.mark.parametrize("field, size", [("serial", 1_001), ("notes", 10_001)])
def test_text_longer_than_a_field_takes_is_refused(field, size):
    # a line takes at most 1,000 characters, a note 10,000: common practice (no source)
    from registry.errors import InvalidInput
    from registry.formats.common import check_text
    with pytest.raises(InvalidInput) as err:
        check_text("x" * size, field, multiline=field == "notes")
    assert f"at most {size - 1}" in str(err.value)
    assert check_text("x" * (size - 1), field, multiline=field == "notes")
