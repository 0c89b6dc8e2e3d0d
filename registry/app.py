"""The Flask application factory."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

from flask import Flask

from . import config as cfg
from .extensions import csrf, db, login_manager


def create_app(config: dict | None = None) -> Flask:
    instance = cfg.instance_path()
    app = Flask("registry", instance_path=str(instance), instance_relative_config=True,
                template_folder=str(resources.files("registry.templates")),
                static_folder=str(resources.files("registry") / "static"))
    register_config(app, config or {})
    register_extensions(app)
    register_blueprints(app)
    register_security(app)
    return app


def register_config(app: Flask, overrides: dict) -> None:
    instance = Path(overrides.get("INSTANCE_PATH", app.instance_path))
    app.config.update(
        DATABASE_URL=overrides.get("DATABASE_URL") or cfg.database_url(instance),
        SECRET_KEY=overrides.get("SECRET_KEY") or cfg.secret_key(instance),
        SESSION_COOKIE_HTTPONLY=True,
        SESSION_COOKIE_SAMESITE="Lax",
        MAX_CONTENT_LENGTH=1024 * 1024,  # 1 MiB: plans and fleet files are far smaller
        WTF_CSRF_TIME_LIMIT=None,
        FLEET_PAGE_SIZE=50,
    )
    app.config.update({k: v for k, v in overrides.items() if k != "INSTANCE_PATH"})


def register_extensions(app: Flask) -> None:
    db.init_app(app)
    csrf.init_app(app)
    login_manager.init_app(app)
    login_manager.login_view = "auth.login"
    login_manager.login_message = "Log in to see the registry."


def register_blueprints(app: Flask) -> None:
    from .web import api, audit, auth, checks, dashboard, events, fleet, library, rulebook, users
    from .web.limits import IdConverter
    app.url_map.converters["int"] = IdConverter  # every <int:...> id fits a 64-bit integer
    for module in (auth, fleet, dashboard, library, checks, events, audit, rulebook, users, api):
        app.register_blueprint(module.bp)

    navigations: dict = {}

    def navigation(role: str):
        """The navigation bar of ``role`` on this request's page (``_nav.html``), rendered
        once per role, endpoint and script root: it names no user and holds no token."""
        from flask import render_template, request
        from markupsafe import Markup

        from .web.access import ROLE_RANK
        key = (role, request.endpoint, request.script_root)
        html = navigations.get(key)
        if html is None:
            if len(navigations) > 1000:  # roles x endpoints: never near this; a bound all the same
                navigations.clear()
            html = navigations[key] = Markup(render_template(
                "_nav.html", nav_endpoints=app.view_functions,
                may=lambda needed: ROLE_RANK[role] >= ROLE_RANK[needed]).strip())
        return html

    @app.context_processor
    def frame():
        return {"navigation": navigation}


def register_security(app: Flask) -> None:
    from .web import security
    security.init_app(app)
