"""The template databases behind the `database`, `demo` and `pg_demo` fixtures
(tests/helpers/databases.py): each test's copy is its own (a write there reaches neither the
template nor the next copy), a demo copy carries the key that signed it, so its chains verify,
and the copy is a sound SQLite database by SQLite's own `PRAGMA integrity_check`."""

import hashlib
import os
import sqlite3
import stat
import uuid
from pathlib import Path

import pytest
import sqlalchemy as sa
from sqlalchemy import func, select

from registry.services.events import log_event
from registry.store.db import Database
from registry.store import models as m
from registry.store.chain import verify_all


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _counts(database) -> tuple[int, int, int]:
    with database.transaction() as s:
        return (s.scalar(select(func.count()).select_from(m.Unit)),
                s.scalar(select(func.count()).select_from(m.Event)),
                s.scalar(select(func.count()).select_from(m.User)))


def test_a_demo_copy_is_the_tests_own(demo, templates, tmp_path):
    template = templates.sqlite_template(demo=True)
    before = _digest(template)
    units, events, users = _counts(demo)
    assert units > 0 and users == 3  # the demo fleet and its three logins
    log_event(demo, unit="NB-0001", kind="transient", mode="vdc", voltage=700.0,
              symptoms=["none"], by="tech")
    assert _counts(demo) == (units, events + 1, users)
    assert _digest(template) == before  # the template is untouched
    other = templates.copy_sqlite(tmp_path / "other" / "copy.sqlite3", demo=True)
    with sqlite3.connect(other) as con:
        assert con.execute("SELECT count(*) FROM event").fetchone() == (events,)
        assert con.execute("PRAGMA integrity_check").fetchone() == ("ok",)
    con.close()


def test_a_demo_copy_verifies_with_the_key_it_was_given(demo, instance, templates):
    key = instance / "chain_key"
    assert key.read_bytes() == (templates.folder / "chain_key").read_bytes()
    assert stat.S_IMODE(key.stat().st_mode) == 0o600
    assert Path(os.environ["WITHSTAND_INSTANCE"]) == instance
    log_event(demo, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=300.0,
              symptoms=["arc"], by="tech")  # a new event and the hold it opens
    with demo.transaction() as s:
        states = verify_all(s)
    assert all(st.ok for st in states.values()), {k: st.summary() for k, st in states.items()}
    assert states["change"].count > 0 and states["hold"].count > 0


def test_a_migrated_copy_is_empty_and_has_no_key(database, instance):
    assert _counts(database) == (0, 0, 0)
    assert not (instance / "chain_key").exists()  # nothing signed yet: made when first needed


@pytest.mark.postgres
def test_a_postgresql_demo_copy_is_the_tests_own(pg_demo, templates):
    units, events, users = _counts(pg_demo)
    log_event(pg_demo, unit="NB-0001", kind="transient", mode="vdc", voltage=700.0,
              symptoms=["none"], by="tech")
    with pg_demo.transaction() as s:
        assert all(st.ok for st in verify_all(s).values())
    assert _counts(pg_demo) == (units, events + 1, users)
    admin = sa.create_engine(templates.pg_admin_url, isolation_level="AUTOCOMMIT")
    name = f"withstand_test_{uuid.uuid4().hex[:12]}"
    try:
        with admin.connect() as conn:
            conn.execute(sa.text(f'CREATE DATABASE "{name}" TEMPLATE '
                                 f'"{templates.postgres_template(admin, demo=True)}"'))
        second = Database(admin.url.set(database=name).render_as_string(hide_password=False))
        try:
            assert _counts(second) == (units, events, users)  # the write stayed in pg_demo
        finally:
            second.dispose()
    finally:
        with admin.connect() as conn:
            conn.execute(sa.text(f'DROP DATABASE IF EXISTS "{name}" WITH (FORCE)'))
        admin.dispose()
