"""The JSON API under /api/v1: Bearer tokens only (never the session cookie), errors as JSON
naming the field, and an OpenAPI 3.1 document that spectree generates from the routes and the
request and answer models each route names (:func:`documented`).

CSRF does not apply here: a token in a header is not sent by a browser on its own, which is
what CSRF abuses; the session cookie is ignored by every endpoint.
"""

from __future__ import annotations

import copy
import functools
import json
from datetime import date, datetime

from flask import Blueprint, Flask, current_app, g, jsonify, request, url_for
from spectree import Response, SecurityScheme, SpecTree
from spectree.models import SecuritySchemeData, Server
from sqlalchemy import select
from sqlalchemy.orm import selectinload

from .. import units as u
from ..errors import Conflict, FieldProblem, InvalidInput, NotAllowed, NotFound, shown
from ..extensions import csrf, db
from ..formats.common import parse_date, text_defaults
from ..formats.fleet import ModelDoc, model_to_document, unit_to_document
from ..plans import PlanDoc
from ..store import models as m
from ..store import queries
from ..services.checks import check_registry, plan_from
from ..store.specs import model_spec, unit_record
from ..store.users import user_for_token
from ..services.events import log_event
from ..services.holds import release_hold
from .access import ROLE_RANK
from .downloads import XLSX, workbook_response
from .forms import FieldErrors
from .limits import check_texts, int_arg, parse_json_body
from .params import audit_args, fleet_query
from .responses import (Document, Error, EventList, HoldList, LoggedEvent, ModelList, Released,
                        Result, Unit, UnitPage)
from .schemas import (AuditQuery, CheckQuery, EventRequest, EventsQuery, HoldRelease,
                      HoldsQuery, UnitsQuery, validated)

bp = Blueprint("api", __name__, url_prefix="/api/v1")
csrf.exempt(bp)

MAX_PAGE = 500


class ApiError(Exception):
    def __init__(self, status: int, message: str, problems=(), headers=None):
        super().__init__(message)
        self.status, self.message, self.problems = status, message, list(problems)
        self.headers = headers or {}


def error_body(status: int, message: str, problems=()) -> dict:
    return {"error": {"status": status, "message": message,
                      "problems": [{"field": p.path, "reason": p.message} for p in problems]}}


@bp.errorhandler(ApiError)
def _api_error(exc: ApiError):
    return jsonify(error_body(exc.status, exc.message, exc.problems)), exc.status, exc.headers


@bp.errorhandler(InvalidInput)
def _invalid(exc: InvalidInput):
    return jsonify(error_body(400, "the request is not valid", exc.problems)), 400


@bp.errorhandler(NotFound)
def _not_found(exc: NotFound):
    return jsonify(error_body(404, str(exc))), 404


@bp.errorhandler(NotAllowed)
def _not_allowed(exc: NotAllowed):
    return jsonify(error_body(403, str(exc))), 403


@bp.errorhandler(Conflict)
def _conflict(exc: Conflict):
    return jsonify(error_body(409, str(exc))), 409


def token_required(role: str):
    """An API view decorator: a live Bearer token of a user with at least ``role``."""
    def wrap(view):
        @functools.wraps(view)
        def inner(*args, **kwargs):
            header = request.headers.get("Authorization", "")
            scheme, _, token = header.partition(" ")
            challenge = {"WWW-Authenticate": 'Bearer realm="withstand"'}
            if scheme.lower() != "bearer" or not token.strip():
                raise ApiError(401, "send 'Authorization: Bearer TOKEN' (a token from "
                                    "`withstand user token NAME`)", headers=challenge)
            user = user_for_token(db.session, token.strip())
            if user is None:
                raise ApiError(401, "that token is not valid or was revoked", headers=challenge)
            if ROLE_RANK[user.role] < ROLE_RANK[role]:
                raise ApiError(403, f"a {user.role} may not do this; it needs a {role}")
            g.api_user = user
            problems = check_texts([*request.args.items(multi=True),
                                    *((k, v) for k, v in (request.view_args or {}).items()
                                      if isinstance(v, str))])
            if problems:
                raise InvalidInput(problems)
            return view(*args, **kwargs)
        inner.required_role = role
        inner.api_auth = "bearer"
        return inner
    return wrap


def json_body() -> dict:
    """The request's body as a JSON object: the one reader every API route uses. Over
    ``MAX_CONTENT_LENGTH`` is a 413; not JSON, a byte-order mark, not UTF-8, nested too deep,
    not an object or text with control characters is a 400 naming the field (``limits``)."""
    limit = current_app.config.get("MAX_CONTENT_LENGTH") or 1024 * 1024
    if request.content_length and request.content_length > limit:
        raise ApiError(413, "the body is larger than 1 MiB")
    if not request.is_json:
        raise ApiError(400, "the body must be a JSON document",
                       [FieldProblem("", "send Content-Type: application/json with a JSON "
                                         "object")])
    return parse_json_body(request.get_data(cache=True))


def _date_arg(name: str) -> date | None:
    return parse_date(request.args.get(name), name)


def unit_json(row: m.Unit) -> dict:
    hold = next((h for h in row.holds if h.released_at is None), None)
    return dict(unit_to_document(unit_record(row)),
                open_hold=None if hold is None else hold_json(hold))


def hold_json(h: m.Hold) -> dict:
    return {"id": h.id, "unit": h.unit.tag, "event": h.event_id,
            "opened_at": h.opened_at.isoformat(), "reason": h.reason,
            "released_at": h.released_at.isoformat() if h.released_at else None,
            "released_by": h.released_by.username if h.released_by else None,
            "result": h.result, "note": h.notes}


def _exact(value: float | None, dim) -> str | None:
    """A stored quantity as text that reads back to the same float (12 digits), or None."""
    return None if value is None else u.format_quantity(value, dim, digits=12)


def event_json(e: m.Event) -> dict:
    return {"id": e.id, "unit": e.unit.tag, "occurred_at": e.occurred_at.isoformat(),
            "logged_at": e.logged_at.isoformat(),
            "logged_by": e.logged_by.username if e.logged_by else None, "mode": e.mode_key,
            "kind": e.kind,
            "voltage": _exact(e.voltage, u.VOLTAGE),
            "energy": _exact(e.energy, u.ENERGY),
            "duration": _exact(e.duration, u.TIME),
            "waveform": e.waveform,
            "symptoms": list(e.symptoms or []), "note": e.notes,
            "within_rating": e.within_rating, "hash": e.hash}


# -- the OpenAPI document ----------------------------------------------------------------------
#
# spectree (a maintained library that reads Flask routes and pydantic models) generates the
# document. It only documents here: each view reads its own input (json_body, validated, the
# query readers), so that refusals are this API's 400s naming the field, as they are
# everywhere else; spectree's request and response validation is skipped.

def _component(model) -> str:
    # the plan is "Plan" in the document, as it was before it was generated
    return "Plan" if model is PlanDoc else model.__name__


api_doc = SpecTree(
    "flask", mode="strict", annotations=False, page_templates={},
    title="withstand API", version="1",
    description="Fleet registry and job checks. Quantities are text with their units, as in "
                "the file formats.",
    servers=[Server(url=bp.url_prefix)],
    security_schemes=[SecurityScheme(name="bearer",
                                     data=SecuritySchemeData(type="http", scheme="bearer"))],
    security={"bearer": []},
    validation_error_status=400, validation_error_model=Error,
    naming_strategy=_component, nested_naming_strategy=lambda _parent, child: child)

# What every route may answer besides its own: no token or a bad one, a role too low, and a
# query parameter holding a control character (token_required refuses it).
_ALWAYS = {401: "no valid token", 403: "the token's role may not do this",
           400: "a parameter or the body is not valid"}


def documented(*, answer: tuple, status: int = 200, query=None, body=None,
               errors: dict[int, str] | None = None, media: str | None = None):
    """A route's entry in the OpenAPI document: ``answer`` is (model, text) for ``status``
    (model ``None`` with ``media`` for a file), ``query`` and ``body`` the request's models,
    ``errors`` the error answers of this route beyond :data:`_ALWAYS` (each an :class:`Error`);
    a route with a body may also answer 413."""
    codes = {**_ALWAYS, **({413: "the body is over 1 MiB"} if body else {}), **(errors or {})}
    answers = Response(**{f"HTTP_{status}": answer},
                       **{f"HTTP_{code}": (Error, text) for code, text in codes.items()})

    def wrap(view):
        out = api_doc.validate(query=query, json=body, resp=answers, skip_validation=True,
                               operation_id=view.__name__)(view)
        out.api_media = media
        return out
    return wrap


@bp.route("/units")
@documented(query=UnitsQuery, answer=(UnitPage, "units, each as in the fleet file"),
            errors={400: "a filter is not valid"})
@token_required("viewer")
def units():
    """List units (filters as on the fleet page)"""
    errors = FieldErrors()
    filters, _typed = fleet_query(request.args, errors)
    if errors:
        raise InvalidInput([FieldProblem(k, msg) for k, msgs in errors.items() for msg in msgs])
    filters.size = min(max(int_arg(request.args, "size", 100) or 100, 1), MAX_PAGE)
    page = queries.fleet_page(db.session, filters)
    return {"units": [unit_json(x) for x in page.units], "total": page.total,
            "page": page.page, "pages": page.pages}


@bp.route("/units/<tag>")
@documented(answer=(Unit, "the unit"), errors={404: "no such unit"})
@token_required("viewer")
def unit(tag: str):
    """One unit"""
    row = db.session.scalar(select(m.Unit).where(m.Unit.tag == tag))
    if row is None:
        raise NotFound(f"no unit '{tag}'")
    return unit_json(row)


@bp.route("/models")
@documented(answer=(ModelList, "models, each as in the fleet file"))
@token_required("viewer")
def models():
    """List models"""
    from ..store.specs import all_models
    return {"models": [model_to_document(model_spec(x)) for x in all_models(db.session)]}


@bp.route("/models/<key>")
@documented(answer=(ModelDoc, "the model"), errors={404: "no such model"})
@token_required("viewer")
def model(key: str):
    """One model"""
    row = db.session.scalar(select(m.Model).where(m.Model.key == key))
    if row is None:
        raise NotFound(f"no model '{key}'")
    return model_to_document(model_spec(row))


@bp.route("/checks", methods=["POST"])
@documented(query=CheckQuery, body=PlanDoc, answer=(Result, "the result"),
            errors={400: "the plan is not valid"})
@token_required("viewer")
def checks():
    """Check a job plan against the fleet"""
    doc = json_body()
    findings = request.args.get("findings", "0")
    if findings not in ("0", "1"):
        raise InvalidInput(f"'{shown(findings)}' is not 0 or 1", "findings")
    result = check_registry(plan_from(doc, db.session, _date_arg("on")), db.session)
    return result.as_json(findings=findings == "1")


@bp.route("/events")
@documented(query=EventsQuery, answer=(EventList, "events, oldest first"))
@token_required("viewer")
def events():
    """List events"""
    stmt = select(m.Event).order_by(m.Event.id).options(selectinload(m.Event.unit),
                                                        selectinload(m.Event.logged_by))
    tag = request.args.get("unit", "").strip()
    if tag:
        stmt = stmt.join(m.Event.unit).where(m.Unit.tag == tag)
    since = _date_arg("since")
    if since:
        stmt = stmt.where(m.Event.occurred_at >= datetime.combine(since, datetime.min.time()))
    return {"events": [event_json(e) for e in db.session.scalars(stmt)]}


@bp.route("/events", methods=["POST"])
@documented(body=EventRequest, status=201,
            answer=(LoggedEvent, "the event, whether it was within rating, and the hold it "
                                 "opened"),
            errors={400: "the event is not valid", 404: "no such unit"})
@token_required("technician")
def log():
    """Log an event (technician and up)"""
    req = validated(EventRequest, json_body())
    logged = log_event(db.database, unit=req.unit, kind=req.kind, by=g.api_user.username,
                       mode=req.mode, voltage=req.voltage, energy=req.energy,
                       duration=req.duration, symptoms=req.symptoms, note=req.note,
                       at=req.at, waveform=req.waveform)
    row, hold = logged.event, logged.hold  # loaded whole by the service
    body = dict(event_json(row), reasons=list(logged.assessment.reasons),
                hold=None if hold is None else hold_json(hold), hold_note=logged.hold_note)
    return body, 201, {"Location": url_for("api.events", unit=row.unit.tag)}


@bp.route("/holds")
@documented(query=HoldsQuery, answer=(HoldList, "holds"))
@token_required("viewer")
def holds():
    """List holds (open ones unless open=0)"""
    stmt = select(m.Hold).order_by(m.Hold.id).options(selectinload(m.Hold.unit),
                                                      selectinload(m.Hold.released_by))
    if request.args.get("open", "1") != "0":
        stmt = stmt.where(m.Hold.released_at.is_(None))
    return {"holds": [hold_json(h) for h in db.session.scalars(stmt)]}


@bp.route("/holds/<int:hold_id>/release", methods=["POST"])
@documented(body=HoldRelease, answer=(Released, "the unit's status afterwards"),
            errors={400: "the release is not valid", 404: "no such hold",
                    409: "released already"})
@token_required("steward")
def release(hold_id: int):
    """Release a hold (steward)"""
    req = validated(HoldRelease, json_body())
    done = release_hold(db.database, hold_id=hold_id, result=req.result,
                        by=g.api_user.username, note=req.note)
    return {"unit": done.unit, "holds": list(done.holds), "result": done.result,
            "status": done.status}


@bp.route("/audit/workbook")
@documented(query=AuditQuery, answer=(None, "the workbook (xlsx)"), media=XLSX)
@token_required("viewer")
def audit_workbook():
    """The audit workbook (xlsx) for a period and site"""
    errors = FieldErrors()
    since, site, _typed = audit_args(request.args, errors)
    if errors:
        raise InvalidInput([FieldProblem(k, msg) for k, msgs in errors.items() for msg in msgs])
    return workbook_response(since, site)


@bp.route("/openapi.json")
@documented(answer=(Document, "OpenAPI 3 document"))
@token_required("viewer")
def openapi():
    """This document"""
    return openapi_document()


def openapi_document() -> dict:
    """The OpenAPI document, generated by spectree from this blueprint's routes (paths, path
    parameters, methods, the summary in each view's docstring) and the models each route names
    in :func:`documented`; then written relative to the blueprint's prefix (the server's URL)
    and with the defaults of quantity fields as text. It needs no database: spectree reads the
    routes from an app holding only this blueprint."""
    return copy.deepcopy(_generated())


@functools.cache
def _generated() -> dict:
    app = Flask(__name__)
    app.register_blueprint(bp)
    with app.app_context():
        doc = copy.deepcopy(api_doc.spec)
    doc["paths"] = {path.removeprefix(bp.url_prefix): item for path, item in doc["paths"].items()}
    for rule in app.url_map.iter_rules():
        media = getattr(app.view_functions[rule.endpoint], "api_media", None)
        if media:  # spectree writes JSON answers only
            path = api_doc.backend.parse_path(rule, None)[0].removeprefix(bp.url_prefix)
            for method in rule.methods - {"HEAD", "OPTIONS"}:
                answer = doc["paths"][path][method.lower()]["responses"]["200"]
                answer["content"] = {media: {"schema": {"type": "string", "format": "binary"}}}
    doc.pop("tags", None)  # no route has tags
    doc["components"]["schemas"] = text_defaults(doc["components"]["schemas"])
    return json.loads(json.dumps(doc))
