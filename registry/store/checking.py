"""A job check against the fleet in the database: the plan document in, the engine's result
out. The web pages and the API both come through here, so they agree with each other."""

from __future__ import annotations

from datetime import date

from sqlalchemy.orm import Session

from ..engine.evaluate import evaluate
from ..engine.result import Result
from ..engine.spec import Fleet
from ..plans import parse_plan
from .fleet import engine_fleet
from .queries import site_altitudes


def extra_checks():
    """The checks that plug into the engine beyond checks 1 to 9 and 11 (check 10, the
    protection path, when its adapter is installed)."""
    try:
        from ..engine.network import setup_checks  # type: ignore[attr-defined]
    except ImportError:
        return ()
    return tuple(setup_checks())


def run_check(session: Session, doc, on: date | None = None) -> Result:
    """Validate the plan document ``doc`` (raises InvalidInput) and check it."""
    return check_with_fleet(session, doc, on)[0]


def check_with_fleet(session: Session, doc, on: date | None = None) -> tuple[Result, Fleet]:
    """:func:`run_check`, with the engine's fleet it ran against (for the models' values)."""
    plan = parse_plan(doc, on, sites=site_altitudes(session))
    fleet = engine_fleet(session)
    return evaluate(plan, fleet, extra_checks=extra_checks()), fleet
