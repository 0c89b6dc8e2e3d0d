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
from .cells import safe_sheet, write_csv
from .db import Database
from .chain import verify_all
from .fleet import utcnow
from .queries import coverage
from .specs import all_models, all_units, model_spec

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


def build_audit(session: Session, *, since: date | None = None, site: str | None = None,
                on: date | None = None, source: str = "", made_at: datetime | None = None
                ) -> Audit:
    """Collect every table of the workbook from the database as it is now."""
    on = on or date.today()
    made_at = made_at or utcnow()
    if site is not None and session.scalar(select(m.Site.id).where(m.Site.name == site)) is None:
        known = ", ".join(session.scalars(select(m.Site.name).order_by(m.Site.name)))
        raise InvalidInput(f"'{site}' is not a site (sites: {known or 'none'})", "--site")
    start = datetime.combine(since, datetime.min.time()) if since else None
    model_rows = all_models(session)
    models = {x.key: model_spec(x) for x in model_rows}
    units = [u for u in all_units(session) if site is None or (u.site and u.site.name == site)]
    unit_ids = {u.id for u in units}
    used_models = {u.model.key for u in units}
    if site is not None:
        models = {k: v for k, v in models.items() if k in used_models}
    units_per_model: dict[str, int] = {}
    for u in units:
        units_per_model[u.model.key] = units_per_model.get(u.model.key, 0) + 1

    events = [e for e in session.scalars(select(m.Event).order_by(m.Event.id).options(
        selectinload(m.Event.unit), selectinload(m.Event.logged_by)))
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
    hold_of_event = {h.event_id: h.id for h in all_holds if h.event_id is not None}
    events_per_unit: dict[int, int] = {}
    for e in events:
        events_per_unit[e.unit_id] = events_per_unit.get(e.unit_id, 0) + 1

    # -- units ------------------------------------------------------------------------------
    unit_rows, overdue, held, findings = [], set(), set(), []
    for u in units:
        ms = models[u.model.key]
        due = u.verification_due
        late = (on - due).days if rules.verification_overdue(due, on) else None
        hold = open_by_unit.get(u.id)
        in_use = u.status in rules.VERIFIED_STATUSES
        if rules.unit_overdue(u.status, due, on):
            overdue.add(u.tag)
            findings.append({"finding": "overdue", "subject": u.tag,
                             "detail": f"verification was due {due.isoformat()}, {late} days "
                                       f"before {on.isoformat()} ({u.status})",
                             "date": _as_date(due), "days": late})
        elif rules.unit_due_within(u.status, due, on, SOON_DAYS) and u.status != "away":
            findings.append({"finding": "due soon", "subject": u.tag,
                             "detail": f"verification due {due.isoformat()}, in "
                                       f"{(due - on).days} days",
                             "date": _as_date(due), "days": (due - on).days})
        elif due is None and in_use:
            findings.append({"finding": "no verification date", "subject": u.tag,
                             "detail": "no verification due date on record", "date": None,
                             "days": None})
        if hold is not None or u.status == "on-hold":
            held.add(u.tag)
        unit_rows.append({
            "tag": u.tag, "model": u.model.key, "maker": ms.maker, "model_name": ms.name,
            "kind": ms.kind, "ratings": _ratings(ms),
            "site": u.site.name if u.site else None, "custodian": u.custodian,
            "serial": u.serial, "status": u.status, "verified_on": _as_date(u.verified_on),
            "verification_due": _as_date(due), "days_overdue": late,
            "open_hold": hold is not None,
            "hold_opened_at": _as_date(hold.opened_at) if hold else None,
            "hold_reason": hold.reason if hold else None,
            "events_in_period": events_per_unit.get(u.id, 0), "notes": u.notes})

    for h in holds:
        if h.released_at is None:
            days = (made_at - h.opened_at).days
            if days > LONG_HOLD_DAYS:
                findings.append({"finding": "long hold", "subject": h.unit.tag,
                                 "detail": f"hold {h.id} open since "
                                           f"{h.opened_at.date().isoformat()}: {h.reason}",
                                 "date": _as_date(h.opened_at), "days": days})
    for key, ms in models.items():
        for text in missing_data(ms):
            findings.append({"finding": "missing data", "subject": key, "detail": text,
                             "date": None, "days": None})
    for acc, inst, short in accessories_below(models):
        findings.append({"finding": "accessory below instrument", "subject": acc,
                         "detail": f"{acc} ({_ratings(models[acc])}) serves {inst} but does "
                                   f"not cover its {short}; the setup takes the lower rating",
                         "date": None, "days": None})

    # -- models and modes -------------------------------------------------------------------
    model_table, mode_table = [], []
    for key, ms in models.items():
        model_table.append({
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
            "missing_data": "; ".join(missing_data(ms))})
        for x in ms.modes:
            f = x.fuse
            mode_table.append({
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

    # -- events, holds, changes -------------------------------------------------------------
    event_table = [{
        "id": e.id, "occurred_at": _as_date(e.occurred_at), "logged_at": _as_date(e.logged_at),
        "logged_by": e.logged_by.username if e.logged_by else None, "unit": e.unit.tag,
        "model": e.unit.model.key, "mode": e.mode_key, "kind": e.kind, "voltage_V": e.voltage,
        "energy_J": e.energy, "duration_s": e.duration, "waveform": e.waveform,
        "symptoms": ", ".join(e.symptoms or []),
        "within_rating": {True: "yes", False: "no", None: "unknown"}[e.within_rating],
        "clamp_conducted": bool(e.clamp_conducted), "hold": hold_of_event.get(e.id),
        "notes": e.notes, "hash": e.hash, "prev_hash": e.prev_hash} for e in events]
    hold_table = [{
        "id": h.id, "unit": h.unit.tag, "event": h.event_id, "opened_at": _as_date(h.opened_at),
        "reason": h.reason, "released_at": _as_date(h.released_at),
        "released_by": h.released_by.username if h.released_by else None,
        "result": h.result, "notes": h.notes,
        # in days, to one decimal: a hold open 36 hours is 1.5 days
        "days_open": round(((h.released_at or made_at) - h.opened_at).total_seconds() / 86400.0,
                           1)}
        for h in holds]
    unit_tags = {u.tag for u in units}
    changes = [c for c in session.scalars(select(m.Change).order_by(m.Change.id))
               if (start is None or c.at >= start) and (
                   site is None or (c.entity == "unit" and c.entity_key in unit_tags)
                   or (c.entity == "model" and c.entity_key in used_models)
                   or (c.entity == "site" and c.entity_key == site))]
    change_table = [{"id": c.id, "at": _as_date(c.at), "actor": c.actor, "entity": c.entity,
                     "key": c.entity_key, "field": c.field, "old": c.old, "new": c.new}
                    for c in changes]

    # -- summary ----------------------------------------------------------------------------
    chains = verify_all(session)
    chain = chains["event"]
    try:
        from importlib.metadata import version
        made_with = f"withstand {version('withstand')}"
    except Exception:  # not installed as a distribution (a bare checkout)
        made_with = "withstand"
    items = [("made", "made at (UTC)", _as_date(made_at)), ("made", "made from", source),
             ("made", "made with", made_with),
             ("made", "events since", _as_date(since) if since else "all"),
             ("made", "site", site or "all sites"), ("made", "overdue counted on", _as_date(on)),
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
              ("holds", "open", sum(1 for h in holds if h.released_at is None)),
              ("holds", f"open more than {LONG_HOLD_DAYS} days",
               sum(1 for f in findings if f["finding"] == "long hold")),
              ("chain", "state", "intact" if chain.ok else "BROKEN"),
              ("chain", "events in the chain", chain.count),
              ("chain", "first broken event", chain.broken_at if not chain.ok else None),
              ("chain", "problem", chain.problem or None),
              ("chain", "head hash", chain.head if chain.ok else None)]
    # the hold and change chains, and the seal of older entries when it fails; `audit verify
    # --against` reads the counts and heads back (chain.SUMMARY_ITEMS)
    for name in ("hold", "change"):
        st = chains[name]
        items += [(f"{name} chain", "state", "intact" if st.ok else "BROKEN"),
                  (f"{name} chain", "entries in the chain", st.count),
                  (f"{name} chain", f"first broken {name}", st.broken_at if not st.ok else None),
                  (f"{name} chain", "problem", st.problem or None),
                  (f"{name} chain", "head hash", st.head if st.ok else None)]
    if "seal" in chains:
        items += [("seal", "problem", chains["seal"].problem)]
    items += [
              ("findings", "total", len(findings))]
    summary = pd.DataFrame(items, columns=["section", "item", "value"])
    sheets = {
        "Units": pd.DataFrame(unit_rows, columns=_UNIT_COLUMNS),
        "Models": pd.DataFrame(model_table, columns=_MODEL_COLUMNS),
        "Modes": pd.DataFrame(mode_table, columns=_MODE_COLUMNS),
        "Events": pd.DataFrame(event_table, columns=_EVENT_COLUMNS),
        "Holds": pd.DataFrame(hold_table, columns=_HOLD_COLUMNS),
        "Changes": pd.DataFrame(change_table, columns=_CHANGE_COLUMNS),
        "Findings": pd.DataFrame(findings, columns=["finding", "subject", "detail", "date",
                                                    "days"]),
    }
    return Audit(summary, coverage_table(session), sheets, overdue, held,
                 {h.id for h in holds if h.released_at is None})


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


def _format_sheet(ws, *, header_row: int = 1, last_row: int | None = None) -> None:
    from openpyxl.utils import get_column_letter
    ws.freeze_panes = ws.cell(row=header_row + 1, column=1)
    last_row = last_row or ws.max_row
    if ws.max_column:
        ws.auto_filter.ref = (f"A{header_row}:{get_column_letter(ws.max_column)}"
                              f"{max(last_row, header_row)}")
    headers = {c.column: c.value for c in ws[header_row]}
    for col_cells in ws.iter_cols(min_row=1, max_row=ws.max_row):
        col = col_cells[0].column
        width = 8
        name = headers.get(col)
        for cell in col_cells:
            v = cell.value
            if isinstance(v, datetime):
                date_only = name in _DATE_ONLY or (
                    ws.title == "Summary" and ws.cell(row=cell.row, column=2).value in _DATE_ONLY)
                cell.number_format = "yyyy-mm-dd" if date_only else "yyyy-mm-dd hh:mm:ss"
                width = max(width, 11 if date_only else 20)
            elif v is not None:
                width = max(width, min(len(str(v)) + 2, 60))
        ws.column_dimensions[get_column_letter(col)].width = width
    from openpyxl.styles import Font
    for cell in ws[header_row]:
        cell.font = Font(bold=True)


def _fill_rows(ws, key_col: str, keys: set, colour: str) -> None:
    from openpyxl.styles import PatternFill
    fill = PatternFill("solid", start_color=colour, end_color=colour)
    headers = [c.value for c in ws[1]]
    if key_col not in headers:
        return
    idx = headers.index(key_col) + 1
    for row in ws.iter_rows(min_row=2):
        if row[idx - 1].value in keys:
            for cell in row:
                cell.fill = fill


def _number_format(ws, column: str, fmt: str) -> None:
    headers = [c.value for c in ws[1]]
    if column in headers:
        for (cell,) in ws.iter_rows(min_row=2, min_col=headers.index(column) + 1,
                                    max_col=headers.index(column) + 1):
            cell.number_format = fmt


def write_workbook(audit: Audit, path: Path) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    with pd.ExcelWriter(path, engine="openpyxl", date_format="YYYY-MM-DD",
                        datetime_format="YYYY-MM-DD HH:MM:SS") as writer:
        audit.summary.to_excel(writer, sheet_name="Summary", index=False)
        gap = len(audit.summary) + 3
        title_row = gap  # 1-based row of the coverage title (0-based startrow gap is +1)
        audit.coverage.to_excel(writer, sheet_name="Summary", index=False, startrow=gap)
        for name, df in audit.sheets.items():
            _typed(df).to_excel(writer, sheet_name=name, index=False)
        book = writer.book
        ws = book["Summary"]
        _format_sheet(ws, last_row=len(audit.summary) + 1)
        # the title after the widths: a long line of text should not widen column A
        ws.cell(row=title_row, column=1,
                value="Coverage: in-service units that can take each measurement category "
                      "at each voltage (one rating at least that category and voltage)")
        for cell in ws[gap + 1]:
            from openpyxl.styles import Font
            cell.font = Font(bold=True)
        for name in audit.sheets:
            _format_sheet(book[name])
        # Held first, then overdue over it: an overdue unit is the more urgent fact.
        _fill_rows(book["Units"], "tag", audit.held_tags, HELD_FILL)
        _fill_rows(book["Units"], "tag", audit.overdue_tags, OVERDUE_FILL)
        _fill_rows(book["Holds"], "id", audit.open_hold_ids, HELD_FILL)
        _number_format(book["Holds"], "days_open", "0.0")
        overdue_findings = book["Findings"]
        from openpyxl.styles import PatternFill
        red = PatternFill("solid", start_color=OVERDUE_FILL, end_color=OVERDUE_FILL)
        for row in overdue_findings.iter_rows(min_row=2):
            if row[0].value in ("overdue", "long hold"):
                for cell in row:
                    cell.fill = red
        # Last, over everything written above: every text cell is stored as text, never as a
        # formula (spreadsheet safety, cells.py).
        for ws in book.worksheets:
            safe_sheet(ws)
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
