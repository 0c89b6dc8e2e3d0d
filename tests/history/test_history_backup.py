"""`withstand backup`: SQLite's online backup API while other processes append events. The
copy must pass SQLite's own `PRAGMA integrity_check` and hold every event committed before the
backup began, with an intact chain. PostgreSQL is sent to pg_dump."""

import multiprocessing as mp
import sqlite3
import time

import pytest
from sqlalchemy import func, select

from helpers import chainwork
from registry.cli import main
from registry.store import db as store_db
from registry.store import models as m
from registry.store.backup import backup_database
from registry.store.events import verify_chain



def _events(database):
    with database.transaction() as s:
        return s.scalar(select(func.count()).select_from(m.Event)), s.scalar(
            select(func.max(m.Event.id)))


def test_backup_under_concurrent_writes(demo, tmp_path):
    stop = tmp_path / "stop"
    ctx = mp.get_context("spawn")
    with ctx.Pool(3) as pool:
        jobs = [pool.apply_async(chainwork.append_until, (demo.url, tag, str(stop)))
                for tag in ("NB-0001", "NB-0002", "SY-0005")]
        # wait (no time limit asserted) until the writers are well under way
        while (_events(demo)[0] or 0) < 20:
            if any(j.ready() for j in jobs):  # a writer stopped early: its error shows below
                break
            time.sleep(0.05)
        committed_before = _events(demo)[1]
        copy = tmp_path / "copy.sqlite3"
        report = backup_database(demo, copy)
        stop.touch()
        written = sum(j.get(timeout=300) for j in jobs)
    assert report.integrity == "ok"
    con = sqlite3.connect(copy)
    try:
        assert con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
        ids = {r[0] for r in con.execute("SELECT id FROM event")}
    finally:
        con.close()
    assert set(range(1, committed_before + 1)) <= ids
    assert written >= len(ids)
    copied = store_db.Database(f"sqlite:///{copy}")
    try:
        with copied.transaction() as s:
            state = verify_chain(s)
        assert state.ok and state.count == len(ids)
    finally:
        copied.dispose()


def test_cli_backup_refuses_an_existing_file(runner, demo, tmp_path):
    target = tmp_path / "b.sqlite3"
    first = runner.invoke(main, ["backup", str(target)])
    assert first.exit_code == 0 and "integrity ok" in first.output
    second = runner.invoke(main, ["backup", str(target)])
    assert second.exit_code == 2 and "exists already" in second.output


@pytest.mark.postgres
def test_postgresql_is_sent_to_pg_dump(pg_url, tmp_path):
    database = store_db.Database(pg_url)
    try:
        with pytest.raises(Exception) as err:
            backup_database(database, tmp_path / "x")
        assert "pg_dump" in str(err.value)
        assert not (tmp_path / "x").exists()
    finally:
        database.dispose()
