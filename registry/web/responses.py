"""What the JSON API answers, as pydantic models: the source of the response schemas in the
OpenAPI document (``api.openapi_document``). The views build these answers as plain dicts
(``api.unit_json``, ``hold_json``, ``event_json``, ``Result.as_json``); the schemathesis run
(``tests/hostile/test_openapi_fuzz.py``) checks every answer against these models' schemas,
and ``tests/web/test_api.py`` validates answers with the models themselves.

Parts that other formats own keep their own models: a unit is the fleet file's ``UnitDoc``
and its open hold, a model is ``ModelDoc``. A check's result (``withstand-result/1``) names
the fields a client reads and allows more, so a field added to the result is not a break.
"""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from ..engine.findings import CheckText, CompareText, StatusText
from ..engine.result import FORMAT as RESULT_FORMAT
from ..engine.spec import EVENT_KINDS, INSPECTION_RESULTS, UNIT_STATUSES
from ..formats.fleet import ModelDoc, UnitDoc

VerdictText = Literal["suitable", "conditional", "unverified", "unsuitable"]


class _Answer(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True)


class _OpenAnswer(BaseModel):
    # a part of a result: these fields, and any the engine adds
    model_config = ConfigDict(extra="allow", frozen=True)


class Problem(_Answer):
    field: str = Field(description="path of the field, e.g. circuit.voltage; empty for the "
                                   "body")
    reason: str


class ErrorDetail(_Answer):
    status: int
    message: str
    problems: list[Problem]


class Error(_Answer):
    """Every answer that is not a success: the status, a message and each field's problem."""

    error: ErrorDetail


class Hold(_Answer):
    """A unit's hold."""

    id: int
    unit: str
    event: int | None = Field(description="the event that opened it")
    opened_at: str
    reason: str
    released_at: str | None
    released_by: str | None
    result: Literal[INSPECTION_RESULTS] | None  # type: ignore[valid-type]
    note: str


class Unit(UnitDoc):
    """A unit as in the fleet file, and its open hold, if any."""

    open_hold: Hold | None


class UnitPage(_Answer):
    units: list[Unit]
    total: int
    page: int
    pages: int


class ModelList(_Answer):
    models: list[ModelDoc]


class Event(_Answer):
    """A logged event; quantities as text with their units."""

    id: int
    unit: str
    occurred_at: str
    logged_at: str
    logged_by: str | None
    mode: str | None
    kind: Literal[EVENT_KINDS]  # type: ignore[valid-type]
    voltage: str | None
    energy: str | None
    duration: str | None
    waveform: str | None
    symptoms: list[str]
    note: str
    within_rating: bool | None = Field(description="whether the stress was within the "
                                                   "unit's rating; null: not known")
    hash: str


class EventList(_Answer):
    events: list[Event]


class LoggedEvent(Event):
    """The event, why it was or was not within rating, and the hold it opened."""

    reasons: list[str]
    hold: Hold | None
    hold_note: str | None


class HoldList(_Answer):
    holds: list[Hold]


class Released(_Answer):
    """The unit's state after the release."""

    unit: str
    holds: list[int]
    result: Literal[INSPECTION_RESULTS]  # type: ignore[valid-type]
    status: Literal[UNIT_STATUSES]  # type: ignore[valid-type]


class Finding(_OpenAnswer):
    """One check's finding on a setup: the texts, and the numbers they are rendered from
    (SI, in ``unit``; null when the check gives none or a number is not finite)."""

    check: CheckText
    status: StatusText
    subject: str
    required: str
    available: str
    message: str
    source: str
    margin: float | None
    margin_ratio: float | None = Field(description="available / required")
    required_value: float | None
    available_value: float | None
    unit: str = Field(description="the SI unit of the two values; empty when there are none")
    compare: CompareText = Field(description="how available_value must stand to "
                                             "required_value for the finding to hold")
    basis: str = Field(description="peak, rms or empty")


class Setup(_OpenAnswer):
    """A setup, ranked; ``margin_ratio`` is the deciding finding's available / required."""

    instrument: str
    mode: str
    accessories: list[str]
    verdict: VerdictText
    margin_ratio: float | None
    findings: list[Finding] = Field([], description="every finding of the setup, only when "
                                                    "asked (?findings=1)")


class Result(_OpenAnswer):
    """withstand-result/1: the summary first, then the setups and the accessory units."""

    format: Literal[RESULT_FORMAT]  # type: ignore[valid-type]
    summary: dict = Field(description="one line on what the job gets (text), whether a setup "
                                      "fits, the best setup or the commonest reason none does")
    plan: dict
    counts: dict = Field({}, description="how many setups and accessory units of each "
                                         "verdict, units left out, model combinations judged")
    setups: list[Setup]
    accessories: list[dict] = Field(description="every accessory unit that could join a "
                                                "setup, its best verdict and the reason when "
                                                "none fits")
    excluded: list[dict]
    cautions: list[str]


class Document(_OpenAnswer):
    """An OpenAPI 3.1 document."""

    openapi: str
