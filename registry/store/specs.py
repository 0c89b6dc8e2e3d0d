"""Rows to engine specs and back: the one place that knows both shapes."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from sqlalchemy import bindparam, select
from sqlalchemy.orm import Session, selectinload

from ..engine import spec
from ..formats.fleet import SiteRecord, UnitRecord
from . import models as m

_FUSE_FIELDS = ("current", "voltage", "voltage_dc", "breaking_capacity", "i2t")


def fuse_of(row) -> spec.Fuse | None:
    if not row.has_fuse:
        return None
    return spec.Fuse(**{f: getattr(row, f"fuse_{f}") for f in _FUSE_FIELDS})


def row_fields(row) -> dict:
    """A model row's own fields (no children) as :class:`spec.ModelSpec` keywords; ``row``
    is an ORM model or a Core row of the models table, which name their columns alike."""
    out = {name: getattr(row, name) for name in _SCALARS}
    out.update(key=row.key, connectors=tuple(row.connectors or ()), fuse=fuse_of(row))
    return out


def model_spec(row: m.Model) -> spec.ModelSpec:
    return spec.ModelSpec(
        ratings=tuple(spec.Rating(r.category, r.voltage, r.transient, r.max_altitude)
                      for r in row.ratings),
        modes=tuple(spec.Mode(
            key=x.key, label=x.label, measures=x.measures, waveform=x.waveform,
            terminals=tuple(x.terminals or ()), input_resistance=x.input_resistance,
            input_capacitance=x.input_capacitance, max_input=x.max_input,
            max_current=x.max_current, max_duration=x.max_duration,
            discharge_energy=x.discharge_energy, clamp=x.clamp, fuse=fuse_of(x),
            closes=tuple(x.closes or ())) for x in row.modes),
        front_end=tuple(spec.Element(e.element_id, e.type, (e.node_a, e.node_b),
                                     tuple((k, float(v)) for k, v in (e.params or {}).items()))
                        for e in row.elements),
        **row_fields(row))


def model_spec_by_id(session: Session, model_id: int) -> spec.ModelSpec | None:
    """:func:`model_spec` of the model ``model_id`` (``None`` for none), read as plain rows:
    the model's and each child table's in order of position, four Core statements on the
    session's connection and no ORM objects (the unit page renders a model this way)."""
    conn = session.connection()
    row = conn.execute(_MODEL, {"id": model_id}).first()
    if row is None:
        return None
    children = {name: conn.execute(statement, {"id": model_id}).all()
                for name, statement in _CHILDREN.items()}
    return model_spec(_Plain(**row._mapping, **children))


_MODEL = select(m.Model.__table__).where(m.Model.id == bindparam("id"))
_CHILDREN = {name: select(table.__table__).where(table.model_id == bindparam("id"))
             .order_by(table.position)
             for name, table in (("ratings", m.Rating), ("modes", m.Mode),
                                 ("elements", m.FrontEndElement))}


class _Plain:
    """A model's columns and children as attributes, the way :func:`model_spec` reads an ORM
    row."""

    def __init__(self, **fields):
        self.__dict__.update(fields)


_SCALARS = ("maker", "name", "kind", "integrated_leads", "max_altitude", "pollution_degree",
            "connector", "current_rating", "tip_exposure", "attenuation", "required_load",
            "output_resistance", "min_voltage", "resistance", "energy", "power", "max_voltage")


def _fuse_columns(fuse: spec.Fuse | None) -> dict:
    out = {f"fuse_{f}": getattr(fuse, f) if fuse else None for f in _FUSE_FIELDS}
    out["has_fuse"] = fuse is not None
    return out


def model_columns(s: spec.ModelSpec) -> dict:
    """The model row's own columns for ``s``, as plain values (no children)."""
    out = {name: getattr(s, name) for name in _SCALARS}
    out.update(key=s.key, connectors=list(s.connectors), **_fuse_columns(s.fuse))
    return out


def rating_rows(s: spec.ModelSpec) -> list[dict]:
    return [dict(position=i, category=r.category, voltage=r.voltage, transient=r.transient,
                 max_altitude=r.max_altitude) for i, r in enumerate(s.ratings)]


def mode_rows(s: spec.ModelSpec) -> list[dict]:
    return [dict(position=i, key=x.key, label=x.label, measures=x.measures,
                 waveform=x.waveform, terminals=list(x.terminals),
                 input_resistance=x.input_resistance, input_capacitance=x.input_capacitance,
                 max_input=x.max_input, max_current=x.max_current,
                 max_duration=x.max_duration, discharge_energy=x.discharge_energy,
                 clamp=x.clamp, closes=list(x.closes), **_fuse_columns(x.fuse))
            for i, x in enumerate(s.modes)]


def element_rows(s: spec.ModelSpec) -> list[dict]:
    return [dict(position=i, element_id=e.id, type=e.type, node_a=e.between[0],
                 node_b=e.between[1], params=dict(e.params))
            for i, e in enumerate(s.front_end)]


def write_model(row: m.Model, s: spec.ModelSpec, session: Session) -> None:
    """Make ``row`` hold ``s``; its ratings, modes and front end are replaced whole."""
    for name, value in model_columns(s).items():
        setattr(row, name, value)
    row.ratings.clear()
    row.modes.clear()
    row.elements.clear()
    session.flush()  # the old children go before the new ones claim their unique keys
    row.ratings.extend(m.Rating(**r) for r in rating_rows(s))
    row.modes.extend(m.Mode(**x) for x in mode_rows(s))
    row.elements.extend(m.FrontEndElement(**e) for e in element_rows(s))


def insert_models(session: Session, new: list[spec.ModelSpec]) -> dict[str, int]:
    """Write new models and their children in a few multi-row INSERTs (SQLAlchemy Core
    executemany), not one ORM object per row: key -> id of each."""
    from sqlalchemy import insert
    if not new:
        return {}
    session.execute(insert(m.Model.__table__), [model_columns(s) for s in new])
    # their ids by key (a plain executemany: RETURNING in order would go row by row)
    keys = [s.key for s in new]
    id_of: dict[str, int] = {}
    for i in range(0, len(keys), 500):  # within every database's limit on bound values
        id_of.update(session.execute(select(m.Model.key, m.Model.id)
                                     .where(m.Model.key.in_(keys[i:i + 500]))).all())
    ids = [id_of[k] for k in keys]
    children: dict = {m.Rating: [], m.Mode: [], m.FrontEndElement: []}
    for s, model_id in zip(new, ids, strict=True):
        for table, rows in ((m.Rating, rating_rows(s)), (m.Mode, mode_rows(s)),
                            (m.FrontEndElement, element_rows(s))):
            children[table] += [dict(r, model_id=model_id) for r in rows]
    for table, rows in children.items():
        if rows:
            session.execute(insert(table.__table__), rows)
    return {s.key: model_id for s, model_id in zip(new, ids, strict=True)}


def unit_record(row: m.Unit) -> UnitRecord:
    return UnitRecord(tag=row.tag, model=row.model.key, serial=row.serial,
                      site=row.site.name if row.site else None, custodian=row.custodian,
                      status=row.status, verified_on=row.verified_on,
                      verification_due=row.verification_due, notes=row.notes)


def site_record(row: m.Site) -> SiteRecord:
    return SiteRecord(row.name, row.altitude)


def all_models(session: Session) -> list[m.Model]:
    return list(session.scalars(select(m.Model).order_by(m.Model.key).options(
        selectinload(m.Model.ratings), selectinload(m.Model.modes),
        selectinload(m.Model.elements))))


def model_content(s: spec.ModelSpec) -> tuple:
    """Everything the database holds of ``s``, as plain values: the model's columns and the
    rows of its ratings, modes and front end (what :func:`write_model` writes)."""
    return model_columns(s), rating_rows(s), mode_rows(s), element_rows(s)


@dataclass(frozen=True)
class StoredModel:
    """A model as read by :func:`stored_models`: its id, its content in the shape of
    :func:`model_content`, and the plain row its spec is built from when needed."""

    id: int
    content: tuple
    row: Any

    def spec(self) -> spec.ModelSpec:
        return model_spec(self.row)


def stored_models(session: Session) -> dict[str, StoredModel]:
    """key -> :class:`StoredModel` of every model, read with four plain queries and no ORM
    objects: a re-import compares each file model's :func:`model_content` against it, so an
    unchanged model costs one comparison of plain values."""
    from types import SimpleNamespace

    def plain(r) -> dict:
        return {k: v for k, v in r._mapping.items() if k not in ("id", "model_id")}

    children: dict[str, dict[int, list]] = {}
    for name, table in (("ratings", m.Rating), ("modes", m.Mode),
                        ("elements", m.FrontEndElement)):
        t = table.__table__
        by_model: dict[int, list] = {}
        for r in session.execute(select(t).order_by(t.c.model_id, t.c.position)):
            by_model.setdefault(r.model_id, []).append(r)
        children[name] = by_model
    out = {}
    for r in session.execute(select(m.Model.__table__)):
        kids = {name: by_model.get(r.id, []) for name, by_model in children.items()}
        content = (plain(r), [plain(x) for x in kids["ratings"]],
                   [plain(x) for x in kids["modes"]], [plain(x) for x in kids["elements"]])
        out[r.key] = StoredModel(r.id, content, SimpleNamespace(**r._mapping, **kids))
    return out


def all_units(session: Session) -> list[m.Unit]:
    return list(session.scalars(select(m.Unit).order_by(m.Unit.tag).options(
        selectinload(m.Unit.model), selectinload(m.Unit.site))))
