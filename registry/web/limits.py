"""Bounds on what a request may carry, checked in one place for every route: an id in a route
or a query string fits the database's 64-bit integer, text holds no control characters, and a
JSON body is UTF-8 without a byte-order mark, shallow, and an object.

Each refusal is an :class:`InvalidInput` naming the field, so the API answers 400 with the
problem and a page shows its form again with the message; nothing reaches the database.
"""

from __future__ import annotations

import codecs
import json
import math
import re

from werkzeug.routing import IntegerConverter, ValidationError

from ..errors import FieldProblem, InvalidInput

# SQLite's INTEGER and PostgreSQL's BIGINT are signed 64-bit: a larger id cannot name a row.
MAX_ID = 2 ** 63 - 1
# Plans and events are a few levels deep; anything much deeper is not a document of ours.
MAX_DEPTH = 32

_INT = re.compile(r"[+-]?[0-9]{1,19}")
# C0 and C1 control characters, DEL and lone surrogates; tab, line feed and carriage return
# are ordinary text in a note.
_CONTROL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\ud800-\udfff]")
_CONTROL_LINE = re.compile("[\x00-\x1f\x7f-\x9f\ud800-\udfff]")


class IdConverter(IntegerConverter):
    """``<int:...>`` for every route: 0 to :data:`MAX_ID`; anything else does not match the
    route (404), so an id too large for the database never reaches a query."""

    def __init__(self, map, fixed_digits=0, min=0, max=MAX_ID, signed=False):  # noqa: A002
        super().__init__(map, fixed_digits=fixed_digits, min=min,
                         max=MAX_ID if max is None else max, signed=signed)

    def to_python(self, value: str):
        if len(value.lstrip("+-0")) > 19:  # int() of thousands of digits is refused by Python
            raise ValidationError()
        return super().to_python(value)


def int_arg(args, name: str, default: int) -> int:
    """An integer query parameter (a page, an index): blank gives ``default``; text that is not
    a whole number, or one beyond a 64-bit integer, is refused naming ``name``."""
    text = (args.get(name) or "").strip()
    if not text:
        return default
    if not _INT.fullmatch(text) or abs(int(text)) > MAX_ID:
        raise InvalidInput(f"'{text[:40]}' is not a whole number from {-MAX_ID} to {MAX_ID}",
                           name)
    return int(text)


def control_problem(text: str, *, multiline: bool = True) -> str | None:
    """Why ``text`` is refused (a control character, shown as U+XXXX), or ``None``.
    ``multiline`` allows tab, line feed and carriage return."""
    found = (_CONTROL if multiline else _CONTROL_LINE).search(text)
    if found is None:
        return None
    return (f"holds the control character U+{ord(found.group()):04X}, which is not text; "
            "remove it")


def check_texts(values, *, multiline=()) -> list[FieldProblem]:
    """A problem for each value of ``values`` (a mapping or (field, text) pairs) holding a
    control character, and for each field name holding one; the fields named in
    ``multiline`` may hold tabs and line breaks."""
    out = []
    for name, value in (values.items() if hasattr(values, "items") else values):
        problem = control_problem(str(name), multiline=False)
        if problem:
            out.append(FieldProblem(repr(name)[1:-1][:40], "the name " + problem))
            continue
        problem = control_problem(str(value), multiline=name in multiline)
        if problem:
            out.append(FieldProblem(name, problem))
    return out


def _path(parent: str, key) -> str:
    if isinstance(key, int):
        return f"{parent}[{key}]"
    return f"{parent}.{key}" if parent else str(key)


def _depth(text: str) -> int:
    """The deepest nesting of arrays and objects in JSON ``text`` (strings skipped)."""
    bare = re.sub(r'"(?:[^"\\]|\\.)*"', '""', text)
    depth = deepest = 0
    for ch in re.findall(r"[\[\]{}]", bare):
        if ch in "[{":
            depth += 1
            if depth > deepest:
                deepest = depth
                if deepest > MAX_DEPTH:
                    break
        else:
            depth -= 1
    return deepest


def _number(text: str):
    value = float(text)
    if not math.isfinite(value):
        raise ValueError(f"the number {text[:40]} is beyond the range of a double")
    return value


def _integer(text: str):
    if len(text.lstrip("-")) > 19 or abs(int(text)) > MAX_ID:
        raise ValueError(f"the integer {text[:40]}... is beyond 64 bits")
    return int(text)


def _constant(name: str):
    raise ValueError(f"{name} is not a JSON number")


def parse_json_body(raw: bytes) -> dict:
    """A request body as a JSON object, or :class:`InvalidInput`: a byte-order mark, bytes that
    are not UTF-8, nesting deeper than :data:`MAX_DEPTH`, malformed JSON, NaN or a number
    beyond a double or a 64-bit integer, anything but an object at the top, or a string holding
    a control character (named by its path)."""
    if raw.startswith(codecs.BOM_UTF8):
        raise InvalidInput("the body starts with a byte-order mark; send UTF-8 without one", "")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InvalidInput(f"the body is not UTF-8 (byte 0x{raw[exc.start]:02x} at offset "
                           f"{exc.start})", "") from None
    if not text.strip():
        raise InvalidInput("the body is empty; send a JSON object", "")
    if _depth(text) > MAX_DEPTH:
        raise InvalidInput(f"the body is nested more than {MAX_DEPTH} levels deep", "")
    try:
        data = json.loads(text, parse_float=_number, parse_int=_integer,
                          parse_constant=_constant)
    except json.JSONDecodeError as exc:
        raise InvalidInput(f"the body is not valid JSON: {exc.msg} at line {exc.lineno} "
                           f"column {exc.colno}", "") from None
    except (ValueError, RecursionError) as exc:
        raise InvalidInput(f"the body is not valid JSON: {str(exc)[:120]}", "") from None
    if not isinstance(data, dict):
        raise InvalidInput("the body must be a JSON object", "")
    problems: list[FieldProblem] = []
    _walk(data, "", problems)
    if problems:
        raise InvalidInput(problems)
    return data


def _walk(node, path: str, problems: list) -> None:
    if isinstance(node, str):
        problem = control_problem(node)
        if problem:
            problems.append(FieldProblem(path, problem))
    elif isinstance(node, dict):
        for k, v in node.items():
            here = _path(path, k)
            problem = control_problem(k, multiline=False)
            if problem:
                problems.append(FieldProblem(here, "the key " + problem))
            _walk(v, here, problems)
    elif isinstance(node, list):
        for i, v in enumerate(node):
            _walk(v, _path(path, i), problems)
