"""Users (stewards only): add, change role, deactivate or reactivate, issue and revoke API
tokens. A new token is shown once, on the page that issued it; only its digest is kept."""

from __future__ import annotations

from flask import Blueprint, abort, flash, redirect, render_template, request, url_for
from flask_login import current_user
from sqlalchemy import select
from sqlalchemy.orm import selectinload

from ..errors import InvalidInput
from ..extensions import db
from ..services import users
from ..store import models as m
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


def _refused(exc: InvalidInput, user_id: int | None = None, typed=None):
    """The page again, with each problem beside its field (a row's fields carry the id)."""
    errors = FieldErrors()
    fields = ({"username": "username", "display_name": "display_name", "role": "role",
               "password": "password"} if user_id is None else
              {k: f"{k}-{user_id}" for k in ("role", "active", "token")})
    errors.extend(exc.problems, fields)
    return _page(errors, typed, status=400)


@bp.route("/", methods=["POST"])
@role_required("steward")
def add():
    typed = {k: request.form.get(k, "") for k in ("username", "display_name", "role")}
    errors = FieldErrors()
    errors.extend(check_texts(typed), {k: k for k in typed})
    if errors:
        return _page(errors, typed, status=400)
    try:
        added = users.add_user(db.database, typed["username"], typed["role"],
                               request.form.get("password", ""),
                               display_name=typed["display_name"], by=current_user.username)
    except InvalidInput as exc:
        return _refused(exc, typed=typed)
    flash(f"Added {added.username} as {added.role}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/role", methods=["POST"])
@role_required("steward")
def change_role(user_id: int):
    user = user_or_404(user_id)
    try:
        changed = users.change_role(db.database, user.username, request.form.get("role", ""),
                                    by=current_user.username)
    except InvalidInput as exc:
        return _refused(exc, user_id)
    flash(f"{changed.username} is now {changed.role}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/active", methods=["POST"])
@role_required("steward")
def set_active(user_id: int):
    user = user_or_404(user_id)
    try:
        changed, _revoked = users.set_active(db.database, user.username,
                                             request.form.get("active") == "1",
                                             by=current_user.username)
    except InvalidInput as exc:
        return _refused(exc, user_id)
    flash(f"{changed.username} is "
          f"{'active' if changed.active else 'deactivated; their tokens are revoked'}.")
    return redirect(url_for("users.index"))


@bp.route("/<int:user_id>/tokens", methods=["POST"])
@role_required("steward")
def new_token(user_id: int):
    user = user_or_404(user_id)
    try:
        owner, token = users.issue_token(db.database, user.username, by=current_user.username)
    except InvalidInput as exc:
        return _refused(exc, user_id)
    # shown once, on this page (not through a redirect: the token never rides in a cookie);
    # the list below is read afresh, the request's session renewed after the write
    return _page(token=token, token_user=owner.username)


@bp.route("/<int:user_id>/tokens/revoke", methods=["POST"])
@role_required("steward")
def revoke(user_id: int):
    user = user_or_404(user_id)
    owner, count = users.revoke_tokens(db.database, user.username, by=current_user.username)
    flash(f"Revoked {count} token{'' if count == 1 else 's'} of {owner.username}.")
    return redirect(url_for("users.index"))


@bp.app_template_filter("live_tokens")
def live_tokens(user: m.User) -> int:
    return sum(1 for t in user.tokens if t.revoked_at is None)


