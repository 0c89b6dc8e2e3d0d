"""Benchmark: the peak memory of `withstand check --json` at 50k units (its own process).

    .venv/bin/python -m bench.bench_scale_memory            # 5k, 20k and 50k units
    .venv/bin/python -m bench.bench_scale_memory --smoke    # 600 units, for CI

Target: under 300 MB at 50k units. The peak is the process's own (ru_maxrss), start-up,
imports and the JSON text included. Asserts nothing.
"""

from __future__ import annotations

import argparse

from .fleetgen import fleet_database
from .scale import cli_check, sizes

LIMIT_MB = 300.0


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="one small fleet, for CI")
    ap.add_argument("--size", choices=("5k", "20k", "50k"), help="one size only")
    args = ap.parse_args(argv)
    print("peak memory of `withstand check --json` (mains-panel, 400 models)")
    for label, units in sizes(args.smoke, args.size):
        peak, _size, wall = cli_check(fleet_database(units))
        mb = peak / 1e6
        verdict = f"  limit {LIMIT_MB:g} MB: {'within' if mb < LIMIT_MB else 'OVER'} " \
                  f"({mb / LIMIT_MB:.2f} of it)" if label == "50k" else ""
        print(f"  {label:>5} ({units} units): peak {mb:7.1f} MB, {wall:6.2f} s with "
              f"start-up{verdict}")


if __name__ == "__main__":
    main()
