"""Users (stewards only): add, change role, deactivate or reactivate, issue and revoke API
tokens. A new token is shown once, on the page that issued it; only its digest is kept."""

from __future__ import annotations

from flask import Blueprint, abort, flash, redirect, render_template, request, url_for
from flask_login import current_user
from sqlalchemy import select
from sqlalchemy.orm import selectinload

from ..errors import InvalidInput
from ..extensions import db
from ..store import models as m
from ..store.users import add_user, issue_token, revoke_tokens, validate_role
from .access import role_required
from .forms import FieldErrors
from .limits import check_texts

bp = Blueprint("users", __name__, url_prefix="/users")


def _page(errors=None, typed=None, token=None, token_user=None, status=200):
    users = db.session.scalars(select(m.User).order_by(m.User.username)
                               .options(selectinload(m.User.tokens)))
    return render_template("users/index.html", users=list(users), roles=m.ROLES,
                           errors=errors or FieldErrors(), typed=typed or {}, token=token,
                           token_user=token_user), status


def user_or_404(user_id: int) -> m.User:
    user = db.session.get(m.User, user_id)
    if user is None:
        abort(404)
    return user


@bp.route("/")
@role_required("steward")
def index():
    return _page()


@bp.route("/", methods=["POST"])
@role_required("steward")
def add():
    typed = {k: request.form.get(k, "") for k in ("username", "display_name", "role")}
    errors = FieldErrors()
    errors.extend(check_texts(typed), {k: k for k in typed})
    if errors:
        return _page(errors, typed, status=400)
    try:
        add_user(db.session, typed["username"], typed["role"], request.form.get("password", ""),
                 display_name=typed["display_name"].strip())
    except InvalidInput as exc:
        db.session.rollback()
        errors.extend(exc.problems, {"username": "username", "role": "role",
                                     "password": "password"})
        return _page(errors, typed, status=400)
    db.session.commit()
    flash(f"Added {typed['username'].strip()} as {typed['role']}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/role", methods=["POST"])
@role_required("steward")
def change_role(user_id: int):
    user = user_or_404(user_id)
    errors = FieldErrors()
    role = request.form.get("role", "")
    try:
        validate_role(role)
        if user.id == current_user.id and role != "steward":
            raise InvalidInput("you cannot lower your own role; another steward can", "role")
    except InvalidInput as exc:
        errors.extend(exc.problems, {"role": f"role-{user.id}"})
        return _page(errors, status=400)
    user.role = role
    db.session.commit()
    flash(f"{user.username} is now {role}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/active", methods=["POST"])
@role_required("steward")
def set_active(user_id: int):
    user = user_or_404(user_id)
    active = request.form.get("active") == "1"
    if user.id == current_user.id and not active:
        errors = FieldErrors()
        errors.add(f"active-{user.id}", "you cannot deactivate your own login")
        return _page(errors, status=400)
    user.active = active
    if not active:
        revoke_tokens(db.session, user)  # a deactivated login keeps no way in
    db.session.commit()
    flash(f"{user.username} is {'active' if active else 'deactivated; their tokens are revoked'}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/tokens", methods=["POST"])
@role_required("steward")
def new_token(user_id: int):
    user = user_or_404(user_id)
    if not user.active:
        errors = FieldErrors()
        errors.add(f"token-{user.id}", "reactivate the login before issuing a token")
        return _page(errors, status=400)
    token = issue_token(db.session, user)
    db.session.commit()
    return _page(token=token, token_user=user.username)


@bp.route("/<int:user_id>/tokens/revoke", methods=["POST"])
@role_required("steward")
def revoke(user_id: int):
    user = user_or_404(user_id)
    count = revoke_tokens(db.session, user)
    db.session.commit()
    flash(f"Revoked {count} token{'' if count == 1 else 's'} of {user.username}.")
    return redirect(url_for("users.index"))


@bp.app_template_filter("live_tokens")
def live_tokens(user: m.User) -> int:
    return sum(1 for t in user.tokens if t.revoked_at is None)


