"""The model library: a list, a page per model, and the steward's form for a new model and
for editing one.

The form (:mod:`.model_form`) has a field for everything a fleet file's model holds, rows for
the ratings, modes and front-end elements; it becomes the model's fleet-file document, which
the use case (:mod:`registry.services.models`) validates with the fleet file's own validator,
so the messages and the paths (``modes[1].max_input``) are the ones an import would give.
"""

from __future__ import annotations

from flask import (Blueprint, Response, abort, flash, redirect, render_template, request,
                   url_for)
from flask_login import current_user
from sqlalchemy import func, select
from sqlalchemy.orm import selectinload

from ..engine import spec
from ..errors import InvalidInput, NotFound, shown
from ..extensions import db
from ..formats.common import text_of
from ..formats.fleet import ELEMENT_PARAM_DIMS, model_to_document
from ..services.models import create_model, edit_model
from ..store import models as m
from ..store.specs import model_spec
from . import model_form
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts, control_problem
from .security import IMAGE_POLICY

bp = Blueprint("library", __name__, url_prefix="/models")

@bp.app_template_global()
def element_param(name: str, value: float) -> str:
    dim = ELEMENT_PARAM_DIMS.get(name)
    return text_of(value, dim).replace(" ", "\u00a0") if dim else f"{value:g}"


def model_or_404(key: str) -> m.Model:
    if control_problem(key, multiline=False):
        abort(404)  # no key holds a control character (and PostgreSQL refuses a NUL)
    row = db.session.scalar(select(m.Model).where(m.Model.key == key).options(
        selectinload(m.Model.ratings), selectinload(m.Model.modes),
        selectinload(m.Model.elements)))
    if row is None:
        abort(404)
    return row


@bp.route("/<key>/front-end.svg")
@role_required("viewer")
def front_end(key: str):
    s = model_spec(model_or_404(key))
    mode = next((x for x in s.modes if x.key == request.args.get("mode")), None)
    if mode is None or not s.front_end:
        abort(404)
    from ..drawing import front_end_svg
    from ..engine.network import NetworkError
    try:
        svg = front_end_svg(s, mode, {})
    except NetworkError:
        abort(404)  # the mode has no path through the front end: nothing to draw
    return Response(svg, mimetype="image/svg+xml",
                    headers={"Content-Security-Policy": IMAGE_POLICY})


@bp.route("/")
@role_required("viewer")
def index():
    rows = db.session.scalars(select(m.Model).order_by(m.Model.kind, m.Model.key).options(
        selectinload(m.Model.ratings)))
    counts = {k: n for k, n in db.session.execute(select(m.Unit.model_id, func.count())
                                                  .group_by(m.Unit.model_id))}
    kind = request.args.get("kind", "")
    models = [r for r in rows if not kind or r.kind == kind]
    return render_template("library/index.html", models=models, counts=counts, kind=kind,
                           kinds=spec.KINDS)


@bp.route("/<key>")
@role_required("viewer")
def show(key: str):
    row = model_or_404(key)
    s = model_spec(row)
    units = db.session.scalars(select(m.Unit).where(m.Unit.model_id == row.id)
                               .order_by(m.Unit.tag))
    changes = db.session.scalars(select(m.Change).where(m.Change.entity == "model",
                                                        m.Change.entity_key == key)
                                 .order_by(m.Change.at.desc(), m.Change.id.desc()).limit(50))
    return render_template("library/show.html", model=s, units=list(units),
                           changes=list(changes))


def _form_page(doc: dict, errors: FieldErrors, key: str | None, status: int = 200):
    return render_template("library/form.html", doc=doc, errors=errors, key=key,
                           f=model_form, spec=spec), status


def _posted(key: str | None):
    """The form posted for a new model (``key`` None) or for ``key``: a button that adds or
    removes a row shows the form again with the change; Save hands the document to the use
    case, which validates it as a fleet file's model and writes it, or the form comes back
    with each problem beside its field (400, nothing written)."""
    action = request.form.get("action", "save")
    doc = model_form.document_from_form(request.form, key, saving=action == "save")
    errors = FieldErrors()
    # The values go to the fleet file's validator, which refuses control characters with the
    # import's own messages; only the names, which it never sees, are checked here.
    problems = check_texts((name, "") for name in request.form) + model_form.too_many_rows(doc)
    if problems:
        for p in problems:
            errors.add(p.path if p.path in model_form.SECTIONS else "_form", str(p))
        return _form_page(doc, errors, key, 400)
    if action == "refresh" or model_form.apply_action(doc, action):
        return _form_page(doc, errors, key)
    if action != "save":
        errors.add("_form", f"'{shown(action)}' is not a button of this form")
        return _form_page(doc, errors, key, 400)
    # the use case writes in its own transaction; the request's reading session is renewed
    # after it commits (extensions.py), so this view ends no transaction itself
    who, user_id = current_user.username, current_user.id
    try:
        if key is None:
            saved = create_model(db.database, doc, actor=who, user_id=user_id)
        else:
            saved = edit_model(db.database, key, doc, actor=who, user_id=user_id)
    except InvalidInput as exc:
        model_form.place(exc.problems, doc, errors)
        return _form_page(doc, errors, key, 400)
    except NotFound:
        abort(404)
    if saved.created:
        flash(f"Added {saved.key}.")
    elif saved.changes:
        flash(f"Saved {saved.key}: {saved.changes} field{'' if saved.changes == 1 else 's'} "
              "changed.")
    else:
        flash(f"Nothing changed in {saved.key}.")
    return redirect(url_for("library.show", key=saved.key))


# "_new" cannot be a model's key (a key starts with a letter or digit), so no model's page
# is hidden behind the form for a new one.
@bp.route("/_new", methods=["GET", "POST"])
@role_required("steward")
def new():
    if request.method == "POST":
        return _posted(None)
    kind = request.args.get("kind", "multimeter")
    return _form_page(model_form.new_document(kind if kind in spec.KINDS else "multimeter"),
                      FieldErrors(), None)


@bp.route("/<key>/edit", methods=["GET", "POST"])
@role_required("steward")
def edit(key: str):
    row = model_or_404(key)
    if request.method == "POST":
        return _posted(key)
    return _form_page(model_to_document(model_spec(row)), FieldErrors(), key)
