"""Managing logins and API tokens: add a login, change its role, deactivate or reactivate
it, set its password, issue and revoke its tokens. Each function is one transaction and
holds the rules, so the users page and the ``withstand user`` commands refuse the same things
with the same words:

- a steward cannot lower their own role, nor deactivate their own login (another steward
  can), so a registry is never left without a way back in by its last steward's slip;
- a deactivated login has no live token (deactivating revokes them) and gets none until it
  is reactivated.

A rule broken is ``InvalidInput`` naming the field (``role``, ``active``, ``token``): the CLI
exits 2, the page answers 400, and nothing is written. Names are trimmed here, once.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy.orm import Session

from ..errors import InvalidInput
from ..store import models as m
from ..store.db import Database
from ..store import users as store
from .access import STEWARD_ROLES, acting_user

MANAGING = "managing users"


@dataclass(frozen=True)
class Account:
    """A login as a caller shows it: no hash, no token."""

    id: int
    username: str
    display_name: str
    role: str
    active: bool


def account(user: m.User) -> Account:
    return Account(user.id, user.username, user.display_name, user.role, user.active)


def _target(session: Session, username: str) -> m.User:
    return store.get_user(session, (username or "").strip())


def _steward(session: Session, by: str | None) -> m.User | None:
    """The steward acting, when one is named (the CLI's first ``user add`` has none)."""
    return None if by is None else acting_user(session, by, STEWARD_ROLES, MANAGING)


def add_user(database: Database, username: str, role: str, password: str, *,
             display_name: str = "", by: str | None = None) -> Account:
    """A new active login; ``username`` and ``display_name`` trimmed (the display name
    defaults to the username). ``by``, when given, must be an active steward."""
    store.validate_username(username)
    store.validate_role(role)
    store.validate_password(password)
    store.validate_display_name(display_name)
    with database.transaction() as session:
        _steward(session, by)
        return account(store.add_user(session, username, role, password,
                                      display_name=display_name))


def change_role(database: Database, username: str, role: str, *, by: str) -> Account:
    """Give ``username`` the ``role``; the steward ``by`` cannot lower their own."""
    store.validate_role(role)
    with database.transaction() as session:
        steward = _steward(session, by)
        user = _target(session, username)
        if user.id == steward.id and role != "steward":
            raise InvalidInput("you cannot lower your own role; another steward can", "role")
        user.role = role
        return account(user)


def set_active(database: Database, username: str, active: bool, *, by: str) -> tuple[Account, int]:
    """Reactivate or deactivate ``username``; deactivating revokes every live token (a
    deactivated login keeps no way in). The steward ``by`` cannot deactivate their own
    login. Returns the account and the number of tokens revoked."""
    with database.transaction() as session:
        steward = _steward(session, by)
        user = _target(session, username)
        if user.id == steward.id and not active:
            raise InvalidInput("you cannot deactivate your own login; another steward can",
                               "active")
        user.active = active
        revoked = 0 if active else store.revoke_tokens(session, user)
        return account(user), revoked


def set_password(database: Database, username: str, password: str, *,
                 by: str | None = None) -> Account:
    """A new password for ``username``; ``by``, when given, must be an active steward."""
    store.validate_password(password)
    with database.transaction() as session:
        _steward(session, by)
        user = _target(session, username)
        store.set_password(user, password)
        return account(user)


def issue_token(database: Database, username: str, *, by: str | None = None) -> tuple[Account, str]:
    """A new API token for an active login (shown once: only its digest is kept)."""
    with database.transaction() as session:
        _steward(session, by)
        user = _target(session, username)
        if not user.active:
            raise InvalidInput(f"the login '{user.username}' is deactivated; reactivate the "
                               "login before issuing a token", "token")
        return account(user), store.issue_token(session, user)


def revoke_tokens(database: Database, username: str, *,
                  by: str | None = None) -> tuple[Account, int]:
    """Revoke every live token of ``username``; the number revoked."""
    with database.transaction() as session:
        _steward(session, by)
        user = _target(session, username)
        return account(user), store.revoke_tokens(session, user)
