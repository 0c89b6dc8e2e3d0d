"""Audit: the workbook for a period and a site, and the state of the event chain."""

from __future__ import annotations

from flask import Blueprint, render_template, request

from ..errors import InvalidInput
from ..extensions import db
from ..store import queries
from ..store.chain import verify_all
from .access import role_required
from .downloads import workbook_response
from .forms import FieldErrors
from .params import audit_args

bp = Blueprint("audit", __name__, url_prefix="/audit")

def _chains() -> dict:
    """The event chain as ``chain``, the hold and change chains (and a failing seal) as
    ``others``."""
    states = verify_all(db.session)
    return {"chain": states.pop("event"), "others": states}


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
