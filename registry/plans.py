"""Job plans (``withstand-plan/1``): read, validate, write back.

The document is read by pydantic models (:class:`PlanDoc`, :class:`CircuitDoc`,
:class:`PlanSiteDoc`), which are also the source of the shipped JSON Schema
(``registry/schemas/plan.schema.json``, :func:`plan_json_schema`; ``tests/test_schemas.py``
fails when the two drift). The models read the document only: each field's type, its text,
its quantity with a unit (through :mod:`registry.units`). What the values must be
(enumerations, bounds, what each task needs) is the engine's rule, ``spec.circuit_problems``
and ``spec.plan_problems``, which the ``Circuit`` and ``Plan`` dataclasses also raise; this
module reports those problems with their paths and holds no rule of its own.

Plans are validated like fleet files: every problem is collected, each names its field
(``circuit.voltage``) and says what is wrong, and they are raised together as one
:class:`~registry.errors.InvalidInput`.
"""

from __future__ import annotations

from datetime import date
from typing import Annotated, Any, Literal

import yaml
from pydantic import (BaseModel, BeforeValidator, ConfigDict, Field, StrictBool,
                      ValidationError, WithJsonSchema)

from .engine.spec import (DEFAULT_DURATION, MAINS_CATEGORIES, PLAN_WAVEFORMS, SUPPLIES, TASKS,
                          Circuit, Plan, SpecError, circuit_problems, plan_problems)
from .errors import FieldProblem, InvalidInput, shown
from .formats.common import (Capacitance, Current, Duration, Energy, Frequency, Length,
                             Resistance, Text, Voltage, error_message, read_document)
from .units import (CAPACITANCE, CURRENT, ENERGY, FREQUENCY, LENGTH, RESISTANCE, TIME,
                    VOLTAGE, format_quantity)

FORMAT = "withstand-plan/1"
CIRCUIT_QUANTITIES = {
    "voltage": VOLTAGE, "voltage_to_earth": VOLTAGE, "frequency": FREQUENCY,
    "transient": VOLTAGE, "source_impedance": RESISTANCE, "prospective_current": CURRENT,
    "capacitance": CAPACITANCE, "stored_energy": ENERGY, "current": CURRENT,
}
# The largest plan file read: a plan is a few hundred bytes (the demo plans are under 1 kB);
# 1 MB leaves room for long comments; common practice (no source).
MAX_PLAN_BYTES = 1024 * 1024


# -- the document ------------------------------------------------------------------------------

def _as_name(value: Any) -> Any:
    # any value is read as text: the engine's rules check it against their enumeration and
    # say what is wrong in their own words
    return value if value is None or isinstance(value, str) else str(value)


def Choice(choices: tuple[str, ...], description: str | None = None):
    """A name field: text here, one of ``choices`` by the engine's rules (and the schema)."""
    schema: dict = {"enum": list(choices)}
    if description:
        schema["description"] = description
    return Annotated[str | None, BeforeValidator(_as_name), WithJsonSchema(schema)]


# A plan's title: left out, blank or null is no title.
Title = Annotated[Text, BeforeValidator(lambda value: value or "")]


def _without_null(prop: dict) -> dict:
    branches = prop.get("anyOf")
    if isinstance(branches, list) and {"type": "null"} in branches:
        rest = [b for b in branches if b != {"type": "null"}]
        prop = {k: v for k, v in prop.items() if k != "anyOf"}
        prop = {**rest[0], **prop} if len(rest) == 1 else {**prop, "anyOf": rest}
    return {k: v for k, v in prop.items() if not (k == "default" and v is None)}


def _schema(**fixed):
    """A model's JSON Schema as a plan file sees it. The parser takes ``null`` as "not given";
    a plan file has no reason to write it, so the schema leaves it out (and the ``null``
    default with it); ``fixed`` adds what the fields' types cannot say (required fields, the
    rules across fields)."""
    def edit(schema: dict) -> None:
        schema["properties"] = {k: _without_null(v) for k, v in schema["properties"].items()}
        schema.update(fixed)
    return edit


class _Part(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, json_schema_extra=_schema())


# The engine's rules across fields, said again in JSON Schema for a client that validates
# before it sends (spec.circuit_problems and spec.plan_problems are what the parser applies;
# tests/test_plans.py holds the two to the same cases).
_CIRCUIT_RULES = {"allOf": [
    {"if": {"properties": {"supply": {"const": "mains"}}},
     "then": {"required": ["category"]},
     "else": {"not": {"required": ["category"]}}},
    {"if": {"properties": {"waveform": {"const": "dc"}}},
     "then": {"not": {"required": ["frequency"]}}},
    {"not": {"required": ["source_impedance", "prospective_current"]}},
    {"not": {"required": ["capacitance", "stored_energy"]}},
]}
_PLAN_RULES = {"allOf": [
    {"if": {"properties": {"task": {"const": "discharge"}}},
     "then": {"properties": {"circuit": {"anyOf": [{"required": ["capacitance"]},
                                                   {"required": ["stored_energy"]}]}}},
     "else": {"not": {"required": ["discharge_to"]}}},
    {"if": {"properties": {"task": {"const": "measure-current"}}},
     "then": {"properties": {"circuit": {"required": ["current"]}}},
     "else": {"properties": {"circuit": {"not": {"required": ["current"]}}}}},
]}


class CircuitDoc(_Part):
    """The circuit the job is done on."""

    model_config = ConfigDict(json_schema_extra=_schema(
        required=["supply", "waveform", "voltage"], **_CIRCUIT_RULES))
    supply: Choice(SUPPLIES) = None  # type: ignore[valid-type]
    category: Choice(MAINS_CATEGORIES, "mains only") = None  # type: ignore[valid-type]
    waveform: Choice(PLAN_WAVEFORMS) = None  # type: ignore[valid-type]
    voltage: Voltage | None = Field(
        None, description="highest working voltage between the probed points (rms for ac)")
    voltage_to_earth: Voltage | None = Field(None, description="default: voltage")
    frequency: Frequency | None = Field(None, description="ac only")
    transient: Voltage | None = Field(
        None, description="V peak; mains default from the impulse table")
    source_impedance: Resistance | None = None
    prospective_current: Current | None = None
    capacitance: Capacitance | None = None
    stored_energy: Energy | None = None
    current: Current | None = Field(None, description="measure-current only")


class PlanSiteDoc(_Part):
    """Where the job is done."""

    name: Text | None = None
    altitude: Length | None = Field(
        None, description="may be left out when name is a site of the fleet")
    wet: StrictBool = False


class PlanDoc(_Part):
    """withstand-plan/1: a job plan checked against the fleet."""

    model_config = ConfigDict(
        title="withstand-plan/1: a job plan checked against the fleet",
        json_schema_extra=_schema(required=["format", "task", "circuit", "site"], **_PLAN_RULES))
    format: Literal["withstand-plan/1"] | None = None
    title: Title = ""
    task: Choice(TASKS) = None  # type: ignore[valid-type]
    circuit: CircuitDoc | None = None
    site: PlanSiteDoc | None = None
    duration: Duration | None = Field(None, description="default 60 s")
    discharge_to: Voltage | None = Field(
        None, description="discharge only; default the dc hazardous-live level")


TOP_FIELDS = tuple(PlanDoc.model_fields)
CIRCUIT_FIELDS = tuple(CircuitDoc.model_fields)
SITE_FIELDS = tuple(PlanSiteDoc.model_fields)
_FIELDS_OF = {(): ("a plan", TOP_FIELDS), ("circuit",): ("a plan circuit", CIRCUIT_FIELDS),
              ("site",): ("a plan site", SITE_FIELDS)}


def _path(loc: tuple) -> str:
    return ".".join(str(part) for part in loc)


def _unknown(loc: tuple) -> str:
    what, fields = _FIELDS_OF[loc[:-1]]
    return f"is not a field of {what}; the fields are {', '.join(fields)}"


def _message(loc: tuple, err: dict) -> str:
    """What is wrong, in the plan format's words (pydantic's for quantities and text)."""
    kind = err["type"]
    if kind == "extra_forbidden":
        return _unknown(loc)
    if loc == ("format",):
        return f"must be '{FORMAT}', not '{shown(err.get('input'))}'"
    if loc == ("circuit",):
        return "must be a mapping of fields"
    if loc == ("site",):
        return "must be a mapping of name, altitude and wet"
    if kind == "bool_type":
        return "must be true or false"
    if kind == "string_type":
        return "must be text"
    return error_message(err)


def _without(data: dict, loc: tuple) -> dict:
    """``data`` with the field at ``loc`` (one or two levels down) left out."""
    data = dict(data)
    if len(loc) == 1:
        data.pop(loc[0], None)
    else:
        data[loc[0]] = _without(data[loc[0]], loc[1:])
    return data


def _text_keys(data: dict, loc: tuple, problems: list[FieldProblem]) -> dict:
    """``data`` without its keys that are not text (pydantic reads text keys only), each
    reported as the unknown field it is."""
    for key in data:
        if not isinstance(key, str):
            problems.append(FieldProblem(_path(loc + (key,)), _unknown(loc + (key,))))
    return {k: v for k, v in data.items() if isinstance(k, str)}


def read_plan_document(data: dict) -> tuple[PlanDoc, list[FieldProblem]]:
    """The document as a :class:`PlanDoc` and the problems of its fields. A field the models
    refuse is reported and left out, and the rest is read again, so that the engine's rules
    still judge every field that could be read."""
    problems: list[FieldProblem] = []
    data = _text_keys(data, (), problems)
    for section in ("circuit", "site"):
        if isinstance(data.get(section), dict):
            data[section] = _text_keys(data[section], (section,), problems)
    for _ in range(3):  # a second reading has nothing left to refuse; a third is a guard
        try:
            return PlanDoc.model_validate(data), problems
        except ValidationError as exc:
            for err in exc.errors():
                loc = tuple(p for p in err["loc"]
                            if not (isinstance(p, str) and p.startswith("function-")))
                problems.append(FieldProblem(_path(loc), _message(loc, err)))
                data = _without(data, loc[:2])
    raise InvalidInput(problems)


# -- the engine's rules on what was read -------------------------------------------------------

def _report(problems: list[FieldProblem], found) -> None:
    """Add the engine's problems, less those of a field already reported (one that could not
    be read is ``None`` to the rules, which would call it missing)."""
    seen = {item.path for item in problems}
    problems.extend(FieldProblem(path, message) for path, message in found if path not in seen)


def _missing(doc: PlanDoc, problems: list[FieldProblem]) -> None:
    if doc.format is None:
        _report(problems, [("format", f"must be '{FORMAT}'")])
    if doc.circuit is None:
        _report(problems, [("circuit", "is missing; give the circuit's supply, waveform and "
                                       "voltage")])
    if doc.site is None:
        _report(problems, [("site", "is missing; give the site's altitude (and name), such as "
                                    "{name: North bench, altitude: 40 m}")])


def _altitude(site: PlanSiteDoc | None, sites: dict[str, float] | None,
              problems: list[FieldProblem]) -> float | None:
    """The site's altitude (m): the plan's, else the fleet's site of that name."""
    if site is None or site.altitude is not None:
        return None if site is None else site.altitude
    if sites is not None and site.name in sites:
        return sites[site.name]
    unknown = "" if site.name is None or sites is None else \
        f" ('{site.name}' is not a site of the fleet)"
    _report(problems, [("site.altitude", "is missing; give the altitude of the job, such as "
                                         f"'40 m'{unknown}")])
    return None


def _circuit(doc: CircuitDoc | None, problems: list[FieldProblem]) -> Circuit | None:
    """The circuit, when the engine's circuit rules find nothing wrong (else reported)."""
    if doc is None:
        return None
    values = doc.model_dump()
    found = circuit_problems(**values)
    _report(problems, found)
    return None if found else Circuit(**values)


def parse_plan(data, on: date | None = None, *, sites: dict[str, float] | None = None) -> Plan:
    """A :class:`Plan` from a plan document already read into Python (JSON or YAML).

    ``on`` is the day of the job (for verification dates). ``sites`` maps the fleet's site
    names to their altitudes (m), so a plan that names a known site may leave out the
    altitude. Raises :class:`InvalidInput` with every problem found.
    """
    if not isinstance(data, dict):
        raise InvalidInput("a plan must be a mapping of fields (format, task, circuit, ...)")
    doc, problems = read_plan_document(data)
    _missing(doc, problems)
    altitude = _altitude(doc.site, sites, problems)
    duration = DEFAULT_DURATION if doc.duration is None else doc.duration
    circuit = _circuit(doc.circuit, problems)
    _report(problems, plan_problems(doc.task, circuit, altitude=altitude, duration=duration,
                                    discharge_to=doc.discharge_to))
    if problems or circuit is None:
        raise InvalidInput(problems)
    site = doc.site or PlanSiteDoc()
    try:
        return Plan(task=doc.task, circuit=circuit, title=doc.title, site=site.name,
                    altitude=altitude, wet=site.wet, duration=duration,
                    discharge_to=doc.discharge_to, on=on)
    except SpecError as e:  # the same rules ran above: say so plainly anyway
        raise InvalidInput([FieldProblem(path, msg) for path, msg in e.problems]
                           or str(e)) from None


def _inline(node, defs: dict):
    """``$ref``s to ``$defs`` replaced by what they name (a plan nests two levels)."""
    if isinstance(node, list):
        return [_inline(x, defs) for x in node]
    if not isinstance(node, dict):
        return node
    ref = node.get("$ref", "")
    if ref.startswith("#/$defs/"):
        rest = {k: v for k, v in node.items() if k != "$ref"}
        return {**_inline(defs[ref.removeprefix("#/$defs/")], defs), **rest}
    return {k: _inline(v, defs) for k, v in node.items() if k != "$defs"}


def plan_json_schema() -> dict:
    """The JSON Schema of a plan file, generated from :class:`PlanDoc`: what is stored in
    ``registry/schemas/plan.schema.json``."""
    raw = PlanDoc.model_json_schema()
    schema = _inline(raw, raw.get("$defs", {}))
    return {"$schema": "https://json-schema.org/draft/2020-12/schema",
            "$id": "https://withstand.invalid/schemas/plan.schema.json", **schema}


def read_plan_file(path) -> dict:
    """The raw document of a plan file (YAML or JSON), or :class:`InvalidInput` (a missing,
    unreadable, non-UTF-8, oversized (:data:`MAX_PLAN_BYTES`), too deeply nested or malformed
    file)."""
    return read_document(path, max_bytes=MAX_PLAN_BYTES)


def load_plan(path, on: date | None = None, *, sites: dict[str, float] | None = None) -> Plan:
    """Read and validate a plan file (``.yaml``/``.yml`` or ``.json``)."""
    return parse_plan(read_plan_file(path), on, sites=sites)


def _q(value, dim) -> str | None:
    return None if value is None else format_quantity(value, dim, digits=12)


def plan_to_dict(plan: Plan) -> dict:
    """The plan as a ``withstand-plan/1`` document with quantities as text, such that
    ``parse_plan(plan_to_dict(plan), plan.on) == plan``."""
    c = plan.circuit
    circuit = {"supply": c.supply}
    if c.category is not None:
        circuit["category"] = c.category
    circuit["waveform"] = c.waveform
    for key, dim in CIRCUIT_QUANTITIES.items():
        value = getattr(c, key)
        if value is not None:
            circuit[key] = _q(value, dim)
    site = {}
    if plan.site is not None:
        site["name"] = plan.site
    site["altitude"] = _q(plan.altitude, LENGTH)
    site["wet"] = plan.wet
    out = {"format": FORMAT}
    if plan.title:
        out["title"] = plan.title
    out.update({"task": plan.task, "circuit": circuit, "site": site,
                "duration": _q(plan.duration, TIME)})
    if plan.discharge_to is not None:
        out["discharge_to"] = _q(plan.discharge_to, VOLTAGE)
    return out


def dump_plan(plan: Plan) -> str:
    """The plan as YAML text for a plan file."""
    return yaml.safe_dump(plan_to_dict(plan), sort_keys=False, allow_unicode=True)
