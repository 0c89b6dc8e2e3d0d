"""What a request knows of its user and the role a route needs: ``role_required`` for the
pages; not a blueprint, so every blueprint may import it."""

from __future__ import annotations

import functools
from dataclasses import dataclass

from flask import abort
from flask_login import UserMixin, current_user, login_required

from ..store import models as m

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
