"""Importing fleet files and editing a unit's record. The writing is the store's import
(:func:`registry.store.fleet.import_fleet`, :func:`registry.store.unit_sheet.import_unit_sheet`):
validated whole, then written in one transaction of its own, or nothing. The service adds
what the use case decides: who the import is recorded as, and, for the unit page's edit, the
status rules (a hold is opened by an event and closed by a steward's release, never picked).
"""

from __future__ import annotations

from pathlib import Path

from ..errors import InvalidInput
from ..formats.fleet import FORMAT
from ..store import models as m
from ..store.db import Database
from ..store.events import unit_by_tag
from ..store.fleet import ImportReport
from ..store.fleet import import_fleet as store_import
from ..store.unit_sheet import import_unit_sheet
from ..store.users import get_user
from .access import STEWARD_ROLES, acting_user

# What a steward may change on a unit's page; the model and tag stay.
EDITABLE = ("serial", "site", "custodian", "status", "verified_on", "verification_due", "notes")
PICKABLE_STATUSES = ("in-service", "away", "retired")


def recorded_as(database: Database, by: str | None, default: str) -> tuple[int | None, str]:
    """The user id and name an import is recorded under: the active login ``by``, or no
    login and ``default`` (the CLI passes the shell's user name)."""
    if not by:
        return None, default
    with database.transaction() as session:
        user = get_user(session, by.strip())
        if not user.active:
            raise InvalidInput(f"the login '{user.username}' is deactivated", "by")
        return user.id, user.username


def import_document(database: Database, data, *, by: str | None = None,
                    default_actor: str = "import", dry_run: bool = False) -> ImportReport:
    """Import a parsed fleet document (all or nothing; nothing with ``dry_run``)."""
    user_id, actor = recorded_as(database, by, default_actor)
    return store_import(database, data, actor=actor, user_id=user_id, dry_run=dry_run)


def import_sheet(database: Database, path: str | Path, *, by: str | None = None,
                 default_actor: str = "import", dry_run: bool = False) -> ImportReport:
    """Import the units of a spreadsheet (xlsx or csv), all or nothing."""
    user_id, actor = recorded_as(database, by, default_actor)
    return import_unit_sheet(database, path, actor=actor, user_id=user_id, dry_run=dry_run)


def status_choices(unit: m.Unit) -> tuple[str, ...]:
    """The statuses the edit form offers: the current one only while a hold is open."""
    held = any(h.released_at is None for h in unit.holds)
    return (unit.status,) if held else PICKABLE_STATUSES


def edit_unit(database: Database, tag: str, fields: dict[str, str], *, by: str) -> ImportReport:
    """Change the ``EDITABLE`` fields of unit ``tag`` (text as typed, trimmed here), validated
    and recorded exactly as a fleet-file import is; stewards only. While a hold is open the
    status stays (a release changes it); otherwise it is one of ``PICKABLE_STATUSES`` or
    the current one. Problems name the field (``status``, ``units[0].site``, ...)."""
    fields = {k: (fields.get(k) or "").strip() for k in EDITABLE}
    with database.transaction() as session:
        user = acting_user(session, by, STEWARD_ROLES, "editing a unit")
        row = unit_by_tag(session, tag)
        held = any(h.released_at is None for h in row.holds)
        status = fields["status"]
        if held and status != row.status:
            raise InvalidInput("the unit has an open hold: a steward's release with its "
                               "inspection result changes its status", "status")
        if not held and status not in PICKABLE_STATUSES and status != row.status:
            raise InvalidInput(f"choose one of {', '.join(PICKABLE_STATUSES)}; a hold is "
                               "opened by logging an event", "status")
        doc = {"tag": row.tag, "model": row.model.key, "status": status}
        doc.update({k: v for k, v in fields.items() if v and k != "status"})
        user_id, actor = user.id, user.username
    # the import validates the whole document and writes in its own transaction
    return store_import(database, {"format": FORMAT, "units": [doc]}, actor=actor,
                        user_id=user_id)
