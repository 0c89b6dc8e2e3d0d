"""Benchmark: the size of the JSON result of `withstand check --json`, against the same
result with every finding of every setup (`--json --findings`, what `--json` printed before
the findings became asked-for), both from the same run.

    .venv/bin/python -m bench.bench_scale_json            # 5k, 20k and 50k units
    .venv/bin/python -m bench.bench_scale_json --smoke    # 600 units, for CI

Target: the result stays small; it holds the setups a user reads (the best per unit and
mode, each accessory's best) with their deciding finding, counts for the rest, and the
findings only when asked: at most a tenth of the result with every finding. The database
file's size is printed beside it. Asserts nothing.
"""

from __future__ import annotations

import argparse

from .fleetgen import fleet_database
from .scale import cli_check, sizes

LIMIT = 0.1


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="one small fleet, for CI")
    ap.add_argument("--size", choices=("5k", "20k", "50k"), help="one size only")
    args = ap.parse_args(argv)
    print("JSON result size / the same with every finding (mains-panel, 400 models)")
    for label, units in sizes(args.smoke, args.size):
        path = fleet_database(units)
        _peak, size, _wall = cli_check(path)
        _peak, full, _wall = cli_check(path, "--findings")
        ratio = size / full
        print(f"  {label:>5} ({units} units): JSON {size / 1e6:7.2f} MB, with every finding "
              f"{full / 1e6:7.2f} MB, ratio {ratio:5.3f}  limit {LIMIT:g}: "
              f"{'within' if ratio <= LIMIT else 'OVER'}; database file "
              f"{path.stat().st_size / 1e6:.2f} MB")


if __name__ == "__main__":
    main()
