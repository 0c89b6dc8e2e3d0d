"""Migrations on SQLite and PostgreSQL: upgrade, downgrade, upgrade again, and the mappings
agree with what the migrations build."""

import pytest
import sqlalchemy as sa
from alembic.autogenerate import compare_metadata
from alembic.migration import MigrationContext

from registry.store import db as store_db
from registry.store.models import Base

TABLES = {"site", "user_account", "api_token", "model", "rating", "mode", "front_end_element",
          "unit", "event", "hold", "change"}


def cycle(url):
    database = store_db.Database(url)
    try:
        engine = database.engine
        store_db.upgrade(engine)
        assert TABLES <= set(sa.inspect(engine).get_table_names())
        assert store_db.current_revision(engine) == store_db.head_revision(engine)
        store_db.downgrade(engine, "base")
        assert not (TABLES & set(sa.inspect(engine).get_table_names()))
        store_db.upgrade(engine)
        store_db.require_current(engine)
        with engine.connect() as conn:
            diff = compare_metadata(MigrationContext.configure(conn), Base.metadata)
        assert diff == [], diff
        return engine
    finally:
        database.dispose()


def test_sqlite_cycle(tmp_path):
    cycle(f"sqlite:///{tmp_path / 'cycle.sqlite3'}")


@pytest.mark.postgres
def test_postgres_cycle(pg_url):
    cycle(pg_url)


def test_sqlite_pragmas(database):
    with database.engine.connect() as conn:
        assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
        assert conn.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
        assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() >= 1000


def _constraint_rejects(database, sql):
    with pytest.raises(sa.exc.IntegrityError):
        with database.engine.begin() as conn:
            conn.exec_driver_sql(sql)


def test_database_enforces_enumerations_and_signs(database):
    _constraint_rejects(database, "INSERT INTO model (key, maker, name, kind, connectors, "
                        "integrated_leads, max_altitude, pollution_degree, has_fuse) VALUES "
                        "('x', '', '', 'toaster', '[]', 0, 2000, 2, 0)")
    _constraint_rejects(database, "INSERT INTO model (key, maker, name, kind, connectors, "
                        "integrated_leads, max_altitude, pollution_degree, has_fuse, energy) "
                        "VALUES ('x', '', '', 'probe', '[]', 0, 2000, 2, 0, -1)")
    _constraint_rejects(database, "INSERT INTO unit (tag, model_id, serial, custodian, status,"
                        " notes) VALUES ('T1', 999, '', '', 'in-service', '')")


@pytest.mark.postgres
def test_postgres_enforces_the_same(pg_url):
    database = store_db.Database(pg_url)
    store_db.upgrade(database.engine)
    try:
        _constraint_rejects(database, "INSERT INTO rating (model_id, position, category, "
                            "voltage) VALUES (1, 0, 'V', 600)")
    finally:
        database.dispose()


def test_missing_database_says_run_init(tmp_path):
    database = store_db.Database(f"sqlite:///{tmp_path / 'empty.sqlite3'}")
    with pytest.raises(Exception, match="withstand init"):
        store_db.require_current(database.engine)


def test_the_head_every_command_checks_is_alembics_head(tmp_path):
    """Commands check the database against ``SCHEMA_HEAD`` without importing Alembic; it must
    be the head Alembic reads from the revision files, and the plain read of the version table
    must be what Alembic's own migration context reads."""
    database = store_db.Database(f"sqlite:///{tmp_path / 'head.sqlite3'}")
    try:
        engine = database.engine
        assert store_db.current_revision(engine) is None
        assert store_db.head_revision(engine) == store_db.SCHEMA_HEAD
        store_db.upgrade(engine, "0002")
        with engine.connect() as conn:
            assert store_db.current_revision(engine) == \
                MigrationContext.configure(conn).get_current_revision() == "0002"
        with pytest.raises(store_db.DatabaseNotReady, match="not the latest"):
            store_db.require_current(engine)
    finally:
        database.dispose()
