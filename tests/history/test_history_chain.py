"""The hash chain of events: intact after appends, broken at the right link by an edit, a
deletion or a reordering made directly in the database, and intact after concurrent appends
from several processes on SQLite and PostgreSQL.

Reference for the digest: HMAC (RFC 2104) with SHA-256 (FIPS 180-4) as Python's hmac and
hashlib compute it; the test recomputes one link by hand from the stored row and the key file.
"""

import hashlib
import hmac
import json
import multiprocessing as mp
import os
import subprocess
import sys
from pathlib import Path

import pytest
from sqlalchemy import func, select, text

from helpers import chainwork
from registry.cli import main
from registry.store import models as m
from registry.services.events import log_event
from registry.store.events import GENESIS, verify_chain


TAGS = ("NB-0001", "NB-0002", "SY-0005", "BL-0001")


def five_events(database):
    for i in range(5):
        log_event(database, unit=TAGS[i % 4], kind="transient", mode="vdc", voltage=1000.0 + i,
                  symptoms=["none"], by="tech")


def state(database):
    with database.transaction() as s:
        return verify_chain(s)


def test_untouched_chain_verifies_and_links_by_hand(runner, demo):
    five_events(demo)
    st = state(demo)
    assert st.ok and st.count == 5
    with demo.transaction() as s:
        rows = list(s.scalars(select(m.Event).order_by(m.Event.id)))
        assert rows[0].prev_hash == GENESIS
        assert all(b.prev_hash == a.hash for a, b in zip(rows, rows[1:], strict=False))
        r = rows[2]
        doc = {"id": r.id, "unit_id": r.unit_id,
               "occurred_at": r.occurred_at.isoformat(timespec="microseconds"),
               "logged_at": r.logged_at.isoformat(timespec="microseconds"),
               "logged_by_id": r.logged_by_id, "mode": "vdc", "kind": "transient",
               "voltage": 1002.0, "energy": None, "duration": None, "symptoms": ["none"],
               "notes": "", "within_rating": True, "clamp_conducted": False,
               "prev_hash": rows[1].hash, "chain": "event", "unit": TAGS[2],
               "logged_by": "tech"}
        key = (Path(os.environ["WITHSTAND_INSTANCE"]) / "chain_key").read_bytes().strip()
        by_hand = hmac.new(key, json.dumps(doc, sort_keys=True, separators=(",", ":"))
                           .encode(), hashlib.sha256).hexdigest()
        assert r.hash == by_hand
    result = runner.invoke(main, ["audit", "verify"])
    assert result.exit_code == 0 and "intact: 5 events" in result.output


def _sql(database, statement):
    with database.engine.begin() as conn:
        conn.execute(text(statement))


def test_edit_is_found_at_that_event(runner, demo):
    five_events(demo)
    _sql(demo, "UPDATE event SET voltage = 900.0 WHERE id = 3")
    st = state(demo)
    assert not st.ok and st.broken_at == 3 and "edited" in st.problem
    result = runner.invoke(main, ["audit", "verify"])
    assert result.exit_code == 1 and "broken at event 3" in result.output


def test_edit_with_a_recomputed_hash_is_found_at_the_next_event(demo):
    # with the key (as the store holds it) an edit re-signed at one row still breaks the next
    five_events(demo)
    from registry.store.events import event_hash
    with demo.transaction() as s:
        row = s.get(m.Event, 3)
        row.notes = "nothing happened"
        row.hash = event_hash(row, row.prev_hash)
    st = state(demo)
    assert not st.ok and st.broken_at == 4 and "event 3" in st.problem


def test_deletion_is_found_at_the_event_after_it(demo):
    five_events(demo)
    _sql(demo, "DELETE FROM event WHERE id = 2")
    st = state(demo)
    assert not st.ok and st.broken_at == 3 and "deleted" in st.problem


def test_deleting_the_first_event_is_found(demo):
    five_events(demo)
    _sql(demo, "DELETE FROM event WHERE id = 1")
    st = state(demo)
    assert not st.ok and st.broken_at == 2 and "start of the chain" in st.problem


def test_reordering_is_found_where_the_order_changes(demo):
    five_events(demo)
    # swap the ids of events 2 and 4 (through a free id, since id is the primary key)
    _sql(demo, "UPDATE event SET id = 100 WHERE id = 2")
    _sql(demo, "UPDATE event SET id = 2 WHERE id = 4")
    _sql(demo, "UPDATE event SET id = 4 WHERE id = 100")
    st = state(demo)
    assert not st.ok and st.broken_at == 2


# -- concurrent appends ------------------------------------------------------------------------

def _appended_by_processes(url, per_worker=8):
    ctx = mp.get_context("spawn")
    with ctx.Pool(len(TAGS)) as pool:
        done = pool.starmap(chainwork.append_many, [(url, tag, per_worker) for tag in TAGS])
    return sum(done)


def _check_chain(database, expected):
    st = state(database)
    assert st.ok, st.summary()
    assert st.count == expected
    with database.transaction() as s:
        assert s.scalar(select(func.count(func.distinct(m.Event.prev_hash)))) == expected


def test_concurrent_appends_on_sqlite(demo):
    total = _appended_by_processes(demo.url)
    _check_chain(demo, total)


def test_concurrent_cli_appends_on_sqlite(demo, tmp_path):
    exe = Path(sys.executable).with_name("withstand")
    env = dict(os.environ, WITHSTAND_DATABASE_URL=demo.url)
    procs = []
    for tag in TAGS:
        script = " && ".join(
            f"{exe} event add --unit {tag} --kind overvoltage --mode vdc --voltage '{200 + i} V' "
            f"--symptom none --by tech" for i in range(3))
        procs.append(subprocess.Popen(["bash", "-c", script], env=env, stdout=subprocess.PIPE,
                                      stderr=subprocess.PIPE, text=True))
    for p in procs:
        out, err = p.communicate()
        assert p.returncode == 0, err
        assert out.count("within rating") == 3
    _check_chain(demo, 3 * len(TAGS))


@pytest.mark.postgres
def test_concurrent_appends_on_postgresql(pg_demo):
    total = _appended_by_processes(pg_demo.url)
    _check_chain(pg_demo, total)
