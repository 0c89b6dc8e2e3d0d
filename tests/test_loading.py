"""The fleet a check loads from plain driver rows (store/loading.py) is the fleet the ORM
mappings give through store/specs.py, model by model and unit by unit: on the demo database
with an event logged and a hold open, on a fleet of odd values (units without a site or a
verification date, every status, a held unit beside one of the same state that is not, units
with several events, copies of a model and a model that differs from another by one value),
on SQLite and on PostgreSQL. The reference is the ORM path the project used before; the unit
states are the ones ``spec.UnitState`` builds and checks field by field."""

import sqlite3
from dataclasses import replace
from datetime import datetime

import pytest
from sqlalchemy import select

from registry.demo import demo_fleet_path
from registry.engine import spec
from registry.engine.evaluate import evaluate
from registry.engine.result import VERDICT_ORDER, sort_key
from registry.formats.common import read_document
from registry.report import render_text
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


def _plans():
    from importlib import resources

    from registry.plans import load_plan
    folder = resources.files("registry.seeddata") / "plans"
    return [load_plan(str(p)) for p in sorted(folder.iterdir(), key=lambda p: p.name)
            if p.name.endswith(".yaml")]


def test_a_check_of_the_loaded_rows_is_the_check_of_the_same_units(database):
    # The check reads a loaded fleet as rows (UnitRows, cohorts of one state) and a fleet of
    # unit states as given; both must give the same result, every setup and finding, in the
    # same order; the order is sort_key's (common practice (no source): the slower path,
    # a plain sort of every setup made, is the reference).
    _load_odd(database)
    with database.transaction() as session:
        fleet = engine_fleet(session)
    assert isinstance(fleet.units, spec.UnitRows)
    as_tuple = spec.Fleet(models=fleet.models, units=tuple(fleet.units))
    for plan in _plans():
        plan = replace(plan, on=plan.on or datetime(2026, 12, 2).date())
        rows, units = evaluate(plan, fleet), evaluate(plan, as_tuple)
        assert rows.as_json(findings=True) == units.as_json(findings=True), plan.title
        assert render_text(rows) == render_text(units)
        assert render_text(rows, show_all=True) == render_text(units, show_all=True)
        made = list(rows.setups)
        assert made == sorted(made, key=lambda s: sort_key(s, plan.site, plan.task))
        assert rows.setups[:3] == tuple(made[:3]) and len(rows.setups) == len(made)
        offers = list(rows.accessories)
        assert offers == sorted(offers, key=lambda a: (VERDICT_ORDER.index(a.verdict), a.kind,
                                                       a.unit))
        # the units left out keep the fleet's order, with their reasons
        tags = [u.tag for u in fleet.units]
        assert [e.unit for e in rows.excluded] == sorted((e.unit for e in rows.excluded),
                                                         key=tags.index)
        assert {e.unit: e.reason for e in rows.excluded}["ZZ-0004"] == "away"


def test_unit_rows_read_as_the_tuple_of_their_units(database):
    _load_odd(database)
    with database.transaction() as session:
        rows = engine_fleet(session).units
    units = tuple(rows)
    assert rows == units and len(rows) == len(units)
    assert rows[0] == units[0] and rows[-1] == units[-1] and rows[2:5] == units[2:5]
    with pytest.raises(IndexError):
        rows[len(units)]


def test_ranked_results_read_as_tuples(demo):
    # common practice (no source): a result's setups and accessory units read as the tuples
    # they stand for (the engine's callers index, slice, add and compare them)
    with demo.transaction() as session:
        fleet = engine_fleet(session)
    plan = replace(_plans()[0], on=datetime(2026, 12, 2).date())
    result = evaluate(plan, fleet)
    setups, offers = tuple(result.setups), tuple(result.accessories)
    assert result.setups + result.accessories == setups + offers
    assert () + result.setups == setups and result.setups + () == setups
    assert result.setups[1] == setups[1] and result.setups[-1] == setups[-1]
    assert result.setups[:2] == setups[:2] and result.setups[1::2] == setups[1::2]
    assert list(reversed(result.setups)) == list(reversed(setups))
    assert result.setups.index(setups[2]) == 2 and setups[2] in result.setups
