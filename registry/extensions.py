"""The app's extension singletons, initialised by ``create_app``."""

from __future__ import annotations

from flask import Flask, current_app, g, has_app_context
from flask_login import LoginManager
from flask_wtf import CSRFProtect

from .store.db import Database


class DatabaseExtension:
    """One :class:`Database` per app, and one session per request.

    The request's session only reads: writes are the services' (``registry.services``), each
    in a transaction of its own on a connection of its own. A reading session keeps the
    snapshot its transaction began with (SQLite) and the rows it loaded, so once a service
    has committed, :meth:`_renew` ends that read transaction and expires the rows: what the
    view renders afterwards is read afresh and shows the write. Views never end a
    transaction themselves."""

    def init_app(self, app: Flask) -> None:
        database = Database(app.config["DATABASE_URL"])
        database.after_commit.append(self._renew)
        app.extensions["withstand_db"] = database
        app.teardown_appcontext(self._close)

    @staticmethod
    def _renew() -> None:
        if has_app_context():
            g.pop("fleet_version", None)  # a write moved it (web/page_cache.version)
        session = g.get("db_session") if has_app_context() else None
        if session is None or not session.in_transaction():
            return
        if session.new or session.dirty or session.deleted:
            return  # not a reading session: leave its work alone
        session.rollback()  # a clean session: this only ends its snapshot and expires rows

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
