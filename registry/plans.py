"""Job plans (``withstand-plan/1``, SPEC §4): read, validate, write back.

Plans are validated like fleet files: every problem is collected, each names its field
(``circuit.voltage``) and says what is wrong, and they are raised together as one
:class:`~registry.errors.InvalidInput`.
"""

from __future__ import annotations

from datetime import date

import yaml

from .engine.spec import (DEFAULT_DURATION, Circuit, Plan, SpecError, circuit_problems,
                          plan_problems)
from .errors import FieldProblem, InvalidInput, shown
from .formats.common import as_text, read_document, text_problem
from .units import (CAPACITANCE, CURRENT, ENERGY, FREQUENCY, LENGTH, RESISTANCE, TIME,
                    VOLTAGE, format_quantity, parse_quantity)

FORMAT = "withstand-plan/1"
TOP_FIELDS = ("format", "title", "task", "circuit", "site", "duration", "discharge_to")
CIRCUIT_QUANTITIES = {
    "voltage": VOLTAGE, "voltage_to_earth": VOLTAGE, "frequency": FREQUENCY,
    "transient": VOLTAGE, "source_impedance": RESISTANCE, "prospective_current": CURRENT,
    "capacitance": CAPACITANCE, "stored_energy": ENERGY, "current": CURRENT,
}
CIRCUIT_FIELDS = ("supply", "category", "waveform") + tuple(CIRCUIT_QUANTITIES)
SITE_FIELDS = ("name", "altitude", "wet")
# The largest plan file read: a plan is a few hundred bytes (the demo plans are under 1 kB);
# 1 MB leaves room for long comments; common practice (no source).
MAX_PLAN_BYTES = 1024 * 1024
# What a plan's values must be (enumerations, bounds, what each task needs) is the engine's
# rule, spec.circuit_problems and spec.plan_problems, which the Circuit and Plan dataclasses
# also raise; this module reads the document and reports those problems with their paths.


class _Problems:
    def __init__(self):
        self.items: list[FieldProblem] = []

    def add(self, path: str, message: str):
        self.items.append(FieldProblem(path, message))

    def rules(self, problems):
        """The engine's problems, less those of a field already reported (one that did not
        parse is ``None`` to the rules, which would call it missing)."""
        seen = {item.path for item in self.items}
        for path, message in problems:
            if path not in seen:
                self.add(path, message)

    def quantity(self, data: dict, key: str, dim, path: str):
        if key not in data or data[key] is None:
            return None
        try:
            return parse_quantity(data[key], dim, path)
        except InvalidInput as e:
            self.items.extend(e.problems)
            return None

    def text(self, value, path: str):
        """A text field: a number keeps the text it was written as (``as_text``)."""
        if value is None:
            return None
        try:
            value = as_text(value)
        except ValueError as e:
            self.add(path, str(e))
            return None
        if not isinstance(value, str):
            self.add(path, "must be text")
            return None
        problem = text_problem(value)  # one line of printable text
        if problem:
            self.add(path, problem)
            return None
        return value

    def unknown(self, data: dict, allowed, prefix: str):
        for key in data:
            if key not in allowed:
                path = f"{prefix}.{key}" if prefix else str(key)
                self.add(path, f"is not a field of a plan{' ' + prefix if prefix else ''}; "
                         f"the fields are {', '.join(allowed)}")

    @staticmethod
    def name(data: dict, key: str):
        """A name field as text (the rules check it against their enumeration)."""
        value = data.get(key)
        return value if value is None or isinstance(value, str) else str(value)


def parse_plan(data, on: date | None = None, *, sites: dict[str, float] | None = None) -> Plan:
    """A :class:`Plan` from a plan document already read into Python (JSON or YAML).

    ``on`` is the day of the job (for verification dates). ``sites`` maps the fleet's site
    names to their altitudes (m), so a plan that names a known site may leave out the
    altitude. Raises :class:`InvalidInput` with every problem found.
    """
    p = _Problems()
    if not isinstance(data, dict):
        raise InvalidInput("a plan must be a mapping of fields (format, task, circuit, ...)")
    p.unknown(data, TOP_FIELDS, "")
    fmt = data.get("format")
    if fmt != FORMAT:
        p.add("format", f"must be '{FORMAT}'" + ("" if fmt is None else f", not '{shown(fmt)}'"))
    title = p.text(data.get("title") or "", "title") or ""
    task = p.name(data, "task")

    circuit_data = data.get("circuit")
    c: dict = {}
    if not isinstance(circuit_data, dict):
        p.add("circuit", "is missing; give the circuit's supply, waveform and voltage"
              if circuit_data is None else "must be a mapping of fields")
        circuit_data = None
    else:
        p.unknown(circuit_data, CIRCUIT_FIELDS, "circuit")
        for key in ("supply", "waveform", "category"):
            c[key] = p.name(circuit_data, key)
        for key, dim in CIRCUIT_QUANTITIES.items():
            c[key] = p.quantity(circuit_data, key, dim, f"circuit.{key}")

    site_name, altitude, wet = None, None, False
    site = data.get("site")
    if site is None:
        p.add("site", "is missing; give the site's altitude (and name), such as "
              "{name: North bench, altitude: 40 m}")
    elif not isinstance(site, dict):
        p.add("site", "must be a mapping of name, altitude and wet")
    else:
        p.unknown(site, SITE_FIELDS, "site")
        site_name = p.text(site.get("name"), "site.name")
        altitude = p.quantity(site, "altitude", LENGTH, "site.altitude")
        if site.get("altitude") is None:
            if sites is not None and site_name in sites:
                altitude = sites[site_name]
            else:
                p.add("site.altitude", "is missing; give the altitude of the job, such as "
                      "'40 m'" + ("" if site_name is None or sites is None else
                                  f" ('{site_name}' is not a site of the fleet)"))
        wet = site.get("wet", False)
        if not isinstance(wet, bool):
            p.add("site.wet", "must be true or false")
            wet = False

    duration = p.quantity(data, "duration", TIME, "duration")
    duration = DEFAULT_DURATION if duration is None else duration
    discharge_to = p.quantity(data, "discharge_to", VOLTAGE, "discharge_to")

    # the engine's rules, the same ones Circuit and Plan raise, with their paths
    circuit = None
    if circuit_data is not None:
        problems = circuit_problems(**c)
        p.rules(problems)
        if not problems:
            circuit = Circuit(**c)
    p.rules(plan_problems(task, circuit, altitude=altitude, duration=duration,
                          discharge_to=discharge_to))

    if p.items or circuit is None:
        raise InvalidInput(p.items)
    try:
        return Plan(task=task, circuit=circuit, title=title, site=site_name,
                    altitude=altitude, wet=wet, duration=duration,
                    discharge_to=discharge_to, on=on)
    except SpecError as e:  # the same rules ran above: say so plainly anyway
        raise InvalidInput([FieldProblem(path, msg) for path, msg in e.problems]
                           or str(e)) from None


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
