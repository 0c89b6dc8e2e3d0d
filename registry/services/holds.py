"""Releasing a hold: a steward records the inspection result, which puts the unit back in
service or, on ``fail``, retires it; in one transaction of the service's own (see
:mod:`.events` on why that never collides with a web request's reading session)."""

from __future__ import annotations

from ..engine.spec import INSPECTION_RESULTS
from ..errors import Conflict, InvalidInput, NotFound
from ..formats.common import check_text
from ..store import models as m
from ..store.db import Database
from ..store.events import unit_by_tag
from ..store.holds import NO_RECORD_REASON, Release, close_holds, open_hold, open_holds
from .access import RELEASE_ROLES, acting_user


def release_hold(database: Database, *, result: str, by: str, note: str = "",
                 unit: str | None = None, hold_id: int | None = None) -> Release:
    """Close hold ``hold_id``, or every open hold of ``unit`` when no id is given, with the
    inspection ``result`` and ``note``; stewards only.

    A hold that does not exist (or is not ``unit``'s) is ``NotFound``; one released already
    is a ``Conflict``. A unit whose status is ``on-hold`` with no hold record (a fleet import
    can set that) gets one opened and closed here, so that every release is on record."""
    if result not in INSPECTION_RESULTS:
        raise InvalidInput(f"'{result}' is not an inspection result; use "
                           f"{', '.join(INSPECTION_RESULTS)}", "result")
    check_text(note or "", "note", multiline=True)
    if unit is None and hold_id is None:
        raise InvalidInput("name the unit or the hold", "unit")
    with database.transaction(immediate=True) as session:  # a writer from the start
        user = acting_user(session, by, RELEASE_ROLES, "releasing a hold")
        if hold_id is not None:
            hold = session.get(m.Hold, hold_id)
            if hold is None or (unit is not None and hold.unit.tag != unit):
                where = f"unit {unit} has" if unit is not None else "there is"
                raise NotFound(f"{where} no hold {hold_id}")
            if hold.released_at is not None:
                raise Conflict(f"hold {hold_id} was released already")
            row, holds = hold.unit, [hold]
        else:
            row = unit_by_tag(session, unit)
            holds = open_holds(session, row)
            if not holds:
                if row.status != "on-hold":
                    raise NotFound(f"unit {row.tag} has no open hold (its status is "
                                   f"{row.status})")
                holds = [open_hold(session, row, None, NO_RECORD_REASON, user)]
        return close_holds(session, row, holds, result=result, note=note, user=user)
