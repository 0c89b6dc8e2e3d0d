"""Audit: the workbook for a period and a site, and the state of the event chain."""

from __future__ import annotations

import tempfile
from datetime import date
from pathlib import Path

from flask import Blueprint, Response, render_template, request

from ..errors import InvalidInput
from ..extensions import db
from ..formats.common import parse_date
from ..store import queries
from ..store.chain import verify_all
from .auth import role_required
from .forms import FieldErrors

bp = Blueprint("audit", __name__, url_prefix="/audit")

XLSX = "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet"


def _chains() -> dict:
    """The event chain as ``chain``, the hold and change chains (and a failing seal) as
    ``others``."""
    states = verify_all(db.session)
    return {"chain": states.pop("event"), "others": states}


def audit_args(args, errors: FieldErrors) -> tuple[date | None, str | None, dict]:
    typed = {"since": args.get("since", "").strip(), "site": args.get("site", "").strip()}
    since = None
    try:
        since = parse_date(typed["since"], "since")
    except InvalidInput as exc:
        errors.extend(exc.problems, {"since": "since"})
    sites = queries.site_names(db.session)
    if typed["site"] and typed["site"] not in sites:
        errors.add("site", f"'{typed['site']}' is not a site of the fleet")
    return since, typed["site"] or None, typed


def workbook_bytes(since: date | None, site: str | None) -> bytes:
    """The audit workbook, built by the store's exporter into a scratch file."""
    from ..store.audit import export_audit
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "audit.xlsx"
        export_audit(db.database, str(path), since=since, site=site, on=None,
                     source="web")
        return path.read_bytes()


def workbook_response(since: date | None, site: str | None) -> Response:
    name = "withstand-audit" + (f"-{site}" if site else "") + (f"-since-{since}" if since else "")
    name = "".join(ch if ch.isalnum() or ch in "-_." else "-" for ch in name)
    return Response(workbook_bytes(since, site), mimetype=XLSX,
                    headers={"Content-Disposition": f'attachment; filename="{name}.xlsx"'})


@bp.route("/")
@role_required("viewer")
def index():
    errors = FieldErrors()
    _since, _site, typed = audit_args(request.args, errors)
    return render_template("audit/index.html", typed=typed, errors=errors,
                           sites=queries.site_names(db.session),
                           **_chains()), (400 if errors else 200)


@bp.route("/workbook.xlsx")
@role_required("viewer")
def workbook():
    errors = FieldErrors()
    since, site, typed = audit_args(request.args, errors)
    if errors:
        return render_template("audit/index.html", typed=typed, errors=errors,
                               sites=queries.site_names(db.session),
                               **_chains()), 400
    try:
        return workbook_response(since, site)
    except InvalidInput as exc:
        errors.extend(exc.problems, {"since": "since", "site": "site"})
        return render_template("audit/index.html", typed=typed, errors=errors,
                               sites=queries.site_names(db.session),
                               **_chains()), 400
