"""What the file formats share: quantity fields for pydantic, reading JSON or YAML, and turning
pydantic's errors into :class:`InvalidInput` with paths like ``models[2].modes[1].max_input``."""

from __future__ import annotations

import json
import math
from datetime import date
from pathlib import Path
from typing import Annotated, Any

import yaml
from pydantic import BeforeValidator, ValidationError, WithJsonSchema
from pydantic_core import PydanticCustomError

from .. import units as u
from ..errors import FieldProblem, InvalidInput

QUANTITY_PATTERN = r"^\s*[-+]?[0-9.]+([eE][-+]?[0-9]+)?\s*[A-Za-zµμΩ^*/0-9 ]*$"


def _quantity_validator(dim: u.Dimension, positive: bool):
    def parse(value: Any) -> float:
        try:
            return u.parse_quantity(value, dim, "", allow_zero=not positive)
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


def parse_date(text, field: str) -> date | None:
    """A calendar date typed as YYYY-MM-DD (blank: ``None``); anything else is refused with a
    message naming ``field``."""
    if text is None or not str(text).strip():
        return None
    try:
        return date.fromisoformat(str(text).strip())
    except ValueError:
        raise InvalidInput(f"'{text}' is not a date; write it as YYYY-MM-DD, e.g. 2026-03-01",
                           field) from None


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


def _friendly(err: dict) -> str:
    kind = err["type"]
    if kind == "missing":
        return "is required"
    if kind == "extra_forbidden":
        return "is not a field of this format"
    if kind in ("literal_error", "enum"):
        expected = err.get("ctx", {}).get("expected", "")
        return f"'{err.get('input')}' is not allowed; use {expected}"
    if kind == "quantity":
        return err["msg"]
    msg = err["msg"]
    return msg[0].lower() + msg[1:] if msg else kind


def problems_from(exc: ValidationError, prefix: tuple = ()) -> list[FieldProblem]:
    problems = []
    for err in exc.errors():
        loc = tuple(p for p in err["loc"] if not (isinstance(p, str) and p.startswith(
            ("function-", "tagged-union"))))
        problems.append(FieldProblem(path_of(prefix + loc), _friendly(err)))
    return problems


def read_document(path: str | Path) -> Any:
    """Read a JSON or YAML file; unreadable or malformed text raises InvalidInput."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InvalidInput(f"file '{p}' does not exist") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InvalidInput(f"cannot read '{p}': {exc}") from None
    return parse_text(text, json_only=p.suffix.lower() == ".json")


def parse_text(text: str, *, json_only: bool = False) -> Any:
    if json_only:
        try:
            return json.loads(text)
        except json.JSONDecodeError as exc:
            raise InvalidInput(f"not valid JSON: {exc.msg} at line {exc.lineno} "
                               f"column {exc.colno}") from None
    try:
        return yaml.safe_load(text)  # JSON is YAML too
    except yaml.YAMLError as exc:
        mark = getattr(exc, "problem_mark", None)
        where = f" at line {mark.line + 1} column {mark.column + 1}" if mark else ""
        raise InvalidInput(f"not valid YAML or JSON{where}: "
                           f"{getattr(exc, 'problem', None) or exc}") from None


def text_of(value: float | None, dim: u.Dimension) -> str | None:
    """An SI float as the text a file holds, precise enough to read back the same float."""
    if value is None:
        return None
    return u.format_quantity(value, dim, digits=12)


def number_text(value: float) -> float | int:
    return int(value) if math.isfinite(value) and float(value).is_integer() else value


def dump_document(data: Any, path: str | Path) -> None:
    p = Path(path)
    if p.suffix.lower() == ".json":
        text = json.dumps(data, indent=2, ensure_ascii=False, default=str) + "\n"
    else:
        text = yaml.safe_dump(data, sort_keys=False, allow_unicode=True, width=100)
    p.write_text(text, encoding="utf-8")
