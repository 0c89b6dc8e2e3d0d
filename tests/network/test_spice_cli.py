"""`withstand model spice` on the demo fleet, run through ngspice (Debian package ngspice,
batch mode): the simulator's node voltages agree with the package's own solver within 0.5 %
(the tolerance of issue 7)."""

import pytest

from registry.cli import main
from registry.engine.network.netlist import build_netlist
from registry.engine.network.solver import solve
from registry.engine.network.spice import parse_op
from registry.formats.fleet import fleet_from_file
from registry.demo import demo_fleet_path


@pytest.mark.parametrize("key, mode, volts", [("kx-7", "lowz", 600.0), ("kx-7", "vdc", 2500.0),
                                              ("kx-3", "vdc", 900.0)])
def test_deck_from_the_cli_matches_the_solver(runner, demo, ngspice, key, mode, volts):
    result = runner.invoke(main, ["model", "spice", key, "--mode", mode, "--voltage",
                                  f"{volts} V", "--source-impedance", "2 ohm"])
    assert result.exit_code == 0, result.output
    simulated = parse_op(ngspice(result.output))
    spec = fleet_from_file(demo_fleet_path()).models[key]
    net = build_netlist(spec, spec.mode(mode))
    ours = solve(net, volts, 2.0)
    compared = 0
    for node, v in ours.node_voltage.items():
        name = "0" if node == "COM" else node.lower()
        if name in simulated and abs(v) > 1.0:
            assert simulated[name] == pytest.approx(v, rel=5e-3), node
            compared += 1
    assert compared >= 2


def test_spice_errors_exit_2(runner, demo):
    result = runner.invoke(main, ["model", "spice", "bw-ld4", "--mode", "x"])
    assert result.exit_code == 2 and "--mode" in result.output
    result = runner.invoke(main, ["model", "spice", "kx-7", "--mode", "vdc", "--scenario",
                                  "discharge"])
    assert result.exit_code == 2 and "--capacitance" in result.output
