"""Who may do what: the role rules every service applies to the login it acts for, so the
web, the API and the CLI refuse the same things with the same words."""

from __future__ import annotations

from sqlalchemy.orm import Session

from ..errors import NotAllowed
from ..store import models as m
from ..store.users import get_user

LOGGING_ROLES = ("technician", "steward")
RELEASE_ROLES = ("steward",)
STEWARD_ROLES = ("steward",)


def require_role(user: m.User, roles, action: str) -> None:
    """Refuse (``NotAllowed``) unless ``user`` is active and holds one of ``roles``."""
    if not user.active:
        raise NotAllowed(f"user '{user.username}' is not active")
    if user.role not in roles:
        raise NotAllowed(f"user '{user.username}' is a {user.role}; {action} needs a "
                         f"{' or '.join(roles)}")


def acting_user(session: Session, username: str, roles, action: str) -> m.User:
    """The login ``username`` (``NotFound`` if none), allowed to do ``action``."""
    user = get_user(session, username)
    require_role(user, roles, action)
    return user
