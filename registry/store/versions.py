"""The fleet version: one short text that changes whenever anything a job check reads
changes, so a check result can be kept per (plan, fleet version) and reused until then.

A check reads the models (with their ratings, modes and front ends), the units, the sites,
the events and the holds. Every write the store makes to them leaves a trace this reads in
one statement:

- a new model, unit, site, event or hold raises its table's highest id (and its count; a
  count also moves when a row is deleted);
- an edit of a model, a unit or a site is recorded as a change (``fleet.record_changes``),
  which raises the change table's highest id;
- a hold opened or released is linked on the hold chain (``chain.link_hold_opened`` and
  ``link_hold_released``), which raises the link table's highest id, and a release also
  moves the count of released holds.

A row written past the store (by hand, in SQL) leaves no change record; `withstand audit
verify` reports such rows, and the version may then lag until the next stored write.
"""

from __future__ import annotations

import hashlib

from sqlalchemy import Select, func, select
from sqlalchemy.orm import Session

from . import models as m

_TABLES = (m.Model, m.Rating, m.Mode, m.FrontEndElement, m.Unit, m.Site, m.Event, m.Hold,
           m.Change, m.Link)


def version_statement() -> Select:
    """The one statement: the highest id and the row count of every table a check reads (and
    of the change and link tables), with the count of released holds."""
    parts = []
    for table in _TABLES:
        parts += [select(func.max(table.id)).scalar_subquery(),
                  select(func.count()).select_from(table).scalar_subquery()]
    parts.append(select(func.count()).select_from(m.Hold)
                 .where(m.Hold.released_at.is_not(None)).scalar_subquery())
    return select(*parts)


_SQL: dict[str, str] = {}  # the statement's text per dialect, compiled once


def _sql(dialect) -> str:
    text = _SQL.get(dialect.name)
    if text is None:
        compiled = version_statement().compile(dialect=dialect)
        assert not compiled.params, "the version statement takes no parameters"
        text = _SQL[dialect.name] = str(compiled)
    return text


def fleet_version(session: Session) -> str:
    """A hex digest of :func:`version_statement`'s row, read in the session's transaction.

    The pages ask for it on every request (``web/page_cache.py``), so the statement's text is
    compiled once per dialect and handed to the driver as it is: building and compiling 21
    subqueries cost the request more than the database's answer (a few milliseconds against
    tens of microseconds, every id and count read from an index)."""
    connection = session.connection()
    row = connection.exec_driver_sql(_sql(connection.dialect)).one()
    return hashlib.sha256(repr(tuple(row)).encode()).hexdigest()[:24]
