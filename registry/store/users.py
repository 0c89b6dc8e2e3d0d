"""Logins and API tokens. Passwords are kept as slow salted hashes (scrypt, through
Werkzeug); API tokens as SHA-256 digests, since a token is long and random already."""

from __future__ import annotations

import functools
import hashlib
import re
import secrets

from sqlalchemy import select
from sqlalchemy.orm import Session
from werkzeug.security import check_password_hash, generate_password_hash

from ..errors import InvalidInput, NotFound
from ..formats.common import check_text
from . import models as m
from .fleet import utcnow

MIN_PASSWORD_LENGTH = 10
# NIST SP 800-63B 5.1.1.2 asks verifiers to allow passwords of at least 64 characters (from
# memory); 256 allows pass phrases and keeps a hash of a megabyte of text out of reach.
MAX_PASSWORD_LENGTH = 256
MAX_DISPLAY_NAME_LENGTH = 120  # as a site or terminal name in the fleet file
USERNAME = re.compile(r"^[a-z0-9][a-z0-9._-]{1,63}$")


def validate_username(name: str) -> str:
    name = (name or "").strip()
    if not USERNAME.match(name):
        raise InvalidInput("must be 2 to 64 lower-case letters, digits, '.', '_' or '-', "
                           "starting with a letter or digit", "username")
    return name


def validate_role(role: str) -> str:
    if role not in m.ROLES:
        raise InvalidInput(f"'{role}' is not a role; use {', '.join(m.ROLES)}", "role")
    return role


def validate_password(password: str) -> str:
    if not isinstance(password, str) and password is not None:
        raise InvalidInput("must be text", "password")
    if len(password or "") < MIN_PASSWORD_LENGTH:
        raise InvalidInput(f"must be at least {MIN_PASSWORD_LENGTH} characters", "password")
    if len(password) > MAX_PASSWORD_LENGTH:
        raise InvalidInput(f"must be at most {MAX_PASSWORD_LENGTH} characters", "password")
    # a NUL or another control character cannot be typed at a login form: refused, so that
    # no login exists that only a script could use (tabs too: they do not show)
    check_text(password, "password")
    return password


def validate_display_name(name: str) -> str:
    name = (name or "").strip()
    if len(name) > MAX_DISPLAY_NAME_LENGTH:
        raise InvalidInput(f"must be at most {MAX_DISPLAY_NAME_LENGTH} characters",
                           "display_name")
    return check_text(name, "display_name")


def get_user(session: Session, username: str) -> m.User:
    user = session.scalar(select(m.User).where(m.User.username == username))
    if user is None:
        raise NotFound(f"no user '{username}'")
    return user


def add_user(session: Session, username: str, role: str, password: str,
             display_name: str = "") -> m.User:
    username = validate_username(username)
    validate_role(role)
    validate_password(password)
    display_name = validate_display_name(display_name)
    if session.scalar(select(m.User.id).where(m.User.username == username)) is not None:
        raise InvalidInput(f"'{username}' exists already", "username")
    user = m.User(username=username, role=role, display_name=display_name or username,
                  password_hash=generate_password_hash(password), active=True,
                  created_at=utcnow())
    session.add(user)
    session.flush()
    return user


def set_password(user: m.User, password: str) -> None:
    user.password_hash = generate_password_hash(validate_password(password))


def authenticate(session: Session, username: str, password: str) -> m.User | None:
    user = session.scalar(select(m.User).where(m.User.username == (username or "").strip()))
    if user is None:
        # spend the same time as a real check, so that timing does not tell who exists
        check_password_hash(_dummy_hash(), password or "")
        return None
    if not user.active or not check_password_hash(user.password_hash, password or ""):
        return None
    return user


@functools.cache
def _dummy_hash() -> str:
    # made on the first failed login, not at import: a hash costs as much as a login (that is
    # its point), and every command would pay it at start-up otherwise
    return generate_password_hash("not-a-password")


def token_digest(token: str) -> str:
    return hashlib.sha256(token.encode("utf-8")).hexdigest()


def issue_token(session: Session, user: m.User) -> str:
    """A new API token for ``user``; only its digest is stored, so it is shown once."""
    token = "wst_" + secrets.token_urlsafe(32)
    session.add(m.ApiToken(user=user, digest=token_digest(token), created_at=utcnow()))
    session.flush()
    return token


def revoke_tokens(session: Session, user: m.User) -> int:
    now, count = utcnow(), 0
    for t in user.tokens:
        if t.revoked_at is None:
            t.revoked_at = now
            count += 1
    return count


def user_for_token(session: Session, token: str) -> m.User | None:
    row = session.scalar(select(m.ApiToken).where(m.ApiToken.digest == token_digest(token)))
    if row is None or row.revoked_at is not None or not row.user.active:
        return None
    return row.user
