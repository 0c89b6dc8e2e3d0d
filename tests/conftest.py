"""Shared fixtures: an app on a fresh, migrated SQLite file per test, its client and CLI
runner, the demo fleet, and a scratch PostgreSQL database where a server answers."""

from __future__ import annotations

import os
import tempfile
import uuid

import pytest

from registry.app import create_app
from registry.demo import load_demo
from registry.store import db as store_db
from webtools import login  # noqa: F401  (re-exported for the fixture)

# Without WITHSTAND_INSTANCE the tool keeps its database in the user's data folder: in tests
# (and the commands they start) that folder is a scratch one, never the real home's.
os.environ["XDG_DATA_HOME"] = tempfile.mkdtemp(prefix="withstand-tests-")

PG_ADMIN_URL = os.environ.get("WITHSTAND_TEST_POSTGRES",
                              "postgresql+psycopg://postgres@127.0.0.1:5432/postgres")


@pytest.fixture
def instance(tmp_path, monkeypatch):
    path = tmp_path / "instance"
    monkeypatch.setenv("WITHSTAND_INSTANCE", str(path))
    monkeypatch.delenv("WITHSTAND_DATABASE_URL", raising=False)
    return path


@pytest.fixture
def db_url(instance):
    return f"sqlite:///{instance / 'test.sqlite3'}"


@pytest.fixture
def database(db_url):
    database = store_db.Database(db_url)
    store_db.upgrade(database.engine)
    yield database
    database.dispose()


@pytest.fixture
def app(database, instance):
    app = create_app({"DATABASE_URL": database.url, "SECRET_KEY": "test-only-key",
                      "TESTING": True, "INSTANCE_PATH": str(instance)})
    yield app
    app.extensions["withstand_db"].dispose()


@pytest.fixture
def client(app):
    return app.test_client()


@pytest.fixture
def runner(app):
    return app.test_cli_runner()


@pytest.fixture
def demo(database):
    """The database with the demo fleet and demo logins loaded."""
    assert load_demo(database)
    return database


def _postgres_or_skip():
    import sqlalchemy as sa
    try:
        engine = sa.create_engine(PG_ADMIN_URL, isolation_level="AUTOCOMMIT")
        with engine.connect() as conn:
            conn.execute(sa.text("select 1"))
        return engine
    except Exception as exc:
        if os.environ.get("WITHSTAND_REQUIRE_POSTGRES") == "1":
            pytest.fail(f"PostgreSQL is required here (WITHSTAND_REQUIRE_POSTGRES=1) but "
                        f"{PG_ADMIN_URL} did not answer: {exc}")
        pytest.skip(f"no PostgreSQL at {PG_ADMIN_URL}: {exc.__class__.__name__}")


@pytest.fixture
def pg_url():
    """A scratch PostgreSQL database, created for the test and dropped after it."""
    import sqlalchemy as sa
    admin = _postgres_or_skip()
    name = f"withstand_test_{uuid.uuid4().hex[:12]}"
    with admin.connect() as conn:
        conn.execute(sa.text(f'CREATE DATABASE "{name}"'))
    url = admin.url.set(database=name).render_as_string(hide_password=False)
    yield url
    with admin.connect() as conn:
        conn.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
    admin.dispose()


@pytest.fixture
def login_as():
    """``login_as(client, user, password)``: log in through the real form."""
    return login
