"""Logging in and out, the current user, and the role a route needs."""

from __future__ import annotations

import functools
from dataclasses import dataclass

import math

from flask import (Blueprint, abort, current_app, flash, redirect, render_template, request,
                   session, url_for)
from flask_login import UserMixin, current_user, login_required, login_user, logout_user

from ..extensions import db, login_manager
from ..store import models as m
from ..store.users import authenticate
from .limits import control_problem
from .throttle import LoginThrottle

bp = Blueprint("auth", __name__)

ROLE_RANK = {role: i for i, role in enumerate(m.ROLES)}  # viewer < technician < steward


@dataclass(frozen=True)
class SignedIn(UserMixin):
    """What a request knows of its user; the row stays in the store."""

    id: int
    username: str
    display_name: str
    role: str

    def get_id(self) -> str:
        return str(self.id)

    def may(self, role: str) -> bool:
        return ROLE_RANK[self.role] >= ROLE_RANK[role]


def signed_in(user: m.User) -> SignedIn:
    return SignedIn(user.id, user.username, user.display_name, user.role)


@login_manager.user_loader
def load_user(user_id: str):
    try:
        user = db.session.get(m.User, int(user_id))
    except ValueError:
        return None
    return signed_in(user) if user is not None and user.active else None


def role_required(role: str):
    """A view decorator: log in first, then have at least ``role``."""
    def wrap(view):
        @functools.wraps(view)
        @login_required
        def inner(*args, **kwargs):
            if not current_user.may(role):
                abort(403)
            return view(*args, **kwargs)
        inner.required_role = role
        return inner
    return wrap


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
