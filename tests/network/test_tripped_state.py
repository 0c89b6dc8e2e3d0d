"""The PTC tripped-state search, and solve failures as ``unknown`` findings.

The reproduction (``fleets/lowz-ahead.yaml``, ``fleets/dc-700.yaml``): a meter whose low-Z
switch S1 sits ahead of the limiter, from V to node c, with a second PTC PT2 from c to COM; a
700 V dc plan with 2 mF. In low-Z, PT2 sits straight across the stiff source, so the root of
the tripped-state equation lies exactly at the top of the search (V(R) = V_open for every R),
where the old search found no sign change and scipy's brentq raised ``ValueError``.
"""

from __future__ import annotations

import json
import math
from datetime import date
from pathlib import Path

import pytest

from registry.services.checks import run_check
from registry.cli import main
from registry.engine.network import NetworkError, SolveFailed, build_netlist, cache_clear
from registry.engine.network import scenarios
from registry.engine.network.netlist import Netlist
from registry.engine.network.scenarios import discharge, steady, tripped_resistance
from registry.engine.network.solver import COLD
from registry.engine.network.spice import netlist_deck, node_names, parse_op
from registry.engine.spec import Element
from registry.formats.fleet import fleet_from_file
from registry.plans import load_plan

E = Element.of
FLEETS = Path(__file__).parent / "fleets"
FLEET = FLEETS / "lowz-ahead.yaml"
PLAN = FLEETS / "dc-700.yaml"
ON = date(2026, 12, 2)


@pytest.fixture(autouse=True)
def fresh_cache():
    """The analyses are cached across tests; these tests inject failures, so start and end
    without cached solves."""
    cache_clear()
    yield
    cache_clear()


def lowz_net():
    fleet = fleet_from_file(FLEET)
    model = fleet.models["fm-20"]
    return build_netlist(model, model.mode("lowz"))


def plan():
    return load_plan(PLAN, ON)


# -- the search itself ----------------------------------------------------------------------

def test_ptc_straight_across_a_stiff_source_trips_at_v_squared_over_p():
    # PT2 alone across 700 V: it takes P = V**2 / R (Joule's law), so R = V**2 / P
    # = 700**2 / 1.2 = 408.3 kohm. The old search raised ValueError here.
    r, remark = tripped_resistance(lowz_net(), COLD, "PT2", 700.0, None, 1.2, 1000.0)
    assert r == pytest.approx(700.0 ** 2 / 1.2, rel=1e-9)
    assert remark == ""


def _largest_root(vth: float, rth: float, p: float) -> float:
    """The larger R with Vth**2 R / (R + Rth)**2 = P (Thevenin's theorem and Joule's law):
    P R**2 + (2 P Rth - Vth**2) R + P Rth**2 = 0, the quadratic formula."""
    b = 2 * p * rth - vth ** 2
    disc = b * b - 4 * p * p * rth ** 2
    return (-b + math.sqrt(disc)) / (2 * p)


@pytest.mark.parametrize("vth,rth,p", [
    (100.0, 50.0, 1.0),      # the root far above Rth
    (700.0, 2.0, 1.2),       # nearly stiff
    (20.0, 99.0, 1.0),       # Pmax = Vth**2 / (4 Rth) = 1.0101 W: a hump 0.2 decade wide
    (20.0, 99.9, 1.0),       # Pmax = 1.001 W: a hump narrower than the scan's grid step
])
def test_tripped_resistance_against_the_closed_form(vth, rth, p):
    net = Netlist((E("PT", "ptc", ("V", "COM"), resistance=10.0, trip_current=0.05,
                     tripped_power=p),), "V", "COM")
    r, remark = tripped_resistance(net, COLD, "PT", vth, rth, p, 10.0)
    assert remark == ""
    assert r == pytest.approx(_largest_root(vth, rth, p), rel=1e-6)


def test_tripped_resistance_when_no_resistance_can_take_the_power():
    # Pmax = Vth**2 / (4 Rth) = 400 / 400 = 1 W < 1.2 W (maximum power transfer): no root.
    net = Netlist((E("PT", "ptc", ("V", "COM"), resistance=10.0, trip_current=0.05,
                     tripped_power=1.2),), "V", "COM")
    r, remark = tripped_resistance(net, COLD, "PT", 20.0, 100.0, 1.2, 10.0)
    assert r == 10.0 and "cannot deliver" in remark


def test_tripped_resistance_without_the_cold_resistance_cannot_be_solved():
    # The solver's rule for a PTC without its resistance (an element the solve needs):
    # NetworkError, which the check reports as unknown; before, the search compared None.
    net = Netlist((E("PT", "ptc", ("V", "COM"), tripped_power=1.0),), "V", "COM")
    with pytest.raises(NetworkError, match="PT has no resistance"):
        tripped_resistance(net, COLD, "PT", 100.0, 50.0, 1.0, None)


def test_scipy_complaints_become_solve_failed(monkeypatch):
    def no_bracket(*a, **k):
        raise ValueError("f(a) and f(b) must have different signs")
    # the solver imports brentq from scipy.optimize when it first needs it
    monkeypatch.setattr("scipy.optimize.brentq", no_bracket)
    net = Netlist((E("PT", "ptc", ("V", "COM"), resistance=10.0, tripped_power=1.0),),
                  "V", "COM")
    with pytest.raises(SolveFailed, match="tripped resistance of PT"):
        tripped_resistance(net, COLD, "PT", 100.0, 50.0, 1.0, 10.0)


def _shared_net():
    """PT1 in the main path behind R1, PT2 in a side branch from n1 (S1 closed): both trip at
    700 V, and PT1's trip raises the voltage PT2 sees, and the other way round."""
    return Netlist((
        E("R1", "resistor", ("V", "n1"), resistance=1200.0),
        E("PT1", "ptc", ("n1", "n2"), resistance=1000.0, trip_current=0.025,
          hold_current=0.012, tripped_power=1.2),
        E("RV1", "varistor", ("n2", "COM"), varistor_voltage=200.0, clamp_voltage=330.0,
          clamp_current=10.0),
        E("IN", "input", ("n2", "COM"), resistance=10e6),
        E("S1", "switch", ("n1", "c")),
        E("PT2", "ptc", ("c", "COM"), resistance=1000.0, trip_current=0.025,
          hold_current=0.012, tripped_power=1.2),
    ), "V", "COM", frozenset({"S1"}))


def test_ptcs_that_share_the_current_each_take_their_tripped_power(ngspice):
    net = _shared_net()
    res = steady(net, 700.0, "dc", None, 60.0)
    final = res.final
    tripped = dict(final.state.ptc)
    assert set(tripped) == {"PT1", "PT2"}
    deck = netlist_deck(net, title="two PTCs sharing", voltage=700.0, state=final.state)
    got = parse_op(ngspice(deck))
    names = node_names(net)
    v = {n: (0.0 if names[n] == "0" else got[names[n]]) for n in ("n1", "n2", "c", "COM")}
    # Joule's law on ngspice's node voltages: V**2 / R = tripped power (1.2 W), within 1 %;
    # both hold together (found one after the other, PT1 took 25 times its tripped power)
    assert (v["n1"] - v["n2"]) ** 2 / tripped["PT1"] == pytest.approx(1.2, rel=1e-2)
    assert (v["c"] - v["COM"]) ** 2 / tripped["PT2"] == pytest.approx(1.2, rel=1e-2)


def test_tripped_states_that_never_settle_are_a_solve_failure(monkeypatch):
    # a search that gives a different answer on every call cannot settle
    calls = iter(range(10 ** 6))
    monkeypatch.setattr(scenarios, "tripped_resistance",
                        lambda *a, **k: (1e4 * (1 + next(calls) % 3), ""))
    with pytest.raises(SolveFailed, match="do not settle"):
        steady(_shared_net(), 700.0, "dc", None, 60.0)


# -- the reproduction through the scenarios, the engine and the CLI ------------------------

def test_reproduction_steady_and_discharge_solve():
    net = lowz_net()
    res = steady(net, 700.0, "dc", None, 60.0)
    r = res.final.state.ptc_resistance("PT2")
    # straight across 700 V: V**2 / P (Joule's law)
    assert r == pytest.approx(700.0 ** 2 / 1.2, rel=1e-9)
    d = discharge(net, 2e-3, 700.0, None, 60.0, 60.0)
    trip = [e for e in d.events if e.element == "PT2"]
    assert trip  # PT2 trips during the discharge, at the capacitor voltage of that moment


def test_reproduction_through_the_engine():
    result = run_check(plan(), fleet_from_file(FLEET))
    verdicts = {(s.instrument, s.mode): s.verdict for s in result.setups}
    assert set(verdicts) == {("TB-0001", "vdc"), ("TB-0001", "lowz"), ("TB-0003", "vdc")}
    lowz = next(s for s in result.setups if s.mode == "lowz")
    paths = [f for f in lowz.findings if f.check == "protection-path"]
    assert paths and not [f for f in paths if "could not be solved" in f.message]


def test_reproduction_through_the_cli(runner, database):
    r = runner.invoke(main, ["import", str(FLEET)], catch_exceptions=False)
    assert r.exit_code == 0, r.output
    r = runner.invoke(main, ["check", str(PLAN), "--on", ON.isoformat(), "--json", "--all"],
                      catch_exceptions=False)
    assert r.exit_code == 0, r.output
    doc = json.loads(r.output)
    assert {(s["instrument"], s["mode"]) for s in doc["setups"]} == \
        {("TB-0001", "vdc"), ("TB-0001", "lowz"), ("TB-0003", "vdc")}


# -- a failure inside one model's solve ------------------------------------------------------

def _fail_trip(monkeypatch):
    """The old failure, injected where it arose: the tripped-state search raising scipy's
    ValueError (not yet our own SolveFailed), to show that the analysis converts it."""
    def fails(*a, **k):
        raise ValueError("f(a) and f(b) must have different signs")
    monkeypatch.setattr(scenarios, "tripped_resistance", fails)


def test_a_failed_solve_is_an_unknown_finding_and_the_rest_is_judged(monkeypatch):
    _fail_trip(monkeypatch)
    result = run_check(plan(), fleet_from_file(FLEET))
    by = {(s.instrument, s.mode): s for s in result.setups}
    lowz = by[("TB-0001", "lowz")]
    assert lowz.verdict == "unverified"
    failed = [f for f in lowz.findings if "could not be solved" in f.message]
    assert failed and all(f.status == "unknown" for f in failed)
    # the message names the model, the mode, the scenario and the reason
    # (check 10's steady scenario and check 9's discharge each say so)
    steady = [f.message for f in failed if "steady" in f.message]
    assert steady, [f.message for f in failed]
    msg = steady[0]
    assert "fm-20" in msg and "lowz" in msg
    assert "must have different signs" in msg
    assert any("discharge" in f.message and "fm-20" in f.message and "lowz" in f.message
               for f in failed)
    # the vdc setup's own mode solves; its misuse check on low-Z cannot: unverified too
    assert by[("TB-0001", "vdc")].verdict == "unverified"
    # the other meter has no PTC to trip and is still judged: CAT III 1 kV for 700 V dc
    assert by[("TB-0003", "vdc")].verdict == "suitable"


def test_a_solver_that_does_not_converge_is_unknown(monkeypatch):
    from registry.engine.network import solver
    monkeypatch.setattr(solver, "_newton", lambda *a, **k: None)
    result = run_check(plan(), fleet_from_file(FLEET))
    for s in result.setups:
        assert s.verdict == "unverified"
        assert any("did not converge" in f.message and f.status == "unknown"
                   for f in s.findings)
