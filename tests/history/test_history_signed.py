"""The signed record: every tampering the audit listed, made through real SQL on a real
SQLite file (the core cases on PostgreSQL too), is found by `audit verify`; deleting the
newest entries is found against a workbook exported before; and, honestly, someone holding
the chain key can rewrite the whole record undetected.

References for the method: HMAC (RFC 2104) over SHA-256 (FIPS 180-4), as Python's hmac and
hashlib compute them. The attacker here knows the code and the algorithm but not the key: a
"correct plain hash" is SHA-256 over the same canonical JSON, which is what an attacker
without the key can compute.
"""

import hashlib
import json
import os
import stat
from pathlib import Path

import pytest
from sqlalchemy import select, text

from registry.cli import main
from registry.store import db as store_db
from registry.store import models as m
from registry.store.audit import export_audit
from registry.store.chain import (chain_key, compare_with, read_exported_heads, seal_legacy,
                                  verify_all)
from registry.services.events import log_event
from registry.store.events import (canonical_content, event_hash, legacy_event_hash,
                                   signed_content)
from registry.store.fleet import import_fleet
from registry.services.holds import release_hold

TAGS = ("NB-0001", "NB-0002", "SY-0005", "BL-0001")


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def record(request):
    """A database with the demo fleet (and the holds its on-hold units get), an event that
    opened a hold released since, five more events and a field change, on a SQLite file or a
    scratch PostgreSQL database."""
    if request.param == "sqlite":
        database = request.getfixturevalue("demo")
    else:
        database = request.getfixturevalue("pg_demo")
    return _with_entries(database)


@pytest.fixture
def sqlite_record(demo):
    """The same on the SQLite file the CLI runner's app uses."""
    return _with_entries(demo)


def _with_entries(database):
    held = log_event(database, unit="NB-0002", kind="overvoltage", mode="vdc", voltage=300.0,
                     symptoms=["arc"], by="tech")
    assert held.hold_id is not None
    release_hold(database, unit="NB-0002", result="repaired", by="steward", note="fuse replaced")
    for i in range(5):
        log_event(database, unit=TAGS[i % 4], kind="transient", mode="vdc",
                  voltage=1000.0 + i, symptoms=["none"], by="tech")
    import_fleet(database, {"format": "withstand-fleet/1", "units": [
        {"tag": "NB-0001", "model": "kx-7", "custodian": "a new custodian"}]}, actor="import")
    states = _states(database)
    assert all(s.ok for s in states.values()), {k: s.summary() for k, s in states.items()}
    return database


def _states(database):
    with database.transaction() as s:
        return verify_all(s)


def _sql(database, statement, **params):
    with database.engine.begin() as conn:
        conn.execute(text(statement), params)


def _plain(doc: dict) -> str:
    """What an attacker without the key computes: SHA-256 (FIPS 180-4) of the canonical JSON."""
    return hashlib.sha256(json.dumps(doc, sort_keys=True, separators=(",", ":"))
                          .encode()).hexdigest()


def _relink_plain_from(database, first_id):
    """Recompute, by SQL, every event link from ``first_id`` on with plain SHA-256 over the
    signed content (the key is the only thing the attacker lacks)."""
    with database.transaction() as s:
        rows = list(s.scalars(select(m.Event).where(m.Event.id >= first_id - 1)
                              .order_by(m.Event.id)))
        links, prev = [], rows[0].hash if rows[0].id < first_id else None
        for r in rows:
            if r.id < first_id:
                continue
            h = _plain(dict(signed_content(r), prev_hash=prev))
            links.append((r.id, prev, h))
            prev = h
    for rid, p, h in links:
        _sql(database, "UPDATE event SET prev_hash = :p, hash = :h WHERE id = :i", p=p, h=h,
             i=rid)


# -- events --------------------------------------------------------------------------------

def test_edit_and_chain_recomputed_without_the_key_is_found(record):
    _sql(record, "UPDATE event SET voltage = 900.0, notes = 'nothing much' WHERE id = 3")
    _relink_plain_from(record, 3)
    st = _states(record)["event"]
    assert not st.ok and st.broken_at == 3 and "edited" in st.problem


def test_forged_append_with_a_correct_plain_hash_is_found(record):
    with record.transaction() as s:
        last = s.scalars(select(m.Event).order_by(m.Event.id.desc())).first()
        head, unit_id, user_id, new_id = last.hash, last.unit_id, last.logged_by_id, last.id + 1
    _sql(record, "INSERT INTO event (id, unit_id, occurred_at, logged_at, logged_by_id, "
         "mode_key, kind, voltage, symptoms, notes, within_rating, clamp_conducted, prev_hash, "
         "hash) VALUES (:i, :u, '2026-11-01 08:00:00', '2026-11-01 08:00:00', :b, 'vdc', "
         "'transient', 100.0, '[\"none\"]', 'forged', true, false, :p, 'placeholder')",
         i=new_id, u=unit_id, b=user_id, p=head)
    with record.transaction() as s:
        forged = s.get(m.Event, new_id)
        plain = _plain(dict(signed_content(forged), prev_hash=head))
        assert plain == _plain(dict(signed_content(forged), prev_hash=forged.prev_hash))
    _sql(record, "UPDATE event SET hash = :h WHERE id = :i", h=plain, i=new_id)
    st = _states(record)["event"]
    assert not st.ok and st.broken_at == new_id and "without the key" in st.problem


def test_renaming_the_unit_or_user_of_an_event_is_found(record):
    _sql(record, "UPDATE unit SET tag = 'NB-9999' WHERE tag = 'SY-0005'")
    states = _states(record)
    assert not states["event"].ok and states["event"].broken_at == 4  # SY-0005's first event
    _sql(record, "UPDATE unit SET tag = 'SY-0005' WHERE tag = 'NB-9999'")
    assert _states(record)["event"].ok
    _sql(record, "UPDATE user_account SET username = 'someone' WHERE username = 'tech'")
    st = _states(record)["event"]
    assert not st.ok and st.broken_at == 1


# -- holds and changes ---------------------------------------------------------------------

def _open_hold(database):
    logged = log_event(database, unit="SY-0005", kind="overvoltage", mode="vdc",
                       voltage=300.0, symptoms=["smell"], by="tech")
    assert _states(database)["hold"].ok
    return logged.hold_id


def test_hold_released_by_sql_is_found(record):
    hold = _open_hold(record)
    _sql(record, "UPDATE hold SET released_at = '2026-11-02 09:00:00', result = 'pass' "
         "WHERE id = :i", i=hold)
    st = _states(record)["hold"]
    assert not st.ok and st.broken_at == hold and "released outside the store" in st.problem


def test_hold_deleted_by_sql_is_found(record):
    hold = _open_hold(record)
    _sql(record, "DELETE FROM hold WHERE id = :i", i=hold)
    st = _states(record)["hold"]
    assert not st.ok and st.broken_at == hold and "deleted" in st.problem


def test_release_undone_by_sql_is_found(record):
    with record.transaction() as s:
        released = s.scalar(select(m.Hold.id).where(m.Hold.released_at.is_not(None)))
    _sql(record, "UPDATE hold SET released_at = NULL, result = NULL WHERE id = :i", i=released)
    st = _states(record)["hold"]
    assert not st.ok and st.broken_at == released and "undone" in st.problem


@pytest.mark.parametrize("statement, problem", [
    ("UPDATE change SET new = 'someone else' WHERE id = (SELECT MAX(id) FROM change)",
     "edited"),
    ("DELETE FROM change WHERE id = (SELECT MIN(id) FROM change)", "deleted"),
    ("INSERT INTO change (at, actor, entity, entity_key, field, old, new) VALUES "
     "('2026-11-01 08:00:00', 'import', 'unit', 'NB-0002', 'serial', 'a', 'b')",
     "not on the chain"),
])
def test_change_history_rewritten_by_sql_is_found(record, statement, problem):
    _sql(record, statement)
    st = _states(record)["change"]
    assert not st.ok and problem in st.problem


# -- the newest entries, against an exported workbook --------------------------------------

def test_deleting_the_newest_entries_is_found_only_against_an_export(record, tmp_path):
    book = tmp_path / "before.xlsx"
    export_audit(record, book)
    exported = read_exported_heads(book)
    with record.transaction() as s:
        assert all(ok for _c, ok, _w in compare_with(s, exported))
    log_event(record, unit="NB-0001", kind="transient", mode="vdc", voltage=800.0,
              symptoms=["none"], by="tech")
    with record.transaction() as s:  # appending since the export is fine
        assert all(ok for _c, ok, _w in compare_with(s, exported))
    _sql(record, "DELETE FROM event WHERE id >= (SELECT MAX(id) - 2 FROM event)")
    _sql(record, "DELETE FROM record_link WHERE id = (SELECT MAX(id) FROM record_link "
         "WHERE chain = 'change')")
    _sql(record, "DELETE FROM change WHERE id = (SELECT MAX(id) FROM change)")
    states = _states(record)
    # honest: the chains alone still verify, nothing after the removed entries breaks
    assert states["event"].ok and states["change"].ok
    with record.transaction() as s:
        result = {c: ok for c, ok, _w in compare_with(s, exported)}
    assert result == {"event": False, "hold": True, "change": False}


def test_cli_verify_against_a_workbook(runner, sqlite_record, tmp_path):
    record = sqlite_record
    book = tmp_path / "audit.xlsx"
    assert runner.invoke(main, ["audit", "export", "--out", str(book)]).exit_code == 0
    ok = runner.invoke(main, ["audit", "verify", "--against", str(book)])
    assert ok.exit_code == 0, ok.output
    assert "Hold chain intact: " in ok.output and "Change chain intact" in ok.output
    assert "still entry 6" in ok.output
    _sql(record, "DELETE FROM event WHERE id = 6")
    assert runner.invoke(main, ["audit", "verify"]).exit_code == 0  # undetectable alone
    bad = runner.invoke(main, ["audit", "verify", "--against", str(book)])
    assert bad.exit_code == 1 and "FAILS: 5 events now, 6 when exported" in bad.output


# -- the key ---------------------------------------------------------------------------------

def test_the_key_file_is_generated_once_for_the_owner_only(record):
    path = Path(os.environ["WITHSTAND_INSTANCE"]) / "chain_key"
    assert stat.S_IMODE(path.stat().st_mode) == 0o600
    assert chain_key() == path.read_text().strip().encode()


def test_another_key_does_not_verify(record, monkeypatch):
    monkeypatch.setenv("WITHSTAND_CHAIN_KEY", "not the key that signed the record")
    states = _states(record)
    assert not states["event"].ok and states["event"].broken_at == 1
    assert not states["hold"].ok and not states["change"].ok


def test_with_the_key_a_full_rewrite_is_not_detectable(record):
    """The limit of the method, asserted so that it stays written down: whoever holds both the
    database and the key can rewrite an event and re-sign every link after it."""
    _sql(record, "UPDATE event SET voltage = 5.0, notes = 'rewritten' WHERE id = 2")
    key = chain_key()
    with record.transaction() as s:
        prev = s.get(m.Event, 1).hash
        for r in s.scalars(select(m.Event).where(m.Event.id >= 2).order_by(m.Event.id)):
            r.prev_hash, r.hash = prev, event_hash(r, prev, key)
            prev = r.hash
    assert _states(record)["event"].ok


# -- a database upgraded from 0002 -----------------------------------------------------------

def _as_written_before_the_key(database):
    """Turn the record into what the code before migration 0003 wrote: plain SHA-256 links
    over the old content, no hold or change links, no seal."""
    store_db.downgrade(database.engine, "0002")  # the event table is the same at 0002
    prev, links = "0" * 64, []
    with database.transaction() as s:
        for row in s.scalars(select(m.Event).order_by(m.Event.id)):
            h = _plain(dict(canonical_content(row), prev_hash=prev))
            assert h == legacy_event_hash(row, prev)
            links.append((row.id, prev, h))
            prev = h
    for rid, p, h in links:
        _sql(database, "UPDATE event SET prev_hash = :p, hash = :h WHERE id = :i", p=p, h=h,
             i=rid)
    return len(links), prev


def test_upgraded_database_is_sealed_by_init_and_then_guarded(runner, demo, tmp_path):
    for i in range(3):
        log_event(demo, unit=TAGS[i], kind="transient", mode="vdc", voltage=1000.0 + i,
                  symptoms=["none"], by="tech")
    count, head = _as_written_before_the_key(demo)
    old_book = tmp_path / "before-upgrade"  # an export's Summary as the old code wrote it
    old_book.mkdir()
    (old_book / "summary.csv").write_text(
        f"section,item,value\nchain,events in the chain,{count}\nchain,head hash,{head}\n")
    store_db.upgrade(demo.engine)
    # before the seal, the record does not verify: nothing is accepted silently
    before = runner.invoke(main, ["audit", "verify"])
    assert before.exit_code == 1 and "not sealed" in before.output
    sealed = runner.invoke(main, ["init"])
    assert sealed.exit_code == 0, sealed.output
    assert f"Sealed the record written before the chain key: {count} events" in sealed.output
    log_event(demo, unit="NB-0001", kind="transient", mode="vdc", voltage=700.0,
              symptoms=["none"], by="tech")
    after = runner.invoke(main, ["audit", "verify", "--against", str(old_book)])
    assert after.exit_code == 0, after.output
    assert f"still entry {count}" in after.output  # the old workbook's head still compares
    # editing an old event and recomputing its plain links is found at the boundary
    _sql(demo, "UPDATE event SET notes = 'changed later' WHERE id = 3")
    with demo.transaction() as s:
        r = s.get(m.Event, 3)
        _sql(demo, "UPDATE event SET hash = :h WHERE id = 3",
             h=legacy_event_hash(r, r.prev_hash))
    broken = runner.invoke(main, ["audit", "verify"])
    assert broken.exit_code == 1
    # and the seal row cannot be moved to cover it
    _sql(demo, "UPDATE chain_seal SET legacy_head = :h", h=legacy_event_hash(r, r.prev_hash))
    with demo.transaction() as s:
        assert "does not match" in verify_all(s)["seal"].problem


def test_init_refuses_to_seal_an_old_chain_that_was_edited(runner, demo):
    for i in range(3):
        log_event(demo, unit=TAGS[i], kind="transient", mode="vdc", voltage=1000.0 + i,
                  symptoms=["none"], by="tech")
    _as_written_before_the_key(demo)
    _sql(demo, "UPDATE event SET voltage = 1.0 WHERE id = 2")
    store_db.upgrade(demo.engine)
    result = runner.invoke(main, ["init"])
    assert result.exit_code == 1 and "broken at event 2; not sealed" in result.output
    with demo.transaction() as s:
        assert s.get(m.ChainSeal, 1).mac is None
        with pytest.raises(ValueError):
            seal_legacy(s)


@pytest.mark.postgres
def test_upgraded_database_is_sealed_and_guarded_on_postgresql(pg_demo):
    database = pg_demo
    for i in range(3):
        log_event(database, unit=TAGS[i], kind="transient", mode="vdc",
                  voltage=1000.0 + i, symptoms=["none"], by="tech")
    count, _head = _as_written_before_the_key(database)
    store_db.upgrade(database.engine)
    assert "not sealed" in _states(database)["seal"].problem
    with database.transaction(immediate=True) as s:
        assert f"{count} events on plain SHA-256 links" in seal_legacy(s)
    states = _states(database)
    assert "seal" not in states and all(st.ok for st in states.values())
    assert states["hold"].count >= 1  # the demo's holds, linked by the seal
    _sql(database, "UPDATE event SET notes = 'changed later' WHERE id = 2")
    with database.transaction() as s:
        r = s.get(m.Event, 2)
        plain = legacy_event_hash(r, r.prev_hash)
    _sql(database, "UPDATE event SET hash = :h WHERE id = 2", h=plain)
    st = _states(database)["event"]
    assert not st.ok and st.broken_at == 3  # the next old link no longer follows
