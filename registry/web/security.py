"""Response headers and error pages that every route gets."""

from __future__ import annotations

from flask import Flask, render_template, request
from flask_wtf.csrf import CSRFError

# No inline script, nothing from elsewhere: the app works with no internet.
CONTENT_SECURITY_POLICY = ("default-src 'self'; img-src 'self' data:; style-src 'self'; "
                           "script-src 'self'; frame-ancestors 'none'; form-action 'self'; "
                           "base-uri 'none'")


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

    for code, text in ((403, "Your role may not do this."), (404, "There is no such page."),
                       (405, "That method is not allowed here."),
                       (413, "That upload is larger than 1 MiB.")):
        app.register_error_handler(code, _page(code, text))


def _page(code: int, text: str):
    def handler(_exc):
        if request.path.startswith("/api/"):
            return {"error": {"status": code, "message": text}}, code
        return render_template("error.html", code=code, message=text), code
    return handler
