"""The fleet a check loads with Core rows (store/loading.py) is the fleet the ORM mappings
give through store/specs.py, model by model and unit by unit, on the demo database with an
event logged and a hold open. The reference is the ORM path the project used before."""

from datetime import datetime

from sqlalchemy import select

from registry.engine import spec
from registry.services.events import log_event
from registry.store import models as m
from registry.store.loading import engine_fleet
from registry.store.specs import all_models, all_units, model_spec


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


def test_the_loaded_fleet_is_the_orm_fleet(demo):
    log_event(demo, unit="NB-0001", kind="overvoltage", by="tech", voltage=5000.0,
              at=datetime(2026, 11, 3, 10, 0))
    with demo.transaction() as session:
        fast, orm = engine_fleet(session), _orm_fleet(session)
    assert list(fast.models) == list(orm.models)
    for key in orm.models:
        assert fast.models[key] == orm.models[key], key
    assert fast.units == orm.units
    # the event and the hold it opened reached the unit
    (nb1,) = [u for u in fast.units if u.tag == "NB-0001"]
    assert nb1.history and nb1.open_hold
    assert any(u.open_hold for u in fast.units)
