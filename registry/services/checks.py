"""Check a job: a plan against the registry's fleet, the one place the CLI, the web page and
the API call.

It loads the fleet from the database into engine specs and runs the engine's whole check
(:func:`registry.engine.evaluate.evaluate`, the front-end analysis of check 10 included).
"""

from __future__ import annotations

import contextlib
import gc
from datetime import date

from sqlalchemy import select
from sqlalchemy.orm import Session

from ..engine.evaluate import evaluate
from ..engine.result import Result
from ..engine.spec import Fleet, Plan
from ..plans import parse_plan
from ..store import models as m
from ..store.loading import engine_fleet


def site_altitudes(session: Session) -> dict[str, float]:
    return {s.name: s.altitude for s in session.scalars(select(m.Site))}


def plan_from(data, session: Session, on: date | None = None) -> Plan:
    """Validate a plan document; a plan naming a registered site may leave out its altitude."""
    return parse_plan(data, on, sites=site_altitudes(session))


@contextlib.contextmanager
def _collector_paused():
    """Pause Python's cycle collector while a check builds its objects: a fleet of 50 000
    units makes some hundred thousand small ones that hold no cycles, and each full
    collection would walk every one of them again (it took about half of a large check).
    Counting references still frees everything; the collector runs again afterwards."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def run_check(plan: Plan, fleet: Fleet) -> Result:
    """The whole check of ``plan`` against a fleet already loaded."""
    with _collector_paused():
        return evaluate(plan, fleet)


def check_registry(plan: Plan, session: Session, *, solves: list | None = None) -> Result:
    """The whole check of ``plan`` against the fleet in the database, its front-end solves
    read from and kept in the database's solve cache (:mod:`registry.store.solves`). Given a
    list, ``solves`` gets the check's store (how many solves it looked up, found and wrote:
    the bench says where its solves came from)."""
    from ..store.solves import kept_solves
    with _collector_paused():
        fleet = engine_fleet(session)
        with kept_solves(session.get_bind().engine) as store:
            if solves is not None:
                solves.append(store)
            return run_check(plan, fleet)
