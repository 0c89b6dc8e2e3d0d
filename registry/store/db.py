"""Connections: the engine for a database URL, SQLite's pragmas, migrations and their state."""

from __future__ import annotations

import contextlib
import os
from importlib import resources
from pathlib import Path

from typing import TYPE_CHECKING

from sqlalchemy import create_engine, event, inspect, text
from sqlalchemy.engine import Engine, make_url
from sqlalchemy.orm import Session, sessionmaker

from ..errors import DatabaseNotReady, InvalidInput

if TYPE_CHECKING:
    from alembic.config import Config

# The newest migration under migrations/versions. Every command checks the database against it
# before it reads, so it is a constant here rather than Alembic's walk over the revision files:
# importing Alembic and reading its scripts is a third of a command's start-up, and only `init`
# and the migration tests need them. tests/test_migrations.py fails when a new revision is
# added and this is not moved to it.
SCHEMA_HEAD = "0004"

SQLITE_BUSY_TIMEOUT_MS = 30_000  # writers wait this long for a lock before giving up


def default_url(instance_path: str | os.PathLike) -> str:
    return f"sqlite:///{Path(instance_path) / 'withstand.sqlite3'}"


# Connections kept open in the pool: at least the web server's threads (cli._serve, 8), so
# that requests in flight together never open and close a connection of their own (SQLite
# parses the schema on each new one, and the pragmas run); beyond it, overflow as before.
POOL_SIZE = 10


def _sqlite_pragmas(dbapi_connection, _record):
    cur = dbapi_connection.cursor()
    # WAL lets readers go on while one writer writes; foreign keys are off by default in SQLite.
    cur.execute("PRAGMA journal_mode=WAL")
    cur.execute("PRAGMA foreign_keys=ON")
    cur.execute(f"PRAGMA busy_timeout={SQLITE_BUSY_TIMEOUT_MS}")
    cur.close()


def make_engine(url: str) -> Engine:
    try:
        parsed = make_url(url)
    except Exception:
        raise InvalidInput(f"'{url}' is not a database URL", "WITHSTAND_DATABASE_URL") from None
    if parsed.get_backend_name() == "sqlite":
        engine = create_engine(parsed, connect_args={"timeout": SQLITE_BUSY_TIMEOUT_MS / 1000},
                               pool_size=POOL_SIZE)
        event.listen(engine, "connect", _sqlite_pragmas)
        # pysqlite's own transaction handling defers BEGIN; let SQLAlchemy emit it so that
        # `BEGIN IMMEDIATE` (used to serialise appends) works.
        event.listen(engine, "connect", lambda c, _r: setattr(c, "isolation_level", None))
        event.listen(engine, "begin", lambda conn: conn.exec_driver_sql(
            "BEGIN IMMEDIATE" if conn.info.get("immediate") else "BEGIN"))
        return engine
    if parsed.get_backend_name() == "postgresql":
        if parsed.get_driver_name() in ("psycopg2", "postgresql", ""):
            parsed = parsed.set(drivername="postgresql+psycopg")
        return create_engine(parsed, pool_pre_ping=True, pool_size=POOL_SIZE)
    raise InvalidInput(f"'{parsed.get_backend_name()}' databases are not supported; use "
                       "SQLite or PostgreSQL", "WITHSTAND_DATABASE_URL")


def alembic_config(engine: Engine) -> Config:
    from alembic.config import Config
    cfg = Config()
    cfg.set_main_option("script_location", str(resources.files("registry.migrations")))
    cfg.attributes["engine"] = engine
    return cfg


def head_revision(engine: Engine) -> str:
    """The newest revision as Alembic reads it from the revision files."""
    from alembic.script import ScriptDirectory
    return ScriptDirectory.from_config(alembic_config(engine)).get_current_head()


def current_revision(engine: Engine) -> str | None:
    """The revision the database is at, from Alembic's own ``alembic_version`` table; None
    when there is no such table (nothing migrated yet). Read with plain SQL, as Alembic's
    ``MigrationContext.get_current_revision`` does, so that a command does not import Alembic.
    More than one row (branches, which this project never makes) raises, as Alembic does."""
    try:
        with engine.connect() as conn:
            if not inspect(conn).has_table("alembic_version"):
                return None
            rows = conn.execute(text("SELECT version_num FROM alembic_version")).scalars().all()
    except Exception as exc:  # an unreachable server or an unreadable file
        raise DatabaseNotReady(f"cannot open the database: {exc.__class__.__name__}: "
                               f"{str(exc).splitlines()[0]}") from None
    if len(rows) > 1:
        raise DatabaseNotReady(f"the database at {where(engine)} is at several migrations at "
                               f"once ({', '.join(sorted(rows))}); it was not made by withstand")
    return rows[0] if rows else None


def make_folder(engine: Engine) -> None:
    """A SQLite file's folder, made by what creates a database (``init``, a migration), never
    by a command that only reads."""
    url = engine.url
    if url.get_backend_name() == "sqlite" and url.database and url.database != ":memory:":
        Path(url.database).parent.mkdir(parents=True, exist_ok=True)


def upgrade(engine: Engine, revision: str = "head") -> None:
    from alembic import command
    make_folder(engine)
    command.upgrade(alembic_config(engine), revision)


def downgrade(engine: Engine, revision: str = "base") -> None:
    from alembic import command
    command.downgrade(alembic_config(engine), revision)


def where(engine: Engine) -> str:
    """The database a message names: a SQLite file's path, else the URL without password."""
    url = engine.url
    if url.get_backend_name() == "sqlite":
        return url.database or ":memory:"
    return url.render_as_string(hide_password=True)


def _missing_sqlite_file(engine: Engine) -> bool:
    url = engine.url
    return (url.get_backend_name() == "sqlite" and bool(url.database)
            and url.database != ":memory:" and not Path(url.database).exists())


def require_current(engine: Engine) -> None:
    """Raise :class:`DatabaseNotReady` unless the database is at the latest migration. A SQLite
    file that does not exist is reported, not created: a command that only reads leaves
    nothing behind."""
    if _missing_sqlite_file(engine):
        raise DatabaseNotReady(f"there is no database at {where(engine)}; run `withstand "
                               "init` to create it (or set WITHSTAND_DATABASE_URL)")
    current = current_revision(engine)
    if current is None:
        raise DatabaseNotReady(f"the database at {where(engine)} has no tables yet; run "
                               "`withstand init` to create it")
    if current != SCHEMA_HEAD:
        raise DatabaseNotReady(f"the database at {where(engine)} is at migration {current}, "
                               "not the latest; run `withstand init` to upgrade it")


class Database:
    """One database: its engine and a session factory."""

    def __init__(self, url: str):
        self.url = url
        self.engine = make_engine(url)
        self._sessions = sessionmaker(self.engine, expire_on_commit=False)
        # called after each transaction commits; the web app renews its request's reading
        # session there (extensions.py), so a page rendered after a write sees the write
        self.after_commit: list = []

    @property
    def is_sqlite(self) -> bool:
        return self.engine.dialect.name == "sqlite"

    def session(self) -> Session:
        return self._sessions()

    @contextlib.contextmanager
    def transaction(self, *, immediate: bool = False):
        """A session whose work commits on success and rolls back on any error.

        ``immediate`` takes SQLite's write lock at the start (``BEGIN IMMEDIATE``), so that
        concurrent writers queue on the busy timeout instead of reading a state that another
        writer is about to change.
        """
        with contextlib.ExitStack() as stack:
            if immediate and self.is_sqlite:
                conn = stack.enter_context(self.engine.connect())
                # conn.info lives with the pooled DBAPI connection: take the flag off again
                # when done, or the next borrower of this connection would begin IMMEDIATE
                # too and hold the write lock for a whole web request.
                conn.info["immediate"] = True
                stack.callback(conn.info.pop, "immediate", None)
                session = stack.enter_context(Session(bind=conn, expire_on_commit=False))
            else:
                session = stack.enter_context(self._sessions())
            try:
                yield session
                session.commit()
            except BaseException:
                session.rollback()
                raise
        for hook in self.after_commit:
            hook()

    def dispose(self) -> None:
        self.engine.dispose()
