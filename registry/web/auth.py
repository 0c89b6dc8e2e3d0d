"""Logging in and out, and loading the signed-in user of a request."""

from __future__ import annotations

import math

from flask import (Blueprint, current_app, flash, redirect, render_template, request,
                   session, url_for)
from flask_login import login_user, logout_user
from sqlalchemy import bindparam, select

from ..extensions import db, login_manager
from ..store import models as m
from ..store.users import authenticate
from .access import SignedIn, role_required, signed_in
from .limits import MAX_ID, control_problem
from .throttle import LoginThrottle

bp = Blueprint("auth", __name__)


_SIGNED_IN = (select(m.User.id, m.User.username, m.User.display_name, m.User.role)
              .where(m.User.id == bindparam("id"), m.User.active.is_(True)))


@login_manager.user_loader
def load_user(user_id: str):
    """The active login of the session's id, as the request knows it (every request asks:
    one plain row, no ORM object)."""
    try:
        ident = int(user_id)
    except ValueError:
        return None
    if abs(ident) > MAX_ID:
        return None
    # a Core statement on the session's connection (its transaction, none of the ORM's work)
    row = db.session.connection().execute(_SIGNED_IN, {"id": ident}).first()
    return SignedIn(*row) if row is not None else None


def _safe_next(target: str | None) -> str:
    # only paths on this site, never another host
    if target and target.startswith("/") and not target.startswith("//"):
        return target
    return url_for("fleet.index")


def throttle() -> LoginThrottle:
    return current_app.extensions.setdefault("withstand_throttle", LoginThrottle())


@bp.route("/login", methods=["GET", "POST"])
def login():
    error = None
    status = 200
    username = ""
    if request.method == "POST":
        username = request.form.get("username", "")
        address = request.remote_addr
        wait = throttle().retry_after(username, address)
        if wait > 0:
            # refused before the password is even looked at, right or wrong
            minutes = max(1, math.ceil(wait / 60))
            error = (f"Too many failed attempts for this username; try again in {minutes} "
                     f"minute{'' if minutes == 1 else 's'}.")
            status = 429
        else:
            user = None if control_problem(username, multiline=False) else \
                authenticate(db.session, username, request.form.get("password", ""))
            if user is None:
                throttle().failed(username, address)
                error = "That username and password do not match an active login."
                status = 401
            else:
                throttle().succeeded(username, address)
                session.clear()  # a new session on login: nothing from before carries over
                login_user(signed_in(user))
                return redirect(_safe_next(request.args.get("next")))
    response = render_template("auth/login.html", error=error, username=username), status
    if status == 429:
        return (*response, {"Retry-After": str(math.ceil(wait))})
    return response


@bp.route("/logout", methods=["POST"])
@role_required("viewer")  # any login; without one there is nothing to log out of
def logout():
    logout_user()
    session.clear()
    flash("Logged out.")
    return redirect(url_for("auth.login"))
