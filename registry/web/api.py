"""The JSON API under /api/v1: Bearer tokens only (never the session cookie), errors as JSON
naming the field, and an OpenAPI 3 document generated from the request models.

CSRF does not apply here: a token in a header is not sent by a browser on its own, which is
what CSRF abuses; the session cookie is ignored by every endpoint.
"""

from __future__ import annotations

import functools
import json
from datetime import date, datetime

from flask import Blueprint, current_app, g, jsonify, request, url_for
from pydantic.json_schema import models_json_schema
from sqlalchemy import select
from sqlalchemy.orm import selectinload

from .. import units as u
from ..engine import spec
from ..errors import Conflict, FieldProblem, InvalidInput, NotAllowed, NotFound
from ..extensions import csrf, db
from ..formats.common import parse_date, text_defaults
from ..formats.fleet import ModelDoc, UnitDoc, model_to_document, unit_to_document
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
from .schemas import EventRequest, HoldRelease, plan_schema, validated

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


def event_json(e: m.Event) -> dict:
    return {"id": e.id, "unit": e.unit.tag, "occurred_at": e.occurred_at.isoformat(),
            "logged_at": e.logged_at.isoformat(),
            "logged_by": e.logged_by.username if e.logged_by else None, "mode": e.mode_key,
            "kind": e.kind,
            "voltage": None if e.voltage is None else u.format_quantity(e.voltage, u.VOLTAGE, digits=12),
            "energy": None if e.energy is None else u.format_quantity(e.energy, u.ENERGY, digits=12),
            "duration": None if e.duration is None else u.format_quantity(e.duration, u.TIME, digits=12),
            "waveform": e.waveform,
            "symptoms": list(e.symptoms or []), "note": e.notes,
            "within_rating": e.within_rating, "hash": e.hash}


@bp.route("/units")
@token_required("viewer")
def units():
    errors = FieldErrors()
    filters, _typed = fleet_query(request.args, errors)
    if errors:
        raise InvalidInput([FieldProblem(k, msg) for k, msgs in errors.items() for msg in msgs])
    filters.size = min(max(int_arg(request.args, "size", 100) or 100, 1), MAX_PAGE)
    page = queries.fleet_page(db.session, filters)
    return {"units": [unit_json(x) for x in page.units], "total": page.total,
            "page": page.page, "pages": page.pages}


@bp.route("/units/<tag>")
@token_required("viewer")
def unit(tag: str):
    row = db.session.scalar(select(m.Unit).where(m.Unit.tag == tag))
    if row is None:
        raise NotFound(f"no unit '{tag}'")
    return unit_json(row)


@bp.route("/models")
@token_required("viewer")
def models():
    from ..store.specs import all_models
    return {"models": [model_to_document(model_spec(x)) for x in all_models(db.session)]}


@bp.route("/models/<key>")
@token_required("viewer")
def model(key: str):
    row = db.session.scalar(select(m.Model).where(m.Model.key == key))
    if row is None:
        raise NotFound(f"no model '{key}'")
    return model_to_document(model_spec(row))


@bp.route("/checks", methods=["POST"])
@token_required("viewer")
def checks():
    doc = json_body()
    result = check_registry(plan_from(doc, db.session, _date_arg("on")), db.session)
    return result.as_json()


@bp.route("/events")
@token_required("viewer")
def events():
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
@token_required("technician")
def log():
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
@token_required("viewer")
def holds():
    stmt = select(m.Hold).order_by(m.Hold.id).options(selectinload(m.Hold.unit),
                                                      selectinload(m.Hold.released_by))
    if request.args.get("open", "1") != "0":
        stmt = stmt.where(m.Hold.released_at.is_(None))
    return {"holds": [hold_json(h) for h in db.session.scalars(stmt)]}


@bp.route("/holds/<int:hold_id>/release", methods=["POST"])
@token_required("steward")
def release(hold_id: int):
    req = validated(HoldRelease, json_body())
    done = release_hold(db.database, hold_id=hold_id, result=req.result,
                        by=g.api_user.username, note=req.note)
    return {"unit": done.unit, "holds": list(done.holds), "result": done.result,
            "status": done.status}


@bp.route("/audit/workbook")
@token_required("viewer")
def audit_workbook():
    errors = FieldErrors()
    since, site, _typed = audit_args(request.args, errors)
    if errors:
        raise InvalidInput([FieldProblem(k, msg) for k, msgs in errors.items() for msg in msgs])
    return workbook_response(since, site)


@bp.route("/openapi.json")
@token_required("viewer")
def openapi():
    return openapi_document()


def openapi_document() -> dict:
    _, defs = models_json_schema([(ModelDoc, "validation"), (UnitDoc, "validation"),
                                  (EventRequest, "validation"), (HoldRelease, "validation")],
                                 ref_template="#/components/schemas/{model}")
    schemas = {k: text_defaults(v) for k, v in defs.get("$defs", {}).items()}
    schemas["Plan"], plan_defs = plan_schema()
    schemas.update(plan_defs)
    schemas["Error"] = {"type": "object", "required": ["error"], "properties": {"error": {
        "type": "object", "required": ["status", "message", "problems"], "properties": {
            "status": {"type": "integer"}, "message": {"type": "string"},
            "problems": {"type": "array", "items": {
                "type": "object", "required": ["field", "reason"],
                "properties": {"field": {"type": "string",
                                         "description": "path of the field, e.g. "
                                                        "circuit.voltage; empty for the body"},
                               "reason": {"type": "string"}}}}}}}}
    schemas["Result"] = {"type": "object", "description": "withstand-result/1",
                         "required": ["format", "summary", "plan", "setups", "accessories",
                                      "excluded", "cautions"],
                         "properties": {"format": {"const": "withstand-result/1"},
                                        "summary": {"type": "object", "description":
                                                    "one line on what the job gets (text), "
                                                    "whether a setup fits, the best setup or "
                                                    "the commonest reason none does"},
                                        "plan": {"type": "object"},
                                        "setups": {"type": "array", "items": {"type": "object"},
                                                   "description": "ranked; margin_ratio is the "
                                                   "deciding finding's available / required"},
                                        "accessories": {"type": "array", "items": {
                                            "type": "object"}, "description": "every accessory "
                                            "unit that could join a setup, its best verdict and "
                                            "the reason when none fits"},
                                        "excluded": {"type": "array", "items": {"type": "object"}},
                                        "cautions": {"type": "array", "items": {"type": "string"}}}}
    ref = lambda name: {"$ref": f"#/components/schemas/{name}"}
    nullable = lambda schema: {"anyOf": [schema, {"type": "null"}]}
    schemas["Hold"] = {"type": "object", "description": "a unit's hold (hold_json)",
                       "required": ["id", "unit", "event", "opened_at", "reason",
                                    "released_at", "released_by", "result", "note"],
                       "properties": {"id": {"type": "integer"}, "unit": {"type": "string"},
                                      "event": nullable({"type": "integer"}),
                                      "opened_at": {"type": "string"},
                                      "reason": {"type": "string"},
                                      "released_at": nullable({"type": "string"}),
                                      "released_by": nullable({"type": "string"}),
                                      "result": nullable({"type": "string"}),
                                      "note": {"type": "string"}}}
    # a unit as the API answers it: the fleet file's unit and its open hold, if any
    unit_answer = json.loads(json.dumps(schemas["UnitDoc"]))
    unit_answer["title"] = "Unit"
    unit_answer["properties"]["open_hold"] = nullable(ref("Hold"))
    schemas["Unit"] = unit_answer
    err = lambda text: {"description": text, "content": {"application/json": {"schema": ref("Error")}}}
    ok = lambda text, schema=None: {"description": text, "content": {
        "application/json": {"schema": schema or {"type": "object"}}}}
    common = {"401": err("no valid token"), "403": err("the token's role may not do this")}
    body = lambda name: {"required": True, "content": {"application/json": {"schema": ref(name)}}}
    q = lambda name, text, schema=None: {"name": name, "in": "query", "required": False,
                                         "description": text,
                                         "schema": schema or {"type": "string"}}
    paths = {
        "/units": {"get": {"summary": "List units (filters as on the fleet page)",
                           "parameters": [q("q", "search tag, serial, model, maker"),
                                          q("kind", "model kind", {"enum": list(spec.KINDS)}),
                                          q("site", "site name"),
                                          q("status", "unit status", {"enum": list(spec.UNIT_STATUSES)}),
                                          q("category", "takes this category", {"enum": list(spec.MAINS_CATEGORIES)}),
                                          q("voltage", "at this voltage, e.g. '600 V'"),
                                          q("due", "verification", {"enum": list(queries.DUE_FILTERS)}),
                                          q("sort", "sort by", {"enum": list(queries.SORTS)}),
                                          q("dir", "asc or desc", {"enum": ["asc", "desc"]}),
                                          q("page", "page number", {"type": "integer"}),
                                          q("size", "units per page", {"type": "integer"})],
                           "responses": {"200": ok("units, each as in the fleet file", {
                               "type": "object", "properties": {"units": {"type": "array", "items": ref("Unit")},
                                                                "total": {"type": "integer"}}}),
                                         "400": err("a filter is not valid"), **common}}},
        "/units/{tag}": {"get": {"summary": "One unit", "parameters": [
            {"name": "tag", "in": "path", "required": True, "schema": {"type": "string"}}],
            "responses": {"200": ok("the unit", ref("Unit")), "404": err("no such unit"),
                          **common}}},
        "/models": {"get": {"summary": "List models", "responses": {
            "200": ok("models, each as in the fleet file", {
                "type": "object", "properties": {"models": {"type": "array", "items": ref("ModelDoc")}}}),
            **common}}},
        "/models/{key}": {"get": {"summary": "One model", "parameters": [
            {"name": "key", "in": "path", "required": True, "schema": {"type": "string"}}],
            "responses": {"200": ok("the model", ref("ModelDoc")), "404": err("no such model"),
                          **common}}},
        "/checks": {"post": {"summary": "Check a job plan against the fleet",
                             "parameters": [q("on", "date of the job (YYYY-MM-DD); default today",
                                              {"type": "string", "format": "date"})],
                             "requestBody": body("Plan"),
                             "responses": {"200": ok("the result", ref("Result")),
                                           "400": err("the plan is not valid"),
                                           "413": err("the body is over 1 MiB"), **common}}},
        "/events": {"get": {"summary": "List events", "parameters": [
            q("unit", "unit tag"), q("since", "from this date", {"type": "string", "format": "date"})],
            "responses": {"200": ok("events, oldest first"), **common}},
            "post": {"summary": "Log an event (technician and up)", "requestBody": body("EventRequest"),
                     "responses": {"201": ok("the event, whether it was within rating, and the hold it opened"),
                                   "400": err("the event is not valid"),
                                   "404": err("no such unit"), "413": err("the body is over 1 MiB"),
                                   **common}}},
        "/holds": {"get": {"summary": "List holds (open ones unless open=0)",
                           "parameters": [q("open", "0 for every hold", {"enum": ["0", "1"]})],
                           "responses": {"200": ok("holds", {"type": "object", "required": ["holds"], "properties": {
                               "holds": {"type": "array", "items": ref("Hold")}}}),
                               "400": err("a parameter is not valid"), **common}}},
        "/holds/{id}/release": {"post": {"summary": "Release a hold (steward)", "parameters": [
            {"name": "id", "in": "path", "required": True, "schema": {"type": "integer"}}],
            "requestBody": body("HoldRelease"),
            "responses": {"200": ok("the unit's status afterwards"),
                          "400": err("the release is not valid"), "404": err("no such hold"),
                          "409": err("released already"), **common}}},
        "/openapi.json": {"get": {"summary": "This document", "responses": {
            "200": ok("OpenAPI 3 document"), **common}}},
    }
    paths["/audit/workbook"] = {"get": {
        "summary": "The audit workbook (xlsx) for a period and site",
        "parameters": [q("since", "from this date", {"type": "string", "format": "date"}),
                       q("site", "only this site")],
        "responses": {"200": {"description": "the workbook", "content": {
            XLSX: {"schema": {"type": "string", "format": "binary"}}}},
            "400": err("a parameter is not valid"), **common}}}
    for path_item in paths.values():
        for method, op in path_item.items():
            # every route refuses a query parameter holding a control character (limits.py)
            op["responses"].setdefault("400", err("a parameter or the body is not valid"))
            if method == "post":
                op["responses"].setdefault("413", err("the body is over 1 MiB"))
    return {"openapi": "3.1.0",
            "info": {"title": "withstand API", "version": "1",
                     "description": "Fleet registry and job checks. Quantities are text with "
                                    "their units, as in the file formats."},
            "servers": [{"url": "/api/v1"}],
            "components": {"schemas": schemas,
                           "securitySchemes": {"bearer": {"type": "http", "scheme": "bearer"}}},
            "security": [{"bearer": []}], "paths": paths}
