"""The engine's front-end solves kept in the database (``engine.network.cache``): one row per
content hash, shared by every process on the same database.

A check looks each solve up with one primary-key read (on one connection for the whole check)
and collects the new ones; they are written together in one short transaction of their own
when the check is done (:func:`kept_solves`), so a check that reads (a web page, ``withstand
check``) never holds a write lock while it computes. The table is only a cache: a write that
cannot be made (the database busy, read-only, or older than the table) is given up and the
solve is made again next time.
"""

from __future__ import annotations

import logging
from contextlib import contextmanager
from collections.abc import Iterator

from sqlalchemy import select
from sqlalchemy.engine import Connection, Engine
from sqlalchemy.exc import SQLAlchemyError

from ..engine.network import using_store
from . import models as m
from .fleet import utcnow

_log = logging.getLogger(__name__)
_TABLE = m.SolveCache.__table__


class DatabaseSolves:
    """``get`` and ``put`` for the engine, over ``engine`` (a SQLAlchemy engine)."""

    def __init__(self, engine: Engine):
        self.engine = engine
        self.pending: dict[str, tuple[str, str]] = {}  # key -> (kind, result)
        self.read = self.found = 0  # look-ups made and answered (for the tests and bench)
        self.written = 0  # new solves written by flush
        self._conn: Connection | None = None

    def get(self, key: str) -> str | None:
        if key in self.pending:
            return self.pending[key][1]
        self.read += 1
        try:
            if self._conn is None:  # one connection for the check's look-ups
                self._conn = self.engine.connect()
            text = self._conn.execute(
                select(_TABLE.c.result).where(_TABLE.c.key == key)).scalar()
        except SQLAlchemyError as exc:
            _log.warning("the solve cache could not be read: %s", exc)
            self.close()
            return None
        self.found += text is not None
        return text

    def close(self) -> None:
        """Give back the look-ups' connection (its read transaction ends)."""
        conn, self._conn = self._conn, None
        if conn is not None:
            try:
                conn.close()
            except SQLAlchemyError as exc:  # pragma: no cover - a connection already lost
                _log.warning("the solve cache's connection could not be closed: %s", exc)

    def put(self, key: str, text: str, kind: str) -> None:
        self.pending[key] = (kind, text)

    def flush(self) -> int:
        """Write the collected solves (a key another process wrote meanwhile is left as it
        is); how many were written. The look-ups' connection is given back first."""
        self.close()
        if not self.pending:
            return 0
        now = utcnow()
        rows = [{"key": k, "kind": kind, "result": v, "created_at": now}
                for k, (kind, v) in self.pending.items()]
        self.pending = {}
        try:
            with self.engine.begin() as conn:
                if conn.dialect.name == "postgresql":
                    from sqlalchemy.dialects.postgresql import insert
                else:
                    from sqlalchemy.dialects.sqlite import insert
                conn.execute(insert(_TABLE).on_conflict_do_nothing(index_elements=["key"]),
                             rows)
        except SQLAlchemyError as exc:
            _log.warning("the solve cache could not be written: %s", exc)
            return 0
        self.written += len(rows)
        return len(rows)


@contextmanager
def kept_solves(engine: Engine) -> Iterator[DatabaseSolves]:
    """Within the block the engine reads and keeps its solves in ``engine``'s database; the
    new ones are written when the block ends."""
    store = DatabaseSolves(engine)
    try:
        with using_store(store):
            yield store
    finally:
        store.close()
    store.flush()
