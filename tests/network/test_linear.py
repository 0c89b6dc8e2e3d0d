"""Linear networks against nodal analysis worked by hand.

The solver adds 1e-12 S from every node to the reference (gmin, as circuit simulators do);
against the hand results that shifts a node by about R * 1e-12 S relative, hence the tolerances.
"""

import math

import pytest

from registry.engine.network import build_netlist, netlist_resistance, solve
from registry.engine.network.check import consistency_finding
from registry.engine.network.netlist import Netlist
from registry.engine.spec import Element, Mode, ModelSpec

from .conftest import LOWZ, VDC, kx7

E = Element.of


def ladder():
    # V -R1 1k- a -R3 3k- b ; a -R2 2k- COM ; b -R4 4k- COM
    return (E("R1", "resistor", ("V", "a"), resistance=1e3),
            E("R2", "resistor", ("a", "COM"), resistance=2e3),
            E("R3", "resistor", ("a", "b"), resistance=3e3),
            E("R4", "resistor", ("b", "COM"), resistance=4e3))


def test_ladder_against_hand_nodal_analysis():
    # By hand: node b: (Vb-Va)/3k + Vb/4k = 0 -> Vb = 4/7 Va. Node a: (Va-10)/1k + Va/2k
    # + (Va-Vb)/3k = 0 -> Va (1 + 1/2 + 1/3 - 4/21) = 10 -> Va = 140/23 V, Vb = 80/23 V.
    sol = solve(Netlist(ladder(), "V", "COM"), 10.0)
    assert sol.node_voltage["a"] == pytest.approx(140 / 23, rel=1e-7)
    assert sol.node_voltage["b"] == pytest.approx(80 / 23, rel=1e-7)
    # Source current (10 - Va)/1k = (10 - 140/23)/1000 = 90/23 mA.
    assert sol.source_current == pytest.approx(90 / 23 * 1e-3, rel=1e-7)
    assert sol.current["R3"] == pytest.approx((140 / 23 - 80 / 23) / 3e3, rel=1e-7)


def test_source_impedance_in_series():
    # The ladder's input resistance by hand: 1k + 2k || (3k + 4k) = 1k + 14/9 k = 23/9 kohm.
    # Behind 500 ohm, the terminal sits at 10 * (23/9) / (23/9 + 0.5) V.
    net = Netlist(ladder(), "V", "COM")
    r_in = 1e3 + 1 / (1 / 2e3 + 1 / 7e3)
    assert r_in == pytest.approx(23e3 / 9)
    sol = solve(net, 10.0, 500.0)
    assert sol.node_voltage["V"] == pytest.approx(10 * r_in / (r_in + 500), rel=1e-7)
    assert netlist_resistance(net) == pytest.approx(r_in, rel=1e-7)


def test_closed_switch_shorts_and_open_switch_sees_the_node():
    els = ladder() + (E("S", "switch", ("b", "COM"), gap=1e-3),)
    open_ = solve(Netlist(els, "V", "COM"), 10.0)
    assert open_.voltage["S"] == pytest.approx(80 / 23, rel=1e-7)
    closed = solve(Netlist(els, "V", "COM", frozenset({"S"})), 10.0)
    # b shorted: R4 out, 3k to COM: Va = 10 * (2k||3k) / (1k + 2k||3k) = 10 * 1.2/2.2.
    assert closed.node_voltage["a"] == pytest.approx(10 * 1.2 / 2.2, rel=1e-7)
    assert closed.current["S"] == pytest.approx(10 * 1.2 / 2.2 / 3e3, rel=1e-7)


def test_spec_example_input_resistances():
    # The KX-7 example front end (conftest.py): vdc is 1k + 1k + 10M = 10.002 Mohm (10 Mohm stated:
    # agrees); lowz closes S1 across n2, leaving 1k + 1k = 2 kohm against the 2.6 kohm stated.
    m = kx7()
    assert netlist_resistance(build_netlist(m, VDC)) == pytest.approx(10.002e6, rel=1e-4)
    assert netlist_resistance(build_netlist(m, LOWZ)) == pytest.approx(2e3, rel=1e-7)
    ok = consistency_finding(m, VDC)
    assert ok.status == "pass" and ok.check == "input-consistency"
    bad = consistency_finding(m, LOWZ)
    assert bad.status == "caution" and "2 kohm" in bad.message and "2.6 kohm" in bad.message


def test_consistency_open_path_is_a_caution():
    m = ModelSpec("orr-1", "multimeter", modes=(Mode("a", "Amps", "current", "both",
                                                     ("A", "COM"), input_resistance=0.01),),
                  front_end=(E("F1", "fuse", ("A", "n4"), current=10.0),
                             E("S9", "switch", ("n4", "COM"), gap=1e-3)))
    f = consistency_finding(m, m.modes[0])
    assert f.status == "caution" and "open" in f.message
    assert math.isinf(netlist_resistance(build_netlist(m, m.modes[0])))
