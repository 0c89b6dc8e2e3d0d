"""An online, consistent copy of the database.

SQLite: the backup API of SQLite (``sqlite3.Connection.backup``) copies the database page by
page under a read transaction, so the copy is the database as it was at one instant even while
other processes write (in WAL mode they go on writing meanwhile). PostgreSQL has its own tool
for this, ``pg_dump``, which takes a consistent snapshot the same way.

The copy is written to a temporary file beside the target, checked, flushed to disk and only
then linked to the target's name in one step (``link(2)``, which also refuses a name that
appeared meanwhile), so a backup stopped at any moment (a kill, a full disk) leaves either no
file at the target name or a complete, checked one, never half a database.
"""

from __future__ import annotations

import os
import sqlite3
import tempfile
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
    fd, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".partial",
                                dir=target.parent)
    os.close(fd)
    partial = Path(name)
    try:
        integrity, events = _copy(db, partial)
        if integrity != "ok":
            raise WithstandError(f"the copy failed SQLite's integrity check ({integrity}); "
                                 f"nothing was written to '{target}'")
        _fsync(partial)
        _publish(partial, target)
        _fsync(target.parent)
    finally:
        for leftover in (partial, Path(f"{partial}-journal"), Path(f"{partial}-wal"),
                         Path(f"{partial}-shm")):
            leftover.unlink(missing_ok=True)
    return BackupReport(target, integrity, events)


def _copy(db: Database, dest_path: Path) -> tuple[str, int]:
    """Copy the database into ``dest_path`` (an empty file); its integrity and event count."""
    raw = db.engine.raw_connection()
    try:
        dest = sqlite3.connect(str(dest_path))
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
    return integrity, events


def _fsync(path: Path) -> None:
    """Flush a file's (or a folder's entries') data to the disk (POSIX fsync)."""
    flags = os.O_RDONLY | (os.O_DIRECTORY if path.is_dir() and hasattr(os, "O_DIRECTORY")
                           else 0)
    try:
        fd = os.open(path, flags)
    except OSError:  # a folder cannot be opened for fsync on some systems (Windows)
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _publish(partial: Path, target: Path) -> None:
    """Give the finished copy the target's name in one atomic step, never replacing a file
    that took the name meanwhile."""
    try:
        os.link(partial, target)  # atomic, and fails if the target exists
    except FileExistsError:
        raise InvalidInput(f"'{target}' exists already; name a new file", "FILE") from None
    except OSError:
        # a file system without hard links: rename is atomic too, but replaces silently,
        # so look once more just before
        if target.exists():
            raise InvalidInput(f"'{target}' exists already; name a new file", "FILE") from None
        os.replace(partial, target)
