"""The fleet in the database: importing a validated fleet file, exporting it, and loading it
into the engine's specs."""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from datetime import datetime, timezone

from sqlalchemy import func, select
from sqlalchemy.orm import Session

from ..engine import spec
from ..formats.fleet import (FleetContent, model_to_document, parse_fleet, unit_to_document)
from . import models as m
from .db import Database
from .specs import all_models, all_units, model_spec, site_record, unit_record, write_model


def utcnow() -> datetime:
    """Naive UTC, the form every timestamp column holds."""
    return datetime.now(timezone.utc).replace(tzinfo=None)


@dataclass
class ImportReport:
    added: list[str] = field(default_factory=list)  # "model kx-7", "unit NB-0001"
    updated: list[str] = field(default_factory=list)
    unchanged: int = 0
    changes: list[tuple[str, str, str, str | None, str | None]] = field(default_factory=list)

    def summary(self) -> str:
        return (f"{len(self.added)} added, {len(self.updated)} updated, {self.unchanged} "
                f"unchanged ({len(self.changes)} field change"
                f"{'' if len(self.changes) == 1 else 's'})")


def _flatten(value, prefix: str = "") -> dict[str, str]:
    """A document as path -> text, e.g. ``modes[vdc].max_input -> '1 kV'``."""
    out: dict[str, str] = {}
    if isinstance(value, dict):
        for k, v in value.items():
            out.update(_flatten(v, f"{prefix}.{k}" if prefix else str(k)))
    elif isinstance(value, list) and value and all(isinstance(x, dict) for x in value):
        for i, x in enumerate(value):
            name = x.get("key") or x.get("id") or str(i)
            out.update(_flatten(x, f"{prefix}[{name}]"))
    elif isinstance(value, list):
        out[prefix] = json.dumps(value)
    elif value is not None:
        out[prefix] = str(value)
    return out


def diff_documents(old: dict, new: dict) -> list[tuple[str, str | None, str | None]]:
    a, b = _flatten(old), _flatten(new)
    return [(k, a.get(k), b.get(k)) for k in sorted(set(a) | set(b)) if a.get(k) != b.get(k)]


def record_changes(session: Session, entity: str, key: str, diffs, actor: str,
                   user_id: int | None, report: ImportReport | None = None) -> None:
    """Record each field change and chain it onto the change chain (:mod:`.chain`)."""
    from .chain import link_change
    now = utcnow()
    for path, old, new in diffs:
        change = m.Change(at=now, user_id=user_id, actor=actor, entity=entity,
                          entity_key=key, field=path, old=old, new=new)
        session.add(change)
        session.flush()
        link_change(session, change)
        if report is not None:
            report.changes.append((entity, key, path, old, new))


def known_keys(session: Session) -> tuple[set[str], set[str]]:
    return (set(session.scalars(select(m.Model.key))), set(session.scalars(select(m.Site.name))))


def import_fleet(db: Database, data, *, actor: str = "import", user_id: int | None = None,
                 dry_run: bool = False) -> ImportReport:
    """Validate ``data`` (a parsed fleet document) whole, then write it in one transaction.

    Re-importing a model key, unit tag or site name updates it and records each changed field.
    Nothing is written when anything is invalid (the caller sees :class:`InvalidInput`) or
    when ``dry_run`` is set.
    """
    with db.transaction() as session:
        models_known, sites_known = known_keys(session)
        content = parse_fleet(data, known_models=models_known, known_sites=sites_known)
        report = apply_fleet(session, content, actor=actor, user_id=user_id)
        if dry_run:
            session.rollback()
    return report


def apply_fleet(session: Session, content: FleetContent, *, actor: str,
                user_id: int | None) -> ImportReport:
    report = ImportReport()
    sites = {s.name: s for s in session.scalars(select(m.Site))}
    for rec in content.sites:
        row = sites.get(rec.name)
        if row is None:
            row = sites[rec.name] = m.Site(name=rec.name, altitude=rec.altitude)
            session.add(row)
            report.added.append(f"site {rec.name}")
        elif row.altitude != rec.altitude:
            record_changes(session, "site", rec.name,
                           [("altitude", repr(row.altitude), repr(rec.altitude))],
                           actor, user_id, report)
            row.altitude = rec.altitude
            report.updated.append(f"site {rec.name}")
        else:
            report.unchanged += 1
    models = {x.key: x for x in all_models(session)}
    for s in content.models:
        row = models.get(s.key)
        if row is None:
            row = models[s.key] = m.Model(key=s.key, kind=s.kind)
            session.add(row)
            write_model(row, s, session)
            report.added.append(f"model {s.key}")
            continue
        diffs = diff_documents(model_to_document(model_spec(row)), model_to_document(s))
        if diffs:
            write_model(row, s, session)
            record_changes(session, "model", s.key, diffs, actor, user_id, report)
            report.updated.append(f"model {s.key}")
        else:
            report.unchanged += 1
    session.flush()
    units = {x.tag: x for x in all_units(session)}
    for rec in content.units:
        row = units.get(rec.tag)
        new = unit_to_document(rec)
        if row is None:
            row = m.Unit(tag=rec.tag)
            session.add(row)
            report.added.append(f"unit {rec.tag}")
        else:
            diffs = diff_documents(unit_to_document(unit_record(row)), new)
            if not diffs:
                report.unchanged += 1
                continue
            record_changes(session, "unit", rec.tag, diffs, actor, user_id, report)
            report.updated.append(f"unit {rec.tag}")
        row.model = models[rec.model]
        row.site = sites[rec.site] if rec.site else None
        for name in ("serial", "custodian", "status", "verified_on", "verification_due",
                     "notes"):
            setattr(row, name, getattr(rec, name))
        if rec.status == "on-hold":
            _hold_from_file(session, row, actor)
    session.flush()
    return report


def _hold_from_file(session: Session, unit: m.Unit, actor: str) -> None:
    """A unit a file marks on-hold gets an open hold, so that it shows among the holds and a
    steward's release (with its inspection result) is what returns it to service."""
    session.flush()
    if unit.id is not None and session.scalar(select(m.Hold.id).where(
            m.Hold.unit_id == unit.id, m.Hold.released_at.is_(None))) is not None:
        return
    from .chain import link_hold_opened
    hold = m.Hold(unit=unit, opened_at=utcnow(),
                  reason=f"marked on-hold in a fleet file imported by {actor}"
                         + (f": {unit.notes}" if unit.notes else ""))
    session.add(hold)
    session.flush()
    link_hold_opened(session, hold)


def export_fleet(session: Session) -> FleetContent:
    return FleetContent(
        sites=tuple(site_record(s) for s in session.scalars(select(m.Site).order_by(m.Site.name))),
        models=tuple(model_spec(x) for x in all_models(session)),
        units=tuple(unit_record(x) for x in all_units(session)))


def fleet_is_empty(session: Session) -> bool:
    return not session.scalar(select(func.count()).select_from(m.Model))


def engine_fleet(session: Session) -> spec.Fleet:
    """The fleet as the engine sees it: model specs by key and unit states with history."""
    models = {x.key: model_spec(x) for x in all_models(session)}
    open_holds = set(session.scalars(select(m.Hold.unit_id).where(m.Hold.released_at.is_(None))))
    history: dict[int, list[spec.PastEvent]] = {}
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
