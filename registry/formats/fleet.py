"""The fleet file, ``withstand-fleet/1`` (JSON or YAML): sites, models and units.

:func:`parse_fleet` validates a whole document and returns engine specs and unit records, or
raises :class:`InvalidInput` listing every problem with its path. :func:`fleet_to_document`
writes the same format back, precisely enough that export, import and export again give the
same file.
"""

from __future__ import annotations

import math
import re
from collections.abc import Hashable
from dataclasses import dataclass
from datetime import date
from typing import Annotated, Any, Literal, NotRequired

from pydantic import (BaseModel, BeforeValidator, ConfigDict, Field, TypeAdapter,
                      ValidationError, WithJsonSchema, field_validator)
from pydantic_core import PydanticCustomError
from typing_extensions import TypedDict  # the one pydantic takes on Python 3.11

from .. import units as u
from ..engine import spec
from ..engine.quantity import bound_problem
from ..errors import FieldProblem, InvalidInput, shown
from .common import (MAX_NOTE_CHARS, PLAIN_NOTE, Capacitance, Current, Date, Duration, Energy,
                     I2t, Length, NoteText, PlainDate, Power, Resistance, Text, Voltage, path_of,
                     plain_text, problems_from, quantity_of_text, read_document, text_defaults,
                     text_of)

FORMAT = "withstand-fleet/1"

# The dimension of each front-end parameter (the engine's table, which its bounds read too).
ELEMENT_PARAM_DIMS: dict[str, u.Dimension] = spec.ELEMENT_PARAM_DIMS


class _Doc(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


_NUMBER = r"[0-9]+(?:\.[0-9]*)?(?:[eE][-+]?[0-9]+)?|\.[0-9]+(?:[eE][-+]?[0-9]+)?"
_RATIO = re.compile(rf"\s*({_NUMBER})\s*(?::\s*({_NUMBER})\s*)?")
RATIO_PATTERN = rf"^{_RATIO.pattern}$"


def parse_ratio(value: Any) -> float:
    """A divider's attenuation, input over output: a bare number (``1000``, ``"1000"``),
    ``"N:1"`` or ``"N:M"`` (N/M), at least 1. Anything else raises :class:`ValueError`; a ratio
    is never read any other way (YAML 1.1 would have made ``1000:1`` the number 60001)."""
    if isinstance(value, bool):
        raise ValueError(f"'{str(value).lower()}' is a true/false value, not a ratio; write it "
                         "as 1000:1 or 1000")
    if not isinstance(value, (int, float, str)):
        raise ValueError(f"'{value}' is not a ratio; write it as 1000:1 or 1000")
    if isinstance(value, str):
        m = _RATIO.fullmatch(value) if len(value) <= 100 else None
        if not m:
            raise ValueError(f"'{shown(value)}' is not a ratio; write it as 1000:1 or 1000")
        out = float(m.group(1))
        if m.group(2) is not None:
            below = float(m.group(2))
            if below == 0:
                raise ValueError(f"'{shown(value)}' divides by zero; write the ratio as "
                                 "input:output, e.g. 1000:1")
            out /= below
    else:
        try:
            out = float(value)
        except OverflowError:  # an integer too large for a float
            out = math.inf
    if not math.isfinite(out) or out < 1:
        raise ValueError(f"'{shown(value)}' is not an attenuation: the ratio is input:output "
                         "and at least 1:1, e.g. 1000:1")
    problem = bound_problem(out, "ratio", "attenuation")  # the one table of bounds
    if problem:
        raise ValueError(f"'{shown(value)}' {problem}")
    return out


def _ratio(value: Any) -> float:
    try:
        return parse_ratio(value)
    except ValueError as exc:
        raise PydanticCustomError("ratio", str(exc)) from None


Ratio = Annotated[float, BeforeValidator(_ratio), WithJsonSchema({
    "anyOf": [{"type": "number", "minimum": 1}, {"type": "string", "pattern": RATIO_PATTERN}],
    "description": "a ratio, input:output, at least 1: 1000:1, 2000:2 or 1000"})]
Name = Annotated[Text, Field(min_length=1, max_length=120)]
_KEY = r"^[A-Za-z0-9][A-Za-z0-9._-]*$"
# (pydantic leaves a pattern behind a before-validator out of the schema: it is given again)
Key = Annotated[Text, Field(min_length=1, max_length=64, pattern=_KEY,
                            json_schema_extra={"pattern": _KEY})]


def _line(longest: int):
    """One line of text of at most ``longest`` characters: the length of the column that holds
    it (store/models.py), so that a longer one is refused here, with its path, and never by
    the database at the INSERT."""
    return Annotated[Text, Field(max_length=longest)]


# An element's id and the nodes it joins, in columns of 32 characters.
ElementId = Annotated[Text, Field(min_length=1, max_length=32, pattern=_KEY,
                                  json_schema_extra={"pattern": _KEY})]
Node = Annotated[Text, Field(min_length=1, max_length=32)]


class SiteDoc(_Doc):
    name: Name
    altitude: Length = 0.0


class FuseDoc(_Doc):
    current: Current | None = None
    voltage: Voltage | None = None
    voltage_dc: Voltage | None = None
    breaking_capacity: Current | None = None
    i2t: I2t | None = None

    def spec(self) -> spec.Fuse:
        return spec.Fuse(**self.model_dump())


class RatingDoc(_Doc):
    category: Literal[spec.CATEGORIES]  # type: ignore[valid-type]  # the one list
    voltage: Voltage
    transient: Voltage | None = None
    max_altitude: Length | None = None

    @field_validator("category", mode="before")
    @classmethod
    def _cat(cls, v):
        # "CAT III" and "iii" are how people write it
        if isinstance(v, str):
            v = v.strip()
            v = re.sub(r"(?i)^cat\s*", "", v)
            return v if v == "none" else v.upper()
        return v

    @field_validator("voltage")
    @classmethod
    def _positive(cls, v):
        if v <= 0:
            raise ValueError("a rated voltage must be more than zero")
        return v


class ModeDoc(_Doc):
    key: Key
    label: _line(120) = ""  # type: ignore[valid-type]
    measures: Literal[spec.MEASURES]  # type: ignore[valid-type]
    waveform: Literal[spec.WAVEFORMS] = "both"  # type: ignore[valid-type]
    terminals: list[Name] = []
    input_resistance: Resistance | None = None
    input_capacitance: Capacitance | None = None
    max_input: Voltage | None = None
    max_current: Current | None = None
    max_duration: Duration | None = None
    discharge_energy: Energy | None = None
    clamp: bool = False
    fuse: FuseDoc | None = None
    closes: list[Text] = []


class ElementDoc(BaseModel):
    """An element: id, type, between, and the parameters its type takes."""

    model_config = ConfigDict(extra="allow", frozen=True)
    id: ElementId
    type: Literal[spec.ELEMENT_TYPES]  # type: ignore[valid-type]
    between: list[Node] = Field(min_length=2, max_length=2)


class ModelDoc(_Doc):
    key: Key
    maker: _line(120) = ""  # type: ignore[valid-type]
    name: _line(200) = ""  # type: ignore[valid-type]
    kind: Literal[spec.KINDS]  # type: ignore[valid-type]
    connectors: list[Text] = []
    integrated_leads: bool = False
    max_altitude: Length = spec.DEFAULT_MAX_ALTITUDE
    pollution_degree: Literal[1, 2, 3, 4] = spec.DEFAULT_POLLUTION_DEGREE
    ratings: list[RatingDoc] = []
    modes: list[ModeDoc] = []
    front_end: list[ElementDoc] = []
    connector: _line(64) | None = None  # type: ignore[valid-type]
    current_rating: Current | None = None
    tip_exposure: Length | None = None
    fuse: FuseDoc | None = None
    attenuation: Ratio | None = None
    required_load: Resistance | None = None
    output_resistance: Resistance | None = None
    min_voltage: Voltage | None = None
    resistance: Resistance | None = None
    energy: Energy | None = None
    power: Power | None = None
    max_voltage: Voltage | None = None


class UnitDoc(_Doc):
    tag: Key
    model: Key
    serial: _line(64) = ""  # type: ignore[valid-type]
    site: Text | None = None
    custodian: _line(120) = ""  # type: ignore[valid-type]
    status: Literal[spec.UNIT_STATUSES] = "in-service"  # type: ignore[valid-type]
    verified_on: Date | None = None
    verification_due: Date | None = None
    notes: NoteText = ""


class FleetDoc(_Doc):
    format: Literal["withstand-fleet/1"]
    sites: list[SiteDoc] = []
    models: list[ModelDoc] = []
    units: list[UnitDoc] = []


@dataclass(frozen=True)
class SiteRecord:
    name: str
    altitude: float = 0.0


@dataclass(frozen=True)
class UnitRecord:
    """A unit as the fleet file and the store hold it (more than the engine needs)."""

    tag: str
    model: str
    serial: str = ""
    site: str | None = None
    custodian: str = ""
    status: str = "in-service"
    verified_on: date | None = None
    verification_due: date | None = None
    notes: str = ""


class _PlainUnit(TypedDict):
    """A unit entry as :class:`UnitDoc` takes it, in the plain fast-path fields
    (:func:`.common.plain_text`): validated by pydantic-core alone, into the keyword
    arguments of a :class:`UnitRecord`, whose defaults are :class:`UnitDoc`'s. An entry that
    fails here is validated again by :class:`UnitDoc`, whose problems are the ones reported."""

    __pydantic_config__ = ConfigDict(extra="forbid")  # type: ignore[misc]
    tag: plain_text(pattern=_KEY, max_length=64, min_length=1)  # type: ignore[valid-type]
    model: plain_text(pattern=_KEY, max_length=64, min_length=1)  # type: ignore[valid-type]
    serial: NotRequired[plain_text(max_length=64)]  # type: ignore[valid-type]
    site: NotRequired[plain_text() | None]  # type: ignore[valid-type]
    custodian: NotRequired[plain_text(max_length=120)]  # type: ignore[valid-type]
    status: NotRequired[Literal[spec.UNIT_STATUSES]]  # type: ignore[valid-type]
    verified_on: NotRequired[PlainDate | None]
    verification_due: NotRequired[PlainDate | None]
    notes: NotRequired[plain_text(pattern=PLAIN_NOTE,  # type: ignore[valid-type]
                                  max_length=MAX_NOTE_CHARS)]


_PLAIN_UNITS = TypeAdapter(list[_PlainUnit])


@dataclass(frozen=True)
class FleetContent:
    sites: tuple[SiteRecord, ...]
    models: tuple[spec.ModelSpec, ...]
    units: tuple[UnitRecord, ...]


def _element_spec(doc: ElementDoc, path: str, problems: list[FieldProblem]) -> spec.Element | None:
    allowed = spec.ELEMENT_PARAMS[doc.type]
    params = {}
    for name, raw in (doc.model_extra or {}).items():
        where = f"{path}.{name}"
        if name not in allowed:
            problems.append(FieldProblem(where, f"a {doc.type} has no parameter '{name}'; it "
                                                f"takes {', '.join(allowed)}"))
            continue
        try:
            if type(raw) is str:
                try:  # the parameter's name picks its bound, as the last part of `where` does
                    params[name] = quantity_of_text(raw, ELEMENT_PARAM_DIMS[name], True, name)
                    continue
                except InvalidInput:
                    pass  # read again below, for the problem under its path
            params[name] = u.parse_quantity(raw, ELEMENT_PARAM_DIMS[name], where)
        except InvalidInput as exc:
            problems.extend(exc.problems)
    if doc.type == "switch" and "gap" not in params and "withstand" not in params:
        problems.append(FieldProblem(path, "a switch needs its contact gap or its withstand "
                                           "voltage"))
    try:
        return spec.Element(doc.id, doc.type, tuple(doc.between), tuple(params.items()))
    except spec.SpecError as exc:
        problems.append(FieldProblem(path, str(exc)))
        return None


def _model_spec(doc: ModelDoc, path: str, problems: list[FieldProblem]) -> spec.ModelSpec | None:
    """The model's spec, or ``None`` with its problems added: its front end, its modes, what
    its kind needs, then what the spec itself refuses."""
    before = len(problems)
    elements = _front_end(doc, path, problems)
    modes = _modes(doc, path, problems)
    problems.extend(_kind_problems(doc, path))
    if len(problems) > before:
        return None
    return _build_model(doc, modes, elements, path, problems)


def _front_end(doc: ModelDoc, path: str, problems: list[FieldProblem]) -> list[spec.Element]:
    """The front end's elements that are valid; every element's problems, and element ids
    used twice, added to ``problems``."""
    elements = [_element_spec(e, f"{path}.front_end[{i}]", problems)
                for i, e in enumerate(doc.front_end)]
    _repeats([e.id for e in doc.front_end], f"{path}.front_end", "id",
             "is used by another element", problems)
    return [e for e in elements if e is not None]


def _modes(doc: ModelDoc, path: str, problems: list[FieldProblem]) -> list[spec.Mode]:
    """The model's modes; each mode's problems added to ``problems`` under its path."""
    switches = {e.id for e in doc.front_end if e.type == "switch"}
    modes = []
    seen: set[str] = set()
    for i, m in enumerate(doc.modes):
        mpath = f"{path}.modes[{i}]"
        if m.key in seen:
            problems.append(FieldProblem(f"{mpath}.key", f"'{m.key}' is used by another mode"))
        seen.add(m.key)
        problems.extend(_mode_problems(m, mpath, switches))
        mode = _mode_spec(m)
        if mode is not None:
            modes.append(mode)
    return modes


def _mode_problems(m: ModeDoc, mpath: str, switches: set[str]) -> list[FieldProblem]:
    """What a mode's fields say against each other and against the front end's switches."""
    out = [FieldProblem(f"{mpath}.closes[{j}]", f"'{s}' is not a switch of this model's front "
                                                "end")
           for j, s in enumerate(m.closes) if s not in switches]
    if m.clamp and m.terminals:
        out.append(FieldProblem(f"{mpath}.terminals", "a clamp-jaw mode has no terminals"))
    if not m.clamp and (len(m.terminals) != 2 or m.terminals[0] == m.terminals[1]):
        out.append(FieldProblem(f"{mpath}.terminals",
                                "must name two different terminals, e.g. [V, COM]"))
    if m.clamp and m.measures != "current":
        out.append(FieldProblem(f"{mpath}.clamp", "only a current mode can be a clamp"))
    return out


def _mode_spec(m: ModeDoc) -> spec.Mode | None:
    try:
        return spec.Mode(**m.model_dump(exclude={"terminals", "fuse", "closes"}),
                         terminals=tuple(m.terminals), closes=tuple(m.closes),
                         fuse=m.fuse.spec() if m.fuse else None)
    except spec.SpecError:
        return None  # _mode_problems reported it with its path


def _kind_problems(doc: ModelDoc, path: str) -> list[FieldProblem]:
    """What the model's kind needs: an instrument its modes, a divider its attenuation. (A
    rating of category "none" without a transient is allowed: the transient check says
    "unknown".)"""
    out = []
    if doc.kind in spec.INSTRUMENT_KINDS and doc.kind != "discharge-tool" and not doc.modes:
        out.append(FieldProblem(f"{path}.modes", f"a {doc.kind} needs at least one mode"))
    if doc.kind == "hv-divider" and doc.attenuation is None:
        out.append(FieldProblem(f"{path}.attenuation", "a divider needs its attenuation"))
    return out


# The fields a model document and its spec share as they are.
_MODEL_VALUES = ("key", "kind", "maker", "name", "integrated_leads", "max_altitude",
                 "pollution_degree", "connector", "current_rating", "tip_exposure",
                 "attenuation", "required_load", "output_resistance", "min_voltage",
                 "resistance", "energy", "power", "max_voltage")


def _build_model(doc: ModelDoc, modes: list[spec.Mode], elements: list[spec.Element],
                 path: str, problems: list[FieldProblem]) -> spec.ModelSpec | None:
    try:
        return spec.ModelSpec(
            **{name: getattr(doc, name) for name in _MODEL_VALUES},
            ratings=tuple(spec.Rating(r.category, r.voltage, r.transient, r.max_altitude)
                          for r in doc.ratings),
            modes=tuple(modes), front_end=tuple(elements), connectors=tuple(doc.connectors),
            fuse=doc.fuse.spec() if doc.fuse else None)
    except spec.SpecError as exc:
        problems.append(FieldProblem(path, str(exc)))
        return None


def parse_fleet(data: Any, *, known_models: set[str] = frozenset(),
                known_sites: set[str] = frozenset()) -> FleetContent:
    """Validate a whole fleet document; ``known_*`` are keys already in the database."""
    if not isinstance(data, dict):
        raise InvalidInput("a fleet file is a mapping with 'format: withstand-fleet/1' at the "
                           "top")
    if data.get("format") != FORMAT:
        raise InvalidInput(f"must be '{FORMAT}', not '{shown(data.get('format'))}'", "format")
    problems: list[FieldProblem] = []
    extra = sorted(set(data) - {"format", "sites", "models", "units"})
    problems += [FieldProblem(k, "is not a field of this format") for k in extra]
    # Each entry is validated alone, so that one bad model does not hide the next one's errors.
    sites = _validate_list(data, "sites", SiteDoc, problems)
    model_docs = _validate_list(data, "models", ModelDoc, problems)
    unit_docs = _unit_records(data, problems)
    models = []
    for i, m in enumerate(model_docs):
        if m is None:
            continue
        s = _model_spec(m, f"models[{i}]", problems)
        if s is not None:
            models.append(s)
    _duplicates([m and m.key for m in model_docs], "models", "key", problems)
    _duplicates([s and s.name for s in sites], "sites", "name", problems)
    _duplicates([x and x.tag for x in unit_docs], "units", "tag", problems)
    # a model that failed validation is still named, so its units are not reported twice
    raw_models = data.get("models") if isinstance(data.get("models"), list) else []
    # (a key that is a list or a mapping is reported above; it names no model)
    model_keys = ({m.get("key") for m in raw_models
                   if isinstance(m, dict) and isinstance(m.get("key"), Hashable)}
                  | set(known_models))
    site_names = {s.name for s in sites if s} | set(known_sites)
    for i, unit in enumerate(unit_docs):
        if unit is None:
            continue
        if unit.model not in model_keys:
            problems.append(FieldProblem(f"units[{i}].model",
                                         f"'{unit.model}' is not a model in this file or the "
                                         "registry"))
        if unit.site is not None and unit.site not in site_names:
            problems.append(FieldProblem(f"units[{i}].site",
                                         f"'{unit.site}' is not a site in this file or the "
                                         "registry"))
        if (unit.verified_on and unit.verification_due
                and unit.verification_due < unit.verified_on):
            problems.append(FieldProblem(f"units[{i}].verification_due",
                                         "is before verified_on"))
    if problems:
        raise InvalidInput(problems)
    return FleetContent(
        sites=tuple(SiteRecord(s.name, s.altitude) for s in sites),
        models=tuple(models),
        units=tuple(unit_docs))


def _validate_list(data: dict, section: str, doc_type, problems: list[FieldProblem]) -> list:
    """Each entry of ``data[section]`` validated alone; ``None`` where an entry is invalid."""
    raw = data.get(section) or []
    if not isinstance(raw, list):
        problems.append(FieldProblem(section, "must be a list"))
        return []
    out = []
    for i, entry in enumerate(raw):
        try:
            out.append(doc_type.model_validate(entry))
        except ValidationError as exc:
            problems.extend(problems_from(exc, (section, i)))
            out.append(None)
    return out


def _unit_records(data: dict, problems: list[FieldProblem]) -> list[UnitRecord | None]:
    """Each entry of ``data["units"]`` as a record; ``None`` where an entry is invalid, its
    problems added. The whole list is checked in one call of pydantic-core in the plain
    fields (:class:`_PlainUnit`); only the entries that fail there are validated again, one by
    one, by :class:`UnitDoc`, which reports their problems (or reads them right: a serial
    written as a YAML number keeps its text there)."""
    raw = data.get("units") or []
    if not isinstance(raw, list):
        problems.append(FieldProblem("units", "must be a list"))
        return []
    try:
        return [UnitRecord(**x) for x in _PLAIN_UNITS.validate_python(raw)]
    except ValidationError as exc:
        again = {e["loc"][0] for e in exc.errors() if e["loc"]}
    plain = [i for i in range(len(raw)) if i not in again]
    try:
        plain_records = _PLAIN_UNITS.validate_python([raw[i] for i in plain])
    except ValidationError:  # not expected (a list's entries are checked each alone): all again
        again, plain, plain_records = set(range(len(raw))), [], []
    out: list[UnitRecord | None] = [None] * len(raw)
    for i, x in zip(plain, plain_records, strict=True):
        out[i] = UnitRecord(**x)
    for i in sorted(again):
        try:
            out[i] = UnitRecord(**UnitDoc.model_validate(raw[i]).model_dump())
        except ValidationError as exc:
            problems.extend(problems_from(exc, ("units", i)))
    return out


def _duplicates(values, section, field, problems):
    _repeats(values, section, field, "appears twice in this file", problems)


def _repeats(values, section: str, field: str, says: str, problems: list[FieldProblem]):
    """Each value given again after its first (``None``: an entry that is not valid)."""
    seen = set()
    for i, v in enumerate(values):
        if v is None:
            continue
        if v in seen:
            problems.append(FieldProblem(f"{section}[{i}].{field}", f"'{v}' {says}"))
        seen.add(v)


def load_fleet_file(path) -> FleetContent:
    return parse_fleet(read_document(path))


def fleet_from_file(path) -> spec.Fleet:
    """The engine's view of a fleet file alone (models and units), e.g. for tests of plans."""
    content = load_fleet_file(path)
    return spec.Fleet(
        models={m.key: m for m in content.models},
        units=tuple(spec.UnitState(tag=x.tag, model=x.model, status=x.status, site=x.site,
                                   verification_due=x.verification_due)
                    for x in content.units))


# -- writing back ------------------------------------------------------------------------------

def _put(out: dict, name: str, value, dim: u.Dimension | None = None):
    if value is None:
        return
    out[name] = text_of(value, dim) if dim is not None else value


def fuse_to_document(f: spec.Fuse) -> dict:
    out: dict = {}
    for name, dim in (("current", u.CURRENT), ("voltage", u.VOLTAGE),
                      ("voltage_dc", u.VOLTAGE), ("breaking_capacity", u.CURRENT),
                      ("i2t", u.I2T)):
        _put(out, name, getattr(f, name), dim)
    return out


def rating_to_document(r: spec.Rating) -> dict:
    out: dict = {"category": r.category, "voltage": text_of(r.voltage, u.VOLTAGE)}
    _put(out, "transient", r.transient, u.VOLTAGE)
    _put(out, "max_altitude", r.max_altitude, u.LENGTH)
    return out


def mode_to_document(m: spec.Mode) -> dict:
    out: dict = {"key": m.key, "label": m.label, "measures": m.measures}
    if m.waveform != "both":
        out["waveform"] = m.waveform
    if m.terminals:
        out["terminals"] = list(m.terminals)
    for name, dim in (("input_resistance", u.RESISTANCE), ("input_capacitance", u.CAPACITANCE),
                      ("max_input", u.VOLTAGE), ("max_current", u.CURRENT),
                      ("max_duration", u.TIME), ("discharge_energy", u.ENERGY)):
        _put(out, name, getattr(m, name), dim)
    if m.clamp:
        out["clamp"] = True
    if m.fuse is not None:
        out["fuse"] = fuse_to_document(m.fuse)
    if m.closes:
        out["closes"] = list(m.closes)
    return out


def element_to_document(e: spec.Element) -> dict:
    out: dict = {"id": e.id, "type": e.type, "between": list(e.between)}
    order = spec.ELEMENT_PARAMS[e.type]
    for name, value in sorted(e.params, key=lambda p: order.index(p[0])):
        out[name] = text_of(value, ELEMENT_PARAM_DIMS[name])
    return out


def model_to_document(m: spec.ModelSpec) -> dict:
    out: dict = {"key": m.key, "maker": m.maker, "name": m.name, "kind": m.kind}
    if m.connectors:
        out["connectors"] = list(m.connectors)
    if m.integrated_leads:
        out["integrated_leads"] = True
    if m.max_altitude != spec.DEFAULT_MAX_ALTITUDE:
        out["max_altitude"] = text_of(m.max_altitude, u.LENGTH)
    if m.pollution_degree != spec.DEFAULT_POLLUTION_DEGREE:
        out["pollution_degree"] = m.pollution_degree
    out["ratings"] = [rating_to_document(r) for r in m.ratings]
    if m.modes:
        out["modes"] = [mode_to_document(x) for x in m.modes]
    if m.front_end:
        out["front_end"] = [element_to_document(e) for e in m.front_end]
    _put(out, "connector", m.connector)
    for name, dim in (("current_rating", u.CURRENT), ("tip_exposure", u.LENGTH)):
        _put(out, name, getattr(m, name), dim)
    if m.fuse is not None:
        out["fuse"] = fuse_to_document(m.fuse)
    if m.attenuation is not None:
        out["attenuation"] = f"{m.attenuation:.12g}:1"
    for name, dim in (("required_load", u.RESISTANCE), ("output_resistance", u.RESISTANCE),
                      ("min_voltage", u.VOLTAGE), ("resistance", u.RESISTANCE),
                      ("energy", u.ENERGY), ("power", u.POWER), ("max_voltage", u.VOLTAGE)):
        _put(out, name, getattr(m, name), dim)
    return out


def unit_to_document(x: UnitRecord) -> dict:
    out: dict = {"tag": x.tag, "model": x.model}
    if x.serial:
        out["serial"] = x.serial
    if x.site is not None:
        out["site"] = x.site
    if x.custodian:
        out["custodian"] = x.custodian
    out["status"] = x.status
    if x.verified_on:
        out["verified_on"] = x.verified_on.isoformat()
    if x.verification_due:
        out["verification_due"] = x.verification_due.isoformat()
    if x.notes:
        out["notes"] = x.notes
    return out


def fleet_to_document(content: FleetContent) -> dict:
    return {
        "format": FORMAT,
        "sites": [{"name": s.name, "altitude": text_of(s.altitude, u.LENGTH)}
                  for s in content.sites],
        "models": [model_to_document(m) for m in content.models],
        "units": [unit_to_document(x) for x in content.units],
    }


def fleet_json_schema() -> dict:
    schema = text_defaults(FleetDoc.model_json_schema())
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "withstand fleet file (withstand-fleet/1)"
    return schema


__all__ = ["FORMAT", "FleetContent", "SiteRecord", "UnitRecord", "parse_fleet",
           "load_fleet_file", "fleet_from_file", "fleet_to_document", "model_to_document",
           "fleet_json_schema", "path_of"]
