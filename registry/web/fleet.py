"""The fleet list and the unit page."""

from __future__ import annotations

from flask import Blueprint, abort, render_template, request
from sqlalchemy import func, or_, select
from sqlalchemy.orm import selectinload

from ..engine.quantity import CAPACITANCE, CURRENT, LENGTH, RESISTANCE, TIME, VOLTAGE, ENERGY
from ..engine.quantity import format_quantity
from ..extensions import db
from ..store import models as m
from ..store.specs import model_spec
from .auth import role_required

bp = Blueprint("fleet", __name__)


@bp.app_template_filter("q")
def quantity_filter(value, dim: str):
    dims = {"V": VOLTAGE, "A": CURRENT, "ohm": RESISTANCE, "F": CAPACITANCE, "s": TIME,
            "m": LENGTH, "J": ENERGY}
    return "—" if value is None else format_quantity(value, dims[dim])


@bp.route("/")
@role_required("viewer")
def index():
    query = request.args.get("q", "").strip()
    status = request.args.get("status", "")
    page = max(request.args.get("page", 1, type=int) or 1, 1)
    size = 50
    stmt = select(m.Unit).join(m.Unit.model).options(selectinload(m.Unit.model),
                                                     selectinload(m.Unit.site))
    if query:
        like = f"%{query.lower()}%"
        stmt = stmt.where(or_(func.lower(m.Unit.tag).like(like),
                              func.lower(m.Unit.serial).like(like),
                              func.lower(m.Model.name).like(like),
                              func.lower(m.Model.key).like(like),
                              func.lower(m.Model.maker).like(like)))
    if status in ("in-service", "on-hold", "away", "retired"):
        stmt = stmt.where(m.Unit.status == status)
    total = db.session.scalar(select(func.count()).select_from(stmt.subquery()))
    units = db.session.scalars(stmt.order_by(m.Unit.tag).limit(size).offset((page - 1) * size))
    return render_template("fleet/index.html", units=list(units), query=query, status=status,
                           page=page, pages=max((total + size - 1) // size, 1), total=total)


@bp.route("/units/<tag>")
@role_required("viewer")
def unit(tag: str):
    row = db.session.scalar(select(m.Unit).where(m.Unit.tag == tag))
    if row is None:
        abort(404)
    return render_template("fleet/unit.html", unit=row, model=model_spec(row.model))
