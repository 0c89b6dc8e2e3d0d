"""What the file formats share: quantity and text fields for pydantic, the one JSON and YAML
reader (YAML 1.2 core schema, no aliases), and turning pydantic's errors into
:class:`InvalidInput` with paths like ``models[2].modes[1].max_input``."""

from __future__ import annotations

import functools
import json
import math
import re
import unicodedata
from datetime import date, datetime, UTC
from pathlib import Path
from typing import Annotated, Any

import yaml
from pydantic import BeforeValidator, GetPydanticSchema, ValidationError, ValidationInfo, \
    WithJsonSchema
from pydantic_core import PydanticCustomError, core_schema

from .. import units as u
from ..errors import FieldProblem, InvalidInput, shown

QUANTITY_PATTERN = r"^\s*[-+]?[0-9.]+([eE][-+]?[0-9]+)?\s*[A-Za-zµμΩ^*/0-9 ]*$"


@functools.lru_cache(maxsize=4096)
def quantity_of_text(text: str, dim: u.Dimension, allow_zero: bool, bound: str) -> float:
    """:func:`units.parse_quantity` of a plain ``str`` (``bound``: the field's name, which
    picks its bound), kept for the next field that holds the same text: a fleet file writes the
    same few ratings ("1 kV", "10 Mohm") over hundreds of models, and the result depends on
    nothing else. A text that is refused is not kept (the cache keeps only returned values);
    each time it raises again, as the uncached call does."""
    return u.parse_quantity(text, dim, "", allow_zero=allow_zero, bound=bound)


def _quantity_validator(dim: u.Dimension, positive: bool):
    def parse(value: Any, info: ValidationInfo) -> float:
        # the field's name picks its bound (units.parse_quantity, engine.quantity.FIELD_BOUNDS)
        try:
            if type(value) is str:
                return quantity_of_text(value, dim, not positive, info.field_name or "")
            return u.parse_quantity(value, dim, "", allow_zero=not positive,
                                    bound=info.field_name or "")
        except InvalidInput as exc:
            raise PydanticCustomError("quantity", exc.problems[0].message) from None
    return parse


def Quantity(dim: u.Dimension, *, positive: bool = False):
    """A pydantic field type: text with a unit in, an SI float out."""
    return Annotated[float, BeforeValidator(_quantity_validator(dim, positive)),
                     WithJsonSchema({"type": "string", "pattern": QUANTITY_PATTERN,
                                     "description": f"{dim.article} {dim.name} with its unit, "
                                                    f"e.g. '{u.example_text(dim)}'"})]


Voltage = Quantity(u.VOLTAGE)
Current = Quantity(u.CURRENT)
Resistance = Quantity(u.RESISTANCE)
Capacitance = Quantity(u.CAPACITANCE)
Energy = Quantity(u.ENERGY)
Power = Quantity(u.POWER)
Duration = Quantity(u.TIME)
Length = Quantity(u.LENGTH)
Frequency = Quantity(u.FREQUENCY)
I2t = Quantity(u.I2T)


# The calendar the package takes: an event, a verification or a job day outside these years
# is a typing error (0026 for 2026), and Python's own range (years 1 to 9999) must never be
# reached by arithmetic on it; common practice (no source).
FIRST_YEAR, LAST_YEAR = 1900, 2200


def _year_problem(year: int, text) -> str | None:
    if FIRST_YEAR <= year <= LAST_YEAR:
        return None
    return (f"'{shown(text)}' is in the year {year}; give a date from {FIRST_YEAR} to "
            f"{LAST_YEAR}")


def parse_date(text, field: str) -> date | None:
    """A calendar date typed as YYYY-MM-DD (blank: ``None``) in the years
    :data:`FIRST_YEAR` to :data:`LAST_YEAR`; anything else is refused with a message naming
    ``field``."""
    if text is None or not str(text).strip():
        return None
    if isinstance(text, date):
        day = text
    else:
        try:
            if text_problem(str(text)):  # Python's parser lets some through ("...\x00")
                raise ValueError
            day = date.fromisoformat(str(text).strip())
        except ValueError:
            raise InvalidInput(f"'{shown(text)}' is not a date; write it as YYYY-MM-DD, e.g. "
                               "2026-03-01", field) from None
    problem = _year_problem(day.year, text)
    if problem:
        raise InvalidInput(problem, field)
    return day


def parse_time(text, field: str) -> datetime | None:
    """An ISO 8601 time (``2026-03-01T14:30``, ``...+01:00``, ``...Z``) as naive UTC; a time
    without an offset is UTC, as the web form and the API take it too, so one typed time means
    one moment whichever way it is logged; blank is ``None``. The years are those of
    :func:`parse_date`; anything else raises :class:`InvalidInput` naming ``field``."""
    if text is None or not str(text).strip():
        return None
    bad = InvalidInput(f"'{shown(text)}' is not an ISO 8601 time such as 2026-03-01T14:30 or "
                       "2026-03-01T14:30+01:00", field)
    try:
        if text_problem(str(text)):  # Python's parser lets some through ("14:30\x00")
            raise ValueError
        t = datetime.fromisoformat(str(text).strip().replace("Z", "+00:00"))
    except ValueError:
        raise bad from None
    problem = _year_problem(t.year, text)
    if problem:
        raise InvalidInput(problem, field)
    if t.tzinfo is None:
        return t
    try:
        return t.astimezone(UTC).replace(tzinfo=None)
    except (OverflowError, ValueError, OSError):
        raise bad from None


def _date_validator(value: Any) -> Any:
    if isinstance(value, bool) or isinstance(value, (int, float)):
        # a bare number is not a date (pydantic would read 0 as 1970-01-01)
        raise PydanticCustomError("text", "must be a date written as YYYY-MM-DD, e.g. 2026-03-01")
    if value is None or isinstance(value, date):
        return value
    if not isinstance(value, str):
        return value  # the date type's own validation refuses it
    if type(value) is str and value.isprintable():  # the common case, as parse_date reads it
        try:
            day = date.fromisoformat(value.strip())
        except ValueError:
            pass  # parse_date below says what is wrong
        else:
            if FIRST_YEAR <= day.year <= LAST_YEAR:
                return day
    try:
        return parse_date(value, "")
    except InvalidInput as exc:
        raise PydanticCustomError("text", exc.problems[0].message) from None


# A pydantic date field: YYYY-MM-DD text in the years FIRST_YEAR to LAST_YEAR.
Date = Annotated[date, BeforeValidator(_date_validator)]


def text_defaults(node):
    """A JSON Schema with the defaults of quantity fields written as the text they take.

    Pydantic reports a quantity field's default as the SI float it holds (``2000.0``), but the
    field takes text ("2 km"); a schema's default must fit its own schema, so it is rewritten,
    the dimension read back from the description :func:`Quantity` gives every such field.
    """
    if isinstance(node, list):
        return [text_defaults(x) for x in node]
    if not isinstance(node, dict):
        return node
    out = {k: text_defaults(v) for k, v in node.items()}
    default = out.get("default")
    if out.get("type") == "string" and isinstance(default, (int, float)) \
            and not isinstance(default, bool):
        description = out.get("description", "")
        dim = next((d for d in u.DIMENSIONS if description.startswith(f"{d.article} {d.name} ")),
                   None)
        if dim is not None:
            out["default"] = u.format_quantity(float(default), dim)
        else:
            out.pop("default")
    return out


def path_of(loc: tuple) -> str:
    out = ""
    for part in loc:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out


def error_message(err: dict) -> str:
    """One pydantic error as the formats say it ("is required", a quantity's own message)."""
    kind = err["type"]
    if kind == "missing":
        return "is required"
    if kind == "extra_forbidden":
        return "is not a field of this format"
    if kind in ("literal_error", "enum"):
        expected = err.get("ctx", {}).get("expected", "")
        return f"'{shown(err.get('input'))}' is not allowed; use {expected}"
    if kind in ("quantity", "text", "ratio"):
        return err["msg"]
    if kind in ("too_long", "string_too_long") and isinstance(err.get("input"), str):
        # a text's length limit (pydantic says "items" of a constraint after a validator)
        return (f"is {len(err['input'])} characters long; this field takes at most "
                f"{err.get('ctx', {}).get('max_length')}")
    if kind in ("too_short", "string_too_short") and err.get("input") == "":
        return "is empty; it needs a value"
    msg = err["msg"]
    return msg[0].lower() + msg[1:] if msg else kind


def problems_from(exc: ValidationError, prefix: tuple = ()) -> list[FieldProblem]:
    problems = []
    for err in exc.errors():
        loc = tuple(p for p in err["loc"] if not (isinstance(p, str) and p.startswith(
            ("function-", "tagged-union"))))
        problems.append(FieldProblem(path_of(prefix + loc), error_message(err)))
    return problems


# -- reading YAML and JSON ---------------------------------------------------------------------
#
# Every YAML the package reads (fleet files, plan files, the web model form's boxes, plans
# loaded on the web) goes through :func:`load_yaml`. PyYAML's own ``safe_load`` follows YAML
# 1.1, which reads an unquoted ratio ``1000:1`` as the base-60 integer 60001, ``NO``/``on`` as
# booleans and ``0123`` as octal 83; :class:`CoreLoader` resolves plain scalars by the YAML 1.2
# core schema instead (YAML 1.2.2, 10.3 "Core Schema"), so ``1000:1`` stays text.


class TextInt(int):
    """An integer read from a plain scalar, with the text it was written as (``.text``, also
    its ``str``), so a text field given ``0123`` keeps ``"0123"`` rather than ``"123"``."""

    text: str

    def __str__(self) -> str:
        return self.text


class TextFloat(float):
    """A float read from a plain scalar, with the text it was written as (``.text``, also its
    ``str``)."""

    text: str

    def __str__(self) -> str:
        return self.text


def _with_text(cls, value, text: str):
    out = cls(value)
    out.text = text
    return out


class CoreLoader(yaml.SafeLoader):
    """PyYAML's safe loader with the YAML 1.2 core schema's implicit resolvers and only its
    types (null, bool, int, float, str, sequence, mapping); anchors and aliases are refused
    (an alias bomb must not expand) and so is a key given twice in one mapping."""

    yaml_implicit_resolvers: dict = {}

    depth = 0

    def compose_node(self, parent, index):
        event = self.peek_event()
        if isinstance(event, yaml.AliasEvent) or getattr(event, "anchor", None) is not None:
            raise yaml.composer.ComposerError(
                None, None, "anchors and aliases (&name, *name) are not accepted; write each "
                "value out in full", event.start_mark)
        # PyYAML composes nested nodes by recursion: the depth is held to MAX_DEPTH long
        # before Python's recursion limit is reached
        if self.depth >= MAX_DEPTH:
            raise yaml.composer.ComposerError(None, None, too_deep(), event.start_mark)
        self.depth += 1
        try:
            return super().compose_node(parent, index)
        finally:
            self.depth -= 1

    def construct_mapping(self, node, deep=False):
        if isinstance(node, yaml.MappingNode):
            seen = set()
            for key_node, _ in node.value:
                key = self.construct_object(key_node, deep=True)
                try:
                    again = key in seen
                except TypeError:
                    continue  # an unhashable key: the base class says so
                if again:
                    raise yaml.constructor.ConstructorError(
                        None, None, f"the key '{key}' is given twice in one mapping",
                        key_node.start_mark)
                seen.add(key)
        return super().construct_mapping(node, deep)

    def construct_core_bool(self, node):
        return self.construct_scalar(node) in ("true", "True", "TRUE")

    def construct_core_int(self, node):
        text = self.construct_scalar(node)
        body = text.strip()
        try:
            if "_" in body:  # YAML 1.1's digit separators are not 1.2's
                raise ValueError
            if body[:2] == "0o":
                value = int(body[2:], 8)
            elif body[:2] == "0x":
                value = int(body[2:], 16)
            else:
                value = int(body, 10)
        except ValueError:
            raise yaml.constructor.ConstructorError(
                None, None, f"'{shown(text)}' is not an integer (or has too many digits)",
                node.start_mark) from None
        return _with_text(TextInt, value, text)

    def construct_core_float(self, node):
        text = self.construct_scalar(node)
        body = text.lower()
        try:
            if body.lstrip("+-") == ".inf":
                value = -math.inf if body.startswith("-") else math.inf
            elif body == ".nan":
                value = math.nan
            elif "_" in body:
                raise ValueError
            else:
                value = float(body)
        except ValueError:
            raise yaml.constructor.ConstructorError(
                None, None, f"'{shown(text)}' is not a number", node.start_mark) from None
        return _with_text(TextFloat, value, text)

    def construct_not_core(self, node):
        raise yaml.constructor.ConstructorError(
            None, None, f"the tag {node.tag} is not accepted here", node.start_mark)


# The core schema's resolvers, in this order: an int is tried before a float.
_CORE_RESOLVERS = (
    ("tag:yaml.org,2002:null", r"^(?:~|null|Null|NULL|)$", ["~", "n", "N", ""]),
    ("tag:yaml.org,2002:bool", r"^(?:true|True|TRUE|false|False|FALSE)$", list("tTfF")),
    ("tag:yaml.org,2002:int", r"^(?:[-+]?[0-9]+|0o[0-7]+|0x[0-9a-fA-F]+)$",
     list("-+0123456789")),
    ("tag:yaml.org,2002:float",
     r"^(?:[-+]?(?:\.[0-9]+|[0-9]+(?:\.[0-9]*)?)(?:[eE][-+]?[0-9]+)?"
     r"|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN))$", list("-+.0123456789")),
)
for _tag, _pattern, _first in _CORE_RESOLVERS:
    CoreLoader.add_implicit_resolver(_tag, re.compile(_pattern), _first)
CoreLoader.yaml_constructors = {
    "tag:yaml.org,2002:null": yaml.SafeLoader.construct_yaml_null,
    "tag:yaml.org,2002:bool": CoreLoader.construct_core_bool,
    "tag:yaml.org,2002:int": CoreLoader.construct_core_int,
    "tag:yaml.org,2002:float": CoreLoader.construct_core_float,
    "tag:yaml.org,2002:str": yaml.SafeLoader.construct_yaml_str,
    "tag:yaml.org,2002:seq": yaml.SafeLoader.construct_yaml_seq,
    "tag:yaml.org,2002:map": yaml.SafeLoader.construct_yaml_map,
    None: CoreLoader.construct_not_core,
}


try:  # PyYAML's libyaml binding, when PyYAML was built with it
    from yaml._yaml import CParser
except ImportError:  # pragma: no cover - the pure-Python parser then reads every file
    CParser = None


if CParser is not None:
    class CCoreLoader(CParser, CoreLoader):  # type: ignore[valid-type,misc]
        """:class:`CoreLoader` reading its events from libyaml's parser (C) instead of
        PyYAML's pure-Python scanner and parser, about three times faster on a long fleet
        file. Everything after the events is :class:`CoreLoader`'s own Python: the composer
        with its refusal of anchors and aliases and its depth limit, the refusal of a key
        given twice, the core schema's resolvers and constructors. (libyaml's own composer,
        ``CParser.get_single_node``, would skip those checks, so the Python one is named.)"""

        def __init__(self, stream):
            CParser.__init__(self, stream)
            yaml.constructor.SafeConstructor.__init__(self)
            yaml.resolver.Resolver.__init__(self)
            yaml.composer.Composer.__init__(self)

        get_single_node = yaml.composer.Composer.get_single_node
        get_node = yaml.composer.Composer.get_node
        check_node = yaml.composer.Composer.check_node

        def get_single_data(self):
            return value_from_events(self)


_STR, _SEQ, _MAP = ("tag:yaml.org,2002:str", "tag:yaml.org,2002:seq",
                    "tag:yaml.org,2002:map")


def value_from_events(loader) -> Any:
    """The one document of ``loader``'s event stream as Python values, built in one loop over
    the events, with no node tree between (a node and four Python calls per scalar are most
    of the time of reading a long file). It refuses what :class:`CoreLoader` refuses, with the
    same messages: an anchor or an alias, nesting beyond :data:`MAX_DEPTH`, a key given twice
    or unhashable, a tag outside the core schema, more than one document; each scalar is
    resolved and constructed by CoreLoader's own resolvers and constructors. Where a document
    has several faults the first one in the text is the one reported, where CoreLoader reports
    the composer's before the constructor's. (A key tagged ``!!merge``, which the core schema
    does not have, is refused here; PyYAML's constructor would merge it.)"""
    error = yaml.constructor.ConstructorError
    get = loader.get_event
    get()  # the stream's start
    event = get()
    if isinstance(event, yaml.StreamEndEvent):
        return None
    stack: list[list] = []  # [container, pending key (mappings), its mark, keys seen]
    while True:
        event = get()
        kind = type(event)
        if kind is yaml.SequenceEndEvent or kind is yaml.MappingEndEvent:
            value = stack.pop()[0]
        else:
            if kind is yaml.AliasEvent or event.anchor is not None:
                raise yaml.composer.ComposerError(
                    None, None, "anchors and aliases (&name, *name) are not accepted; write "
                    "each value out in full", event.start_mark)
            if len(stack) >= MAX_DEPTH:
                raise yaml.composer.ComposerError(None, None, too_deep(), event.start_mark)
            if kind is yaml.ScalarEvent:
                value = _scalar_value(loader, event)
            else:
                tag = event.tag
                sequence = kind is yaml.SequenceStartEvent
                if tag not in (None, "!", _SEQ if sequence else _MAP):
                    raise error(None, None, f"the tag {tag} is not accepted here",
                                event.start_mark)
                stack.append([[] if sequence else {}, _NO_KEY, None, None])
                continue
        if not stack:
            break
        frame = stack[-1]
        container = frame[0]
        if type(container) is list:
            container.append(value)
        elif frame[1] is _NO_KEY:
            try:
                hash(value)
            except TypeError:
                raise error("while constructing a mapping", None, "found unhashable key",
                            event.start_mark) from None
            if value in container:
                raise error(None, None, f"the key '{value}' is given twice in one mapping",
                            event.start_mark)
            frame[1] = value
        else:
            container[frame[1]] = value
            frame[1] = _NO_KEY
    get()  # the document's end
    if not isinstance(loader.peek_event(), yaml.StreamEndEvent):
        event = get()
        raise yaml.composer.ComposerError("expected a single document in the stream", None,
                                          "but found another document", event.start_mark)
    return value


_NO_KEY = object()


def _scalar_value(loader, event) -> Any:
    """A scalar event's value as CoreLoader composes and constructs it."""
    tag = event.tag
    if tag is None and (not event.implicit[0]
                        or event.value[:1] not in CoreLoader.yaml_implicit_resolvers):
        return event.value  # quoted, or no core type begins so: text (as resolve finds)
    if tag is None or tag == "!":
        tag = loader.resolve(yaml.ScalarNode, event.value, event.implicit)
    if tag == _STR:
        return event.value
    node = yaml.ScalarNode(tag, event.value, event.start_mark, event.end_mark,
                           style=event.style)
    construct = CoreLoader.yaml_constructors.get(tag, CoreLoader.yaml_constructors[None])
    return construct(loader, node)


# The limits of a document, checked before it is parsed: nesting (a fleet file nests 6 levels,
# a plan 3; PyYAML and Python's json module recurse once per level and would fail with a
# RecursionError at a few hundred) and size (the demo fleet is 12 kB: 20 MB is a fleet of
# tens of thousands of units); common practice (no source). Plans have their own, smaller
# size (plans.MAX_PLAN_BYTES).
MAX_DEPTH = 64
MAX_DOCUMENT_BYTES = 20 * 1024 * 1024


def too_deep() -> str:
    return (f"lists and mappings nest more than {MAX_DEPTH} levels deep; a withstand file "
            "needs fewer than 10")


def _where(what: str) -> str:
    return f"{what} is " if what else ""


def _too_big(what: str, limit: int) -> InvalidInput:
    return InvalidInput(f"{_where(what)}too large: a document here may hold at most {limit} "
                        f"bytes ({limit / (1024 * 1024):g} MB)")


def _check_length(text: str, max_bytes: int | None, what: str) -> None:
    # a character is at least one byte of UTF-8; at most four
    if max_bytes is not None and len(text) > max_bytes:
        raise _too_big(what, max_bytes)
    if max_bytes is not None and len(text) * 4 > max_bytes:
        size = len(text.encode("utf-8", "surrogatepass"))
        if size > max_bytes:
            raise _too_big(what, max_bytes)


def load_yaml(text: str, *, what: str = "", max_bytes: int | None = MAX_DOCUMENT_BYTES) -> Any:
    """The one YAML reader: ``text`` read with :class:`CoreLoader`. Malformed text, text
    nesting deeper than :data:`MAX_DEPTH` or longer than ``max_bytes`` raises
    :class:`InvalidInput` saying where (``what`` names the file or box, if given)."""
    _check_length(text, max_bytes, what)
    try:
        try:
            loader = CoreLoader if CParser is None else CCoreLoader
            return yaml.load(text, Loader=loader)  # noqa: S506 - a safe loader
        except UnicodeEncodeError:  # a lone surrogate, which libyaml's UTF-8 cannot take
            return yaml.load(text, Loader=CoreLoader)  # noqa: S506 - which says where
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1} column {mark.column + 1}" if mark else ""
        problem = getattr(exc, "problem", None) or str(exc).splitlines()[0]
        if problem == "exceeded maximum nesting depth":
            # libyaml's own limit (1000 levels), met when its scanner looks ahead for a key
            # before the composer has reached MAX_DEPTH: the same refusal
            raise InvalidInput(f"{_where(what)}not accepted: {too_deep()}{where}") from None
        raise InvalidInput(f"{_where(what)}not valid YAML or JSON{where}: "
                           f"{shown(problem, 200)}") from None
    except RecursionError:  # not reached: MAX_DEPTH stops it first
        raise InvalidInput(f"{_where(what)}not accepted: {too_deep()}") from None


_JSON_STRING = re.compile(r'"[^"\\]*(?:\\.[^"\\]*)*"', re.S)
_NOT_BRACKET = re.compile(r"[^\[\]{}]+")


def json_depth_problem(text: str) -> str | None:
    """Whether JSON text nests deeper than :data:`MAX_DEPTH` (brackets in strings do not
    count), found without parsing it, so the json module's recursion is never reached."""
    if text.count("[") + text.count("{") <= MAX_DEPTH:
        return None
    brackets = _NOT_BRACKET.sub("", _JSON_STRING.sub("", text))
    depth = 0
    for ch in brackets:
        if ch in "[{":
            depth += 1
            if depth > MAX_DEPTH:
                return too_deep()
        else:
            depth -= 1
    return None


def _json_int(text: str):
    try:
        return _with_text(TextInt, int(text), text)
    except ValueError:  # more digits than Python converts (sys.get_int_max_str_digits)
        raise InvalidInput(f"the number '{shown(text)}' has too many digits") from None


def load_json(text: str, *, what: str = "", max_bytes: int | None = MAX_DOCUMENT_BYTES) -> Any:
    """JSON text, numbers keeping the text they were written as (like :func:`load_yaml`),
    with the same limits of depth and size."""
    _check_length(text, max_bytes, what)
    problem = json_depth_problem(text)
    if problem:
        raise InvalidInput(f"{_where(what)}not accepted: {problem}")
    try:
        return json.loads(text, parse_int=_json_int,
                          parse_float=lambda s: _with_text(TextFloat, float(s), s))
    except json.JSONDecodeError as exc:
        raise InvalidInput(f"{_where(what)}not valid JSON: {exc.msg} at line "
                           f"{exc.lineno} column {exc.colno}") from None
    except InvalidInput as exc:  # a number with too many digits
        raise InvalidInput(f"{_where(what)}not accepted: {exc}") from None
    except RecursionError:  # not reached: json_depth_problem stops it first
        raise InvalidInput(f"{_where(what)}not accepted: {too_deep()}") from None


def read_text(path: str | Path, *, max_bytes: int = MAX_DOCUMENT_BYTES) -> str:
    """A file's text, which must be UTF-8 and at most ``max_bytes`` long; a missing,
    unreadable, oversized or non-UTF-8 file raises :class:`InvalidInput` naming it. Never
    more than ``max_bytes`` + 1 bytes are read (a device or pipe given as the file cannot
    fill the memory)."""
    p = Path(path)
    try:
        with open(p, "rb") as f:
            data = f.read(max_bytes + 1)
    except FileNotFoundError:
        raise InvalidInput(f"cannot read '{shown(p, 200)}': the file does not exist") from None
    except OSError as exc:
        raise InvalidInput(f"cannot read '{shown(p, 200)}': {exc.strerror or exc}") from None
    except ValueError:  # a NUL in the path
        raise InvalidInput(f"cannot read '{shown(p, 200)}': a file name cannot hold a NUL "
                           "character") from None
    if len(data) > max_bytes:
        raise _too_big(f"'{shown(p, 200)}'", max_bytes)
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InvalidInput(not_utf8(p, exc)) from None


def not_utf8(path: str | Path, exc: UnicodeDecodeError) -> str:
    return (f"'{shown(path, 200)}' is not UTF-8 text (byte 0x{exc.object[exc.start]:02x} at "
            f"offset {exc.start}); save it as UTF-8 and try again")


def read_document(path: str | Path, *, max_bytes: int = MAX_DOCUMENT_BYTES) -> Any:
    """Read a JSON or YAML file of at most ``max_bytes``; unreadable, oversized, too deeply
    nested or malformed text raises InvalidInput."""
    p = Path(path)
    return parse_text(read_text(p, max_bytes=max_bytes), json_only=p.suffix.lower() == ".json",
                      what=f"'{shown(p, 200)}'", max_bytes=max_bytes)


def parse_text(text: str, *, json_only: bool = False, what: str = "",
               max_bytes: int | None = MAX_DOCUMENT_BYTES) -> Any:
    if json_only:
        return load_json(text, what=what, max_bytes=max_bytes)
    return load_yaml(text, what=what, max_bytes=max_bytes)  # JSON is YAML too


# -- text fields -------------------------------------------------------------------------------

def as_text(value: Any) -> Any:
    """A text field's value: text as given; a number read from a plain scalar as the exact
    text it was written as (serial ``0123`` stays ``"0123"``); a true/false value or a float
    with no written text is refused (:class:`ValueError`) with a hint to quote it. Anything else
    is returned for the field's own validation to refuse."""
    if isinstance(value, bool):
        word = "true" if value else "false"
        raise ValueError(f"reads as the yes/no value {word}, not text; if '{word}' is the text, "
                         f"put it in quotes: \"{word}\"")
    if isinstance(value, (TextInt, TextFloat)):
        return value.text
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        raise ValueError(f"reads as the number {value!r}, not text; put it in quotes so it "
                         "keeps its exact text")
    return value


# Characters no text field takes: control characters (NUL, escape, DEL, the C1 range), lone
# surrogates (not text; they cannot be stored as UTF-8), the line and paragraph separators, and
# the bidirectional overrides and isolates, which make text display in another order than it
# is stored (CVE-2021-42574, "Trojan Source"). A multi-line note also takes tab, newline and
# carriage return.
_BIDI = set("\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
_NOTE_CONTROLS = set("\t\n\r")


# The longest text a field takes: a name or tag fits a line, a note a page or two; beyond that
# it is not a record but a payload. Common practice (no source).
MAX_LINE_CHARS = 1_000
MAX_NOTE_CHARS = 10_000


def text_problem(value: str, *, multiline: bool = False) -> str | None:
    """What is wrong with ``value`` as the text of a field, or ``None``: too long, or the first
    character it may not hold, with its position."""
    longest = MAX_NOTE_CHARS if multiline else MAX_LINE_CHARS
    if len(value) > longest:
        return f"is {len(value)} characters long; this field takes at most {longest}"
    if value.isprintable():
        # str.isprintable is false for every character refused below (Cc, Cs, Zl, Zp, and
        # the bidirectional controls, which are Cf): most text is settled by this one call
        return None
    for i, ch in enumerate(value):
        if multiline and ch in _NOTE_CONTROLS:
            continue
        category = unicodedata.category(ch)
        if category in ("Cc", "Cs", "Zl", "Zp") or ch in _BIDI:
            what = {"\x00": "a NUL character", "\t": "a tab", "\n": "a line break",
                    "\r": "a carriage return"}.get(ch, f"the control character U+{ord(ch):04X}")
            return (f"holds {what} at position {i + 1}; "
                    + ("a note takes letters, digits, punctuation, tabs and line breaks"
                       if multiline else "this field takes one line of printable text"))
    return None


def check_text(value: str, field: str, *, multiline: bool = False) -> str:
    """``value`` if it is acceptable text for ``field``, else :class:`InvalidInput`."""
    problem = text_problem(value, multiline=multiline)
    if problem:
        raise InvalidInput(problem, field)
    return value


def _text_validator(value: Any, multiline: bool = False) -> Any:
    if type(value) is str and value.isprintable() and \
            len(value) <= (MAX_NOTE_CHARS if multiline else MAX_LINE_CHARS):
        return value  # the common case, settled as text_problem settles it, in one call
    try:
        value = as_text(value)
    except ValueError as exc:
        raise PydanticCustomError("text", str(exc)) from None
    if isinstance(value, str):
        problem = text_problem(value, multiline=multiline)
        if problem:
            raise PydanticCustomError("text", problem)
    return value


def _note_validator(value: Any) -> Any:
    return _text_validator(value, multiline=True)


# A pydantic text field that keeps a number's written text (see :func:`as_text`): one line,
# no control characters (:func:`text_problem`).
Text = Annotated[str, BeforeValidator(_text_validator)]
# The same for a note of several lines: tabs and line breaks are allowed.
NoteText = Annotated[str, BeforeValidator(_note_validator)]


# -- the plain fast path ---------------------------------------------------------------------
#
# The same text and date fields checked by pydantic-core alone, with no Python call per field,
# for a validation that runs once per entry of a long list (a fleet file's units). Each accepts
# only a subset of what its full field above accepts, and gives the same value for it: a plain
# ``str`` every character of which ``str.isprintable`` passes (no Unicode "Other" or
# "Separator" character but the ASCII space; that holds every character :func:`text_problem`
# refuses), within the same length; a date only as exactly ``YYYY-MM-DD`` in the same years.
# Anything else fails here, and the caller validates that entry again with the full fields,
# whose messages are the ones a user reads. (The patterns are pydantic-core's Rust regex
# syntax, in which ``$`` is the end of the text, never before a final line break.)
PLAIN_LINE = r"^(?:[^\p{C}\p{Z}]| )*$"
PLAIN_NOTE = r"^(?:[^\p{C}\p{Z}]|[ \t\n\r])*$"


def plain_text(*, pattern: str = PLAIN_LINE, max_length: int = MAX_LINE_CHARS,
               min_length: int | None = None):
    """The fast-path form of :data:`Text`; with ``pattern`` and the lengths, of a key or a
    note."""
    schema = core_schema.str_schema(strict=True, pattern=pattern, max_length=max_length,
                                    min_length=min_length)
    return Annotated[str, GetPydanticSchema(lambda _type, _handler: schema)]


_PLAIN_DATE = core_schema.chain_schema([
    core_schema.str_schema(strict=True, pattern=r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$"),
    core_schema.date_schema(ge=date(FIRST_YEAR, 1, 1), le=date(LAST_YEAR, 12, 31))])
# The fast-path form of :data:`Date`.
PlainDate = Annotated[date, GetPydanticSchema(lambda _type, _handler: _PLAIN_DATE)]


def text_of(value: float | None, dim: u.Dimension) -> str | None:
    """An SI float as the text a file holds, precise enough to read back the same float."""
    if value is None:
        return None
    return u.format_quantity(value, dim, digits=12)


class _FullDumper(yaml.SafeDumper):
    """PyYAML's safe dumper writing every value out in full: a list or mapping held twice in
    ``data`` would otherwise be written once with an anchor and then as an alias, which
    :class:`CoreLoader` refuses to read back."""

    def ignore_aliases(self, data) -> bool:
        return True


def dump_document(data: Any, path: str | Path) -> None:
    p = Path(path)
    if p.suffix.lower() == ".json":
        text = json.dumps(data, indent=2, ensure_ascii=False, default=str) + "\n"
    else:
        text = yaml.dump(data, Dumper=_FullDumper, sort_keys=False, allow_unicode=True,
                         width=100)
    p.write_text(text, encoding="utf-8")
