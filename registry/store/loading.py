"""Loading the fleet from the database into the engine's specs, for a check.

A check reads every model, unit, open hold and event, so this reads plain driver rows
(:func:`plain_rows`: a Core select compiled for the session's dialect and run on the driver's
own cursor, with no ORM objects, no identity map and no per-row processing) and builds the
specs from them: a fleet of 50 000 units loads in about the time the rows take to read. Each
column's values go through that column type's own result processor (SQLite's dates, booleans
and JSON), once per distinct value, so the specs are the ones `specs.model_spec` gives.
"""

from __future__ import annotations

from collections import defaultdict
from types import SimpleNamespace

from sqlalchemy import select
from sqlalchemy.orm import Session

from ..engine import spec
from . import models as m
from .specs import fuse_of, row_fields


def plain_rows(session: Session, stmt, processed: bool = True
               ) -> tuple[list[str], list[tuple], list]:
    """(column names, rows as plain tuples, each column's result processor) of the Core
    select ``stmt`` (one with no bound values), run on the driver's cursor of the session's
    connection. With ``processed`` each column's values are turned into what SQLAlchemy gives
    for its type (a SQLite date from its text, a boolean from 0 or 1, JSON decoded), the
    processor called once per distinct value; without it the values are the driver's own,
    for a caller that processes the columns it needs itself with the processors (``None``
    where the driver's value is the value)."""
    conn = session.connection()
    dialect = conn.dialect
    compiled = stmt.compile(dialect=dialect)
    if any(v is not None for v in compiled.params.values()):
        raise ValueError("plain_rows takes a select without bound values")
    cursor = conn.connection.cursor()
    try:
        cursor.execute(compiled.string)
        rows = cursor.fetchall()
        if rows and not isinstance(rows[0], tuple):
            rows = [tuple(r) for r in rows]
        description = cursor.description
    finally:
        cursor.close()
    columns = list(stmt.selected_columns)
    processors = [c.type.dialect_impl(dialect).result_processor(dialect, d[1])
                  for c, d in zip(columns, description, strict=True)]
    names = [c.name for c in columns]
    if processed and rows and any(p is not None for p in processors):
        cols = list(zip(*rows, strict=True))
        for i, process in enumerate(processors):
            if process is not None:
                cols[i] = _each(cols[i], process)
        rows = list(zip(*cols, strict=True))
    return names, rows, processors


def _each(values, process) -> tuple:
    """``process`` over ``values``, called once per distinct value (a value that cannot be
    hashed, a driver's decoded JSON, is processed on its own)."""
    try:
        done = {v: process(v) for v in set(values)}
    except TypeError:
        return tuple(process(v) for v in values)
    return tuple(done[v] for v in values)


def _by_model(session: Session, table) -> tuple[dict[int, list], _Rows]:
    """The rows of a model's parts table by model id, in their order, as plain tuples with the
    driver's values (id, model_id, position, then the content), and what makes one of them
    into the ORM's values."""
    names, rows, processors = plain_rows(session, select(table).order_by(
        table.c.model_id, table.c.position, table.c.id), processed=False)
    assert names[:3] == ["id", "model_id", "position"], names
    out: dict[int, list] = defaultdict(list)
    for row in rows:
        out[row[1]].append(row)
    return out, _Rows(names, processors)


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


class _Rows:
    """Driver rows of one table made into what the ORM gives: each column's values through its
    type's result processor, named by column (a namespace per row)."""

    def __init__(self, names: list[str], processors: list):
        self.names, self.processors = names, processors

    def __call__(self, row) -> SimpleNamespace:
        return SimpleNamespace(**{
            name: (v if p is None or v is None else p(v))
            for name, p, v in zip(self.names, self.processors, row, strict=True)})


class _Built:
    """Specs built once per distinct content of their row (the columns after the ids, as the
    driver gives them): a lab's copies of a model share every part, and the parts are
    frozen."""

    def __init__(self, make, rows: _Rows, skip: int):
        self.make, self.rows, self.skip = make, rows, skip
        self.seen: dict = {}

    def __call__(self, row):
        key = _content(row[self.skip:])
        got = self.seen.get(key)
        if got is None:
            got = self.seen[key] = self.make(self.rows(row))
        return got


def _content(values) -> tuple:
    """A row's values as a hashable tuple (a driver's decoded JSON lists and objects as
    tuples, tagged so that they never equal a text)."""
    values = tuple(values)
    try:
        hash(values)
        return values
    except TypeError:
        pass
    out = []
    for v in values:
        if isinstance(v, list):
            v = ("list",) + _content(v)
        elif isinstance(v, dict):
            v = ("dict",) + tuple(sorted((k, _content((x,))) for k, x in v.items()))
        out.append(v)
    return tuple(out)


def model_specs(session: Session) -> dict[int, spec.ModelSpec]:
    """Every model's spec by row id, in key order. Models of the same content (every column
    but the id and key, the same parts) are built and checked once, then copied under their
    keys: the content is compared on the driver's values, and only the rows of a content
    not met before are processed into specs."""
    parts = []
    for table, make in ((m.Rating.__table__, _rating), (m.Mode.__table__, _mode),
                        (m.FrontEndElement.__table__, _element)):
        by, rows = _by_model(session, table)
        parts.append((by, _Built(make, rows, 3)))
    t = m.Model.__table__
    names, rows, processors = plain_rows(session, select(t).order_by(t.c.key),
                                         processed=False)
    at_id, at_key = names.index("id"), names.index("key")
    own = [i for i in range(len(names)) if i not in (at_id, at_key)]
    model_row = _Rows(names, processors)
    built: dict[tuple, spec.ModelSpec] = {}
    out: dict[int, spec.ModelSpec] = {}
    for row in rows:
        mid, key = row[at_id], row[at_key]
        made = tuple(tuple(build(r) for r in by.get(mid, ())) for by, build in parts)
        content = (_content(row[i] for i in own),) + tuple(tuple(map(id, p)) for p in made)
        same = built.get(content)
        if same is not None:
            out[mid] = same.with_key(key)
            continue
        out[mid] = built[content] = spec.ModelSpec(
            ratings=made[0], modes=made[1], front_end=made[2], **row_fields(model_row(row)))
    return out


def engine_fleet(session: Session) -> spec.Fleet:
    """The fleet as the engine sees it: model specs by key and unit states with history (the
    events in the order logged), in tag order, kept as rows (:class:`spec.UnitRows`): one
    checked state per distinct (model, status, site, verification due, open hold) and each
    unit's tag, its state and its history; a unit state is made when someone reads it."""
    models = model_specs(session)
    sites: dict[int, str] = {i: name for i, name in
                             session.execute(select(m.Site.id, m.Site.name))}
    _, held, _ = plain_rows(session, select(m.Hold.unit_id).where(m.Hold.released_at.is_(None)))
    open_holds = {r[0] for r in held}
    e = m.Event.__table__
    history: dict[int, list[spec.PastEvent]] = defaultdict(list)
    _, events, _ = plain_rows(session, select(
        e.c.unit_id, e.c.mode_key, e.c.kind, e.c.within_rating, e.c.occurred_at,
        e.c.clamp_conducted, e.c.waveform).order_by(e.c.id))
    for uid, mode, kind, within, at, clamped, waveform in events:
        history[uid].append(spec.PastEvent(
            mode=mode, kind=kind, within_rating=within, occurred_at=at,
            clamp_conducted=clamped, waveform=waveform))
    u = m.Unit.__table__
    _, rows, processors = plain_rows(session, select(
        u.c.id, u.c.tag, u.c.model_id, u.c.status, u.c.site_id, u.c.verification_due
    ).order_by(u.c.tag), processed=False)
    due_of = processors[-1]
    keys = {i: s.key for i, s in models.items()}
    if not rows:
        return spec.Fleet(models={s.key: s for s in models.values()}, units=())
    ids, tag_column, model_ids, statuses, site_ids, dues = zip(*rows, strict=True)
    tags = list(tag_column)
    del rows
    # each unit's state, numbered in the order first met: (model, status, site, due, held);
    # the loops over units are the dict and map builtins'
    if open_holds:
        held = [uid in open_holds for uid in ids]
        of_unit = list(zip(model_ids, statuses, site_ids, dues, held, strict=True))
    else:  # no unit is held: the same states without the flag
        of_unit = list(zip(model_ids, statuses, site_ids, dues, strict=True))
    index = {k: at for at, k in enumerate(dict.fromkeys(of_unit))}
    state_of = list(map(index.__getitem__, of_unit))
    first = dict(zip(reversed(state_of), range(len(of_unit) - 1, -1, -1), strict=True))
    states = []
    day: dict = {None: None}  # each distinct due through the column's processor once
    new = object.__new__
    for k, at in index.items():
        model_id, status, site_id, due = k[:4]
        on_hold = bool(open_holds) and k[4]
        # a state's fields as UnitState's __init__ sets them (without the frozen dataclass's
        # per-field setattr), checked by its own __post_init__ (it reads the status); the
        # units of a state differ only by tag and history
        if due not in day:
            day[due] = due if due_of is None else due_of(due)
        state = new(spec.UnitState)
        state.__dict__.update(tag=tags[first[at]], model=keys[model_id], status=status,
                              site=sites.get(site_id), verification_due=day[due],
                              open_hold=on_hold, history=())
        state.__post_init__()
        states.append(state)
    histories = {i: tuple(history[uid]) for i, uid in enumerate(ids) if uid in history} \
        if history else {}
    units = spec.UnitRows(states, tags, state_of, histories)
    return spec.Fleet(models={s.key: s for s in models.values()}, units=units)
