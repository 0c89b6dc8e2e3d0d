"""Benchmark: the cost of a whole job check against the raw read of the same database.

    .venv/bin/python -m bench.bench_scale_check            # 5k, 20k and 50k units, 400 models
    .venv/bin/python -m bench.bench_scale_check --size 20k
    .venv/bin/python -m bench.bench_scale_check --smoke    # 600 units, for CI

The check is timed as `withstand check PLAN` runs it (the text report), less the start-up; the
same with `--json` is printed beside it. Each run starts with the in-process solve caches
cleared, as a fresh process has them; check 10's solves are then read from the file's solve
cache, as a fresh `withstand check` reads them on a file checked before. The bench empties that
cache first and prints the first run on the file (which makes and writes every solve) and how
many solves the timed runs read from the file. Targets: at 20k units the check costs at most 3x a
plain sqlite3 read of every table, at 50k at most 2x (5k is printed without a target). Both are
measured in this run on this machine, the raw read again before each check (best of all), so
the ratio holds on a shared or slow machine where the seconds do not. Asserts nothing.
"""

from __future__ import annotations

import argparse

from .fleetgen import fleet_database
from .scale import raw_read, sizes, timed_check

LIMITS = {"20k": 3.0, "50k": 2.0}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="one small fleet, for CI")
    ap.add_argument("--size", choices=("5k", "20k", "50k"), help="one size only")
    ap.add_argument("--repeat", type=int, default=3, help="best of this many runs")
    args = ap.parse_args(argv)
    print("check cost / raw read of every table (mains-panel, 400 models)")
    for label, units in sizes(args.smoke, args.size):
        path = fleet_database(units)
        check, as_json, setups, raw, solves = timed_check(path, repeat=args.repeat)
        raw = min(raw, raw_read(path))
        ratio = check / raw
        limit = LIMITS.get(label)
        verdict = "" if limit is None else (
            f"  limit {limit:g}x: {'within' if ratio <= limit else 'OVER'} "
            f"({ratio / limit:.2f} of it)")
        print(f"  {label:>5} ({units} units): check {check * 1e3:8.1f} ms, raw read "
              f"{raw * 1e3:6.1f} ms, ratio {ratio:6.2f}x, {setups} setups{verdict}; "
              f"with --json {as_json * 1e3:.1f} ms ({as_json / raw:.2f}x)")
        print(f"         check 10's solves: {solves['from_file']} of {solves['looked_up']} "
              f"look-ups read from the file's solve cache, {solves['solved']} solved, over "
              f"the {2 * args.repeat} timed runs; the first run on the file (cache emptied) "
              f"solved and wrote {solves['first_solved']}: check {solves['first'] * 1e3:.1f} "
              f"ms, {solves['first'] / raw:.2f}x")


if __name__ == "__main__":
    main()
