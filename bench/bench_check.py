"""Benchmark: a whole job check (checks 1 to 11, front ends included) over a large fleet.

    .venv/bin/python -m bench.bench_check            # the demo fleet copied 30 times
    .venv/bin/python -m bench.bench_check --smoke    # copied twice, for CI

The demo fleet's instrument models are copied under new keys, each copy with a slightly
different front end (so neither the per-model evaluation nor the solve cache can share work
between copies), with all their units; the accessories stay as they are, as in a lab whose
many meter models share a few kinds of leads and probes. Every accessory model multiplies the
combinations to evaluate (instruments x leads x tips), which is why copying those too would
measure an unrealistic fleet. Each demo plan is checked against the result. Prints
wall-clock times; asserts nothing.
"""

from __future__ import annotations

import argparse
import dataclasses
import time
from datetime import date
from importlib import resources

from registry.services.checks import run_check
from registry.demo import demo_fleet_path
from registry.engine.network import cache_clear
from registry.engine.spec import Fleet
from registry.formats.fleet import fleet_from_file
from registry.plans import load_plan

PLANS = ("mains-panel", "service-entrance", "dc-link", "dc-link-discharge",
         "hv-supply-divider", "motor-feeder-current")


def scaled_fleet(copies: int) -> Fleet:
    base = fleet_from_file(demo_fleet_path())
    models = {k: m for k, m in base.models.items() if not m.is_instrument}
    units = [u for u in base.units if u.model in models]
    for c in range(copies):
        for key, spec in base.models.items():
            if not spec.is_instrument:
                continue
            # a different front end per copy, so the solve cache cannot share work
            elements = tuple(dataclasses.replace(e, params=tuple(
                (k, v * (1 + 1e-6 * c) if k == "resistance" else v) for k, v in e.params))
                for e in spec.front_end)
            models[f"{key}-{c}"] = dataclasses.replace(spec, key=f"{key}-{c}",
                                                       front_end=elements)
        units += [dataclasses.replace(u, tag=f"{u.tag}-{c}", model=f"{u.model}-{c}")
                  for u in base.units if base.models[u.model].is_instrument]
    return Fleet(models=models, units=tuple(units))


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="2 copies instead of 30")
    args = ap.parse_args(argv)
    copies = 2 if args.smoke else 30
    fleet = scaled_fleet(copies)
    print(f"job check over {len(fleet.models)} models and {len(fleet.units)} units")
    plans_dir = resources.files("registry.seeddata") / "plans"
    for name in PLANS:
        plan = load_plan(plans_dir / f"{name}.yaml", on=date(2026, 12, 2))
        cache_clear()
        t = time.perf_counter()
        result = run_check(plan, fleet)
        cold = time.perf_counter() - t
        t = time.perf_counter()
        run_check(plan, fleet)
        warm = time.perf_counter() - t
        print(f"  {name:<22} {len(result.setups):>5} setups  cold {cold:7.3f} s  "
              f"warm {warm:7.3f} s")


if __name__ == "__main__":
    main()
