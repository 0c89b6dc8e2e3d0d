"""Loading the fleet from the database into the engine's specs, for a check.

A check reads every model, unit, open hold and event, so this reads plain rows with SQLAlchemy
Core selects (one per table, no ORM objects, no identity map) and builds the specs from them:
a fleet of 50 000 units loads in about the time the rows take to read. The rows go through
the same column types as the ORM's, so the specs are the ones `specs.model_spec` gives.
"""

from __future__ import annotations

from collections import defaultdict

from sqlalchemy import select
from sqlalchemy.orm import Session

from ..engine import spec
from . import models as m
from .specs import fuse_of, row_fields



def _by_model(session: Session, table) -> dict[int, list]:
    out: dict[int, list] = defaultdict(list)
    for row in session.execute(select(table).order_by(table.c.model_id, table.c.position,
                                                      table.c.id)).all():
        out[row.model_id].append(row)
    return out


def _rating(r) -> spec.Rating:
    return spec.Rating(r.category, r.voltage, r.transient, r.max_altitude)


def _mode(x) -> spec.Mode:
    return spec.Mode(
        key=x.key, label=x.label, measures=x.measures, waveform=x.waveform,
        terminals=tuple(x.terminals or ()), input_resistance=x.input_resistance,
        input_capacitance=x.input_capacitance, max_input=x.max_input,
        max_current=x.max_current, max_duration=x.max_duration,
        discharge_energy=x.discharge_energy, clamp=x.clamp, fuse=fuse_of(x),
        closes=tuple(x.closes or ()))


def _element(e) -> spec.Element:
    return spec.Element(e.element_id, e.type, (e.node_a, e.node_b),
                        tuple((k, float(v)) for k, v in (e.params or {}).items()))


class _Built:
    """Specs built once per distinct content of their row (the columns after the ids): a
    lab's copies of a model share every part, and the parts are frozen."""

    def __init__(self, make, skip: int):
        self.make, self.skip = make, skip
        self.seen: dict = {}

    def __call__(self, row):
        key = _content(row[self.skip:])
        got = self.seen.get(key)
        if got is None:
            got = self.seen[key] = self.make(row)
        return got


def _content(values) -> tuple:
    """A row's values as a hashable tuple (JSON lists and objects as tuples)."""
    out = []
    for v in values:
        if isinstance(v, list):
            v = ("list",) + tuple(v)
        elif isinstance(v, dict):
            v = ("dict",) + tuple(sorted(v.items()))
        out.append(v)
    return tuple(out)


def model_specs(session: Session) -> dict[int, spec.ModelSpec]:
    """Every model's spec by row id, in key order. Models of the same content (every column
    but the key, the same parts) are built and checked once, then copied under their keys."""
    ratings = _by_model(session, m.Rating.__table__)
    modes = _by_model(session, m.Mode.__table__)
    elements = _by_model(session, m.FrontEndElement.__table__)
    rating, mode, element = _Built(_rating, 3), _Built(_mode, 3), _Built(_element, 3)
    t = m.Model.__table__
    cols = [c for c in t.c if c.name not in ("id", "key")]
    built: dict[tuple, spec.ModelSpec] = {}
    out: dict[int, spec.ModelSpec] = {}
    for row in session.execute(select(t).order_by(t.c.key)):
        parts = (tuple(rating(r) for r in ratings.get(row.id, ())),
                 tuple(mode(x) for x in modes.get(row.id, ())),
                 tuple(element(e) for e in elements.get(row.id, ())))
        content = (_content(getattr(row, c.name) for c in cols), tuple(map(id, parts[0])),
                   tuple(map(id, parts[1])), tuple(map(id, parts[2])))
        same = built.get(content)
        if same is not None:
            out[row.id] = same.with_key(row.key)
            continue
        out[row.id] = built[content] = spec.ModelSpec(
            ratings=parts[0], modes=parts[1], front_end=parts[2], **row_fields(row))
    return out


def engine_fleet(session: Session) -> spec.Fleet:
    """The fleet as the engine sees it: model specs by key and unit states with history (the
    events in the order logged), in tag order."""
    models = model_specs(session)
    sites: dict[int, str] = {i: name for i, name in
                             session.execute(select(m.Site.id, m.Site.name))}
    open_holds = set(session.scalars(select(m.Hold.unit_id).where(m.Hold.released_at.is_(None))))
    e = m.Event.__table__
    history: dict[int, list[spec.PastEvent]] = defaultdict(list)
    for ev in session.execute(select(e.c.unit_id, e.c.mode_key, e.c.kind, e.c.within_rating,
                                     e.c.occurred_at, e.c.clamp_conducted, e.c.waveform)
                              .order_by(e.c.id)):
        history[ev.unit_id].append(spec.PastEvent(
            mode=ev.mode_key, kind=ev.kind, within_rating=ev.within_rating,
            occurred_at=ev.occurred_at, clamp_conducted=ev.clamp_conducted,
            waveform=ev.waveform))
    u = m.Unit.__table__
    keys = {i: s.key for i, s in models.items()}
    units = tuple(
        _unit(tag=tag, model=keys[model_id], status=status,
              site=sites.get(site_id) if site_id is not None else None,
              verification_due=due, open_hold=uid in open_holds,
              history=tuple(history[uid]) if uid in history else ())
        for uid, tag, model_id, status, site_id, due in session.execute(
            select(u.c.id, u.c.tag, u.c.model_id, u.c.status, u.c.site_id,
                   u.c.verification_due).order_by(u.c.tag)).all())
    return spec.Fleet(models={s.key: s for s in models.values()}, units=units)


def _unit(**fields) -> spec.UnitState:
    """A UnitState made as its __init__ would make it, and checked by its own __post_init__,
    without the frozen dataclass's per-field setattr (one unit of 50 000 at a time)."""
    out = object.__new__(spec.UnitState)
    out.__dict__.update(fields)
    out.__post_init__()
    return out
