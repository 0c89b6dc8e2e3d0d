"""The fleet a check loads from plain driver rows (store/loading.py) is the fleet the ORM
mappings give through store/specs.py, model by model and unit by unit: on the demo database
with an event logged and a hold open, on a fleet of odd values (units without a site or a
verification date, every status, a held unit beside one of the same state that is not, units
with several events, copies of a model and a model that differs from another by one value),
on SQLite and on PostgreSQL. The reference is the ORM path the project used before; the unit
states are the ones ``spec.UnitState`` builds and checks field by field."""

import sqlite3
from datetime import datetime

import pytest
from sqlalchemy import select

from registry.demo import demo_fleet_path
from registry.engine import spec
from registry.formats.common import read_document
from registry.services.events import log_event
from registry.store import models as m
from registry.store.fleet import import_fleet
from registry.store.loading import engine_fleet
from registry.store.specs import all_models, all_units, model_spec
from registry.store.users import add_user


def _orm_fleet(session) -> spec.Fleet:
    models = {x.key: model_spec(x) for x in all_models(session)}
    open_holds = set(session.scalars(select(m.Hold.unit_id).where(m.Hold.released_at.is_(None))))
    history: dict[int, list] = {}
    for ev in session.scalars(select(m.Event).order_by(m.Event.id)):
        history.setdefault(ev.unit_id, []).append(spec.PastEvent(
            mode=ev.mode_key, kind=ev.kind, within_rating=ev.within_rating,
            occurred_at=ev.occurred_at, clamp_conducted=ev.clamp_conducted,
            waveform=ev.waveform))
    units = tuple(spec.UnitState(
        tag=u.tag, model=u.model.key, status=u.status, site=u.site.name if u.site else None,
        verification_due=u.verification_due, open_hold=u.id in open_holds,
        history=tuple(history.get(u.id, ()))) for u in all_units(session))
    return spec.Fleet(models=models, units=units)


def _same(fast: spec.Fleet, orm: spec.Fleet) -> None:
    assert list(fast.models) == list(orm.models)
    for key in orm.models:
        assert fast.models[key] == orm.models[key], key
        assert type(fast.models[key].integrated_leads) is type(orm.models[key].integrated_leads)
    assert fast.units == orm.units
    for a, b in zip(fast.units, orm.units, strict=True):
        # the same types as well as equal values (a date, not its text; a bool, not 0/1)
        assert {k: type(v) for k, v in vars(a).items()} == \
            {k: type(v) for k, v in vars(b).items()}, a.tag
        for x, y in zip(a.history, b.history, strict=True):
            assert {k: type(v) for k, v in vars(x).items()} == \
                {k: type(v) for k, v in vars(y).items()}


def test_the_loaded_fleet_is_the_orm_fleet(demo):
    log_event(demo, unit="NB-0001", kind="overvoltage", by="tech", voltage=5000.0,
              at=datetime(2026, 11, 3, 10, 0))
    with demo.transaction() as session:
        fast, orm = engine_fleet(session), _orm_fleet(session)
    _same(fast, orm)
    # the event and the hold it opened reached the unit
    (nb1,) = [u for u in fast.units if u.tag == "NB-0001"]
    assert nb1.history and nb1.open_hold
    assert any(u.open_hold for u in fast.units)


def _odd_document() -> dict:
    doc = read_document(str(demo_fleet_path()))
    models = doc["models"]
    kx7 = next(x for x in models if x["key"] == "kx-7")
    leads = next(x for x in models if x["kind"] == "test-leads")
    altered = dict(kx7, key="kx-7-other")
    altered["max_altitude"] = "2500 m"  # one value apart: not a copy
    models += [dict(kx7, key="kx-7-copy"), dict(leads, key=leads["key"] + "-copy"), altered]
    site = doc["sites"][0]["name"]
    base = {"serial": "x", "custodian": "", "verified_on": "2026-01-01"}
    doc["units"] += [
        dict(base, tag="ZZ-0001", model="kx-7-copy", site=site, status="in-service",
             verification_due="2027-05-01"),
        dict(base, tag="ZZ-0002", model="kx-7-copy", site=site, status="in-service",
             verification_due="2027-05-01"),  # the state of ZZ-0001, later held
        dict(base, tag="ZZ-0003", model="kx-7-copy", status="in-service"),  # no site, no due
        dict(base, tag="ZZ-0004", model="kx-7-other", status="away",
             verification_due="2027-05-01"),
        dict(base, tag="ZZ-0005", model="kx-7-other", site=site, status="retired",
             verified_on="1999-01-01", verification_due="1999-12-31"),
        dict(base, tag="ZZ-0006", model=leads["key"] + "-copy", site=site,
             status="in-service", verification_due="2200-12-31"),
        dict(base, tag="Zz_unit.7", model=leads["key"] + "-copy", status="in-service",
             verification_due="2027-05-01"),
    ]
    return doc


def _load_odd(db) -> None:
    import_fleet(db, _odd_document(), actor="test")
    with db.transaction() as session:
        add_user(session, "odd-tech", "technician", "odd-password-1")
    # a stress that opens a hold on ZZ-0002 alone, and events of every shape on ZZ-0003
    log_event(db, unit="ZZ-0002", kind="overvoltage", by="odd-tech", voltage=5000.0,
              at=datetime(2026, 11, 3, 10, 0))
    log_event(db, unit="ZZ-0003", kind="transient", by="odd-tech", voltage=200.0,
              at=datetime(2026, 6, 1, 12, 0))
    log_event(db, unit="ZZ-0003", kind="transient", by="odd-tech", mode="vac",
              waveform="ac", at=datetime(2026, 6, 2, 12, 0))
    log_event(db, unit="ZZ-0006", kind="mechanical", by="odd-tech")


def test_odd_values_load_as_the_orm_gives_them(database):
    # common practice (no source): the validated ORM path is the reference for every field
    _load_odd(database)
    with database.transaction() as session:
        fast, orm = engine_fleet(session), _orm_fleet(session)
    _same(fast, orm)
    by_tag = {u.tag: u for u in fast.units}
    assert by_tag["ZZ-0002"].open_hold and not by_tag["ZZ-0001"].open_hold
    assert by_tag["ZZ-0003"].site is None and by_tag["ZZ-0003"].verification_due is None
    assert len(by_tag["ZZ-0003"].history) == 2
    assert fast.models["kx-7-copy"] == fast.models["kx-7"].with_key("kx-7-copy")
    assert fast.models["kx-7-other"].max_altitude == 2500.0


def test_odd_values_load_alike_on_postgresql(pg_demo):
    _load_odd(pg_demo)
    with pg_demo.transaction() as session:
        fast, orm = engine_fleet(session), _orm_fleet(session)
    _same(fast, orm)


def test_a_status_the_engine_does_not_know_is_refused(database, tmp_path):
    # a row written past the database's own check (by hand, with the checks off) is refused
    # by the fast path as UnitState refuses it, naming the field
    _load_odd(database)
    path = database.engine.url.database
    con = sqlite3.connect(path)
    con.execute("PRAGMA ignore_check_constraints = ON")
    con.execute("UPDATE unit SET status = 'lost' WHERE tag = 'ZZ-0001'")
    con.commit()
    con.close()
    with database.transaction() as session, pytest.raises(spec.SpecError, match="unit.status"):
        engine_fleet(session)
