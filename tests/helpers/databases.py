"""Template databases: migrated (and loaded with the demo) once per test session, copied for
each test.

Migrating takes about half a second and loading the demo fleet and logins one to three more
(password hashes, signed change and hold records), paid by every database test when each made
its own. A template is made once per session (per pytest-xdist worker, since each worker has
its own temporary folder) and each test gets a copy of its own, so tests stay as isolated as
before: a SQLite file copied with ``shutil.copyfile`` (the template is checkpointed and closed
first, so the file alone is the whole database), a PostgreSQL database made with
``CREATE DATABASE ... TEMPLATE`` (the server copies the template's files).

The chain key: the demo's change and hold records are signed with the key of the instance
folder the template was made in. A copy takes that ``chain_key`` file (mode 0600 kept) into the
test's instance folder, so the record verifies and later links are signed with the same key,
as after ``withstand init --with-demo``. A migrated template holds no link, so its copies get no
key: one is generated when the test first signs something, as before.

Templates are keyed by the day they were made, so a session that runs past midnight gets new
ones rather than a demo whose holds opened "yesterday".

Tests of migrations and of ``init`` itself do not use these: they migrate an empty database
(``pg_url``, their own engines) and run ``init`` as users do.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import uuid
from datetime import date
from pathlib import Path

import pytest
from sqlalchemy.engine import make_url

from registry.demo import load_demo
from registry.store import db as store_db

KEY_FILE = "chain_key"


class Templates:
    """The session's templates, made on first use in ``folder`` (also their instance folder,
    which holds the chain key that signed them)."""

    def __init__(self, folder: Path, pg_admin_url: str):
        self.folder = folder
        self.pg_admin_url = pg_admin_url
        self._pg: dict[str, str] = {}  # template kind and day -> PostgreSQL database name
        self._made: list[str] = []  # every PostgreSQL template created, dropped by close()

    # -- the instance the templates are made in ------------------------------------------------

    def _as_template_instance(self):
        mp = pytest.MonkeyPatch()
        mp.setenv("WITHSTAND_INSTANCE", str(self.folder))
        mp.delenv("WITHSTAND_DATABASE_URL", raising=False)
        return mp

    def copy_key(self, instance: Path) -> None:
        """The key that signed the templates' records, into ``instance`` (unless it has one)."""
        key = self.folder / KEY_FILE
        target = instance / KEY_FILE
        if key.exists() and not target.exists():
            instance.mkdir(parents=True, exist_ok=True)
            shutil.copy(key, target)  # copies the mode bits: 0600 as config._key_file made it

    # -- SQLite --------------------------------------------------------------------------------

    def sqlite_template(self, demo: bool) -> Path:
        kind = "demo" if demo else "migrated"
        path = self.folder / f"{kind}-{date.today().isoformat()}.sqlite3"
        if path.exists():
            return path
        building = path.with_suffix(".building")
        if demo:
            shutil.copyfile(self.sqlite_template(demo=False), building)
        database = store_db.Database(f"sqlite:///{building}")
        mp = self._as_template_instance()
        try:
            if demo:
                assert load_demo(database)
            else:
                store_db.upgrade(database.engine)
        finally:
            database.dispose()
            mp.undo()
        # Closing the last connection checkpoints the WAL; truncate it anyway, so the main
        # file alone is the whole database when it is copied.
        with sqlite3.connect(building) as conn:
            conn.execute("PRAGMA wal_checkpoint(TRUNCATE)")
        conn.close()
        for leftover in (Path(f"{building}-wal"), Path(f"{building}-shm")):
            leftover.unlink(missing_ok=True)
        os.replace(building, path)
        return path

    def copy_sqlite(self, target: Path, *, demo: bool) -> Path:
        """A copy of the migrated (or demo) template at ``target``; with the demo, the key
        that signed it goes into ``target``'s folder, the test's instance folder."""
        target.parent.mkdir(parents=True, exist_ok=True)
        shutil.copyfile(self.sqlite_template(demo), target)
        if demo:
            self.copy_key(target.parent)
        return target

    def demo_instance(self, instance: Path) -> Path:
        """An instance folder as ``withstand init --with-demo`` leaves it (the demo database
        at its default place, ``withstand.sqlite3``, and the key that signed it), for tests of
        something else that start the real server or commands on it."""
        default = make_url(store_db.default_url(instance)).database  # where init puts it
        return self.copy_sqlite(Path(default), demo=True)

    # -- PostgreSQL ----------------------------------------------------------------------------

    def postgres_template(self, admin, demo: bool) -> str:
        import sqlalchemy as sa
        kind = f"{'demo' if demo else 'migrated'}-{date.today().isoformat()}"
        if kind in self._pg:
            return self._pg[kind]
        name = f"withstand_tmpl_{uuid.uuid4().hex[:12]}"
        with admin.connect() as conn:
            conn.execute(sa.text(f'CREATE DATABASE "{name}"'))
        self._made.append(name)
        database = store_db.Database(admin.url.set(database=name)
                                     .render_as_string(hide_password=False))
        mp = self._as_template_instance()
        try:
            store_db.upgrade(database.engine)
            if demo:
                assert load_demo(database)
        finally:
            # no connection may stay open to a template while it is copied
            database.dispose()
            mp.undo()
        self._pg[kind] = name
        return name

    def copy_postgres(self, admin, name: str, instance: Path, *, demo: bool) -> None:
        """Database ``name``, a copy of the migrated (or demo) template; with the demo, its
        key goes into ``instance``."""
        import sqlalchemy as sa
        template = self.postgres_template(admin, demo)
        with admin.connect() as conn:
            conn.execute(sa.text(f'CREATE DATABASE "{name}" TEMPLATE "{template}"'))
        if demo:
            self.copy_key(instance)

    def close(self) -> None:
        """Drop the PostgreSQL templates this session made."""
        if not self._made:
            return
        import sqlalchemy as sa
        admin = sa.create_engine(self.pg_admin_url, isolation_level="AUTOCOMMIT")
        try:
            with admin.connect() as conn:
                for name in self._made:
                    conn.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        finally:
            admin.dispose()
        self._made.clear()
        self._pg.clear()
