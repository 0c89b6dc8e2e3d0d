"""The dashboard: counts by status, verification due, open holds, recent events, coverage."""

from __future__ import annotations

from datetime import date

from flask import Blueprint, render_template

from ..engine import rules
from ..extensions import db
from ..store import queries
from .auth import role_required

bp = Blueprint("dashboard", __name__)

DUE_DAYS = 30


@bp.route("/dashboard")
@role_required("viewer")
def index():
    session = db.session
    return render_template("dashboard/index.html", counts=queries.status_counts(session),
                           due=queries.due_soon(session, DUE_DAYS), days=DUE_DAYS,
                           holds=queries.open_holds(session),
                           events=queries.recent_events(session),
                           coverage=queries.coverage(session), today=date.today(),
                           overdue=rules.unit_overdue)
