"""Benchmark: re-importing an unchanged fleet file (target: under 1 s beyond the parse).

    .venv/bin/python -m bench.bench_reimport            # 20 000 units over 400 models
    .venv/bin/python -m bench.bench_reimport --smoke    # 600 units, for CI

The bench fleet is imported once, then the same document again: every unit and model is
found unchanged, and nothing is written. The parse (`parse_fleet`, the validation of the
whole document) is timed alone in the same run and taken off; what is left is reading the
registry and comparing. Prints that against the limit; asserts nothing.
"""

from __future__ import annotations

import time

from .timing import fleet_bench, ratio_line, remove, scratch_database

LIMIT_S = 1.0


def main(argv=None):
    units, doc = fleet_bench(__doc__.splitlines()[0], argv)
    from registry.formats.fleet import parse_fleet
    from registry.store.fleet import import_fleet
    db, path = scratch_database("reimport")
    try:
        import_fleet(db, doc, actor="bench")
        parses, agains = [], []
        for _ in range(3):  # best of three of each, interleaved, on a shared machine
            t = time.perf_counter()
            parse_fleet(doc)
            parses.append(time.perf_counter() - t)
            t = time.perf_counter()
            report = import_fleet(db, doc, actor="bench")
            agains.append(time.perf_counter() - t)
    finally:
        db.dispose()
        remove(path)
    parse, again = min(parses), min(agains)
    print(f"re-import of an unchanged fleet: {units} units ({report.summary()})")
    print(f"  re-import {again:.3f} s, parse alone {parse:.3f} s (best of 3)")
    print(ratio_line("beyond the parse", max(again - parse, 0.0), LIMIT_S, "s"))


if __name__ == "__main__":
    main()
