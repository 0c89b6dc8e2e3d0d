"""Response headers and error pages that every route gets."""

from __future__ import annotations

from flask import Flask, current_app, render_template, request
from flask_wtf.csrf import CSRFError
from werkzeug.exceptions import HTTPException, InternalServerError

# No inline script, nothing from elsewhere: the app works with no internet.
CONTENT_SECURITY_POLICY = ("default-src 'self'; img-src 'self' data:; style-src 'self'; "
                           "script-src 'self'; frame-ancestors 'none'; form-action 'self'; "
                           "base-uri 'none'")
# An SVG drawing (a front end) carries style attributes; as an image it can run nothing, so
# such a response may allow them without weakening the pages' policy.
IMAGE_POLICY = "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'none'"


def init_app(app: Flask) -> None:
    @app.after_request
    def headers(response):
        response.headers.setdefault("Content-Security-Policy", CONTENT_SECURITY_POLICY)
        response.headers.setdefault("X-Content-Type-Options", "nosniff")
        response.headers.setdefault("X-Frame-Options", "DENY")
        response.headers.setdefault("Referrer-Policy", "same-origin")
        return response

    @app.errorhandler(CSRFError)
    def csrf_refused(exc):
        return render_template("error.html", code=400,
                               message="The form had expired or did not come from this site; "
                                       "go back, reload it and try again."), 400

    for code, text in ((400, "The request could not be read."),
                       (403, "Your role may not do this."), (404, "There is no such page."),
                       (405, "That method is not allowed here."),
                       (413, "That upload is larger than 1 MiB.")):
        app.register_error_handler(code, _page(code, text))
    app.register_error_handler(HTTPException, _http_error)
    app.register_error_handler(InternalServerError, _server_error)


def _answer(code: int, text: str, headers=None):
    if request.path.startswith("/api/"):
        # the API's Error shape (api.error_body), so every answer fits its document
        return {"error": {"status": code, "message": text, "problems": []}}, code, headers or {}
    return render_template("error.html", code=code, message=text), code, headers or {}


def _page(code: int, text: str):
    def handler(exc):
        return _answer(code, text, _allow(exc) if isinstance(exc, HTTPException) else None)
    return handler


def _allow(exc) -> dict:
    # a 405 says which methods the route takes
    return {k: v for k, v in exc.get_headers() if k == "Allow"}


def _http_error(exc: HTTPException):
    """Any other HTTP error (a 401, 415, 429 ...) as the page or JSON the others are."""
    if exc.code is None or exc.code >= 500:
        return _server_error(exc)
    return _answer(exc.code, exc.name + ".", _allow(exc))


def _server_error(exc):
    """The last safety net: an unexpected exception is logged (Flask logs it with its
    traceback before calling this) and answered with a plain 500 that shows none of it. No
    input should get here; every refusal above is a 4xx naming the field."""
    original = getattr(exc, "original_exception", None)
    if original is not None:
        current_app.logger.error("answered 500 for %s %s: %s", request.method, request.path,
                                 type(original).__name__)
    text = "Something went wrong on the server; it has been logged."
    if request.path.startswith("/api/"):
        return {"error": {"status": 500, "message": text, "problems": []}}, 500
    try:
        return render_template("error.html", code=500, message=text), 500
    except Exception:  # noqa: BLE001 - the page itself failed: plain text, still no details
        return text, 500, {"Content-Type": "text/plain; charset=utf-8"}
