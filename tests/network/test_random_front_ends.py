"""Random front ends (hypothesis): the analysis always returns, a solve that fails is an
``unknown`` item, and the tripped states it finds agree with ngspice.

The front ends are built from the element types on the pattern of the demo meters: R1 and PT1
in series from V to the varistor node, the input across it, and up to two switched side
branches (S1 from V or from n1 to node c, S2 from n2 to node d), each to COM through a PTC or
a resistor, so that 1 to 3 PTCs share the source's current. The values lie in the ranges of
makers' datasheets for meter front ends (common practice (no source)): series resistors
100 ohm to 10 kohm, PTCs 10 ohm to 2 kohm cold with trip currents 10 to 200 mA and tripped
powers 0.5 to 3 W, varistors of 200 V to 1.8 kV.
"""

from __future__ import annotations

import math

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from registry.engine.findings import STATUSES
from registry.engine.network import Conditions, NetworkError, SolveFailed, analyse, cache_clear
from registry.engine.network.check import SOLVE
from registry.engine.network.netlist import OPEN_RESISTANCE, Netlist
from registry.engine.network.scenarios import impulse, steady
from registry.engine.network.spice import netlist_deck, node_names, parse_op
from registry.engine.spec import Element

from .test_ngspice import _compare_op

E = Element.of
log_uniform = lambda lo, hi: st.floats(math.log(lo), math.log(hi)).map(math.exp)  # noqa: E731


@st.composite
def ptcs(draw, id, between):
    trip = draw(log_uniform(0.010, 0.200))
    return E(id, "ptc", between, resistance=draw(log_uniform(10.0, 2000.0)),
             trip_current=trip, hold_current=trip / 2, max_voltage=draw(st.sampled_from(
                 [600.0, 1100.0, None])), max_current=3.0,
             trip_time=draw(log_uniform(0.5, 10.0)), trip_time_current=5 * trip,
             tripped_power=draw(log_uniform(0.5, 3.0)))


@st.composite
def front_ends(draw):
    """(netlist, number of PTCs)."""
    n_ptc = draw(st.integers(1, 3))
    v1ma = draw(log_uniform(200.0, 1800.0))
    els = [E("R1", "resistor", ("V", "n1"), resistance=draw(log_uniform(100.0, 10e3)),
             power=2.0, pulse_energy=20.0),
           draw(ptcs("PT1", ("n1", "n2"))),
           E("RV1", "varistor", ("n2", "COM"), varistor_voltage=v1ma, max_dc=0.82 * v1ma,
             max_ac=0.62 * v1ma, clamp_voltage=v1ma * draw(st.floats(1.5, 1.8)),
             clamp_current=10.0, energy=10.0, peak_current=1200.0),
           E("IN", "input", ("n2", "COM"), resistance=draw(log_uniform(1e6, 10e6)),
             max_voltage=3000.0)]
    closed = set()
    # S1 ahead of the limiter (from V) or behind R1 (from n1); S2 behind PT1.
    branches = [("S1", draw(st.sampled_from(["V", "n1"])), "c", "PT2"), ("S2", "n2", "d", "PT3")]
    for k, (sw, start, node, ptc_id) in enumerate(branches):
        wanted_ptc = n_ptc >= k + 2
        if not wanted_ptc and not draw(st.booleans()):
            continue
        els.append(E(sw, "switch", (start, node), gap=2e-3))
        if draw(st.booleans()):
            closed.add(sw)
        if wanted_ptc:
            els.append(draw(ptcs(ptc_id, (node, "COM"))))
        else:
            els.append(E("R" + node, "resistor", (node, "COM"),
                         resistance=draw(log_uniform(100.0, 10e3)), power=5.0))
    return Netlist(tuple(els), "V", "COM", frozenset(closed)), n_ptc


conditions = st.builds(
    Conditions,
    working_voltage=log_uniform(10.0, 1500.0),
    waveform=st.sampled_from(["dc", "ac"]),
    source_impedance=st.one_of(st.none(), log_uniform(0.01, 100.0)),
    impulse_peak=st.one_of(st.none(), log_uniform(1000.0, 8000.0)),
    generator_impedance=st.sampled_from([None, 2.0, 12.0]),
    capacitance=st.one_of(st.none(), log_uniform(1e-6, 5e-3)),
    safe_voltage=st.just(60.0),
    altitude=st.just(40.0),
    duration=log_uniform(1.0, 60.0))


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(front_ends(), conditions)
def test_the_analysis_returns_and_reports_failures_as_unknown(fe, cond):
    net, _ = fe
    report = analyse(net, "m", cond)  # never raises
    assert report.stresses
    for s in report.stresses:
        assert s.status in STATUSES
        if s.quantity == SOLVE:
            assert s.status == "unknown" and "could not be solved" in s.message


@settings(max_examples=100, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(front_ends(), conditions)
def test_steady_and_impulse_raise_only_our_own_error(fe, cond):
    net, _ = fe
    try:
        res = steady(net, cond.working_voltage, cond.waveform, cond.source_impedance,
                     cond.duration)
    except NetworkError as exc:  # a typed failure, which the analysis reports as unknown
        assert isinstance(exc, SolveFailed)
    else:
        assert res.snapshots
    if cond.impulse_peak is not None:
        try:
            impulse(net, cond.impulse_peak, cond.generator_impedance)
        except NetworkError as exc:
            assert isinstance(exc, SolveFailed)


def _tripped_power_from(got: dict, net: Netlist, ptc_id: str, r: float) -> float:
    names = node_names(net)
    a, b = net.element(ptc_id).between
    va = got[names[a]] if names[a] != "0" else 0.0
    vb = got[names[b]] if names[b] != "0" else 0.0
    return (va - vb) ** 2 / r


@settings(max_examples=6, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(front_ends(), log_uniform(100.0, 1500.0), st.one_of(st.none(), log_uniform(0.05, 50.0)))
def test_steady_states_against_ngspice(ngspice, fe, volts, rs):
    """The final steady state (PTCs tripped where they trip) as a deck: ngspice's node voltages
    agree within 0.5 %, and each tripped PTC takes its tripped power in ngspice's solution."""
    net, _ = fe
    cache_clear()
    res = steady(net, volts, "dc", rs, 60.0)
    final = res.final
    deck = netlist_deck(net, title="random front end", voltage=volts, source_impedance=rs,
                        state=final.state)
    _compare_op(ngspice, net, deck, final.heat)
    got = parse_op(ngspice(deck))
    for ptc_id, r in final.state.ptc:
        if r >= OPEN_RESISTANCE or r == net.element(ptc_id).get("resistance"):
            continue  # taken as open (no tripped power) or back to cold (cannot hold it)
        # V**2 / R = tripped_power (Joule's law), V from ngspice: within 1 %
        assert _tripped_power_from(got, net, ptc_id, r) == pytest.approx(
            net.element(ptc_id).get("tripped_power"), rel=1e-2), ptc_id
