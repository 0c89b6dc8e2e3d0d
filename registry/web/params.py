"""What the pages and the API read from a request in the same way: the fleet list's filters,
the audit's period and site, a unit named in the URL. Not a blueprint, so the fleet and audit
pages and the API share it without importing each other."""

from __future__ import annotations

from datetime import date
from urllib.parse import urlencode

from flask import abort, url_for
from sqlalchemy import select

from ..engine import spec
from ..engine.quantity import VOLTAGE
from ..errors import InvalidInput
from ..extensions import db
from ..formats.common import parse_date
from ..store import models as m
from ..store import queries
from .forms import FieldErrors, quantity_or_none
from .limits import check_texts, control_problem, int_arg


def _found_or_404(tag: str, find):
    """``find(tag)``, or a 404 when it finds nothing or the tag could be none's."""
    if control_problem(tag, multiline=False):
        abort(404)  # no tag holds a control character (and PostgreSQL refuses a NUL)
    row = find(tag)
    if row is None:
        abort(404)
    return row


def unit_or_404(tag: str) -> m.Unit:
    """The unit with ``tag`` as an ORM row, or a 404."""
    return _found_or_404(tag, lambda t: db.session.scalar(select(m.Unit).where(m.Unit.tag == t)))


def unit_line_or_404(tag: str):
    """The unit with ``tag`` as a plain row with its site's name (``queries.unit_line``), or
    a 404."""
    return _found_or_404(tag, lambda t: queries.unit_line(db.session, t))


def fleet_query(args, errors: FieldErrors) -> tuple[queries.FleetQuery, dict]:
    """The filters from a query string; ``typed`` keeps the text as typed for the form."""
    typed = {k: args.get(k, "").strip() for k in
             ("q", "kind", "site", "status", "category", "voltage", "due", "sort", "dir")}
    bad = check_texts({k: args.get(k, "") for k in typed})
    errors.extend(bad, {k: k for k in typed})
    for p in bad:  # refused text never reaches the query
        typed[p.path] = ""
    if "voltage" not in errors:
        voltage = quantity_or_none(typed["voltage"], VOLTAGE, "voltage", errors,
                                   default_unit="V")
    else:
        voltage = None
    try:
        page = int_arg(args, "page", 1)
    except InvalidInput as exc:
        errors.extend(exc.problems, {"page": "page"})
        page = 1
    if typed["category"] and typed["category"] not in spec.MAINS_CATEGORIES:
        errors.add("category", f"'{typed['category']}' is not one of "
                               f"{', '.join(spec.MAINS_CATEGORIES)}")
    filters = queries.FleetQuery(
        q=typed["q"], kind=typed["kind"], site=typed["site"], status=typed["status"],
        category=typed["category"], voltage=voltage, due=typed["due"],
        sort=typed["sort"] if typed["sort"] in queries.SORTS else "tag",
        desc=typed["dir"] == "desc", page=max(page, 1))
    return filters, typed


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


# what werkzeug's url_for leaves unquoted in a query string (werkzeug.urls._urlencode)
_QUERY_SAFE = "!$'()*,/:;?@"


def list_links(endpoint: str, typed: dict):
    """``link(**changes)``: ``url_for(endpoint, ...)`` of the list's arguments as typed with
    ``changes`` over them (a value of ``""`` or ``None`` left out), for the many sort and page
    links of a list: the route's address built once, the query encoded as url_for encodes it
    (a test holds the two to the same address for awkward text)."""
    base = url_for(endpoint)
    kept = {k: v for k, v in typed.items() if v}

    def link(**changes) -> str:
        args = {**kept, **changes}
        items = [(k, v) for k, v in args.items() if v not in ("", None)]
        return base + "?" + urlencode(items, safe=_QUERY_SAFE) if items else base
    return link
