"""An online, consistent copy of the database.

SQLite: the backup API of SQLite (``sqlite3.Connection.backup``) copies the database page by
page under a read transaction, so the copy is the database as it was at one instant even while
other processes write (in WAL mode they go on writing meanwhile). PostgreSQL has its own tool
for this, ``pg_dump``, which takes a consistent snapshot the same way.
"""

from __future__ import annotations

import sqlite3
from dataclasses import dataclass
from pathlib import Path

from ..errors import InvalidInput, WithstandError
from .db import Database


@dataclass(frozen=True)
class BackupReport:
    path: Path
    integrity: str  # PRAGMA integrity_check of the copy: "ok"
    events: int

    def __str__(self) -> str:
        return f"integrity {self.integrity}, {self.events} events"


def backup_database(db: Database, target: str | Path) -> BackupReport:
    """Copy a SQLite database to ``target`` (a new file) and check the copy."""
    if not db.is_sqlite:
        raise WithstandError(
            "backup copies SQLite databases; for PostgreSQL use the server's own dump tool, "
            "e.g. `pg_dump --format=custom --file=withstand.dump DBNAME`, and `pg_restore` to "
            "bring it back")
    target = Path(target)
    source = Path(db.engine.url.database or "")
    if target.exists():
        raise InvalidInput(f"'{target}' exists already; name a new file", "FILE")
    if source.exists() and target.resolve() == source.resolve():
        raise InvalidInput("is the database itself", "FILE")
    target.parent.mkdir(parents=True, exist_ok=True)
    raw = db.engine.raw_connection()
    try:
        dest = sqlite3.connect(str(target))
        try:
            # pages=-1: the whole database in one step, under one read transaction, so that
            # writers committing meanwhile cannot make the copy restart or mix two states.
            raw.driver_connection.backup(dest, pages=-1)
            # a copy is a plain file: leave it in rollback-journal mode, self-contained
            dest.execute("PRAGMA journal_mode=DELETE")
            integrity = dest.execute("PRAGMA integrity_check").fetchone()[0]
            events = dest.execute("SELECT count(*) FROM event").fetchone()[0]
        finally:
            dest.close()
    finally:
        raw.close()
    return BackupReport(target, integrity, events)
