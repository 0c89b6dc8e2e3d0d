"""The app's extension singletons, initialised by ``create_app``."""

from __future__ import annotations

from flask import Flask, current_app, g
from flask_login import LoginManager
from flask_wtf import CSRFProtect

from .store.db import Database


class DatabaseExtension:
    """One :class:`Database` per app, and one session per request."""

    def init_app(self, app: Flask) -> None:
        app.extensions["withstand_db"] = Database(app.config["DATABASE_URL"])
        app.teardown_appcontext(self._close)

    @property
    def database(self) -> Database:
        return current_app.extensions["withstand_db"]

    @property
    def session(self):
        if "db_session" not in g:
            g.db_session = self.database.session()
        return g.db_session

    @staticmethod
    def _close(_exc) -> None:
        session = g.pop("db_session", None)
        if session is not None:
            session.close()


db = DatabaseExtension()
login_manager = LoginManager()
csrf = CSRFProtect()
