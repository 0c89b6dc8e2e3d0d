"""Shared fixtures: an app on a fresh, migrated SQLite file per test (a copy of the session's
template, tests/helpers/databases.py), its client and CLI runner, the demo fleet, and scratch
PostgreSQL databases where a server answers."""

from __future__ import annotations

import os
import tempfile
import uuid

import pytest

from helpers.databases import Templates
from helpers.web import login_as as _login_as
from registry.app import create_app
from registry.demo import load_demo
from registry.store import db as store_db

# Without WITHSTAND_INSTANCE the tool keeps its database in the user's data folder: in tests
# (and the commands they start) that folder is a scratch one, never the real home's.
os.environ["XDG_DATA_HOME"] = tempfile.mkdtemp(prefix="withstand-tests-")

PG_ADMIN_URL = os.environ.get("WITHSTAND_TEST_POSTGRES",
                              "postgresql+psycopg://postgres@127.0.0.1:5432/postgres")

# set by `demo` before it asks for `database`, for a test that asks for `demo` only by
# request.getfixturevalue (so it is not among the test's fixture names)
_WANTS_DEMO = pytest.StashKey[bool]()
_HAS_DEMO = pytest.StashKey[bool]()


@pytest.fixture(scope="session")
def templates(tmp_path_factory):
    """The session's template databases (migrated, and migrated with the demo), made on first
    use and copied for each test; see tests/helpers/databases.py."""
    made = Templates(tmp_path_factory.mktemp("templates"), PG_ADMIN_URL)
    yield made
    made.close()


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
def database(request, instance, templates):
    """A fresh SQLite file at the latest migration, this test's own: a copy of the session's
    migrated template, or of its demo template (with the chain key that signed it) when the
    test asks for `demo` too."""
    demo = "demo" in request.fixturenames or request.node.stash.get(_WANTS_DEMO, False)
    path = templates.copy_sqlite(instance / "test.sqlite3", demo=demo)
    request.node.stash[_HAS_DEMO] = demo
    database = store_db.Database(f"sqlite:///{path}")
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
def demo(request):
    """The database with the demo fleet and demo logins loaded."""
    request.node.stash[_WANTS_DEMO] = True
    database = request.getfixturevalue("database")
    if not request.node.stash.get(_HAS_DEMO, False):
        # `database` was set up before `demo` was asked for: load the demo the slow way
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


def _scratch_postgres(make):
    """Create a scratch database with ``make(admin, name)``, yield its URL, drop it after."""
    import sqlalchemy as sa
    admin = _postgres_or_skip()
    name = f"withstand_test_{uuid.uuid4().hex[:12]}"
    try:
        make(admin, name)
        yield admin.url.set(database=name).render_as_string(hide_password=False)
    finally:
        with admin.connect() as conn:
            conn.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()


@pytest.fixture
def pg_url():
    """An empty scratch PostgreSQL database (no tables: for tests of migrations), created for
    the test and dropped after it."""
    import sqlalchemy as sa

    def create(admin, name):
        with admin.connect() as conn:
            conn.execute(sa.text(f'CREATE DATABASE "{name}"'))

    yield from _scratch_postgres(create)


@pytest.fixture
def pg_demo(instance, templates):
    """A scratch PostgreSQL database at the latest migration with the demo fleet and logins,
    this test's own (`CREATE DATABASE ... TEMPLATE` of the session's demo template; the key
    that signed it goes to the test's instance folder), as a `Database`; dropped after."""
    def create(admin, name):
        templates.copy_postgres(admin, name, instance, demo=True)

    for url in _scratch_postgres(create):
        database = store_db.Database(url)
        try:
            yield database
        finally:
            database.dispose()


@pytest.fixture
def login_as():
    """``login_as(client, who="steward")``, the one login helper (helpers.web.login_as), for
    tests that take it as a fixture."""
    return _login_as
