"""Logging an event (technicians and up), the list of events, open holds and their release
(stewards). The form is validated with the API's own request model, so both say the same."""

from __future__ import annotations

from flask import Blueprint, abort, flash, redirect, render_template, request, url_for
from flask_login import current_user
from sqlalchemy import select
from sqlalchemy.orm import selectinload

from ..engine import spec
from ..errors import Conflict, InvalidInput, NotAllowed, NotFound
from ..extensions import db
from ..services.events import log_event
from ..services.holds import release_hold
from ..store import models as m
from ..store import queries
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts, control_problem
from .params import unit_or_404
from .schemas import EventRequest, HoldRelease, validated

bp = Blueprint("events", __name__)

EVENT_FIELDS = ("mode", "kind", "voltage", "energy", "duration", "waveform", "note", "at")


def _event_form(unit, typed, errors, status=200):
    return render_template("events/new.html", unit=unit, typed=typed, errors=errors,
                           kinds=spec.EVENT_KINDS, symptoms=spec.SYMPTOMS,
                           waveforms=spec.EVENT_WAVEFORMS,
                           modes=unit.model.modes), status


@bp.route("/units/<tag>/events/new", methods=["GET", "POST"])
@role_required("technician")
def new(tag: str):
    unit = unit_or_404(tag)
    errors = FieldErrors()
    if request.method == "GET":
        return _event_form(unit, {"symptoms": []}, errors)
    typed = {k: request.form.get(k, "").strip() for k in EVENT_FIELDS}
    typed["symptoms"] = request.form.getlist("symptoms")
    raw = [(k, request.form.get(k, "")) for k in EVENT_FIELDS]
    errors.extend(check_texts(raw + [("symptoms", s) for s in typed["symptoms"]],
                              multiline=("note",)), {k: k for k in EVENT_FIELDS + ("symptoms",)})
    if errors:
        return _event_form(unit, typed, errors, 400)
    data = {"unit": unit.tag, "kind": typed["kind"] or None, "symptoms": typed["symptoms"],
            "note": typed["note"]}
    for k in ("mode", "voltage", "energy", "duration", "waveform", "at"):
        if typed[k]:
            data[k] = typed[k]
    try:
        req = validated(EventRequest, data)
        logged = log_event(db.database, unit=req.unit, kind=req.kind, by=current_user.username,
                           mode=req.mode, voltage=req.voltage, energy=req.energy,
                           duration=req.duration, symptoms=req.symptoms, note=req.note,
                           at=req.at, waveform=req.waveform)
    except InvalidInput as exc:
        errors.extend(exc.problems, {k: k for k in EVENT_FIELDS + ("symptoms",)})
        return _event_form(unit, typed, errors, 400)
    a = logged.assessment
    verdict = {True: "within its rating", False: "NOT within its rating",
               None: "not shown to be within its rating (data missing)"}[a.within_rating]
    message = f"Logged a {typed['kind']} event on {unit.tag}: {verdict}."
    if logged.hold_id is not None:
        message += f" A hold is open: {a.hold_reason}"
    elif logged.hold_note:
        message += f" {logged.hold_note}."
    flash(message)
    return redirect(url_for("fleet.unit", tag=unit.tag))


@bp.route("/events")
@role_required("viewer")
def index():
    tag = request.args.get("unit", "").strip()
    if control_problem(tag, multiline=False):
        abort(400)
    stmt = select(m.Event).order_by(m.Event.id.desc()).limit(200).options(
        selectinload(m.Event.unit), selectinload(m.Event.logged_by))
    if tag:
        stmt = stmt.join(m.Event.unit).where(m.Unit.tag == tag)
    return render_template("events/index.html", events=list(db.session.scalars(stmt)),
                           tag=tag)


@bp.route("/holds")
@role_required("viewer")
def holds():
    return render_template("events/holds.html", holds=queries.open_holds(db.session))


def hold_or_404(hold_id: int) -> m.Hold:
    hold = db.session.get(m.Hold, hold_id)
    if hold is None:
        abort(404)
    return hold


@bp.route("/holds/<int:hold_id>/release", methods=["GET", "POST"])
@role_required("steward")
def release(hold_id: int):
    hold = hold_or_404(hold_id)
    errors = FieldErrors()
    typed = {"result": request.form.get("result", ""), "note": request.form.get("note", "")}
    if request.method == "GET":
        return _release_form(hold, typed, errors)
    try:
        req = validated(HoldRelease, {"result": typed["result"] or None, "note": typed["note"]})
        done = release_hold(db.database, hold_id=hold_id, result=req.result,
                            by=current_user.username, note=req.note)
    except InvalidInput as exc:
        errors.extend(exc.problems, {"result": "result", "note": "note"})
        return _release_form(hold, typed, errors, 400)
    except Conflict:
        errors.add("_form", "this hold was released already")
        return _release_form(hold, typed, errors, 409)
    except (NotFound, NotAllowed) as exc:
        errors.add("_form", str(exc))
        return _release_form(hold, typed, errors, 409)
    flash(f"Released {done.unit} ({done.result}); it is now {done.status}.")
    return redirect(url_for("fleet.unit", tag=done.unit))


def _release_form(hold, typed, errors, status=200):
    return render_template("events/release.html", hold=hold, typed=typed, errors=errors,
                           results=spec.INSPECTION_RESULTS), status
