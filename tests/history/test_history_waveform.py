"""An event's waveform: a current input's fuse judged on the matching voltage rating, or on the
lower of its ac and dc ratings when the waveform was not logged; the field in the hash chain
(chains written before it still verify); the CLI option; the migration on a database whose
holds refer to events.

Limits come from the demo fleet's model record of the kx-3 (seeddata/fleet.yaml: its Amps input
has no max input and a fuse rated 250 V ac, 125 V dc). A fuse's ac and dc voltage ratings are
separate ratings (IEC 60269-1 rated voltage; from memory): a dc circuit is held against the dc
one, and when the waveform is not known only the lower of the two is shown to hold.
SHA-256 as Python's hashlib computes it (FIPS 180-4); HMAC (RFC 2104) as its hmac does.
"""

import hashlib
import hmac
import json
import os
from datetime import datetime
from pathlib import Path

import pytest
from sqlalchemy import select, text

from registry.cli import main
from registry.demo import demo_fleet_path
from registry.engine.events import AppliedStress, assess
from registry.errors import InvalidInput
from registry.formats.fleet import load_fleet_file
from registry.store import db as store_db
from registry.store import models as m
from registry.services.events import log_event
from registry.store.events import GENESIS, legacy_event_hash, verify_chain


@pytest.fixture(scope="module")
def models():
    return {x.key: x for x in load_fleet_file(demo_fleet_path()).models}


# -- the engine's decision ---------------------------------------------------------------------

@pytest.mark.parametrize("volts, waveform, within", [
    (200.0, "ac", True),    # 200 V <= 250 V ac
    (200.0, "dc", False),   # 200 V > 125 V dc
    (200.0, None, False),   # not logged: the lower rating, 125 V
    (100.0, None, True),    # below both
    (125.0, None, True),    # at the lower rating
])
def test_current_input_event_is_judged_on_the_fuse_rating_for_its_waveform(models, volts,
                                                                          waveform, within):
    a = assess(models["kx-3"], "amp", AppliedStress("overvoltage", volts, waveform=waveform))
    assert a.within_rating is within, a.reasons
    if waveform is None:
        assert any("lower of the fuse's ac and dc voltage ratings" in r for r in a.reasons)


def test_unknown_waveform_with_one_fuse_rating_missing_is_not_shown_within(models):
    from dataclasses import replace
    kx3 = models["kx-3"]
    amp = replace(kx3.mode("amp"), fuse=replace(kx3.mode("amp").fuse, voltage_dc=None))
    model = replace(kx3, modes=tuple(amp if x.key == "amp" else x for x in kx3.modes))
    assert assess(model, "amp", AppliedStress("overvoltage", 100.0)).within_rating is None
    assert assess(model, "amp", AppliedStress("overvoltage", 100.0, waveform="ac")).within_rating


def test_waveform_must_be_ac_or_dc():
    with pytest.raises(InvalidInput) as exc:
        AppliedStress("overvoltage", 100.0, waveform="square")
    assert exc.value.problems[0].path == "waveform"


# -- the hash chain ----------------------------------------------------------------------------

def _old_hash(row: dict, prev: str) -> str:
    """The link as it was computed before events had a waveform."""
    doc = dict(row, prev_hash=prev)
    return hashlib.sha256(json.dumps(doc, sort_keys=True, separators=(",", ":"))
                          .encode()).hexdigest()


def _old_content(r) -> dict:
    """An event row read by SQL as the content the code before 0002 hashed."""
    def iso(v):
        return (datetime.fromisoformat(v) if isinstance(v, str) else v).isoformat(
            timespec="microseconds")
    symptoms = json.loads(r["symptoms"]) if isinstance(r["symptoms"], str) else r["symptoms"]
    return {"id": r["id"], "unit_id": r["unit_id"], "occurred_at": iso(r["occurred_at"]),
            "logged_at": iso(r["logged_at"]), "logged_by_id": r["logged_by_id"],
            "mode": r["mode_key"], "kind": r["kind"],
            "voltage": None if r["voltage"] is None else float(r["voltage"]),
            "energy": None if r["energy"] is None else float(r["energy"]),
            "duration": None if r["duration"] is None else float(r["duration"]),
            "symptoms": symptoms, "notes": r["notes"] or "",
            "within_rating": None if r["within_rating"] is None else bool(r["within_rating"]),
            "clamp_conducted": bool(r["clamp_conducted"])}


def test_chain_written_before_the_waveform_verifies_after_the_migration(demo):
    # a hold refers to the first event, so the upgrade must not copy the event table
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=1200.0, by="tech")
    store_db.downgrade(demo.engine, "0001")
    with demo.engine.begin() as conn:
        first = dict(conn.execute(text("SELECT * FROM event")).mappings().one())
        # as the code before the chain key wrote it: a plain SHA-256 link
        first["hash"] = _old_hash(_old_content(first), GENESIS)
        conn.execute(text("UPDATE event SET hash = :h WHERE id = :i"),
                     {"h": first["hash"], "i": first["id"]})
        unit_id = conn.execute(text("SELECT id FROM unit WHERE tag = 'NB-0002'")).scalar()
        content = {"id": first["id"] + 1, "unit_id": unit_id,
                   "occurred_at": "2026-11-01T08:00:00.000000",
                   "logged_at": "2026-11-01T08:05:00.000000",
                   "logged_by_id": first["logged_by_id"], "mode": "vac", "kind": "transient",
                   "voltage": 2000.0, "energy": None, "duration": None, "symptoms": ["none"],
                   "notes": "written by the old code", "within_rating": True,
                   "clamp_conducted": False}
        conn.execute(text(
            "INSERT INTO event (id, unit_id, occurred_at, logged_at, logged_by_id, mode_key, "
            "kind, voltage, symptoms, notes, within_rating, clamp_conducted, prev_hash, hash) "
            "VALUES (:id, :unit_id, '2026-11-01 08:00:00.000000', "
            "'2026-11-01 08:05:00.000000', :by, 'vac', 'transient', 2000.0, '[\"none\"]', "
            ":notes, 1, 0, :prev, :hash)"),
            {"id": content["id"], "unit_id": unit_id, "by": first["logged_by_id"],
             "notes": content["notes"], "prev": first["hash"],
             "hash": _old_hash(content, first["hash"])})
    store_db.upgrade(demo.engine)
    with demo.transaction() as s:
        st = verify_chain(s)
        assert st.ok and st.count == 2, st.summary()
        assert all(e.waveform is None for e in s.scalars(select(m.Event)))
        assert s.scalar(select(m.Hold.event_id).where(m.Hold.event_id.is_not(None))) == 1
    # appending after the upgrade chains on; a logged waveform enters the new link
    log_event(demo, unit="NB-0004", kind="overvoltage", mode="amp", voltage=200.0,
              waveform="dc", by="tech")
    with demo.transaction() as s:
        assert verify_chain(s).ok
        last = s.scalars(select(m.Event).order_by(m.Event.id.desc())).first()
        from registry.store.events import canonical_content
        assert canonical_content(last)["waveform"] == "dc"


def _sql(database, statement):
    with database.engine.begin() as conn:
        conn.execute(text(statement))


@pytest.mark.parametrize("statement", [
    "UPDATE event SET waveform = 'ac' WHERE id = 2",   # changed
    "UPDATE event SET waveform = NULL WHERE id = 2",   # cleared
    "UPDATE event SET waveform = 'dc' WHERE id = 1",   # set where none was logged
])
def test_editing_the_waveform_breaks_the_chain_at_that_event(demo, statement):
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=400.0, by="tech")
    log_event(demo, unit="NB-0004", kind="overvoltage", mode="amp", voltage=100.0,
              waveform="dc", by="tech")
    with demo.transaction() as s:
        assert verify_chain(s).ok
    _sql(demo, statement)
    with demo.transaction() as s:
        st = verify_chain(s)
    edited = int(statement.rsplit("=", 1)[1])
    assert not st.ok and st.broken_at == edited and "edited" in st.problem


def test_event_without_waveform_hashes_as_before(demo):
    log_event(demo, unit="NB-0001", kind="transient", mode="vdc", voltage=1500.0,
              symptoms=["none"], by="tech")
    with demo.transaction() as s:
        r = s.scalar(select(m.Event))
        doc = {"id": r.id, "unit_id": r.unit_id,
               "occurred_at": r.occurred_at.isoformat(timespec="microseconds"),
               "logged_at": r.logged_at.isoformat(timespec="microseconds"),
               "logged_by_id": r.logged_by_id, "mode": "vdc", "kind": "transient",
               "voltage": 1500.0, "energy": None, "duration": None, "symptoms": ["none"],
               "notes": "", "within_rating": True, "clamp_conducted": False}
        # the plain form (links written before the chain key) leaves an unlogged waveform out
        assert r.waveform is None and legacy_event_hash(r, GENESIS) == _old_hash(doc, GENESIS)
        # the keyed link adds the unit's tag and the user's login: HMAC (RFC 2104) by hand
        key = (Path(os.environ["WITHSTAND_INSTANCE"]) / "chain_key").read_bytes().strip()
        doc.update(prev_hash=GENESIS, chain="event", unit="NB-0001", logged_by="tech")
        assert r.hash == hmac.new(key, json.dumps(doc, sort_keys=True, separators=(",", ":"))
                                  .encode(), hashlib.sha256).hexdigest()


# -- the CLI -------------------------------------------------------------------------------------

def test_cli_waveform_option(runner, demo):
    dc = runner.invoke(main, ["event", "add", "--unit", "NB-0004", "--kind", "overvoltage",
                              "--mode", "amp", "--voltage", "200 V", "--waveform", "dc",
                              "--by", "tech"])
    assert dc.exit_code == 0, dc.output
    assert "NOT within rating" in dc.output and "125 V is below the applied 200 V" in dc.output
    bare = runner.invoke(main, ["event", "add", "--unit", "NB-0004", "--kind", "overvoltage",
                                "--mode", "amp", "--voltage", "100 V", "--by", "tech"])
    assert bare.exit_code == 0 and "lower of the fuse's ac and dc" in bare.output
    with demo.transaction() as s:
        assert [e.waveform for e in s.scalars(select(m.Event).order_by(m.Event.id))] == \
            ["dc", None]
    bad = runner.invoke(main, ["event", "add", "--unit", "NB-0004", "--kind", "overvoltage",
                               "--voltage", "100 V", "--waveform", "square", "--by", "tech"])
    assert bad.exit_code == 2 and "--waveform" in bad.output and "Traceback" not in bad.output
    with demo.transaction() as s:
        assert len(list(s.scalars(select(m.Event)))) == 2


def test_audit_events_sheet_carries_the_waveform(demo):
    # the waveform is hashed when logged, so the workbook's events carry it beside the hash
    from registry.store.audit import build_audit
    log_event(demo, unit="NB-0004", kind="overvoltage", mode="amp", voltage=100.0,
              waveform="dc", by="tech")
    log_event(demo, unit="NB-0001", kind="overvoltage", mode="vdc", voltage=400.0, by="tech")
    with demo.transaction() as s:
        events = build_audit(s).sheets["Events"]
    assert list(events.columns).index("waveform") == list(events.columns).index("duration_s") + 1
    assert list(events.sort_values("id")["waveform"].fillna("")) == ["dc", ""]
