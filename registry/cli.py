"""The ``withstand`` command.

Exit codes (SPEC §6): 0 done, 1 the command ran and the answer is no, 2 bad input (nothing
written). Every failure is a message naming what is wrong, never a traceback.
"""

from __future__ import annotations

import functools
import os
import sys
from pathlib import Path

import click

from . import config as cfg
from .errors import InvalidInput, WithstandError
from .store import db as store_db


class Env:
    """What the commands share: where the database is, opened once and lazily."""

    def __init__(self, url: str | None = None, app=None):
        self._url = url
        self._app = app
        self._db = None

    @property
    def url(self) -> str:
        if self._url is None:
            self._url = (self._app.config["DATABASE_URL"] if self._app is not None
                         else cfg.database_url())
        return self._url

    def database(self, *, migrated: bool = True) -> store_db.Database:
        if self._db is None:
            self._db = store_db.Database(self.url)
        if migrated:
            store_db.require_current(self._db.engine)
        return self._db

    def app(self):
        if self._app is None:
            from .app import create_app
            self._app = create_app({"DATABASE_URL": self.url})
        return self._app


def _env() -> Env:
    ctx = click.get_current_context()
    root = ctx.find_root()
    if not isinstance(root.obj, Env):
        # Flask's test runner hands a ScriptInfo; use the app it builds
        load = getattr(root.obj, "load_app", None)
        root.obj = Env(app=load()) if load else Env()
    return root.obj


def fail(message: str, code: int = 2):
    click.echo(f"withstand: {message}", err=True)
    sys.exit(code)


def reports_errors(fn):
    """Turn the package's errors into a message and an exit code."""
    @functools.wraps(fn)
    def inner(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except InvalidInput as exc:
            if len(exc.problems) == 1:
                fail(f"error: {exc.problems[0]}", exc.exit_code)
            lines = "\n".join(f"  {p}" for p in exc.problems)
            fail(f"error: {len(exc.problems)} problems, nothing written:\n{lines}",
                 exc.exit_code)
        except WithstandError as exc:
            fail(f"error: {exc}", exc.exit_code)
    return inner


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
def main():
    """withstand: the fleet registry and job checks for instruments used on live circuits.

    Its advice does not replace the instrument's manual, a risk assessment, the PPE and
    electrical-safety rules that apply where you work, or a qualified person's judgement.
    """


# -- database ------------------------------------------------------------------------------------

@main.command()
@click.option("--with-demo", is_flag=True,
              help="Also load the demo fleet and demo logins if the database has no models.")
@reports_errors
def init(with_demo: bool):
    """Create or upgrade the database to the latest migration."""
    env = _env()
    database = env.database(migrated=False)
    before = store_db.current_revision(database.engine)
    store_db.upgrade(database.engine)
    after = store_db.current_revision(database.engine)
    shown = _shown_url(env.url)
    if before == after:
        click.echo(f"Database {shown} is at the latest migration ({after}).")
    else:
        click.echo(f"Database {shown} migrated from {before or 'empty'} to {after}.")
    if with_demo:
        from .demo import demo_logins_text, load_demo
        if load_demo(database):
            click.echo("Loaded the demo fleet. Demo logins:\n" + demo_logins_text())
        else:
            click.echo("The database already holds a fleet; the demo was not loaded.")


def _shown_url(url: str) -> str:
    from sqlalchemy.engine import make_url
    return make_url(url).render_as_string(hide_password=True)


# -- serving -------------------------------------------------------------------------------------

def _serve(app, host: str, port: int) -> None:
    import waitress
    click.echo(f"withstand is serving on http://{host}:{port}/  (Ctrl-C stops it)")
    sys.stdout.flush()
    waitress.serve(app, host=host, port=port, threads=8, ident="withstand")


@main.command()
@click.option("--host", default="127.0.0.1", show_default=True)
@click.option("--port", default=5000, show_default=True, type=click.IntRange(1, 65535))
@reports_errors
def serve(host: str, port: int):
    """Serve the web app and API with a production WSGI server."""
    env = _env()
    env.database()  # refuse to start on a missing or old database
    _serve(env.app(), host, port)


@main.command()
@click.option("--port", default=5000, show_default=True, type=click.IntRange(1, 65535))
@reports_errors
def demo(port: int):
    """A fresh SQLite file with the demo fleet and demo logins, then serve."""
    from .demo import demo_logins_text, load_demo
    path = cfg.instance_path() / "demo.sqlite3"
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    env = Env(url=f"sqlite:///{path}")
    database = env.database(migrated=False)
    store_db.upgrade(database.engine)
    load_demo(database)
    click.echo(f"Demo database: {path}\nDemo logins:\n{demo_logins_text()}")
    _serve(env.app(), "127.0.0.1", port)


# -- fleet files ---------------------------------------------------------------------------------

@main.command("import")
@click.argument("file", type=click.Path(dir_okay=False, path_type=Path))
@click.option("--dry-run", is_flag=True, help="Show what would change; write nothing.")
@click.option("--by", "actor", default=None, help="Who is importing (a username).")
@reports_errors
def import_(file: Path, dry_run: bool, actor: str | None):
    """Import a fleet file (JSON or YAML)."""
    from .formats.common import read_document
    from .store.fleet import import_fleet
    database = _env().database()
    user_id, actor = _actor(database, actor)
    report = import_fleet(database, read_document(file), actor=actor, user_id=user_id,
                          dry_run=dry_run)
    verb = "Would change" if dry_run else "Imported"
    click.echo(f"{verb} {file.name}: {report.summary()}.")
    for item in report.added:
        click.echo(f"  + {item}")
    for entity, key, path, old, new in report.changes:
        click.echo(f"  ~ {entity} {key} {path}: {old if old is not None else '(none)'} -> "
                   f"{new if new is not None else '(none)'}")
    if dry_run:
        click.echo("Dry run: nothing was written.")


def _actor(database, username: str | None):
    if not username:
        return None, os.environ.get("USER", "cli")
    from .store.users import get_user
    with database.transaction() as session:
        user = get_user(session, username)
        return user.id, user.username


@main.command()
@click.argument("file", type=click.Path(dir_okay=False, path_type=Path))
@reports_errors
def export(file: Path):
    """Write the whole fleet as a fleet file (.yaml, .yml or .json)."""
    from .formats.common import dump_document
    from .formats.fleet import fleet_to_document
    from .store.fleet import export_fleet
    if file.suffix.lower() not in (".yaml", ".yml", ".json"):
        raise InvalidInput("must end in .yaml, .yml or .json", "FILE")
    database = _env().database()
    with database.transaction() as session:
        content = export_fleet(session)
    dump_document(fleet_to_document(content), file)
    click.echo(f"Exported {len(content.models)} models and {len(content.units)} units to "
               f"{file}.")


# -- users ---------------------------------------------------------------------------------------

@main.group()
def user():
    """Logins and API tokens."""


@user.command("add")
@click.argument("name")
@click.option("--role", required=True, type=click.Choice(["viewer", "technician", "steward"]))
@click.option("--display-name", default="", help="The name shown on pages and records.")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@reports_errors
def user_add(name: str, role: str, display_name: str, password_stdin: bool):
    """Create a login (the password is prompted, or read with --password-stdin)."""
    from .store.users import add_user, validate_password, validate_username
    validate_username(name)
    if password_stdin:
        password = sys.stdin.readline().rstrip("\r\n")
    else:
        password = click.prompt("Password", hide_input=True, confirmation_prompt=True)
    validate_password(password)
    database = _env().database()
    with database.transaction() as session:
        add_user(session, name, role, password, display_name=display_name)
    click.echo(f"Created {role} '{name}'.")


@user.command("token")
@click.argument("name")
@click.option("--revoke", is_flag=True, help="Revoke every token of the user instead.")
@reports_errors
def user_token(name: str, revoke: bool):
    """Print a new API token for the user (the last line is the token), or revoke them all."""
    from .store.users import get_user, issue_token, revoke_tokens
    database = _env().database()
    with database.transaction() as session:
        account = get_user(session, name)
        if revoke:
            count = revoke_tokens(session, account)
            click.echo(f"Revoked {count} token{'s' if count != 1 else ''} of '{name}'.")
            return
        token = issue_token(session, account)
    click.echo(f"New API token for '{name}' ({account.role}); it is shown only once:")
    click.echo(token)
