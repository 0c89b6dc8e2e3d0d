"""Rows to engine specs and back: the one place that knows both shapes."""

from __future__ import annotations

from sqlalchemy import select
from sqlalchemy.orm import Session, selectinload

from ..engine import spec
from ..formats.fleet import SiteRecord, UnitRecord
from . import models as m

_FUSE_FIELDS = ("current", "voltage", "voltage_dc", "breaking_capacity", "i2t")


def _fuse_of(row) -> spec.Fuse | None:
    if not row.has_fuse:
        return None
    return spec.Fuse(**{f: getattr(row, f"fuse_{f}") for f in _FUSE_FIELDS})


def _put_fuse(row, fuse: spec.Fuse | None) -> None:
    row.has_fuse = fuse is not None
    for f in _FUSE_FIELDS:
        setattr(row, f"fuse_{f}", getattr(fuse, f) if fuse else None)


def model_spec(row: m.Model) -> spec.ModelSpec:
    return spec.ModelSpec(
        key=row.key, kind=row.kind, maker=row.maker, name=row.name,
        ratings=tuple(spec.Rating(r.category, r.voltage, r.transient, r.max_altitude)
                      for r in row.ratings),
        modes=tuple(spec.Mode(
            key=x.key, label=x.label, measures=x.measures, waveform=x.waveform,
            terminals=tuple(x.terminals or ()), input_resistance=x.input_resistance,
            input_capacitance=x.input_capacitance, max_input=x.max_input,
            max_current=x.max_current, max_duration=x.max_duration,
            discharge_energy=x.discharge_energy, clamp=x.clamp, fuse=_fuse_of(x),
            closes=tuple(x.closes or ())) for x in row.modes),
        front_end=tuple(spec.Element(e.element_id, e.type, (e.node_a, e.node_b),
                                     tuple((k, float(v)) for k, v in (e.params or {}).items()))
                        for e in row.elements),
        connectors=tuple(row.connectors or ()), integrated_leads=row.integrated_leads,
        max_altitude=row.max_altitude, pollution_degree=row.pollution_degree,
        connector=row.connector, current_rating=row.current_rating,
        tip_exposure=row.tip_exposure, fuse=_fuse_of(row), attenuation=row.attenuation,
        required_load=row.required_load, output_resistance=row.output_resistance,
        min_voltage=row.min_voltage, resistance=row.resistance, energy=row.energy,
        power=row.power, max_voltage=row.max_voltage)


_SCALARS = ("maker", "name", "kind", "integrated_leads", "max_altitude", "pollution_degree",
            "connector", "current_rating", "tip_exposure", "attenuation", "required_load",
            "output_resistance", "min_voltage", "resistance", "energy", "power", "max_voltage")


def write_model(row: m.Model, s: spec.ModelSpec, session: Session) -> None:
    """Make ``row`` hold ``s``; its ratings, modes and front end are replaced whole."""
    row.key = s.key
    for name in _SCALARS:
        setattr(row, name, getattr(s, name))
    row.connectors = list(s.connectors)
    _put_fuse(row, s.fuse)
    row.ratings.clear()
    row.modes.clear()
    row.elements.clear()
    session.flush()  # the old children go before the new ones claim their unique keys
    row.ratings.extend(m.Rating(position=i, category=r.category, voltage=r.voltage,
                                transient=r.transient, max_altitude=r.max_altitude)
                       for i, r in enumerate(s.ratings))
    for i, x in enumerate(s.modes):
        mode = m.Mode(position=i, key=x.key, label=x.label, measures=x.measures,
                      waveform=x.waveform, terminals=list(x.terminals),
                      input_resistance=x.input_resistance,
                      input_capacitance=x.input_capacitance, max_input=x.max_input,
                      max_current=x.max_current, max_duration=x.max_duration,
                      discharge_energy=x.discharge_energy, clamp=x.clamp,
                      closes=list(x.closes))
        _put_fuse(mode, x.fuse)
        row.modes.append(mode)
    row.elements.extend(m.FrontEndElement(position=i, element_id=e.id, type=e.type,
                                          node_a=e.between[0], node_b=e.between[1],
                                          params=dict(e.params))
                        for i, e in enumerate(s.front_end))


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


def all_units(session: Session) -> list[m.Unit]:
    return list(session.scalars(select(m.Unit).order_by(m.Unit.tag).options(
        selectinload(m.Unit.model), selectinload(m.Unit.site))))
