"""Invented front ends for the network tests, and ngspice in batch mode.

The models are of an invented maker (Orrin & Vale); the values are plausible, not copied.
"""

from __future__ import annotations

import os
import shutil
import subprocess

import pytest

from registry.engine.spec import Element, Mode, ModelSpec, Rating

E = Element.of


def kx7_front_end(**override):
    """The KX-7's example front end: R1 1 kohm 2 W V->n1, PT1 PTC n1->n2, RV1 varistor
    n2->COM, S1 switch n2->COM (gap 2 mm), IN input n2->COM 10 Mohm."""
    els = {
        "R1": E("R1", "resistor", ("V", "n1"), resistance=1000.0, power=2.0, pulse_energy=20.0),
        "PT1": E("PT1", "ptc", ("n1", "n2"), resistance=1000.0, trip_current=0.020,
                 hold_current=0.008, max_voltage=1100.0, max_current=3.0, trip_time=2.0,
                 trip_time_current=0.1, tripped_power=1.5),
        "RV1": E("RV1", "varistor", ("n2", "COM"), varistor_voltage=1100.0, max_dc=1000.0,
                 max_ac=680.0, clamp_voltage=1800.0, clamp_current=10.0, energy=10.0,
                 peak_current=2500.0),
        "S1": E("S1", "switch", ("n2", "COM"), gap=2.0e-3),
        "IN": E("IN", "input", ("n2", "COM"), resistance=10e6, max_voltage=1500.0),
    }
    els.update(override)
    return tuple(e for e in els.values() if e is not None)


VDC = Mode("vdc", "DC volts", "voltage", "dc", ("V", "COM"), input_resistance=10e6,
           max_input=1000.0)
VAC = Mode("vac", "AC volts", "voltage", "ac", ("V", "COM"), input_resistance=10e6,
           max_input=1000.0)
LOWZ = Mode("lowz", "Low-Z volts", "voltage", "both", ("V", "COM"), input_resistance=2600.0,
            max_input=600.0, max_duration=60.0, closes=("S1",))


def kx7(front_end=None, key="kx-7", modes=(VDC, VAC, LOWZ)) -> ModelSpec:
    return ModelSpec(key, "multimeter", maker="Orrin & Vale", name="KX-7 handheld multimeter",
                     ratings=(Rating("III", 900.0), Rating("IV", 500.0)), modes=modes,
                     front_end=kx7_front_end() if front_end is None else front_end)


@pytest.fixture
def model():
    return kx7()


def ngspice_path():
    return shutil.which("ngspice")


@pytest.fixture
def ngspice(tmp_path):
    """Run a deck through ngspice in batch mode and return its standard output. Skips when
    ngspice is missing, unless WITHSTAND_REQUIRE_TOOLS=1 (then the test fails)."""
    exe = ngspice_path()
    if exe is None:
        if os.environ.get("WITHSTAND_REQUIRE_TOOLS") == "1":
            pytest.fail("ngspice is required (WITHSTAND_REQUIRE_TOOLS=1) but not on PATH")
        pytest.skip("ngspice is not on PATH (Debian package ngspice)")
    counter = iter(range(10 ** 6))

    def run(deck: str) -> str:
        path = tmp_path / f"deck{next(counter)}.cir"
        path.write_text(deck)
        done = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True,
                              cwd=tmp_path, timeout=120)
        # In batch mode ngspice exits 1 when the deck has no .print line outside its .control
        # block ("no simulations run"), though the control block ran; errors are what count.
        errors = [line for line in (done.stdout + done.stderr).splitlines()
                  if "error" in line.lower()]
        assert not errors, "\n".join(errors)
        return done.stdout

    return run
