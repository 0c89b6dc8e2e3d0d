"""A job check against the registry: the one place the CLI, the web page and the API call.

It loads the fleet from the database into engine specs and runs every check, the front-end
analysis (check 10) included.
"""

from __future__ import annotations

from datetime import date

from sqlalchemy import select
from sqlalchemy.orm import Session

from .engine.evaluate import evaluate
from .engine.protection import protection_path_check
from .engine.result import Result
from .engine.spec import Fleet, Plan
from .plans import parse_plan
from .store import models as m
from .store.fleet import engine_fleet

CHECKS_BEYOND_THE_CORE = (protection_path_check,)


def site_altitudes(session: Session) -> dict[str, float]:
    return {s.name: s.altitude for s in session.scalars(select(m.Site))}


def plan_from(data, session: Session, on: date | None = None) -> Plan:
    """Validate a plan document; a plan naming a registered site may leave out its altitude."""
    return parse_plan(data, on, sites=site_altitudes(session))


def run_check(plan: Plan, fleet: Fleet) -> Result:
    return evaluate(plan, fleet, extra_checks=CHECKS_BEYOND_THE_CORE)


def check_registry(plan: Plan, session: Session) -> Result:
    return run_check(plan, engine_fleet(session))
