"""The model library: a list, a page per model, and the steward's edit form.

The edit form takes the ratings, modes and front end as the fleet file writes them (YAML or
JSON text, read by the fleet file's own reader, ``formats.common.load_yaml``) and validates
the whole model with the fleet file's own validator, so the messages
and the paths (``modes[1].max_input``) are the ones an import would give.
"""

from __future__ import annotations

import yaml
from flask import (Blueprint, Response, abort, flash, redirect, render_template, request,
                   url_for)
from flask_login import current_user
from sqlalchemy import func, select
from sqlalchemy.orm import selectinload

from ..engine import spec
from ..errors import FieldProblem, InvalidInput
from ..extensions import db
from ..formats.common import load_yaml, text_of
from ..formats.fleet import ELEMENT_PARAM_DIMS, FORMAT, model_to_document, parse_fleet
from ..store import models as m
from ..store.fleet import diff_documents, known_keys, record_changes
from ..store.specs import model_spec, write_model
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts, control_problem
from .security import IMAGE_POLICY

bp = Blueprint("library", __name__, url_prefix="/models")

SECTIONS = ("ratings", "modes", "front_end")
FIXED = ("key", "kind", "maker", "name") + SECTIONS  # the rest goes in the "other" box


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


def _dump(value) -> str:
    if value in (None, [], {}):
        return ""
    return yaml.safe_dump(value, sort_keys=False, allow_unicode=True, width=100)


def edit_texts(doc: dict) -> dict:
    other = {k: v for k, v in doc.items() if k not in FIXED}
    return {"maker": doc.get("maker", ""), "name": doc.get("name", ""),
            "ratings": _dump(doc.get("ratings")), "modes": _dump(doc.get("modes")),
            "front_end": _dump(doc.get("front_end")), "other": _dump(other)}


def parse_edit(row: m.Model, form, errors: FieldErrors) -> spec.ModelSpec | None:
    doc: dict = {"key": row.key, "kind": row.kind, "maker": form.get("maker", "").strip(),
                 "name": form.get("name", "").strip()}
    other_text = form.get("other", "")
    try:
        other = load_yaml(other_text) if other_text.strip() else {}
    except InvalidInput as exc:
        errors.add("other", exc.problems[0].message)
        other = {}
    if not isinstance(other, dict):
        errors.add("other", "must be a mapping of fields, e.g. 'max_altitude: 3000 m'")
        other = {}
    for k in other:
        if k in FIXED:
            errors.add("other", f"'{k}' has its own box; the key and kind cannot be changed "
                       "here" if k in ("key", "kind") else f"'{k}' has its own box")
    doc.update({k: v for k, v in other.items() if k not in FIXED})
    for section in SECTIONS:
        text = form.get(section, "")
        try:
            value = load_yaml(text) if text.strip() else []
        except InvalidInput as exc:
            errors.add(section, exc.problems[0].message)
            continue
        if not isinstance(value, list):
            errors.add(section, "must be a list, one entry per line starting with '- '")
            continue
        doc[section] = value
    if errors:
        return None
    models, sites = known_keys(db.session)
    try:
        content = parse_fleet({"format": FORMAT, "models": [doc]}, known_models=models,
                              known_sites=sites)
    except InvalidInput as exc:
        problems = [FieldProblem(p.path.removeprefix("models[0].").removeprefix("models[0]"),
                                 p.message) for p in exc.problems]
        mapping = {s: s for s in SECTIONS} | {"maker": "maker", "name": "name"}
        for p in problems:
            field = next((v for k, v in mapping.items()
                          if p.path == k or p.path.startswith((k + "[", k + "."))), "other")
            errors.add(field, f"{p.path}: {p.message}" if p.path else p.message)
        return None
    return content.models[0]


@bp.route("/<key>/edit", methods=["GET", "POST"])
@role_required("steward")
def edit(key: str):
    row = model_or_404(key)
    errors = FieldErrors()
    current = model_to_document(model_spec(row))
    if request.method == "GET":
        return render_template("library/edit.html", model=row, texts=edit_texts(current),
                               errors=errors)
    texts = {k: request.form.get(k, "") for k in ("maker", "name", "other") + SECTIONS}
    errors.extend(check_texts(texts, multiline=("other",) + SECTIONS), {k: k for k in texts})
    new = None if errors else parse_edit(row, request.form, errors)
    if new is None:
        return render_template("library/edit.html", model=row, texts=texts, errors=errors), 400
    diffs = diff_documents(current, model_to_document(new))
    if diffs:
        write_model(row, new, db.session)
        record_changes(db.session, "model", key, diffs, current_user.username, current_user.id)
        db.session.commit()
        flash(f"Saved {key}: {len(diffs)} field{'' if len(diffs) == 1 else 's'} changed.")
    else:
        flash(f"Nothing changed in {key}.")
    return redirect(url_for("library.show", key=key))
