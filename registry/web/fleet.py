"""The fleet list (search, filters, sorting, pages), the unit page and its QR label."""

from __future__ import annotations

import io
import re
from datetime import date, datetime
from urllib.parse import quote

import segno
from flask import (Blueprint, Response, flash, redirect, render_template, request,
                   url_for)
from flask_login import current_user
from markupsafe import Markup, escape

from ..engine import rules, spec
from ..engine.quantity import (CAPACITANCE, CURRENT, ENERGY, LENGTH, POWER, RESISTANCE, TIME,
                               VOLTAGE, format_quantity)
from ..errors import InvalidInput
from ..extensions import db
from ..formats.fleet import unit_to_document
from ..services.fleet import EDITABLE, edit_unit, status_choices
from ..store import queries
from ..store.specs import model_spec_by_id, unit_record
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts
from .page_cache import kept_data, page, shared_part
from .params import fleet_query, list_links, unit_line_or_404, unit_or_404

bp = Blueprint("fleet", __name__)

_DIMS = {"V": VOLTAGE, "A": CURRENT, "ohm": RESISTANCE, "F": CAPACITANCE, "s": TIME,
         "m": LENGTH, "J": ENERGY, "W": POWER}


@bp.app_template_filter("person")
def person_filter(user):
    """A person as every history names them (``queries.person``); "—" for nobody."""
    return queries.person(user) or "—"


@bp.app_template_filter("when")
def when_filter(value, fmt: str | None = None):
    """A date or a time as a ``<time>`` element (ISO date, or date and minute), which the style
    sheet keeps on one line so a date never breaks at its hyphens; "—" for none."""
    if value is None:
        return "—"
    if fmt is None:
        fmt = "%Y-%m-%d %H:%M" if isinstance(value, datetime) else "%Y-%m-%d"
    return Markup(f'<time datetime="{value.isoformat()}">{value.strftime(fmt)}</time>')


_KEPT_WHOLE = re.compile(r"\b(?:[A-Z][A-Z0-9]*-[A-Z0-9]+|\d{4}-\d{2}-\d{2})\b")


@bp.app_template_filter("ids_whole")
def ids_whole_filter(text):
    """Prose (a summary, a finding's message) escaped, with each tag (``SY-0006``) and date in
    it wrapped in a ``tag`` span, so the sentence wraps but never inside one of them."""
    if text is None:
        return ""
    escaped = str(escape(text))
    return Markup(_KEPT_WHOLE.sub(lambda m: f'<span class="tag">{m.group(0)}</span>', escaped))


@bp.app_template_filter("q")
def quantity_filter(value, dim: str):
    return "—" if value is None else format_quantity(value, _DIMS[dim])


@bp.app_template_filter("pct")
def percent_filter(value):
    if value is None:
        return "—"
    if value in (float("inf"), float("-inf")):
        return "no limit" if value > 0 else "none"
    return f"{value:+.0%}"


@bp.app_context_processor
def category_choices():
    """The measurement categories every form offers, from the engine's one list."""
    return {"category_choices": [(c, f"CAT {c}") for c in spec.MAINS_CATEGORIES]}


def ratings_text(model) -> str:
    """A model's ratings as the fleet list writes them ("CAT III 1 kV, 600 V (not mains)"),
    made once per model and fleet version rather than for every row."""
    parts = [f"{format_quantity(r.voltage, VOLTAGE)} (not mains)" if r.category == "none"
             else f"CAT {r.category} {format_quantity(r.voltage, VOLTAGE)}"
             for r in model.ratings]
    return ", ".join(parts) or "—"


# what werkzeug's default converter leaves unquoted in a path segment (BaseConverter.to_url)
_SEGMENT_SAFE = "!$&'()*+,/:;=@"


def unit_links():
    """``url_for("fleet.unit", tag=...)`` for the many tags of a list: the route's prefix
    built once, each tag quoted as the route's converter quotes it (a test holds the two to
    the same address for awkward tags)."""
    prefix = url_for("fleet.unit", tag="x")[:-1]
    return lambda tag: prefix + quote(str(tag), safe=_SEGMENT_SAFE)


def shown_pages(page: int, pages: int) -> list[int]:
    """The page numbers a list's pager links: the first, the last and those within 3 of
    ``page``, in order (made without walking every page of a long list)."""
    near = range(max(page - 3, 1), min(page + 3, pages) + 1)
    return sorted({1, pages, *near})


_OVERDUE_MARK = ' <span class="overdue"><span aria-hidden="true">⚠</span> overdue</span>'


def model_cells(model: queries.ModelLine) -> Markup:
    """A model's cells in a fleet list row (maker and name, kind, ratings), escaped; made
    once per model and fleet version rather than for every row."""
    return Markup(f"<td>{escape(model.maker)} {escape(model.name)}</td>"
                  f"<td>{escape(model.kind)}</td><td>{escape(ratings_text(model))}</td>")


def fleet_rows(units, cells: dict, unit_url, overdue) -> Markup:
    """The fleet list's rows (``fleet/index.html`` places them): per unit its tag as a link
    to its page, its model's ``cells`` (:func:`model_cells`, by model key), site, status and
    verification due with the overdue mark (``overdue``: the engine's rule on today's date).
    Written here rather than in the template, where each of the 50 rows cost a dozen filter
    and escape calls; every text is escaped as the template would (tests/web/test_security.py
    puts markup in every stored field)."""
    dues: dict = {}
    out = []
    for u in units:
        due = u.verification_due
        shown = dues.get(due)
        if shown is None:
            shown = dues[due] = when_filter(due)
        status = escape(u.status)
        out.append(f'<tr><td class="tag"><a href="{escape(unit_url(u.tag))}">{escape(u.tag)}'
                   f'</a></td>{cells[u.model.key]}<td>{escape(u.site_name or "—")}</td>'
                   f'<td><span class="status status-{status}">{status}</span></td>'
                   f'<td class="date">{shown}{_OVERDUE_MARK if overdue(u) else ""}</td></tr>\n')
    return Markup("".join(out))


def _overdue_today():
    """The engine's overdue rule for a unit row, on today's date."""
    today = date.today()
    return lambda u: rules.unit_overdue(u.status, u.verification_due, today)


@bp.route("/")
@role_required("viewer")
def index():
    from flask import current_app
    errors = FieldErrors()
    filters, typed = fleet_query(request.args, errors)
    filters.size = current_app.config.get("FLEET_PAGE_SIZE", 50)

    def context() -> dict:
        today = date.today()
        count_key = (tuple(sorted(vars(filters).items() - {("page", filters.page)})), today)
        total = kept_data("fleet count", count_key,
                          lambda: queries.fleet_count(db.session, filters, today))
        models = kept_data("model lines", None, lambda: queries.model_lines(db.session))
        cells = kept_data("model cells", None,
                          lambda: {ml.key: model_cells(ml) for ml in models.values()})
        result = queries.fleet_lines(db.session, filters, models, today, total)
        rows = fleet_rows(result.units, cells, unit_links(), _overdue_today())
        return dict(result=result, rows=rows, filters_form=filters_form(typed, errors),
                    link=list_links("fleet.index", typed), shown_pages=shown_pages,
                    sort=filters.sort,
                    desc=filters.desc)

    if errors:  # a 400 that names the field is rendered as it is, never kept
        return render_template("fleet/index.html", **context()), 400
    return page("fleet/index.html", context)


def filters_form(typed: dict, errors: FieldErrors) -> Markup:
    """The fleet list's filter form (``fleet/_filters.html``) with the text as typed: kept per
    query and fleet version (the sites it offers) for every page of a list; rendered afresh
    when a field was refused, to show the problem beside it."""
    def render() -> Markup:
        return shared_part("fleet/_filters.html", typed=typed, errors=errors,
                           kinds=spec.KINDS, statuses=spec.UNIT_STATUSES,
                           sites=queries.site_names(db.session))
    if errors:
        return render()
    return kept_data("fleet filters", tuple(typed.items()), render)


@bp.route("/units/<tag>")
@role_required("viewer")
def unit(tag: str):
    def context() -> dict:
        row = unit_line_or_404(tag)  # a 404 before anything is kept
        timeline = queries.unit_timeline(db.session, row)
        # the open hold, from the holds the timeline read (the first opened, as row.holds)
        hold = min((e.row for e in timeline
                    if e.kind == "hold-opened" and e.row.released_at is None),
                   key=lambda h: h.id, default=None)
        models = kept_data("model lines", None, lambda: queries.model_lines(db.session))
        return dict(unit=row, model=models[row.model_id], hold=hold,
                    spec_part=model_part(row.model_id), timeline=timeline)
    return page("fleet/unit.html", context)


def model_part(model_id: int) -> Markup:
    """A model's ratings, modes and front end as the unit page shows them
    (``library/_spec.html``), rendered once per model and fleet version for all its units."""
    def render():
        return shared_part("library/_spec.html",
                           model=model_spec_by_id(db.session, model_id))
    return kept_data("model part", model_id, render)


@bp.route("/units/<tag>/edit", methods=["GET", "POST"])
@role_required("steward")
def edit(tag: str):
    """Edit a unit's record (the service validates and records it as an import)."""
    row = unit_or_404(tag)
    current = unit_to_document(unit_record(row))
    typed = {k: str(current.get(k) or "") for k in EDITABLE}
    errors = FieldErrors()
    if request.method == "POST":
        typed = {k: request.form.get(k, "").strip() for k in EDITABLE}
        errors.extend(check_texts({k: request.form.get(k, "") for k in EDITABLE},
                                  multiline=("notes",)), {k: k for k in EDITABLE})
        if not errors:
            try:
                report = edit_unit(db.database, row.tag, typed, by=current_user.username)
            except InvalidInput as exc:
                errors.extend(exc.problems, {"status": "status",
                                             **{f"units[0].{k}": k for k in EDITABLE}})
            else:
                flash(f"Saved {row.tag}: {len(report.changes)} field"
                      f"{'' if len(report.changes) == 1 else 's'} changed.")
                return redirect(url_for("fleet.unit", tag=row.tag))
    return render_template("fleet/edit.html", unit=row, typed=typed, errors=errors,
                           statuses=status_choices(row),
                           held=any(h.released_at is None for h in row.holds),
                           sites=queries.site_names(db.session)), (400 if errors else 200)


def _qr(tag: str):
    return segno.make(url_for("fleet.unit", tag=tag, _external=True), error="m")


@bp.route("/units/<tag>/qr.svg")
@role_required("viewer")
def qr(tag: str):
    unit_or_404(tag)
    out = io.BytesIO()
    _qr(tag).save(out, kind="svg", scale=4, border=2, xmldecl=False)
    return Response(out.getvalue(), mimetype="image/svg+xml")


@bp.route("/units/<tag>/label")
@role_required("viewer")
def label(tag: str):
    row = unit_or_404(tag)
    return render_template("fleet/label.html", unit=row)
