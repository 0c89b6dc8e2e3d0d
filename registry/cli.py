"""The ``withstand`` command.

Exit codes: 0 done, 1 the command ran and the answer is no, 2 bad input (nothing
written). Every failure is a message naming what is wrong, never a traceback.
"""

from __future__ import annotations

import functools
import os
import sys
from pathlib import Path

import click

from . import config as cfg
from .errors import InvalidInput, WithstandError, shown
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
    # what the user typed may be in the message: no control character reaches the terminal
    lines = message.split("\n")
    click.echo("withstand: " + "\n".join(shown(line, 2000) for line in lines), err=True)
    sys.exit(code)


# Click's own exceptions (usage errors, --help, Ctrl-C at a prompt) are Click's to report.
_CLICK_EXCEPTIONS = (click.exceptions.ClickException, click.exceptions.Abort,
                     click.exceptions.Exit)


def _report(exc: BaseException) -> None:
    """The message and exit code of an error raised by a command (exits)."""
    if isinstance(exc, InvalidInput):
        if len(exc.problems) == 1:
            fail(f"error: {exc.problems[0]}", exc.exit_code)
        lines = "\n".join(f"  {p}" for p in exc.problems)
        fail(f"error: {len(exc.problems)} problems, nothing written:\n{lines}", exc.exit_code)
    if isinstance(exc, WithstandError):
        fail(f"error: {exc}", exc.exit_code)
    if isinstance(exc, OSError):  # a file that cannot be written, a port that cannot be bound
        where = f" ({exc.filename})" if exc.filename else ""
        fail(f"error: {exc.strerror or exc}{where}", 2)
    if isinstance(exc, ValueError) and "null byte" in str(exc):  # os functions on a NUL
        fail("error: a file name cannot hold a NUL character", 2)
    # Not one of the package's errors: a fault of withstand, not of the input. One line, no
    # traceback; the transaction it ran in was rolled back, so nothing was written.
    first = (str(exc).splitlines() or [""])[0]
    fail(f"internal error ({type(exc).__name__}: {first}); nothing was written. This is a "
         "fault in withstand: please report it with the command you ran.", 2)


def reports_errors(fn):
    """Turn the package's errors into a message and an exit code."""
    @functools.wraps(fn)
    def inner(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except _CLICK_EXCEPTIONS:
            raise
        except Exception as exc:
            _report(exc)
    return inner


class _Group(click.Group):
    """A command group whose every command (and any added later) reports errors as
    :func:`reports_errors` does: the one error path of the CLI."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except _CLICK_EXCEPTIONS:
            raise
        except Exception as exc:
            _report(exc)


class _Path(click.Path):
    """A file path; a NUL in it is a usage error (``click.Path`` would raise ValueError)."""

    def convert(self, value, param, ctx):
        if "\x00" in str(value):
            self.fail("a file name cannot hold a NUL character", param, ctx)
        return super().convert(value, param, ctx)


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
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
    store_db.make_folder(database.engine)
    before = store_db.current_revision(database.engine)
    store_db.upgrade(database.engine)
    after = store_db.current_revision(database.engine)
    shown = _shown_url(env.url)
    if before == after:
        click.echo(f"Database {shown} is at the latest migration ({after}).")
    else:
        click.echo(f"Database {shown} migrated from {before or 'empty'} to {after}.")
    from .store.chain import seal_legacy
    try:
        with database.transaction(immediate=True) as session:
            sealed = seal_legacy(session)
    except ValueError as exc:
        fail(f"{exc}. Compare the events with your last exported workbook.", 1)
    if sealed:
        click.echo(sealed[0].upper() + sealed[1:] + ".")
    if with_demo:
        from .demo import demo_logins_text, load_demo, working_demo_logins
        if load_demo(database):
            click.echo("Loaded the demo fleet. Demo logins:\n" + demo_logins_text())
            return
        click.echo("The database already holds a fleet; the demo was not loaded.")
        working = working_demo_logins(database)
        if working:
            click.echo("Demo logins that still work:\n" + demo_logins_text(working))
        else:
            click.echo("No demo login works with its demo password here; add a login with "
                       "`withstand user add NAME --role steward`.")


def _shown_url(url: str) -> str:
    from sqlalchemy.engine import make_url
    return make_url(url).render_as_string(hide_password=True)


# -- serving -------------------------------------------------------------------------------------

def _ready(app) -> None:
    """What a long-running server does once before its first request, so no request pays
    it: every template compiled (Jinja compiles one when first asked for it, 5 to 40 ms
    each), the modules a check needs imported, and then everything alive frozen out of the
    cyclic garbage collector's full passes (``gc.freeze``: modules, classes, the app live as
    long as the process; a full pass over them paused every request in flight for tens of
    milliseconds at 20k units). No page and no data is rendered or read here."""
    import gc

    from .services import checks  # noqa: F401 - imported for the check pages
    for name in app.jinja_env.list_templates(extensions=("html",)):
        app.jinja_env.get_template(name)
    gc.collect()
    gc.freeze()


def _serve(app, host: str, port: int) -> None:
    from waitress.server import create_server
    _ready(app)
    try:
        server = create_server(app, host=host, port=port, threads=8, ident="withstand")
    except OSError as exc:
        raise InvalidInput(f"cannot listen on {host}:{port}: {exc.strerror or exc}",
                           "--port") from None
    click.echo(f"withstand is serving on http://{host}:{port}/  (Ctrl-C stops it)")
    sys.stdout.flush()
    try:
        server.run()
    except KeyboardInterrupt:
        click.echo("Stopped.")


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
@click.argument("file", type=_Path(dir_okay=False, path_type=Path))
@click.option("--dry-run", is_flag=True, help="Show what would change; write nothing.")
@click.option("--by", "actor", default=None, help="Who is importing (a username).")
@reports_errors
def import_(file: Path, dry_run: bool, actor: str | None):
    """Import a fleet file (JSON or YAML), or units from a spreadsheet (xlsx or csv)."""
    from .formats.common import read_document
    from .services.fleet import import_document, import_sheet
    from .store.unit_sheet import is_unit_sheet
    database = _env().database()
    shell_user = os.environ.get("USER", "cli")
    if is_unit_sheet(file):
        report = import_sheet(database, file, by=actor, default_actor=shell_user,
                              dry_run=dry_run)
    else:
        report = import_document(database, read_document(file), by=actor,
                                 default_actor=shell_user, dry_run=dry_run)
    verb = "Would change" if dry_run else "Imported"
    click.echo(f"{verb} {file.name}: {report.summary()}.")
    for item in report.added:
        click.echo(f"  + {item}")
    for entity, key, path, old, new in report.changes:
        click.echo(f"  ~ {entity} {key} {path}: {old if old is not None else '(none)'} -> "
                   f"{new if new is not None else '(none)'}")
    for tag, asked in report.kept_on_hold:
        click.echo(f"  ! unit {tag} stays on-hold, not {asked}: its hold is open, and only a "
                   "steward's release (withstand hold release) returns it to service")
    if dry_run:
        click.echo("Dry run: nothing was written.")


@main.command()
@click.argument("file", type=_Path(dir_okay=False, path_type=Path))
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


# -- job checks ----------------------------------------------------------------------------------

@main.command()
@click.argument("plan", type=_Path(dir_okay=False, path_type=Path))
@click.option("--json", "as_json", is_flag=True, help="Print the result as withstand-result/1.")
@click.option("--all", "show_all", is_flag=True, help="Print every setup, not the first 20.")
@click.option("--on", "on", default=None, metavar="DATE",
              help="The day of the job (YYYY-MM-DD), for verification dates; default today.")
@click.option("--explain", default=None, metavar="TAG",
              help="Print every finding of this unit's setups (with --json: put them in).")
@click.option("--findings", "all_findings", is_flag=True,
              help="With --json: every setup's findings, not only the deciding one.")
@reports_errors
def check(plan: Path, as_json: bool, show_all: bool, on: str | None, explain: str | None,
          all_findings: bool):
    """Run a job plan against the fleet. Exit 0 if some setup fits, 1 if none does."""
    import json as json_module

    from .services.checks import check_registry, plan_from
    from .plans import read_plan_file
    from .report import exit_code, render_text
    from .formats.common import parse_date
    day = parse_date(on, "--on")
    database = _env().database()
    data = read_plan_file(plan)
    with database.transaction() as session:
        parsed = plan_from(data, session, day)
        result = check_registry(parsed, session)
    if explain and not any(s.instrument == explain or explain in s.accessories
                           for s in result.setups) and \
            result.accessory(explain) is None and \
            not any(x.unit == explain for x in result.excluded):
        raise InvalidInput(f"no unit '{explain}' in this result", "--explain")
    if as_json:
        asked: bool | str = True if all_findings else (explain or False)
        # written as it is encoded, in pieces of about 64 kB: the text of a large fleet's
        # result is never held whole
        pieces: list[str] = []
        size = 0
        for chunk in json_module.JSONEncoder(indent=2, ensure_ascii=False).iterencode(
                result.as_json(findings=asked)):
            pieces.append(chunk)
            size += len(chunk)
            if size > 65536:
                sys.stdout.write("".join(pieces))
                pieces, size = [], 0
        sys.stdout.write("".join(pieces) + "\n")
    else:
        click.echo(render_text(result, show_all=show_all, explain=explain), nl=False)
    sys.exit(exit_code(result))


# -- users ---------------------------------------------------------------------------------------

@main.group()
def user():
    """Logins and API tokens."""


def _read_password(password_stdin: bool) -> str:
    from .store.users import MAX_PASSWORD_LENGTH, validate_password
    if password_stdin:
        try:  # one line, read no further than a password can be long
            password = sys.stdin.readline(4 * MAX_PASSWORD_LENGTH + 2).rstrip("\r\n")
        except UnicodeDecodeError:
            raise InvalidInput("is not UTF-8 text", "password") from None
    else:
        password = click.prompt("Password", hide_input=True, confirmation_prompt=True)
    return validate_password(password)


_STEWARD_OPTION = click.option("--by", "by", default=None,
                               help="The steward doing this (a login; default "
                                    "$WITHSTAND_USER).")


@user.command("add")
@click.argument("name")
@click.option("--role", required=True, type=click.Choice(["viewer", "technician", "steward"]))
@click.option("--display-name", default="", help="The name shown on pages and records.")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@reports_errors
def user_add(name: str, role: str, display_name: str, password_stdin: bool):
    """Create a login (the password is prompted, or read with --password-stdin)."""
    from .services import users
    from .store.users import validate_username
    validate_username(name)  # before asking for a password
    password = _read_password(password_stdin)
    added = users.add_user(_env().database(), name, role, password, display_name=display_name)
    click.echo(f"Created {added.role} '{added.username}'.")


@user.command("role")
@click.argument("name")
@click.argument("role", type=click.Choice(["viewer", "technician", "steward"]))
@_STEWARD_OPTION
@reports_errors
def user_role(name: str, role: str, by: str | None):
    """Give a login another role (a steward cannot lower their own)."""
    from .services import users
    changed = users.change_role(_env().database(), name, role, by=_by(by))
    click.echo(f"'{changed.username}' is now {changed.role}.")


def _set_active(name: str, active: bool, by: str | None) -> None:
    from .services import users
    changed, revoked = users.set_active(_env().database(), name, active, by=_by(by))
    if active:
        click.echo(f"'{changed.username}' is active again; issue a token if it needs one.")
    else:
        click.echo(f"'{changed.username}' is deactivated; {revoked} token"
                   f"{'' if revoked == 1 else 's'} revoked.")


@user.command("deactivate")
@click.argument("name")
@_STEWARD_OPTION
@reports_errors
def user_deactivate(name: str, by: str | None):
    """Deactivate a login and revoke its tokens (not your own)."""
    _set_active(name, False, by)


@user.command("reactivate")
@click.argument("name")
@_STEWARD_OPTION
@reports_errors
def user_reactivate(name: str, by: str | None):
    """Let a deactivated login in again."""
    _set_active(name, True, by)


@user.command("password")
@click.argument("name")
@click.option("--password-stdin", is_flag=True, help="Read the password from standard input.")
@reports_errors
def user_password(name: str, password_stdin: bool):
    """Set a login's password (prompted, or read with --password-stdin)."""
    from .services import users
    password = _read_password(password_stdin)
    changed = users.set_password(_env().database(), name, password)
    click.echo(f"Set a new password for '{changed.username}'.")


@user.command("token")
@click.argument("name")
@click.option("--revoke", is_flag=True, help="Revoke every token of the user instead.")
@reports_errors
def user_token(name: str, revoke: bool):
    """Print a new API token for the user (the last line is the token), or revoke them all.
    A deactivated login gets none until it is reactivated."""
    from .services import users
    database = _env().database()
    if revoke:
        owner, count = users.revoke_tokens(database, name)
        click.echo(f"Revoked {count} token{'s' if count != 1 else ''} of '{owner.username}'.")
        return
    owner, token = users.issue_token(database, name)
    click.echo(f"New API token for '{owner.username}' ({owner.role}); it is shown only once:")
    click.echo(token)


# -- events, holds, audit, backup ------------------------------------------------------

def _quantity_option(value: str | None, dim, option: str) -> float | None:
    if value is None:
        return None
    from .units import parse_quantity
    return parse_quantity(value, dim, option)


def _parse_time(value: str | None, option: str = "--at"):
    """ISO 8601 text as naive UTC; a time without an offset is UTC."""
    from .formats.common import parse_time
    return parse_time(value, option)


def _by(username: str | None) -> str:
    username = username or os.environ.get("WITHSTAND_USER")
    if not username:
        raise InvalidInput("name the user doing this (a login), or set WITHSTAND_USER", "--by")
    return username


@main.group()
def event():
    """Overstress and damage events (append-only, hash-chained)."""


@event.command("add")
@click.option("--unit", "unit", required=True, help="The unit's tag.")
@click.option("--kind", required=True, type=click.Choice(
    ["overvoltage", "transient", "discharge", "fuse-open", "mechanical", "other"]))
@click.option("--mode", default=None, help="The mode the unit was in (a mode key).")
@click.option("--voltage", default=None,
              help="Applied voltage, e.g. '1200 V' (rms or dc; the peak for a transient).")
@click.option("--energy", default=None, help="Energy discharged, e.g. '40 J'.")
@click.option("--duration", default=None, help="How long it lasted, e.g. '90 s'.")
@click.option("--waveform", default=None, type=click.Choice(["ac", "dc"]),
              help="Whether the applied voltage was ac or dc; left out, a current input's "
                   "fuse is judged on the lower of its ac and dc ratings.")
@click.option("--symptom", "symptoms", multiple=True,
              help="arc, smell, heat, visible-damage, fuse-open, wrong-reading or none; "
                   "repeat for several.")
@click.option("--note", default="", help="What happened, in words.")
@click.option("--by", "by", default=None, help="Who logs it (a technician or steward login; "
                                               "default $WITHSTAND_USER).")
@click.option("--at", "at", default=None,
              help="When it happened, ISO 8601 (UTC unless an offset is given, as in the web "
                   "form and the API); "
                   "default now.")
@reports_errors
def event_add(unit, kind, mode, voltage, energy, duration, waveform, symptoms, note, by, at):
    """Log an event; print whether it was within rating and whether a hold opened."""
    from . import units as u
    from .services.events import log_event
    values = dict(voltage=_quantity_option(voltage, u.VOLTAGE, "--voltage"),
                  energy=_quantity_option(energy, u.ENERGY, "--energy"),
                  duration=_quantity_option(duration, u.TIME, "--duration"))
    when = _parse_time(at)
    database = _env().database()
    try:
        logged = log_event(database, unit=unit, kind=kind, by=_by(by), mode=mode,
                           symptoms=symptoms, note=note, at=when, waveform=waveform,
                           **values)
    except InvalidInput as exc:  # name the options, as the user typed them
        from .errors import FieldProblem
        option = {"mode": "--mode", "kind": "--kind", "symptoms": "--symptom", "at": "--at",
                  "voltage": "--voltage", "energy": "--energy", "duration": "--duration",
                  "waveform": "--waveform"}
        raise InvalidInput([FieldProblem(option.get(p.path, p.path), p.message)
                            for p in exc.problems]) from None
    a = logged.assessment
    verdict = {True: "within rating", False: "NOT within rating",
               None: "not shown to be within rating (data missing)"}[a.within_rating]
    click.echo(f"Event {logged.id} logged for {logged.unit}: {verdict}.")
    for reason in a.reasons:
        click.echo(f"  {reason}")
    if a.clamp_conducted:
        click.echo("  The transient exceeded the clamp's threshold: its clamp conducted.")
    if logged.hold_id is not None:
        click.echo(f"Hold {logged.hold_id} opened on {logged.unit} ({a.hold_reason}); it "
                   "stays out of service until a steward releases it.")
    elif logged.hold_note:
        click.echo(f"No hold opened: {logged.hold_note} (it would have been: "
                   f"{a.hold_reason}).")
    else:
        click.echo("No hold opened.")


@main.group()
def hold():
    """Holds: units kept out of service until inspected."""


@hold.command("release")
@click.option("--unit", "unit", required=True, help="The unit's tag.")
@click.option("--result", required=True, type=click.Choice(["pass", "repaired", "fail"]))
@click.option("--by", "by", default=None, help="The steward releasing it (a login).")
@click.option("--note", default="", help="The inspection note.")
@reports_errors
def hold_release(unit, result, by, note):
    """Close a unit's open hold with the inspection result (fail retires the unit)."""
    from .services.holds import release_hold
    database = _env().database()
    rel = release_hold(database, unit=unit, result=result, by=_by(by), note=note)
    ids = ", ".join(str(i) for i in rel.holds)
    click.echo(f"Released hold{'s' if len(rel.holds) > 1 else ''} {ids} on {rel.unit} "
               f"({rel.result}); the unit is now {rel.status}.")


@main.group()
def audit():
    """The audit workbook and the check of the event chain."""


@audit.command("verify")
@click.option("--against", "against", default=None,
              type=click.Path(exists=True, path_type=Path),
              help="An audit workbook (or CSV folder) exported earlier: also show that no "
                   "event, hold or change was removed since.")
@reports_errors
def audit_verify(against):
    """Recompute the event, hold and change chains; exit 1 if one is broken (or, with
    --against, if entries were removed since that export)."""
    from .store.chain import compare_with, read_exported_heads, verify_all
    exported = read_exported_heads(against) if against is not None else None
    database = _env().database()
    with database.transaction() as session:
        states = verify_all(session)
        compared = compare_with(session, exported) if exported is not None else []
    names = {"event": "Event chain", "hold": "Hold chain", "change": "Change chain",
             "seal": "Seal"}
    ok = True
    for name, state in states.items():
        click.echo(f"{names[name]} {state.summary()}.")
        ok = ok and state.ok
    for name, holds, what in compared:
        click.echo(f"Against {against.name}, {names[name].lower()}: "
                   f"{'holds' if holds else 'FAILS'}: {what}.")
        ok = ok and holds
    if not ok:
        sys.exit(1)


@audit.command("export")
@click.option("--out", "out", required=True,
              help="FILE.xlsx for the workbook, or DIR/ for one CSV per sheet.")
@click.option("--since", default=None, help="Events, holds and changes from this date on.")
@click.option("--site", default=None, help="Only the units at this site.")
@click.option("--on", "on", default=None, help="The day overdue is counted from; default "
                                               "today.")
@reports_errors
def audit_export(out, since, site, on):
    """The audit workbook (xlsx), or one CSV per sheet when --out ends in '/'."""
    from .store.audit import export_audit
    from .formats.common import parse_date
    since_d, on_d = parse_date(since, "--since"), parse_date(on, "--on")
    database = _env().database()
    written = export_audit(database, out, since=since_d, site=site, on=on_d,
                           source=_shown_url(_env().url))
    click.echo(f"Wrote {written}.")


@main.command()
@click.argument("file", type=_Path(dir_okay=False, path_type=Path))
@reports_errors
def backup(file: Path):
    """An online, consistent copy of the database (SQLite); PostgreSQL: use pg_dump."""
    from .store.backup import backup_database
    database = _env().database()
    report = backup_database(database, file)
    click.echo(f"Backed up to {file}: {report}.")


# -- models --------------------------------------------------------------------------------------

@main.group("model")
def model_group():
    """Model specs."""


@model_group.command("spice")
@click.argument("key")
@click.option("--mode", "mode_key", required=True, help="The mode whose switch states to use.")
@click.option("--scenario", type=click.Choice(["steady", "discharge"]), default="steady",
              show_default=True, help="A dc operating point, or a capacitor discharge in time.")
@click.option("--voltage", default=None, help="Source voltage (default: the mode's max_input).")
@click.option("--source-impedance", default=None, help="Source impedance, e.g. '2 ohm'.")
@click.option("--capacitance", default=None, help="For --scenario discharge, e.g. '470 uF'.")
@click.option("--duration", default=None, help="For --scenario discharge, e.g. '5 s'.")
@click.option("--out", type=_Path(dir_okay=False, path_type=Path), default=None,
              help="Write the deck here instead of printing it.")
@reports_errors
def model_spice(key, mode_key, scenario, voltage, source_impedance, capacitance, duration, out):
    """The model's front end in that mode as a SPICE deck, to check the solver with a
    circuit simulator (e.g. `ngspice -b deck.cir`)."""
    from . import units as u
    from .engine.network.spice import spice_deck
    from .errors import NotFound
    from .store.specs import model_spec
    database = _env().database()
    with database.transaction() as session:
        from sqlalchemy import select

        from .store import models as m
        row = session.scalar(select(m.Model).where(m.Model.key == key))
        if row is None:
            raise NotFound(f"no model '{key}'")
        spec = model_spec(row)
    mode = spec.mode(mode_key)
    if mode is None:
        raise InvalidInput(f"'{mode_key}' is not a mode of {key}; it has "
                           f"{', '.join(x.key for x in spec.modes) or 'none'}", "--mode")
    if not spec.front_end:
        raise InvalidInput(f"model {key} has no front end to write", "KEY")
    if scenario == "discharge" and capacitance is None:
        raise InvalidInput("a discharge deck needs the capacitance", "--capacitance")
    deck = spice_deck(spec, mode, scenario=scenario,
                      voltage=_quantity_option(voltage, u.VOLTAGE, "--voltage"),
                      source_impedance=_quantity_option(source_impedance, u.RESISTANCE,
                                                        "--source-impedance"),
                      capacitance=_quantity_option(capacitance, u.CAPACITANCE,
                                                   "--capacitance"),
                      duration=_quantity_option(duration, u.TIME, "--duration"))
    if out is not None:
        out.write_text(deck)
        click.echo(f"Wrote the {scenario} deck of {key} in mode {mode_key} to {out}.")
    else:
        click.echo(deck, nl=False)
