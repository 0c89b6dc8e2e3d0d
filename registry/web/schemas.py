"""Request documents of the web app and the API, as pydantic models: they validate what comes
in and they are the source of the OpenAPI document, so the two cannot drift apart.

The plan has its own validator (:mod:`registry.plans`) and its shipped JSON Schema
(``registry/schemas/plan.schema.json``), which :func:`plan_schema` hands to the OpenAPI
document with its internal references moved to the components.
"""

from __future__ import annotations

import json
from datetime import datetime, timezone
from importlib import resources
from typing import Annotated, Literal

from pydantic import AfterValidator, BaseModel, ConfigDict, Field, ValidationError, field_validator
from pydantic_core import PydanticCustomError

from ..engine import spec
from ..errors import InvalidInput
from ..formats.common import Duration, Energy, Voltage, problems_from
from .limits import control_problem



def _plain(multiline: bool):
    def check(value: str) -> str:
        problem = control_problem(value, multiline=multiline)
        if problem:
            raise PydanticCustomError("text", problem)
        return value
    return check


# The schema says what the validator refuses, so a client generating requests from the
# document does not send control characters either.
_LINE = {"pattern": "^[^\\u0000-\\u001f\\u007f-\\u009f]*$"}
_LINES = {"pattern": "^[^\\u0000-\\u0008\\u000b\\u000c\\u000e-\\u001f\\u007f-\\u009f]*$"}
Tag = Annotated[str, Field(min_length=1, max_length=64, json_schema_extra=_LINE),
                AfterValidator(_plain(False))]
Note = Annotated[str, Field(max_length=4000, json_schema_extra=_LINES),
                 AfterValidator(_plain(True))]
# The earliest time an event may be logged at: no instrument of a registry was used before
# it, and a time near the start of the calendar overflows once converted to UTC.
EARLIEST_EVENT = datetime(1900, 1, 1)


class _Request(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class EventRequest(_Request):
    """An event to log: quantities as text ("2 kV")."""

    unit: Tag
    kind: Literal[spec.EVENT_KINDS]  # type: ignore[valid-type]
    mode: Annotated[str, Field(max_length=64, json_schema_extra=_LINE),
                    AfterValidator(_plain(False))] | None = None
    voltage: Voltage | None = None
    energy: Energy | None = None
    duration: Duration | None = None
    waveform: Literal[spec.EVENT_WAVEFORMS] | None = Field(  # type: ignore[valid-type]
        None, description="ac or dc; left out, a current input's fuse is judged on the lower "
                          "of its ac and dc voltage ratings")
    symptoms: list[Literal[spec.SYMPTOMS]] = []  # type: ignore[valid-type]
    note: Note = ""
    at: datetime | None = Field(None, description="when it happened (ISO 8601); default now")

    @field_validator("at")
    @classmethod
    def _at_in_calendar(cls, t: datetime | None) -> datetime | None:
        if t is None:
            return t
        try:
            utc = t.astimezone(timezone.utc).replace(tzinfo=None) if t.tzinfo else t
        except OverflowError:
            raise PydanticCustomError("text", "is outside the calendar once converted to "
                                              "UTC") from None
        if utc < EARLIEST_EVENT:
            raise PydanticCustomError("text", f"is before {EARLIEST_EVENT:%Y-%m-%d}; give "
                                              "the time the event happened")
        return t


class HoldRelease(_Request):
    """Closing a unit's open hold after inspection; ``fail`` retires the unit."""

    result: Literal[spec.INSPECTION_RESULTS]  # type: ignore[valid-type]
    note: Note = ""


def validated(model: type[BaseModel], data) -> BaseModel:
    """``model`` from ``data`` or :class:`InvalidInput` naming each field."""
    if not isinstance(data, dict):
        raise InvalidInput("the body must be a JSON object")
    try:
        return model.model_validate(data)
    except ValidationError as exc:
        raise InvalidInput(problems_from(exc)) from None


def plan_schema(prefix: str = "Plan_") -> tuple[dict, dict]:
    """The shipped plan schema and its ``$defs``, with ``#/$defs/X`` references rewritten to
    ``#/components/schemas/<prefix>X`` so they resolve inside an OpenAPI document."""
    raw = json.loads((resources.files("registry") / "schemas" / "plan.schema.json").read_text())

    def move(node):
        if isinstance(node, dict):
            out = {}
            for k, v in node.items():
                if k == "$ref" and isinstance(v, str) and v.startswith("#/$defs/"):
                    out[k] = "#/components/schemas/" + prefix + v.removeprefix("#/$defs/")
                elif k not in ("$schema", "$id", "$defs"):
                    out[k] = move(v)
            return out
        if isinstance(node, list):
            return [move(x) for x in node]
        return node

    defs = {prefix + k: move(v) for k, v in raw.get("$defs", {}).items()}
    return move(raw), defs
