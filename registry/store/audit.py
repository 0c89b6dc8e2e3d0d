"""The fleet audit workbook: what the lab manager answers for, in one xlsx file (pandas builds
the tables, openpyxl formats them), or one CSV per sheet.

Sheets: Summary (counts, the coverage table, the state of the event chain, when and from what
the workbook was made), Units, Models, Modes, Events, Holds, Changes, Findings. Dates are real
dates and quantities real numbers in the SI unit named in the column header; header rows are
frozen and filtered; overdue and held rows are highlighted.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path

import pandas as pd
from sqlalchemy import select
from sqlalchemy.orm import Session, selectinload

from ..engine import rules, spec
from ..engine.checks import fitting_ratings, rating_text, withstand_of
from ..engine.setups import lead_connects, tip_connects
from ..errors import InvalidInput
from . import models as m
from .cells import safe_cell, write_csv
from .db import Database
from .chain import verify_all
from .fleet import utcnow
from .queries import coverage
from .specs import stored_models

SOON_DAYS = 30  # "soon due": verification due within this many days
LONG_HOLD_DAYS = 30  # a hold open longer than this is a finding
SHEETS = ("Summary", "Units", "Models", "Modes", "Events", "Holds", "Changes", "Findings")

OVERDUE_FILL = "F8CBAD"  # light red
HELD_FILL = "FFE699"  # amber


@dataclass
class Audit:
    """The workbook's tables, before they are written."""

    summary: pd.DataFrame
    coverage: pd.DataFrame
    sheets: dict[str, pd.DataFrame]
    overdue_tags: set[str]
    held_tags: set[str]
    open_hold_ids: set[int]


def _ratings(ms: spec.ModelSpec) -> str:
    return "; ".join(rating_text(r) for r in ms.ratings)


def coverage_table(session) -> pd.DataFrame:
    """The dashboard's coverage (:func:`queries.coverage`) as a table: a row per group and
    category, a column per voltage."""
    cov = coverage(session)
    rows = []
    for group, counts in (("instruments", cov.instruments), ("accessories", cov.accessories)):
        for cat in cov.categories:
            row = {"units": group, "category": f"CAT {cat}"}
            row.update({f"{v:g} V": counts[(cat, v)] for v in cov.voltages})
            rows.append(row)
    return pd.DataFrame(rows)


def missing_data(ms: spec.ModelSpec) -> list[str]:
    """What the model's record lacks, each with the check it leaves unverified."""
    out = []
    if not ms.ratings:
        out.append("no rating: category and transient checks (2, 3) unknown")
    for r in ms.ratings:
        if r.category == "none" and r.transient is None:
            out.append(f"rating {rating_text(r)} states no transient: check 3 unknown")
    for x in ms.modes:
        where = f"mode {x.key}"
        if x.measures == "voltage" and x.max_input is None:
            out.append(f"{where}: no max_input, check 5 unknown")
        if x.measures == "voltage" and x.input_resistance is None:
            out.append(f"{where}: no input_resistance, checks 7 and 9 unknown")
        if x.measures == "current" and not x.clamp and x.max_current is None:
            out.append(f"{where}: no max_current, check 5 unknown")
        if x.fuse is not None:
            lacks = [n for n in ("voltage", "breaking_capacity") if getattr(x.fuse, n) is None]
            if lacks:
                out.append(f"{where}: fuse without {' or '.join(lacks)}, check 6 unknown")
    if ms.kind == "discharge-tool":
        lacks = [n for n in ("resistance", "energy") if getattr(ms, n) is None]
        if lacks:
            out.append(f"no {' or '.join(lacks)}: check 9 unknown")
    if ms.kind == "hv-divider":
        lacks = [n for n in ("required_load", "output_resistance") if getattr(ms, n) is None]
        if lacks:
            out.append(f"no {' or '.join(lacks)}: check 7 unknown")
    return out


def _shortfall(acc: spec.ModelSpec, inst: spec.ModelSpec) -> list[str]:
    return [rating_text(r) for r in inst.ratings if r.category != "none"
            and not fitting_ratings(acc, r.category, r.voltage)]


def accessories_below(models: dict[str, spec.ModelSpec]) -> list[tuple[str, str, str]]:
    """(accessory, instrument, what it does not cover) for every lead-type accessory or tip
    that fits an instrument (by connector) but lacks a rating the instrument has: the setup is
    held to the lower of the two. A tip on an instrument's integrated leads counts too.
    Dividers face another circuit than the instrument, and a current clamp reads a current:
    both are left out."""
    instruments = [x for x in models.values() if x.is_instrument]
    leads = [x for x in models.values() if x.kind == "test-leads"]
    tips = [x for x in models.values() if x.kind in spec.TIP_KINDS]
    out = []
    for inst in instruments:
        # connector fit is the setups' own rule (lead_connects, tip_connects)
        served = [ld for ld in leads if lead_connects(inst, ld)]
        for ld in served:
            short = _shortfall(ld, inst)
            if short:
                out.append((ld.key, inst.key, ", ".join(short)))
        holders = served if not inst.integrated_leads else [None]
        tip_keys = {t.key for ld in holders for t in tips if tip_connects(inst, ld, t)}
        for key in sorted(tip_keys):
            short = _shortfall(models[key], inst)
            if short:
                out.append((key, inst.key, ", ".join(short)))
    return out


def _as_date(t: datetime | date | None):
    return None if t is None else pd.Timestamp(t)


@dataclass
class Sources:
    """What the sheet builders read, fetched once: the units of the audit (all, or one
    site's) as plain rows, their models' specs, and the events and holds of the period."""

    on: date
    made_at: datetime
    since: date | None
    start: datetime | None
    site: str | None
    models: dict[str, spec.ModelSpec]
    units: list  # rows with id, tag, model, site, serial, custodian, status, dates, notes
    events: list[m.Event]
    holds: list[m.Hold]  # of the period
    open_by_unit: dict[int, m.Hold]
    hold_of_event: dict[int, int]

    @property
    def unit_tags(self) -> set[str]:
        return {u.tag for u in self.units}

    @property
    def used_models(self) -> set[str]:
        return {u.model for u in self.units}


def _unit_rows(session: Session, site: str | None) -> list:
    """Every unit (or one site's) as a plain row, in tag order: one query, no ORM objects."""
    q = (select(m.Unit.id, m.Unit.tag, m.Model.key.label("model"), m.Site.name.label("site"),
                m.Unit.serial, m.Unit.custodian, m.Unit.status, m.Unit.verified_on,
                m.Unit.verification_due, m.Unit.notes)
         .join(m.Model, m.Unit.model_id == m.Model.id)
         .outerjoin(m.Site, m.Unit.site_id == m.Site.id).order_by(m.Unit.tag))
    if site is not None:
        q = q.where(m.Site.name == site)
    return list(session.execute(q))


def gather(session: Session, *, since: date | None, site: str | None, on: date,
           made_at: datetime) -> Sources:
    if site is not None and session.scalar(select(m.Site.id).where(m.Site.name == site)) is None:
        known = ", ".join(session.scalars(select(m.Site.name).order_by(m.Site.name)))
        raise InvalidInput(f"'{site}' is not a site (sites: {known or 'none'})", "--site")
    start = datetime.combine(since, datetime.min.time()) if since else None
    models = {key: stored.spec() for key, stored in sorted(stored_models(session).items())}
    units = _unit_rows(session, site)
    unit_ids = {u.id for u in units}
    if site is not None:
        used = {u.model for u in units}
        models = {k: v for k, v in models.items() if k in used}
    events = [e for e in session.scalars(select(m.Event).order_by(m.Event.id).options(
        selectinload(m.Event.unit).selectinload(m.Unit.model), selectinload(m.Event.logged_by)))
        if e.unit_id in unit_ids and (start is None or e.occurred_at >= start)]
    all_holds = list(session.scalars(select(m.Hold).order_by(m.Hold.id).options(
        selectinload(m.Hold.unit), selectinload(m.Hold.released_by))))
    open_by_unit: dict[int, m.Hold] = {}
    for h in all_holds:
        if h.released_at is None and h.unit_id not in open_by_unit:
            open_by_unit[h.unit_id] = h
    holds = [h for h in all_holds if h.unit_id in unit_ids and (
        start is None or h.released_at is None or h.released_at >= start
        or h.opened_at >= start)]
    return Sources(on=on, made_at=made_at, since=since, start=start, site=site, models=models,
                   units=units, events=events, holds=holds, open_by_unit=open_by_unit,
                   hold_of_event={h.event_id: h.id for h in all_holds
                                  if h.event_id is not None})


def _finding(kind: str, subject: str, detail: str, when=None, days=None) -> dict:
    return {"finding": kind, "subject": subject, "detail": detail, "date": _as_date(when),
            "days": days}


def unit_findings(src: Sources, u) -> dict | None:
    """Overdue, due soon or no verification date: the unit's one verification finding."""
    due, on = u.verification_due, src.on
    if rules.unit_overdue(u.status, due, on):
        late = (on - due).days
        return _finding("overdue", u.tag, f"verification was due {due.isoformat()}, {late} days "
                                          f"before {on.isoformat()} ({u.status})", due, late)
    if rules.unit_due_within(u.status, due, on, SOON_DAYS) and u.status != "away":
        return _finding("due soon", u.tag, f"verification due {due.isoformat()}, in "
                                           f"{(due - on).days} days", due, (due - on).days)
    if due is None and u.status in rules.VERIFIED_STATUSES:
        return _finding("no verification date", u.tag, "no verification due date on record")
    return None


def units_sheet(src: Sources) -> tuple[pd.DataFrame, set[str], set[str], list[dict]]:
    """The Units sheet, the tags to mark overdue and held, and the units' findings."""
    events_per_unit: dict[int, int] = {}
    for e in src.events:
        events_per_unit[e.unit_id] = events_per_unit.get(e.unit_id, 0) + 1
    per_model = {key: (ms.maker, ms.name, ms.kind, _ratings(ms))
                 for key, ms in src.models.items()}
    rows, overdue, held, findings = [], set(), set(), []
    for u in src.units:
        due = u.verification_due
        late = (src.on - due).days if rules.verification_overdue(due, src.on) else None
        hold = src.open_by_unit.get(u.id)
        found = unit_findings(src, u)
        if found is not None:
            findings.append(found)
            if found["finding"] == "overdue":
                overdue.add(u.tag)
        if hold is not None or u.status == "on-hold":
            held.add(u.tag)
        maker, name, kind, ratings = per_model[u.model]
        rows.append((u.tag, u.model, maker, name, kind, ratings, u.site, u.custodian, u.serial,
                     u.status, _as_date(u.verified_on), _as_date(due), late, hold is not None,
                     _as_date(hold.opened_at) if hold else None,
                     hold.reason if hold else None, events_per_unit.get(u.id, 0), u.notes))
    return pd.DataFrame(rows, columns=_UNIT_COLUMNS), overdue, held, findings


def fleet_findings(src: Sources) -> list[dict]:
    """The findings beyond the units' own: long holds, missing data, accessories rated below
    the instruments they serve."""
    out = []
    for h in src.holds:
        if h.released_at is None:
            days = (src.made_at - h.opened_at).days
            if days > LONG_HOLD_DAYS:
                out.append(_finding("long hold", h.unit.tag,
                                    f"hold {h.id} open since {h.opened_at.date().isoformat()}: "
                                    f"{h.reason}", h.opened_at, days))
    for key, ms in src.models.items():
        out += [_finding("missing data", key, text) for text in missing_data(ms)]
    for acc, inst, short in accessories_below(src.models):
        out.append(_finding("accessory below instrument", acc,
                            f"{acc} ({_ratings(src.models[acc])}) serves {inst} but does not "
                            f"cover its {short}; the setup takes the lower rating"))
    return out


def models_sheet(src: Sources) -> pd.DataFrame:
    units_per_model: dict[str, int] = {}
    for u in src.units:
        units_per_model[u.model] = units_per_model.get(u.model, 0) + 1
    return pd.DataFrame([{
        "key": key, "maker": ms.maker, "name": ms.name, "kind": ms.kind,
        "ratings": _ratings(ms),
        "highest_rated_voltage_V": max((r.voltage for r in ms.ratings), default=None),
        "impulse_withstand_V": withstand_of(ms), "max_altitude_m": ms.max_altitude,
        "pollution_degree": ms.pollution_degree,
        "connectors": ", ".join(ms.connectors), "connector": ms.connector,
        "integrated_leads": ms.integrated_leads, "current_rating_A": ms.current_rating,
        "tip_exposure_m": ms.tip_exposure, "attenuation": ms.attenuation,
        "resistance_ohm": ms.resistance, "energy_J": ms.energy, "power_W": ms.power,
        "max_voltage_V": ms.max_voltage, "modes": len(ms.modes),
        "front_end": ", ".join(f"{e.id} {e.type}" for e in ms.front_end),
        "units": units_per_model.get(key, 0),
        "missing_data": "; ".join(missing_data(ms))} for key, ms in src.models.items()],
        columns=_MODEL_COLUMNS)


def modes_sheet(src: Sources) -> pd.DataFrame:
    rows = []
    for key, ms in src.models.items():
        for x in ms.modes:
            f = x.fuse
            rows.append({
                "model": key, "mode": x.key, "label": x.label, "measures": x.measures,
                "waveform": x.waveform, "terminals": ", ".join(x.terminals),
                "input_resistance_ohm": x.input_resistance,
                "input_capacitance_F": x.input_capacitance, "max_input_V": x.max_input,
                "max_current_A": x.max_current, "max_duration_s": x.max_duration,
                "discharge_energy_J": x.discharge_energy, "clamp": x.clamp,
                "fuse_current_A": f.current if f else None,
                "fuse_voltage_V": f.voltage if f else None,
                "fuse_voltage_dc_V": f.voltage_dc if f else None,
                "fuse_breaking_capacity_A": f.breaking_capacity if f else None,
                "closes": ", ".join(x.closes)})
    return pd.DataFrame(rows, columns=_MODE_COLUMNS)


def events_sheet(src: Sources) -> pd.DataFrame:
    return pd.DataFrame([{
        "id": e.id, "occurred_at": _as_date(e.occurred_at), "logged_at": _as_date(e.logged_at),
        "logged_by": e.logged_by.username if e.logged_by else None, "unit": e.unit.tag,
        "model": e.unit.model.key, "mode": e.mode_key, "kind": e.kind, "voltage_V": e.voltage,
        "energy_J": e.energy, "duration_s": e.duration, "waveform": e.waveform,
        "symptoms": ", ".join(e.symptoms or []),
        "within_rating": {True: "yes", False: "no", None: "unknown"}[e.within_rating],
        "clamp_conducted": bool(e.clamp_conducted), "hold": src.hold_of_event.get(e.id),
        "notes": e.notes, "hash": e.hash, "prev_hash": e.prev_hash} for e in src.events],
        columns=_EVENT_COLUMNS)


def holds_sheet(src: Sources) -> pd.DataFrame:
    return pd.DataFrame([{
        "id": h.id, "unit": h.unit.tag, "event": h.event_id, "opened_at": _as_date(h.opened_at),
        "reason": h.reason, "released_at": _as_date(h.released_at),
        "released_by": h.released_by.username if h.released_by else None,
        "result": h.result, "notes": h.notes,
        # in days, to one decimal: a hold open 36 hours is 1.5 days
        "days_open": round(((h.released_at or src.made_at) - h.opened_at).total_seconds()
                           / 86400.0, 1)}
        for h in src.holds], columns=_HOLD_COLUMNS)


def changes_sheet(session: Session, src: Sources) -> pd.DataFrame:
    """The recorded changes of the period (of one site's units, their models and the site)."""
    tags, used = (src.unit_tags, src.used_models) if src.site is not None else (set(), set())
    q = select(m.Change).order_by(m.Change.id)
    if src.start is not None:
        q = q.where(m.Change.at >= src.start)
    rows = [{"id": c.id, "at": _as_date(c.at), "actor": c.actor, "entity": c.entity,
             "key": c.entity_key, "field": c.field, "old": c.old, "new": c.new}
            for c in session.scalars(q)
            if src.site is None or (c.entity == "unit" and c.entity_key in tags)
            or (c.entity == "model" and c.entity_key in used)
            or (c.entity == "site" and c.entity_key == src.site)]
    return pd.DataFrame(rows, columns=_CHANGE_COLUMNS)


def _made_with() -> str:
    try:
        from importlib.metadata import version
        return f"withstand {version('withstand')}"
    except Exception:  # not installed as a distribution (a bare checkout)
        return "withstand"


def _chain_items(chains) -> list[tuple]:
    """The chains' states; `audit verify --against` reads the counts and heads back
    (chain.SUMMARY_ITEMS)."""
    chain = chains["event"]
    items = [("chain", "state", "intact" if chain.ok else "BROKEN"),
             ("chain", "events in the chain", chain.count),
             ("chain", "first broken event", chain.broken_at if not chain.ok else None),
             ("chain", "problem", chain.problem or None),
             ("chain", "head hash", chain.head if chain.ok else None)]
    for name in ("hold", "change"):
        st = chains[name]
        items += [(f"{name} chain", "state", "intact" if st.ok else "BROKEN"),
                  (f"{name} chain", "entries in the chain", st.count),
                  (f"{name} chain", f"first broken {name}", st.broken_at if not st.ok else None),
                  (f"{name} chain", "problem", st.problem or None),
                  (f"{name} chain", "head hash", st.head if st.ok else None)]
    if "seal" in chains:
        items += [("seal", "problem", chains["seal"].problem)]
    return items


def summary_sheet(session: Session, src: Sources, *, source: str, overdue: set[str],
                  held: set[str], findings: list[dict]) -> pd.DataFrame:
    units, events = src.units, src.events
    items = [("made", "made at (UTC)", _as_date(src.made_at)), ("made", "made from", source),
             ("made", "made with", _made_with()),
             ("made", "events since", _as_date(src.since) if src.since else "all"),
             ("made", "site", src.site or "all sites"),
             ("made", "overdue counted on", _as_date(src.on)),
             ("units", "total", len(units))]
    items += [("status", s, sum(1 for u in units if u.status == s)) for s in spec.UNIT_STATUSES]
    items += [("units", "overdue", len(overdue)),
              ("units", f"due within {SOON_DAYS} days",
               sum(1 for f in findings if f["finding"] == "due soon")),
              ("units", "on hold (status or open hold)", len(held)),
              ("events", "in the period", len(events)),
              ("events", "not within rating", sum(1 for e in events if e.within_rating is False)),
              ("events", "not shown within rating",
               sum(1 for e in events if e.within_rating is None)),
              ("holds", "open", sum(1 for h in src.holds if h.released_at is None)),
              ("holds", f"open more than {LONG_HOLD_DAYS} days",
               sum(1 for f in findings if f["finding"] == "long hold"))]
    items += _chain_items(verify_all(session))
    items += [("findings", "total", len(findings))]
    return pd.DataFrame(items, columns=["section", "item", "value"])


def build_audit(session: Session, *, since: date | None = None, site: str | None = None,
                on: date | None = None, source: str = "", made_at: datetime | None = None
                ) -> Audit:
    """Collect every table of the workbook from the database as it is now: one builder per
    sheet over the same :class:`Sources`."""
    src = gather(session, since=since, site=site, on=on or date.today(),
                 made_at=made_at or utcnow())
    units, overdue, held, findings = units_sheet(src)
    findings += fleet_findings(src)
    sheets = {"Units": units, "Models": models_sheet(src), "Modes": modes_sheet(src),
              "Events": events_sheet(src), "Holds": holds_sheet(src),
              "Changes": changes_sheet(session, src),
              "Findings": pd.DataFrame(findings, columns=_FINDING_COLUMNS)}
    summary = summary_sheet(session, src, source=source, overdue=overdue, held=held,
                            findings=findings)
    return Audit(summary, coverage_table(session), sheets, overdue, held,
                 {h.id for h in src.holds if h.released_at is None})


_UNIT_COLUMNS = ["tag", "model", "maker", "model_name", "kind", "ratings", "site", "custodian",
                 "serial", "status", "verified_on", "verification_due", "days_overdue",
                 "open_hold", "hold_opened_at", "hold_reason", "events_in_period", "notes"]
_MODEL_COLUMNS = ["key", "maker", "name", "kind", "ratings", "highest_rated_voltage_V",
                  "impulse_withstand_V", "max_altitude_m", "pollution_degree", "connectors",
                  "connector", "integrated_leads", "current_rating_A", "tip_exposure_m",
                  "attenuation", "resistance_ohm", "energy_J", "power_W", "max_voltage_V",
                  "modes", "front_end", "units", "missing_data"]
_MODE_COLUMNS = ["model", "mode", "label", "measures", "waveform", "terminals",
                 "input_resistance_ohm", "input_capacitance_F", "max_input_V", "max_current_A",
                 "max_duration_s", "discharge_energy_J", "clamp", "fuse_current_A",
                 "fuse_voltage_V", "fuse_voltage_dc_V", "fuse_breaking_capacity_A", "closes"]
_EVENT_COLUMNS = ["id", "occurred_at", "logged_at", "logged_by", "unit", "model", "mode",
                  "kind", "voltage_V", "energy_J", "duration_s", "waveform", "symptoms",
                  "within_rating",
                  "clamp_conducted", "hold", "notes", "hash", "prev_hash"]
_HOLD_COLUMNS = ["id", "unit", "event", "opened_at", "reason", "released_at", "released_by",
                 "result", "notes", "days_open"]
_CHANGE_COLUMNS = ["id", "at", "actor", "entity", "key", "field", "old", "new"]
_FINDING_COLUMNS = ["finding", "subject", "detail", "date", "days"]
_DATE_ONLY = {"verified_on", "verification_due", "date", "overdue counted on", "events since"}
# Integer columns that may be empty: pandas would make them floats ("3.0") otherwise.
_INT_COLUMNS = {"days_overdue", "events_in_period", "id", "event", "hold", "days", "units",
                "modes", "pollution_degree"}


def _typed(df: pd.DataFrame) -> pd.DataFrame:
    df = df.copy()
    for col in df.columns:
        if col in _INT_COLUMNS:
            df[col] = df[col].astype("Int64")
    return df


# -- writing ------------------------------------------------------------------------------

def write_csvs(audit: Audit, folder: Path) -> list[Path]:
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    frames = {"Summary": audit.summary, "Coverage": audit.coverage, **audit.sheets}
    for name, df in frames.items():
        path = folder / f"{name.lower()}.csv"
        df = _typed(df) if name in audit.sheets else df.copy()
        for col in df.columns:
            if col in _DATE_ONLY:
                df[col] = df[col].map(lambda v: v.date().isoformat()
                                      if isinstance(v, pd.Timestamp) else v)
        if name == "Summary":
            df["value"] = df.apply(lambda r: r["value"].date().isoformat()
                                   if isinstance(r["value"], pd.Timestamp)
                                   and r["item"] in _DATE_ONLY else r["value"], axis=1)
        # formula-like text gets an apostrophe (OWASP CSV injection guidance, see cells.py)
        write_csv(df, path, index=False, date_format="%Y-%m-%dT%H:%M:%S")
        out.append(path)
    return out


# The workbook is streamed with openpyxl's write-only mode: each row is written once, with
# its types, formats and fills, instead of being written by pandas and then walked again for
# the widths, the fills and the sheet-safety pass (which cost more than the writing).

DATE_FORMAT = "yyyy-mm-dd"
DATETIME_FORMAT = "yyyy-mm-dd hh:mm:ss"


def _width(values, date_only: bool | None) -> int:
    """A column's width: its longest text plus two, from 8 to 60 characters; 11 for a date
    column, 20 for one with times."""
    width = 8
    for v in values:
        if isinstance(v, datetime):
            width = max(width, 11 if date_only else 20)
        elif v is not None:
            width = max(width, min(len(str(v)) + 2, 60))
    return width


def _plain(df: pd.DataFrame) -> list[list]:
    """The table's rows as Python values: NaN, NaT and NA as None, timestamps as datetimes,
    numpy numbers as int, float and bool."""
    columns = []
    for col in df.columns:
        s = df[col]
        if pd.api.types.is_datetime64_any_dtype(s):
            values = [None if pd.isna(v) else v.to_pydatetime() for v in s]
        else:
            values = [None if v is None or v is pd.NA or (isinstance(v, float) and v != v)
                      else (v.to_pydatetime() if isinstance(v, pd.Timestamp) else v)
                      for v in s.astype(object).tolist()]
        columns.append(values)
    return [list(r) for r in zip(*columns, strict=True)] if columns else []


class _SheetWriter:
    """One write-only worksheet: every text cell typed as text (:func:`.cells.safe_cell`),
    datetimes with their number format, a fill per row where asked."""

    def __init__(self, book, name: str):
        from openpyxl.styles import Font
        self.ws = book.create_sheet(name)
        self.bold = Font(bold=True)

    def cell(self, value, *, fmt: str | None = None, fill=None, font=None):
        from openpyxl.cell import WriteOnlyCell
        if value is None and fill is None:
            return None
        if isinstance(value, str) or fmt or fill or font or isinstance(value, datetime):
            c = WriteOnlyCell(self.ws)
            safe_cell(value, cell=c)  # text stays text, never a formula or an error code
            if fmt:
                c.number_format = fmt
            if fill is not None:
                c.fill = fill
            if font is not None:
                c.font = font
            return c
        return value

    def header(self, names) -> None:
        self.ws.append([self.cell(str(n), font=self.bold) for n in names])

    def row(self, values, formats, fill=None) -> None:
        self.ws.append([self.cell(v, fmt=f if v is not None else None, fill=fill)
                        for v, f in zip(values, formats, strict=True)])

    def frame(self, names, rows, *, header_row: int = 1, last_row: int | None = None,
              widths=None) -> None:
        from openpyxl.utils import get_column_letter
        ws = self.ws
        ws.freeze_panes = f"A{header_row + 1}"
        if names:
            ws.auto_filter.ref = (f"A{header_row}:{get_column_letter(len(widths or names))}"
                                  f"{max(last_row or header_row + len(rows), header_row)}")
        for i, w in enumerate(widths or (), 1):
            ws.column_dimensions[get_column_letter(i)].width = w


def _write_table(book, name: str, df: pd.DataFrame, *, fill_of=None, number_formats=None):
    names = list(df.columns)
    rows = _plain(df)
    cols = list(zip(*rows, strict=True)) if rows else [() for _ in names]
    widths = [_width([n, *col], n in _DATE_ONLY) for n, col in zip(names, cols, strict=True)]
    formats = [(number_formats or {}).get(n) or (
        (DATE_FORMAT if n in _DATE_ONLY else DATETIME_FORMAT)
        if any(isinstance(v, datetime) for v in col) else None)
        for n, col in zip(names, cols, strict=True)]
    w = _SheetWriter(book, name)
    w.frame(names, rows, widths=widths)
    w.header(names)
    for r in rows:
        w.row(r, formats, fill_of(r) if fill_of else None)


def _write_summary(book, audit: Audit) -> None:
    """The Summary sheet: the items, two empty rows, the coverage title and table."""
    summary, cov = _plain(audit.summary), _plain(audit.coverage)
    cov_names = list(audit.coverage.columns)
    ncols = max(3, len(cov_names))
    all_rows = [["section", "item", "value"], *summary, *([cov_names] if cov_names else []),
                *cov]
    widths = []
    for i in range(ncols):
        col = [r[i] if i < len(r) else None for r in all_rows]
        widths.append(_width(col, None if i != 2 else False))
    # a date item's value is a date, any other time a date and time
    for r, item in zip(summary, audit.summary["item"], strict=True):
        if isinstance(r[2], datetime) and item in _DATE_ONLY:
            widths[2] = max(widths[2], 11)
    w = _SheetWriter(book, "Summary")
    w.frame(["section", "item", "value"], summary, last_row=len(summary) + 1, widths=widths)
    w.header(["section", "item", "value"])
    for r, item in zip(summary, audit.summary["item"], strict=True):
        w.row(r, [None, None, None if not isinstance(r[2], datetime) else
                  DATE_FORMAT if item in _DATE_ONLY else DATETIME_FORMAT])
    w.ws.append([])
    w.ws.append([w.cell("Coverage: in-service units that can take each measurement category "
                        "at each voltage (one rating at least that category and voltage)")])
    if cov_names:
        w.header(cov_names)
        for r in cov:
            w.row(r, [None] * len(r))


def write_workbook(audit: Audit, path: Path) -> Path:
    from openpyxl import Workbook
    from openpyxl.styles import PatternFill
    path.parent.mkdir(parents=True, exist_ok=True)
    red = PatternFill("solid", start_color=OVERDUE_FILL, end_color=OVERDUE_FILL)
    amber = PatternFill("solid", start_color=HELD_FILL, end_color=HELD_FILL)
    book = Workbook(write_only=True)
    _write_summary(book, audit)
    fills = {
        # an overdue unit is the more urgent fact: red over amber
        "Units": lambda r: red if r[0] in audit.overdue_tags else (
            amber if r[0] in audit.held_tags else None),
        "Holds": lambda r: amber if r[0] in audit.open_hold_ids else None,
        "Findings": lambda r: red if r[0] in ("overdue", "long hold") else None,
    }
    for name, df in audit.sheets.items():
        _write_table(book, name, _typed(df), fill_of=fills.get(name),
                     number_formats={"days_open": "0.0"} if name == "Holds" else None)
    book.save(path)
    return path


def export_audit(db: Database, out: str | Path, *, since: date | None = None,
                 site: str | None = None, on: date | None = None, source: str = "") -> str:
    """Write the audit to ``out``: a workbook for ``*.xlsx``, one CSV per sheet for a folder
    (a path ending in '/' or an existing directory). Returns what was written."""
    text = str(out)
    path = Path(out)
    as_folder = text.endswith(("/", "\\")) or path.is_dir()
    if not as_folder and path.suffix.lower() != ".xlsx":
        raise InvalidInput("must end in .xlsx (a workbook) or '/' (a folder of CSV files)",
                           "--out")
    with db.transaction() as session:
        audit = build_audit(session, since=since, site=site, on=on, source=source)
    if as_folder:
        files = write_csvs(audit, path)
        return f"{len(files)} CSV files in {path}"
    write_workbook(audit, path)
    return f"the workbook {path} ({len(SHEETS)} sheets)"
