"""Front-end solves kept in the database: a second process (here, the in-process caches
cleared) reads the discharge integration, the steady state and the impulse solve the first one
kept instead of solving again, and gets the result the solve gives; a kept text it cannot read
is solved again; a changed netlist, switch state or scenario value never reads another's
solve. On SQLite and PostgreSQL. The reference is the engine's own solve (its damped Newton,
scipy's LSODA for the discharge) run uncached."""

import dataclasses
import json
from datetime import date
from importlib import resources

import pytest
from sqlalchemy import func, select, update

from registry.demo import load_demo
from registry.engine.network import build_netlist, cache_clear, scenarios, solve_key, using_store
from registry.plans import load_plan
from registry.services.checks import check_registry
from registry.store import db as store_db
from registry.store import models as m
from registry.store.solves import DatabaseSolves, kept_solves

# A 470 uF bank: every front end facing it is integrated; and a CAT III panel with a
# transient, so the impulse is solved too.
PLANS = ("dc-link", "mains-panel")


def _counted(monkeypatch, name, calls):
    """Counts the calls of ``scenarios.<name>`` in ``calls`` (called through, not replaced)."""
    real = getattr(scenarios, name)

    def counted(*args):
        calls.append(args)
        return real(*args)
    monkeypatch.setattr(scenarios, name, counted)
    return calls


@pytest.fixture
def integrations(monkeypatch):
    """Counts the real solves: the integrations (the list), the steady and impulse solves
    (its ``steady`` and ``impulse`` attributes)."""
    calls = _counted(monkeypatch, "integrate_discharge", _Calls())
    calls.steady = _counted(monkeypatch, "solve_steady", [])
    calls.impulse = _counted(monkeypatch, "solve_impulse", [])
    cache_clear()
    yield calls
    cache_clear()


class _Calls(list):
    steady: list
    impulse: list


def _plan(name):
    path = resources.files("registry.seeddata") / "plans" / f"{name}.yaml"
    return load_plan(path, on=date(2026, 12, 2))


def _check(database):
    with database.transaction() as session:
        return [check_registry(_plan(name), session).as_json(findings=True) for name in PLANS]


def _kept(database, kind) -> int:
    with database.transaction() as session:
        return session.scalar(select(func.count()).select_from(m.SolveCache)
                              .where(m.SolveCache.kind == kind))


def _same_process_twice(database, integrations):
    first = _check(database)
    solved = len(integrations)
    steady, impulse = len(integrations.steady), len(integrations.impulse)
    assert solved > 0 and _kept(database, "discharge") == solved
    assert steady > 0 and _kept(database, "steady") == steady
    assert impulse > 0 and _kept(database, "impulse") == impulse
    cache_clear()  # a cold process: nothing in memory
    again = _check(database)
    # every solve read back from the database
    assert len(integrations) == solved
    assert (len(integrations.steady), len(integrations.impulse)) == (steady, impulse)
    assert again == first
    # a kept text this code cannot read is solved again, with the same result
    with database.transaction() as session:
        session.execute(update(m.SolveCache).values(result='{"v0": "not a result"}'))
    cache_clear()
    assert _check(database) == first
    assert len(integrations) == 2 * solved
    assert (len(integrations.steady), len(integrations.impulse)) == (2 * steady, 2 * impulse)


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
    # a steady solve's values hold the waveform's text: another waveform, another key
    assert solve_key("steady", net, (480.0, "ac", None, 60.0)) != solve_key(
        "steady", net, (480.0, "dc", None, 60.0))


def _kx7():
    from registry.demo import demo_fleet_path
    from registry.formats.fleet import fleet_from_file
    return fleet_from_file(demo_fleet_path()).models["kx-7"]


def _with_param(net, id, name, value):
    """``net`` with element ``id``'s parameter ``name`` set to ``value``."""
    def changed(e):
        if e.id != id:
            return e
        return dataclasses.replace(e, params=tuple((k, value if k == name else v)
                                                   for k, v in e.params))
    return dataclasses.replace(net, elements=tuple(changed(e) for e in net.elements))


def _doc(res) -> dict:
    """A steady result as the numbers the limits read (the warm-start data left out)."""
    return json.loads(scenarios._dump_steady(res))


def _never_stale(database):
    """A wrong steady solve planted under one netlist's key is read for that netlist (so the
    store is asked) and never for another netlist (an element's value changed), another switch
    state (low-Z closes S1) or another scenario value: those are solved, and equal the solve
    made with no store at all."""
    kx7 = _kx7()
    net = build_netlist(kx7, kx7.mode("vdc"))
    values = (480.0, "ac", 2.0, 60.0)
    planted = scenarios.solve_steady(net, 1.0, "dc", None, 60.0)  # another solve's numbers
    store = DatabaseSolves(database.engine)
    store.put(solve_key("steady", net, values), scenarios._dump_steady(planted), "steady")
    assert store.flush() == 1
    others = [(net, (480.0, "dc", 2.0, 60.0)),  # another waveform
              (net, (480.0 * (1 + 1e-15), "ac", 2.0, 60.0)),  # the next float up
              (net, (480.0, "ac", None, 60.0)),  # a stiff source
              (net, (480.0, "ac", 2.0, 61.0)),  # another duration
              (build_netlist(kx7, kx7.mode("lowz")), values),  # S1 closed
              (_with_param(net, "R1", "resistance", 1001.0), values)]  # R1 changed
    for other, vals in others:
        assert solve_key("steady", other, vals) != solve_key("steady", net, values)
    cache_clear()
    with kept_solves(database.engine) as reading:
        assert _doc(scenarios.steady(net, *values)) == _doc(planted)  # the store is asked
        for other, vals in others:
            assert _doc(scenarios.steady(other, *vals)) == _doc(
                scenarios.solve_steady(other, *vals))
    assert reading.found == 1 and reading.read == 1 + len(others)


def test_a_changed_netlist_state_or_value_never_reads_a_kept_solve(database):
    _never_stale(database)


@pytest.mark.postgres
def test_a_changed_netlist_never_reads_a_kept_solve_on_postgres(pg_url):
    database = store_db.Database(pg_url)
    try:
        store_db.upgrade(database.engine)
        _never_stale(database)
    finally:
        database.dispose()


def test_kept_steady_and_impulse_solves_read_back_as_solved():
    """A steady and an impulse solve read back from their text are the solve's numbers,
    types and states, on every mode of every demo model with a front end (the reference: the
    same solve, uncached)."""
    from registry.demo import demo_fleet_path
    from registry.formats.fleet import fleet_from_file
    checked = 0
    for model in fleet_from_file(demo_fleet_path()).models.values():
        for mode in model.modes if model.front_end else ():
            if len(mode.terminals) != 2:
                continue
            net = build_netlist(model, mode)
            for args in ((230.0, "ac", None, 60.0), (1000.0, "dc", 2.0, 5.0)):
                res = scenarios.solve_steady(net, *args)
                back = scenarios._load_steady(scenarios._dump_steady(res))
                assert [(s.label, s.state, s.peak is s.heat) for s in back.snapshots] == [
                    (s.label, s.state, s.peak is s.heat) for s in res.snapshots]
                for a, b in zip(res.snapshots, back.snapshots, strict=True):
                    for x, y in ((a.heat, b.heat), (a.peak, b.peak)):
                        assert (x.node_voltage, x.voltage, x.current, x.source_current) == (
                            y.node_voltage, y.voltage, y.current, y.source_current)
                        assert {type(v) for v in (*y.voltage.values(), *y.current.values())} \
                            == {type(v) for v in (*x.voltage.values(), *x.current.values())}
                assert (back.events, back.notes) == (res.events, res.notes)
                checked += 1
            imp = scenarios.solve_impulse(net, 6000.0, 2.0)
            back_i = scenarios._load_impulse(scenarios._dump_impulse(imp))
            assert (back_i.solution.voltage, back_i.solution.current, back_i.state,
                    back_i.notes) == (imp.solution.voltage, imp.solution.current, imp.state,
                                      imp.notes)
    assert checked > 10


def test_no_store_plugged_in_solves_as_before():
    kx7 = _kx7()
    net = build_netlist(kx7, kx7.mode("vac"))
    with using_store(None):
        assert _doc(scenarios.steady(net, 230.0, "ac", None, 60.0)) == _doc(
            scenarios.solve_steady(net, 230.0, "ac", None, 60.0))
