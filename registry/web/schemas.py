"""Request documents of the web app and the API, as pydantic models: they validate what comes
in and they are the source of the OpenAPI document's request schemas, so the two cannot drift
apart. The plan's models are :mod:`registry.plans`'s own (``PlanDoc``).
"""

from __future__ import annotations

from datetime import date, datetime, UTC
from typing import Annotated, Literal

from pydantic import AfterValidator, BaseModel, ConfigDict, Field, ValidationError, field_validator
from pydantic.json_schema import SkipJsonSchema
from pydantic_core import PydanticCustomError

from ..engine import spec
from ..store import queries
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
            utc = t.astimezone(UTC).replace(tzinfo=None) if t.tzinfo else t
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


# -- query strings of the API, as the OpenAPI document gives them ------------------------------
#
# The views read their query strings with the readers the pages use too (params.fleet_query,
# params.audit_args, api._date_arg), whose messages name the parameter; these models give the
# same parameters to the document, and tests/web/test_api.py holds them to the readers. A
# parameter left out is not given: the schema shows no null.

def _given_or_left_out(schema: dict) -> None:
    for prop in schema.get("properties", {}).values():
        if prop.get("default", 0) is None:
            del prop["default"]


class _Query(BaseModel):
    model_config = ConfigDict(frozen=True, json_schema_extra=_given_or_left_out)


class UnitsQuery(_Query):
    """The fleet page's filters."""

    q: str | SkipJsonSchema[None] = Field(None, description="search tag, serial, model, maker")
    kind: Literal[spec.KINDS] | SkipJsonSchema[None] = Field(  # type: ignore[valid-type]
        None, description="model kind")
    site: str | SkipJsonSchema[None] = Field(None, description="site name")
    status: Literal[spec.UNIT_STATUSES] | SkipJsonSchema[None] = Field(  # type: ignore[valid-type]
        None, description="unit status")
    category: Literal[spec.MAINS_CATEGORIES] | SkipJsonSchema[None] = Field(  # type: ignore[valid-type]
        None, description="takes this category")
    voltage: str | SkipJsonSchema[None] = Field(None, description="at this voltage, e.g. '600 V'")
    due: Literal[tuple(queries.DUE_FILTERS)] | SkipJsonSchema[None] = Field(  # type: ignore[valid-type]
        None, description="verification")
    sort: Literal[tuple(queries.SORTS)] | SkipJsonSchema[None] = Field(  # type: ignore[valid-type]
        None, description="sort by")
    dir: Literal["asc", "desc"] | SkipJsonSchema[None] = Field(None, description="asc or desc")
    page: int | SkipJsonSchema[None] = Field(None, description="page number")
    size: int | SkipJsonSchema[None] = Field(None, description="units per page (at most 500)")


class CheckQuery(_Query):
    on: date | SkipJsonSchema[None] = Field(None, description="date of the job; default today")
    findings: Literal["0", "1"] | SkipJsonSchema[None] = Field(
        None, description="1: every setup's findings, not only the deciding one; default 0")


class EventsQuery(_Query):
    unit: str | SkipJsonSchema[None] = Field(None, description="unit tag")
    since: date | SkipJsonSchema[None] = Field(None, description="from this date")


class HoldsQuery(_Query):
    open: Literal["0", "1"] | SkipJsonSchema[None] = Field(None, description="0 for every hold")


class AuditQuery(_Query):
    since: date | SkipJsonSchema[None] = Field(None, description="from this date")
    site: str | SkipJsonSchema[None] = Field(None, description="only this site")
