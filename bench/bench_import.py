"""Benchmark: importing a new fleet file (target: 10 000 units/s or more).

    .venv/bin/python -m bench.bench_import            # 20 000 units over 400 models
    .venv/bin/python -m bench.bench_import --smoke    # 600 units, for CI

The bench fleet (bench/fleetgen.py) as a withstand-fleet/1 document, imported into an empty
migrated SQLite file by `import_fleet`, as `withstand import` does once the file is read: the
whole validation (the parse) and the write in one transaction. Prints the rate of the whole
import and its ratio to the limit, with the parse and the write apart; asserts nothing.
"""

from __future__ import annotations

import argparse
import time

from .timing import chain_key_for_bench, ratio_line, remove, scratch_database

LIMIT_UNITS_PER_S = 10_000


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="600 units instead of 20 000")
    ap.add_argument("--units", type=int, default=None)
    args = ap.parse_args(argv)
    chain_key_for_bench()
    from registry.formats.fleet import parse_fleet
    from registry.store.fleet import import_fleet

    from .fleetgen import fleet_document
    units = args.units or (600 if args.smoke else 20_000)
    doc = fleet_document(units)
    parse_fleet(doc)  # once untimed: the first parse also loads pint's registry and warms up
    parses, wholes = [], []
    for run in range(2):  # best of two of each, interleaved, on a shared machine
        t = time.perf_counter()
        parse_fleet(doc)
        parses.append(time.perf_counter() - t)
        db, path = scratch_database(f"import-{run}")
        try:
            t = time.perf_counter()
            report = import_fleet(db, doc, actor="bench")
            wholes.append(time.perf_counter() - t)
        finally:
            db.dispose()
            remove(path)
    parse, whole = min(parses), min(wholes)
    print(f"import of a new fleet: {units} units, {len(doc['models'])} models "
          f"({report.summary()})")
    print(f"  whole import {whole:.3f} s (parse alone {parse:.3f} s, so the write about "
          f"{max(whole - parse, 0.0):.3f} s; best of 2)")
    print(ratio_line("import rate", units / whole, LIMIT_UNITS_PER_S, "units/s",
                     higher_is_better=True))


if __name__ == "__main__":
    main()
