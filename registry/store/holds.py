"""Holds: a unit kept out of service until a steward has inspected it.

A unit with an open hold is ``on-hold``. Releasing records the inspection result and note;
``fail`` retires the unit, ``pass`` and ``repaired`` put it back in service once no other hold
is open. Each status change is recorded as a change of the unit. Opening and releasing each
append a signed link to the hold chain (:mod:`.chain`), so a hold released, reopened or
deleted by hand in the database is found by ``audit verify``. Releasing, the use case with
its rules, is :func:`registry.services.holds.release_hold`.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from . import models as m
from .chain import link_hold_opened, link_hold_released
from .fleet import record_changes, utcnow

NO_RECORD_REASON = "status on-hold without a hold record (set by a fleet import)"


def _set_status(session: Session, unit: m.Unit, status: str, user: m.User | None) -> None:
    if unit.status == status:
        return
    record_changes(session, "unit", unit.tag, [("status", unit.status, status)],
                   user.username if user else "system", user.id if user else None)
    unit.status = status


def open_holds(session: Session, unit: m.Unit | None = None) -> list[m.Hold]:
    q = select(m.Hold).where(m.Hold.released_at.is_(None)).order_by(m.Hold.id)
    if unit is not None:
        q = q.where(m.Hold.unit_id == unit.id)
    return list(session.scalars(q))


def open_hold(session: Session, unit: m.Unit, event: m.Event | None, reason: str,
              user: m.User | None) -> m.Hold:
    """Open a hold on ``unit`` (for ``event``) and put the unit on hold."""
    hold = m.Hold(unit=unit, event=event, opened_at=event.logged_at if event else utcnow(),
                  reason=reason)
    session.add(hold)
    _set_status(session, unit, "on-hold", user)
    session.flush()
    link_hold_opened(session, hold)
    return hold


@dataclass(frozen=True)
class Release:
    unit: str
    holds: tuple[int, ...]  # ids of the holds closed
    result: str
    status: str  # the unit's status afterwards


def close_holds(session: Session, unit: m.Unit, holds: list[m.Hold], *, result: str,
                note: str, user: m.User) -> Release:
    """Set the release fields of ``holds`` (open holds of ``unit``), sign each release, and
    set the unit's status: ``fail`` retires it, otherwise it is back in service once no hold
    is open. The caller (:mod:`registry.services.holds`) checked the result and the role."""
    now = utcnow()
    for h in holds:
        h.released_at, h.released_by, h.result, h.notes = now, user, result, note or ""
    session.flush()
    for h in holds:
        link_hold_released(session, h)
    if result == "fail":
        _set_status(session, unit, "retired", user)
    elif not open_holds(session, unit):
        _set_status(session, unit, "in-service", user)
    return Release(unit.tag, tuple(h.id for h in holds), result, unit.status)
