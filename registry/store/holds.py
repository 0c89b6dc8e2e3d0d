"""Holds: a unit kept out of service until a steward has inspected it (SPEC §3).

A unit with an open hold is ``on-hold``. Releasing records the inspection result and note;
``fail`` retires the unit, ``pass`` and ``repaired`` put it back in service once no other hold
is open. Each status change is recorded as a change of the unit. Opening and releasing each
append a signed link to the hold chain (:mod:`.chain`), so a hold released, reopened or
deleted by hand in the database is found by ``audit verify``.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session

from ..engine.spec import INSPECTION_RESULTS
from ..errors import InvalidInput, NotFound
from ..formats.common import check_text
from . import models as m
from .chain import link_hold_opened, link_hold_released
from .db import Database
from .events import require_role, unit_by_tag
from .fleet import record_changes, utcnow
from .users import get_user

RELEASE_ROLES = ("steward",)
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


def release_hold(db: Database, *, unit: str, result: str, by: str, note: str = "",
                 hold_id: int | None = None) -> Release:
    """Close the unit's open hold ``hold_id``, or every open hold of the unit when it is not
    given, with the inspection ``result`` and ``note``. Stewards only.

    A unit whose status is ``on-hold`` with no hold record (a fleet import can set that)
    gets one opened and closed here, so that every release is on record."""
    if result not in INSPECTION_RESULTS:
        raise InvalidInput(f"'{result}' is not an inspection result; use "
                           f"{', '.join(INSPECTION_RESULTS)}", "result")
    check_text(note or "", "note", multiline=True)
    with db.transaction(immediate=True) as session:  # a writer from the start: no lock upgrade
        user = get_user(session, by)
        require_role(user, RELEASE_ROLES, "releasing a hold")
        row = unit_by_tag(session, unit)
        holds = open_holds(session, row)
        if hold_id is not None:
            holds = [h for h in holds if h.id == hold_id]
            if not holds:
                raise NotFound(f"unit {row.tag} has no open hold {hold_id}")
        if not holds:
            if row.status != "on-hold":
                raise NotFound(f"unit {row.tag} has no open hold (its status is "
                               f"{row.status})")
            holds = [open_hold(session, row, None, NO_RECORD_REASON, user)]
        now = utcnow()
        for h in holds:
            h.released_at, h.released_by, h.result, h.notes = now, user, result, note or ""
        session.flush()
        for h in holds:
            link_hold_released(session, h)
        if result == "fail":
            _set_status(session, row, "retired", user)
        elif not open_holds(session, row):
            _set_status(session, row, "in-service", user)
        return Release(row.tag, tuple(h.id for h in holds), result, row.status)
