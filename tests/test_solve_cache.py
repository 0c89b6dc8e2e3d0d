"""Front-end solves kept in the database: a second process (here, the in-process caches
cleared) reads the discharge integration the first one kept instead of integrating again, and
gets the result the integration gives; a kept text it cannot read is solved again. On SQLite
and PostgreSQL. The reference is the engine's own integration (scipy's LSODA) run uncached."""

from datetime import date
from importlib import resources

import pytest
from sqlalchemy import func, select, update

from registry.demo import load_demo
from registry.engine.network import build_netlist, cache_clear, scenarios, solve_key
from registry.plans import load_plan
from registry.services.checks import check_registry
from registry.store import db as store_db
from registry.store import models as m

PLAN = "dc-link"  # a 470 uF bank: every front end facing it is integrated


@pytest.fixture
def integrations(monkeypatch):
    """Counts the real integrations (the function is called through, not replaced)."""
    calls = []
    real = scenarios.integrate_discharge

    def counted(*args):
        calls.append(args)
        return real(*args)
    monkeypatch.setattr(scenarios, "integrate_discharge", counted)
    cache_clear()
    yield calls
    cache_clear()


def _plan():
    path = resources.files("registry.seeddata") / "plans" / f"{PLAN}.yaml"
    return load_plan(path, on=date(2026, 12, 2))


def _check(database):
    with database.transaction() as session:
        return check_registry(_plan(), session).as_json()


def _kept(database) -> int:
    with database.transaction() as session:
        return session.scalar(select(func.count()).select_from(m.SolveCache))


def _same_process_twice(database, integrations):
    first = _check(database)
    solved = len(integrations)
    assert solved > 0 and _kept(database) == solved
    cache_clear()  # a cold process: nothing in memory
    again = _check(database)
    assert len(integrations) == solved  # every integration read back from the database
    assert again == first
    # a kept text this code cannot read is solved again, with the same result
    with database.transaction() as session:
        session.execute(update(m.SolveCache).values(result='{"v0": "not a result"}'))
    cache_clear()
    assert _check(database) == first
    assert len(integrations) == 2 * solved


def test_a_cold_process_reads_the_kept_solves(demo, integrations):
    _same_process_twice(demo, integrations)


@pytest.mark.postgres
def test_solve_cache_on_postgres(pg_url, integrations):
    database = store_db.Database(pg_url)
    try:
        store_db.upgrade(database.engine)
        assert load_demo(database)
        _same_process_twice(database, integrations)
    finally:
        database.dispose()


def test_the_key_is_the_content():
    from registry.demo import demo_fleet_path
    from registry.formats.fleet import fleet_from_file
    fleet = fleet_from_file(demo_fleet_path())
    kx7 = fleet.models["kx-7"]
    vdc, lowz = kx7.mode("vdc"), kx7.mode("lowz")
    values = (470e-6, 678.0, None, 50.0, 60.0)
    net = build_netlist(kx7, vdc)
    assert solve_key("discharge", net, values) == solve_key("discharge", build_netlist(kx7, vdc),
                                                            values)
    # another switch state (low-Z closes S1), another value, another kind: another key
    assert solve_key("discharge", build_netlist(kx7, lowz), values) != solve_key(
        "discharge", net, values)
    assert solve_key("discharge", net, values[:-1] + (61.0,)) != solve_key(
        "discharge", net, values)
    assert solve_key("steady", net, values) != solve_key("discharge", net, values)
