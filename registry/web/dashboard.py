"""The dashboard: counts by status, verification due, open holds, recent events, coverage."""

from __future__ import annotations

from datetime import date

from flask import Blueprint

from ..engine import rules, spec
from ..extensions import db
from ..store import queries
from .access import role_required
from .page_cache import page
from .plots import KIND_MARKS, month_chart_svg

bp = Blueprint("dashboard", __name__)

DUE_DAYS = 30
DUE_SHOWN = 50  # the soonest units listed; the fleet list's due filter has the rest


@bp.route("/dashboard")
@role_required("viewer")
def index():
    return page("dashboard/index.html", _context)


def _context() -> dict:
    session = db.session
    today = date.today()
    groups = queries.status_due_groups(session)  # one scan for the counts, due and overdue
    overdue_now, due = queries.due_by_month(session, today, groups=groups)
    due_chart = month_chart_svg([mo for mo, _ in due], {"units due": [n for _, n in due]},
                                "Units whose verification falls due, by month")
    events = queries.events_by_month(session, today)
    events_chart = month_chart_svg(
        [mo for mo, _ in events],
        {kind: [counts[kind] for _, counts in events] for kind in spec.EVENT_KINDS},
        "Events logged per month, by kind", KIND_MARKS)
    return dict(counts=queries.status_counts(session, groups),
                due_chart=due_chart, events_chart=events_chart,
                overdue_now=overdue_now, due_months=due, event_months=events,
                due=queries.due_soon(session, DUE_DAYS, limit=DUE_SHOWN), days=DUE_DAYS,
                due_total=queries.due_soon_count(session, DUE_DAYS, groups=groups),
                holds=queries.open_holds(session),
                events=queries.recent_events(session),
                coverage=queries.coverage(session), today=today,
                overdue=rules.unit_overdue)
