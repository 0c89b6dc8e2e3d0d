"""The demo lab: the fleet in ``seeddata/`` and a login for each role."""

from __future__ import annotations

from importlib import resources

from sqlalchemy import select

from .formats.common import read_document
from .store import models as m
from .store.db import Database
from .store.fleet import fleet_is_empty, import_fleet
from .store.users import add_user, authenticate

# Demo logins of the invented lab. They exist only in demo databases; a real installation
# creates its own with `withstand user add`.
DEMO_LOGINS = (
    ("steward", "Ines Marrow", "steward", "larkspur-steward"),
    ("tech", "Tobias Quell", "technician", "larkspur-tech"),
    ("viewer", "Olek Brandt", "viewer", "larkspur-viewer"),
)


def demo_fleet_path():
    return resources.files("registry.seeddata") / "fleet.yaml"


def load_demo(db: Database) -> bool:
    """Load the demo fleet and logins into an empty database; False if it held a fleet."""
    with db.transaction() as session:
        if not fleet_is_empty(session):
            return False
    with resources.as_file(demo_fleet_path()) as path:
        import_fleet(db, read_document(path), actor="demo")
    ensure_demo_logins(db)
    return True


def ensure_demo_logins(db: Database) -> None:
    with db.transaction() as session:
        for username, name, role, password in DEMO_LOGINS:
            if session.scalar(select(m.User.id).where(m.User.username == username)) is None:
                add_user(session, username, role, password, display_name=name)


def working_demo_logins(db: Database) -> list[tuple[str, str, str, str]]:
    """The demo logins that still log in with their demo password (active, password not
    changed), each with the role it has now: what a second `make run` can truthfully list."""
    working = []
    with db.transaction() as session:
        for username, name, _role, password in DEMO_LOGINS:
            user = authenticate(session, username, password)
            if user is not None:
                working.append((username, name, user.role, password))
    return working


def demo_logins_text(logins=DEMO_LOGINS) -> str:
    return "\n".join(f"  {role:<10} username {u!r:<10} password {p!r}"
                     for u, _n, role, p in logins)
