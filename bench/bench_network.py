"""Benchmark: check 10 (protection path) over a fleet of models with front ends.

    .venv/bin/python bench/bench_network.py            # 400 models
    .venv/bin/python bench/bench_network.py --smoke    # 20 models, for CI

Each model is checked in its setup mode (vdc) and, as reasonably foreseeable misuse, in the
other modes on the same terminals (vac, lowz), on a CAT III 480 V plan with and without a
capacitor bank. Three runs: every model a different front end (cold cache), the same check
again (warm cache), and a fleet whose models share 20 front-end designs (the usual case: one
maker's models share a protection design). Prints wall-clock times; asserts nothing.
"""

from __future__ import annotations

import argparse
import time

from registry.engine.network import cache_clear, protection_path_findings
from registry.engine.spec import Element, Mode, ModelSpec, Rating

E = Element.of
MODES = (
    Mode("vdc", "DC volts", "voltage", "dc", ("V", "COM"), input_resistance=10e6,
         max_input=1000.0),
    Mode("vac", "AC volts", "voltage", "ac", ("V", "COM"), input_resistance=10e6,
         max_input=1000.0),
    Mode("lowz", "Low-Z volts", "voltage", "both", ("V", "COM"), input_resistance=3e3,
         max_input=600.0, closes=("S1",)),
)
PLANS = {
    "no bank": dict(working_voltage=480.0, waveform="ac", source_impedance=0.05,
                    impulse_peak=4000.0, generator_impedance=2.0, capacitance=None,
                    safe_voltage=60.0, altitude=40.0, duration=30.0),
    "470 uF bank": dict(working_voltage=480.0, waveform="ac", source_impedance=0.05,
                        impulse_peak=4000.0, generator_impedance=2.0, capacitance=470e-6,
                        safe_voltage=60.0, altitude=40.0, duration=30.0),
}


def design(k: int) -> tuple[Element, ...]:
    """Front-end design number k: the kx-7 ladder with its values varied."""
    r1 = 900.0 + 10.0 * k
    return (E("R1", "resistor", ("V", "n1"), resistance=r1, power=2.0, pulse_energy=20.0),
            E("PT1", "ptc", ("n1", "n2"), resistance=1000.0, hold_current=0.008,
              trip_current=0.020, max_voltage=1100.0, max_current=3.0, trip_time=2.0,
              trip_time_current=0.1, tripped_power=1.5),
            E("RV1", "varistor", ("n2", "COM"), varistor_voltage=1100.0 + k, max_dc=1000.0,
              max_ac=680.0, clamp_voltage=1800.0, clamp_current=10.0, energy=10.0,
              peak_current=2500.0),
            E("S1", "switch", ("n2", "n3"), gap=3.0e-3),
            E("RL", "resistor", ("n3", "COM"), resistance=1000.0, power=5.0, pulse_energy=40.0),
            E("IN", "input", ("n2", "COM"), resistance=10e6, max_voltage=3000.0))


def fleet(n: int, designs: int | None) -> list[ModelSpec]:
    return [ModelSpec(f"ov-{i:04d}", "multimeter", maker="Orrin & Vale",
                      ratings=(Rating("III", 1000.0),), modes=MODES,
                      front_end=design(i if designs is None else i % designs))
            for i in range(n)]


def check(models, plan) -> tuple[float, int]:
    t = time.perf_counter()
    count = 0
    for m in models:
        for mode in m.modes:
            count += len(protection_path_findings(m, mode, misuse=mode.key != "vdc", **plan))
    return time.perf_counter() - t, count


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="20 models instead of 400")
    args = ap.parse_args(argv)
    n = 20 if args.smoke else 400
    print(f"check 10 over {n} models x {len(MODES)} modes")
    for name, plan in PLANS.items():
        cache_clear()
        cold, count = check(fleet(n, None), plan)
        warm, _ = check(fleet(n, None), plan)
        cache_clear()
        shared, _ = check(fleet(n, 20), plan)
        print(f"  {name:12s} distinct front ends, cold cache: {cold:8.3f} s "
              f"({cold / n * 1e3:.2f} ms/model, {count} findings)")
        print(f"  {name:12s} same check again, warm cache:   {warm:8.3f} s")
        print(f"  {name:12s} 20 shared designs, cold cache:  {shared:8.3f} s")


if __name__ == "__main__":
    main()
