"""Logging an event: validate it whole, assess it against the unit's model, chain it onto
the event record and open a hold when the assessment calls for one, in one transaction.

The transaction is the service's own, on a connection of its own, and it takes the write
lock at its start (SQLite ``BEGIN IMMEDIATE``; a PostgreSQL advisory lock), so two loggers
cannot chain onto the same last event. A web request's session only reads (SQLite's WAL and
PostgreSQL's MVCC let a reader and this writer go on together) and is renewed after the commit
(``extensions.py``); the service also returns the rows it wrote, loaded whole, so the API
answers with them without reading again.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, UTC

from sqlalchemy.orm import Session

from ..engine import events as ev_engine
from ..engine.events import Assessment, AppliedStress
from ..errors import InvalidInput
from ..formats.common import FIRST_YEAR, LAST_YEAR, check_text
from ..store import models as m
from ..store.db import Database
from ..store.events import append_event, lock_chain, unit_by_tag
from ..store.fleet import utcnow
from ..store.holds import open_hold
from ..store.specs import model_spec
from .access import LOGGING_ROLES, acting_user

FUTURE_SLACK_S = 300  # clocks differ; an event "in the future" by more than this is refused


@dataclass(frozen=True)
class LoggedEvent:
    id: int
    unit: str
    assessment: Assessment
    hold_id: int | None
    hold_note: str  # why no hold opened although one was due, e.g. a retired unit
    event: m.Event  # the row as written, loaded whole (with its unit and logger)
    hold: m.Hold | None  # the hold it opened, loaded whole (with its unit)


def naive_utc(t: datetime | None) -> datetime | None:
    """The store keeps naive UTC: a time with an offset is converted, one without is taken
    as UTC already (the CLI, the event form and the API all say so)."""
    if t is None or t.tzinfo is None:
        return t
    return t.astimezone(UTC).replace(tzinfo=None)


def loaded(session: Session, row, relations: tuple[str, ...]):
    """``row`` with every column and ``relations`` loaded, so that it can be read after its
    session has closed (sessions keep rows unexpired on commit)."""
    session.refresh(row)
    session.refresh(row, list(relations))
    return row


def log_event(database: Database, *, unit: str, kind: str, by: str, mode: str | None = None,
              voltage: float | None = None, energy: float | None = None,
              duration: float | None = None, symptoms=(), note: str = "",
              at: datetime | None = None, waveform: str | None = None) -> LoggedEvent:
    """Validate and record one event (SI floats; ``at`` default now, UTC when it has no offset;
    ``waveform`` ``ac``, ``dc`` or ``None`` when not known) logged by the technician or steward
    ``by``, opening a hold when the assessment calls for one. Nothing is written when anything
    is invalid."""
    check_text(note or "", "note", multiline=True)
    at = naive_utc(at)
    if at is not None and not FIRST_YEAR <= at.year <= LAST_YEAR:
        raise InvalidInput(f"{at.isoformat(timespec='seconds')} is in the year {at.year}; give "
                           f"a time from {FIRST_YEAR} to {LAST_YEAR}", "at")
    stress = AppliedStress(kind, voltage, energy, duration, waveform)
    with database.transaction(immediate=True) as session:
        lock_chain(session)  # before reading anything the append depends on
        user = acting_user(session, by, LOGGING_ROLES, "logging an event")
        row_unit = unit_by_tag(session, unit)
        assessment = ev_engine.assess(model_spec(row_unit.model), mode, stress, symptoms)
        now = utcnow()
        occurred = at or now
        if (occurred - now).total_seconds() > FUTURE_SLACK_S:
            raise InvalidInput(f"{occurred.isoformat(timespec='seconds')} UTC is in the future",
                               "at")
        row = append_event(session, m.Event(
            unit_id=row_unit.id, occurred_at=occurred, logged_at=now, logged_by_id=user.id,
            mode_key=mode, kind=kind, voltage=voltage, energy=energy, duration=duration,
            waveform=waveform, symptoms=list(ev_engine.check_symptoms(symptoms)),
            notes=note or "", within_rating=assessment.within_rating,
            clamp_conducted=assessment.clamp_conducted))
        hold, hold_note = None, ""
        if assessment.hold:
            if row_unit.status == "retired":
                hold_note = "the unit is retired, so no hold was opened"
            else:
                hold = open_hold(session, row_unit, row, assessment.hold_reason, user)
        session.flush()
        row = loaded(session, row, ("unit", "logged_by"))
        if hold is not None:
            hold = loaded(session, hold, ("unit", "event", "released_by"))
        return LoggedEvent(row.id, row_unit.tag, assessment,
                           hold.id if hold is not None else None, hold_note, row, hold)
