"""The fleet in the database: importing a validated fleet file, exporting it, and loading it
into the engine's specs."""

from __future__ import annotations

import json
from dataclasses import dataclass, field, replace
from datetime import datetime, UTC

from sqlalchemy import func, insert, select, update
from sqlalchemy.orm import Session

from ..formats.fleet import (FleetContent, UnitRecord, model_to_document, parse_fleet,
                              unit_to_document)
from . import models as m
from .db import Database
from .specs import (all_models, all_units, insert_models, model_spec, site_record, stored_models,
                    model_content, unit_record, write_model)


def utcnow() -> datetime:
    """Naive UTC, the form every timestamp column holds."""
    return datetime.now(UTC).replace(tzinfo=None)


@dataclass
class ImportReport:
    added: list[str] = field(default_factory=list)  # "model kx-7", "unit NB-0001"
    updated: list[str] = field(default_factory=list)
    unchanged: int = 0
    changes: list[tuple[str, str, str, str | None, str | None]] = field(default_factory=list)
    # units whose open hold kept them on-hold against the file's status: (tag, status asked)
    kept_on_hold: list[tuple[str, str]] = field(default_factory=list)

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
    """Record each field change of one model, unit or site and chain it onto the change chain
    (:mod:`.chain`)."""
    record_many(session, [(entity, key, path, old, new) for path, old, new in diffs], actor,
                user_id, report)


def record_many(session: Session, changes: list[tuple[str, str, str, str | None, str | None]],
                actor: str, user_id: int | None, report: ImportReport | None = None) -> None:
    """Record (entity, key, field, old, new) changes in one multi-row INSERT, then chain them
    in order onto the change chain (:func:`.chain.link_changes`): the way every change record
    is written, one or twenty thousand."""
    from .chain import link_changes
    if not changes:
        return
    now = utcnow()
    rows = [{"at": now, "user_id": user_id, "actor": actor, "entity": entity,
             "entity_key": key, "field": path, "old": old, "new": new}
            for entity, key, path, old, new in changes]
    session.flush()
    ids = session.scalars(insert(m.Change).returning(m.Change.id, sort_by_parameter_order=True),
                          rows).all()
    for row, change_id in zip(rows, ids, strict=True):
        row["id"] = change_id
    link_changes(session, rows)
    if report is not None:
        report.changes.extend(changes)


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
    """Write validated ``content`` in the caller's transaction: new rows in multi-row INSERTs,
    changed ones updated by primary key, each changed field recorded; an unchanged row costs
    one comparison of plain values and writes nothing."""
    report = ImportReport()
    changes: list[tuple[str, str, str, str | None, str | None]] = []
    site_ids = _apply_sites(session, content, report, changes)
    model_ids = _apply_models(session, content, report, changes)
    held = _apply_units(session, content, model_ids, site_ids, report, changes)
    record_many(session, changes, actor, user_id, report)
    _holds_from_file(session, held, actor)
    session.flush()
    return report


def _apply_sites(session, content, report, changes) -> dict[str, int]:
    sites = {s.name: s for s in session.scalars(select(m.Site))}
    for rec in content.sites:
        row = sites.get(rec.name)
        if row is None:
            row = sites[rec.name] = m.Site(name=rec.name, altitude=rec.altitude)
            session.add(row)
            report.added.append(f"site {rec.name}")
        elif row.altitude != rec.altitude:
            changes.append(("site", rec.name, "altitude", repr(row.altitude),
                            repr(rec.altitude)))
            row.altitude = rec.altitude
            report.updated.append(f"site {rec.name}")
        else:
            report.unchanged += 1
    session.flush()
    return {name: row.id for name, row in sites.items()}


def _apply_models(session, content, report, changes) -> dict[str, int]:
    """Models: a spec equal to the stored one is unchanged; a changed one is rewritten with its
    field changes; new ones go in together (:func:`.specs.insert_models`)."""
    if not content.models:
        return {k: i for k, i in session.execute(select(m.Model.key, m.Model.id))}
    stored = stored_models(session)
    new = []
    for s in content.models:
        was = stored.get(s.key)
        if was is None:
            new.append(s)
            report.added.append(f"model {s.key}")
            continue
        diffs = [] if was.content == model_content(s) else diff_documents(
            model_to_document(was.spec()), model_to_document(s))
        if diffs:
            write_model(session.get(m.Model, was.id), s, session)
            changes.extend(("model", s.key, path, a, b) for path, a, b in diffs)
            report.updated.append(f"model {s.key}")
        else:
            report.unchanged += 1
    session.flush()
    insert_models(session, new)
    return {k: i for k, i in session.execute(select(m.Model.key, m.Model.id))}


_UNIT_FIELDS = ("serial", "custodian", "status", "verified_on", "verification_due", "notes")


def _stored_units(session: Session) -> dict[str, tuple]:
    """tag -> (id, model key, site name, the _UNIT_FIELDS), as plain tuples from one query."""
    q = (select(m.Unit.tag, m.Unit.id, m.Model.key, m.Site.name,
                *(getattr(m.Unit, f) for f in _UNIT_FIELDS))
         .join(m.Model, m.Unit.model_id == m.Model.id)
         .outerjoin(m.Site, m.Unit.site_id == m.Site.id))
    return {r[0]: tuple(r[1:]) for r in session.execute(q)}


# The unit columns an import writes, in the order of the tuples _apply_units builds.
_UNIT_COLUMNS = ("tag", "model_id", "site_id", *_UNIT_FIELDS)


def _apply_units(session, content, model_ids, site_ids, report, changes) -> list:
    """Units: compared as plain tuples with what is stored; new ones inserted as plain tuples
    in one executemany (:func:`insert_plain`) and changed ones updated by primary key in
    another. Returns the (tag, notes) of the units the file marks on-hold that were written,
    for their holds."""
    stored = _stored_units(session)
    open_holds = set(session.scalars(select(m.Hold.unit_id).where(m.Hold.released_at.is_(None))))
    inserts, updates, held = [], [], []
    for rec in content.units:
        old = stored.get(rec.tag)
        if old is not None and old[0] in open_holds and rec.status != "on-hold":
            # An open hold ends only by a steward's release with its inspection result; a
            # file (an older export, a unit sheet, the unit page) cannot return it to service.
            report.kept_on_hold.append((rec.tag, rec.status))
            rec = replace(rec, status="on-hold")
        # the order of _UNIT_FIELDS, spelt out: this loop runs once per unit
        values = (rec.serial, rec.custodian, rec.status, rec.verified_on, rec.verification_due,
                  rec.notes)
        if old is None:
            report.added.append(f"unit {rec.tag}")
            inserts.append((rec.tag, model_ids[rec.model],
                            site_ids[rec.site] if rec.site else None, *values))
        else:
            if old[1] == rec.model and old[2] == rec.site and old[3:] == values:
                report.unchanged += 1
                continue
            before = UnitRecord(rec.tag, old[1], **dict(zip(_UNIT_FIELDS, old[3:], strict=True)),
                                site=old[2])
            diffs = diff_documents(unit_to_document(before), unit_to_document(rec))
            if not diffs:
                report.unchanged += 1
                continue
            changes.extend(("unit", rec.tag, path, a, b) for path, a, b in diffs)
            report.updated.append(f"unit {rec.tag}")
            updates.append(dict(zip(_UNIT_FIELDS, values, strict=True), id=old[0],
                                model_id=model_ids[rec.model],
                                site_id=site_ids[rec.site] if rec.site else None))
        if rec.status == "on-hold":
            held.append((rec.tag, rec.notes))
    insert_plain(session, m.Unit.__table__, _UNIT_COLUMNS, inserts)
    if updates:
        session.execute(update(m.Unit), updates)  # ORM bulk UPDATE by primary key
    return held


def insert_plain(session: Session, table, columns: tuple[str, ...], rows: list[tuple]) -> None:
    """INSERT ``rows`` (plain tuples, in the order of ``columns``) into ``table`` in one
    executemany handed straight to the database driver: the statement compiled once for the
    session's dialect, and each column's own bind processor (SQLite's dates written as text,
    say) applied once per distinct value, as SQLAlchemy applies it, but with no mapping built
    and processed per row. Nothing else about the rows is changed."""
    if not rows:
        return
    conn = session.connection()
    dialect = conn.dialect
    compiled = insert(table).compile(dialect=dialect, column_keys=list(columns))
    cols = list(zip(*rows, strict=True))
    for i, name in enumerate(columns):
        process = table.c[name].type.dialect_impl(dialect).bind_processor(dialect)
        if process is not None:
            done = {v: process(v) for v in set(cols[i])}
            cols[i] = tuple(done[v] for v in cols[i])
    if dialect.positional:
        where = {name: i for i, name in enumerate(columns)}
        order = [cols[where[name]] for name in compiled.positiontup]
        params: list = list(zip(*order, strict=True))
    else:
        params = [dict(zip(columns, row, strict=True)) for row in zip(*cols, strict=True)]
    conn.exec_driver_sql(compiled.string, params)


def _holds_from_file(session: Session, held: list[tuple[str, str]], actor: str) -> None:
    """A unit a file marks on-hold gets an open hold, so that it shows among the holds and a
    steward's release (with its inspection result) is what returns it to service."""
    if not held:
        return
    from .chain import link_hold_opened
    ids: dict[str, int] = {}
    tags = [tag for tag, _ in held]
    for i in range(0, len(tags), 500):  # within every database's limit on bound values
        ids.update(session.execute(select(m.Unit.tag, m.Unit.id)
                                   .where(m.Unit.tag.in_(tags[i:i + 500]))).all())
    open_units = set(session.scalars(select(m.Hold.unit_id).where(m.Hold.released_at.is_(None))))
    for tag, notes in held:
        if ids[tag] in open_units:
            continue
        hold = m.Hold(unit_id=ids[tag], opened_at=utcnow(),
                      reason=f"marked on-hold in a fleet file imported by {actor}"
                             + (f": {notes}" if notes else ""))
        session.add(hold)
        session.flush()
        link_hold_opened(session, hold)
        open_units.add(ids[tag])


def export_fleet(session: Session) -> FleetContent:
    return FleetContent(
        sites=tuple(site_record(s) for s in session.scalars(select(m.Site).order_by(m.Site.name))),
        models=tuple(model_spec(x) for x in all_models(session)),
        units=tuple(unit_record(x) for x in all_units(session)))


def fleet_is_empty(session: Session) -> bool:
    return not session.scalar(select(func.count()).select_from(m.Model))


# The fleet as the engine sees it is loaded by store/loading.py (plain rows, fast); the name
# stays importable from here for callers written before it moved.
from .loading import engine_fleet  # noqa: E402,F401
