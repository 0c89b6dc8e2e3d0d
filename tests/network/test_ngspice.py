"""Non-linear networks against ngspice (batch mode, on the decks `withstand model spice`
writes): node voltages within 0.5 %, a capacitor discharge within 1 %."""

import numpy as np
import pytest

from registry.engine.network import build_netlist, solve
from registry.engine.network.netlist import Netlist
from registry.engine.network.scenarios import discharge
from registry.engine.network.spice import (netlist_deck, node_names, parse_op,
                                           parse_print_table, spice_deck)
from registry.engine.spec import Element

from .conftest import LOWZ, VDC, kx7

E = Element.of


def _compare_op(ngspice, net, deck, sol):
    got = parse_op(ngspice(deck))
    names = node_names(net)
    checked = 0
    for node, v in sol.node_voltage.items():
        if node == net.ret:
            continue
        ref = got[names[node]]
        # 0.5 % of the node voltage, or 1 mV for nodes that sit near 0 V.
        assert v == pytest.approx(ref, rel=5e-3, abs=1e-3), node
        checked += 1
    assert checked >= 1


@pytest.mark.parametrize("volts,rs", [(1000.0, None), (2500.0, 2.0), (6000.0, 2.0),
                                      (4000.0, 12.0), (-6000.0, 2.0)])
@pytest.mark.parametrize("mode", [VDC, LOWZ])
def test_kx7_front_end_against_ngspice(ngspice, volts, rs, mode):
    m = kx7()
    net = build_netlist(m, mode)
    sol = solve(net, volts, rs)
    deck = spice_deck(m, mode, voltage=volts, source_impedance=rs)
    _compare_op(ngspice, net, deck, sol)


def test_two_clamps_and_a_branch_against_ngspice(ngspice):
    # A varistor ahead of a limiter and a TVS behind it, with a side branch.
    els = (E("RV0", "varistor", ("V", "COM"), varistor_voltage=680.0, clamp_voltage=1120.0,
             clamp_current=25.0),
           E("R1", "resistor", ("V", "n1"), resistance=470.0),
           E("R2", "resistor", ("n1", "n2"), resistance=1500.0),
           E("D1", "tvs", ("n2", "COM"), breakdown_voltage=220.0, clamp_voltage=360.0,
             clamp_current=5.0),
           E("R3", "resistor", ("n1", "COM"), resistance=22e3),
           E("IN", "input", ("n2", "COM"), resistance=1e6))
    net = Netlist(els, "V", "COM")
    for volts, rs in ((900.0, 12.0), (4000.0, 2.0), (300.0, None)):
        sol = solve(net, volts, rs)
        deck = netlist_deck(net, title="two clamps", voltage=volts, source_impedance=rs)
        _compare_op(ngspice, net, deck, sol)


def test_tripped_ptc_state_against_ngspice(ngspice):
    # The deck carries the tripped PTC's resistance; the solve in that state must match.
    from registry.engine.network.scenarios import steady
    m = kx7()
    net = build_netlist(m, LOWZ)
    res = steady(net, 480.0, "dc", 0.5, 60.0)
    final = res.final
    assert final.state.ptc  # PT1 tripped
    deck = spice_deck(m, LOWZ, voltage=480.0, source_impedance=0.5, state=final.state)
    _compare_op(ngspice, net, deck, final.heat)


def test_discharge_through_resistor_and_varistor_against_ngspice(ngspice):
    # 20 uF at 1.5 kV into 220 ohm and a 470 V varistor, with a 47 kohm bleed: the varistor
    # takes the fast first part, the bleed the slow tail.
    els = (E("R1", "resistor", ("V", "n1"), resistance=220.0),
           E("RV1", "varistor", ("n1", "COM"), varistor_voltage=470.0, clamp_voltage=775.0,
             clamp_current=5.0),
           E("RB", "resistor", ("V", "COM"), resistance=47e3))
    net = Netlist(els, "V", "COM")
    c, v0, stop = 20e-6, 1500.0, 2.0
    ours = discharge(net, c, v0, None, 1.0, stop)
    deck = netlist_deck(net, title="discharge", scenario="discharge", voltage=v0,
                        capacitance=c, duration=stop)
    rows = parse_print_table(ngspice(deck))
    assert len(rows) > 100
    t_ref = np.array([r[0] for r in rows])
    v_ref = np.array([r[1] for r in rows])
    v_ours = np.interp(t_ref, ours.times, ours.voltages)
    # 1 % of the voltage at each time; near the end both are tens of volts.
    for t, a, b in zip(t_ref, v_ours, v_ref, strict=True):
        if t > 0:
            assert a == pytest.approx(b, rel=1e-2, abs=0.05), t
    assert ours.voltages[-1] < 0.5 * v0
