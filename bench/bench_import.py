"""Benchmark: importing a new fleet file (target: 10 000 units/s or more).

    .venv/bin/python -m bench.bench_import            # 20 000 units over 400 models
    .venv/bin/python -m bench.bench_import --smoke    # 600 units, for CI

The bench fleet (bench/fleetgen.py) as a withstand-fleet/1 document, imported into an empty
migrated SQLite file by `import_fleet`, as `withstand import` does once the file is read: the
whole validation (the parse) and the write in one transaction. That is the rate held to the
limit, with the parse and the write apart. The same import from the fleet written as a JSON
and as a YAML file, reading the file included (`read_document`, then `import_fleet`: what
`withstand import FILE` runs after its start-up), is printed beside it with its own ratio.
Asserts nothing.
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

from .timing import fleet_bench, ratio_line, remove, scratch_database

LIMIT_UNITS_PER_S = 10_000


def _import_once(name: str, read):
    """(seconds, report) of one import of ``read()``'s document into a fresh database, the
    reading timed with it."""
    from registry.store.fleet import import_fleet
    db, path = scratch_database(name)
    try:
        t = time.perf_counter()
        report = import_fleet(db, read(), actor="bench")
        return time.perf_counter() - t, report
    finally:
        db.dispose()
        remove(path)


def main(argv=None):
    units, doc = fleet_bench(__doc__.splitlines()[0], argv)
    from registry.formats.common import dump_document, read_document
    from registry.formats.fleet import parse_fleet
    parse_fleet(doc)  # once untimed: the first parse also loads pint's registry and warms up
    parses, wholes = [], []
    for run in range(2):  # best of two of each, interleaved, on a shared machine
        t = time.perf_counter()
        parse_fleet(doc)
        parses.append(time.perf_counter() - t)
        whole, report = _import_once(f"import-{run}", lambda: doc)
        wholes.append(whole)
    parse, whole = min(parses), min(wholes)
    print(f"import of a new fleet: {units} units, {len(doc['models'])} models "
          f"({report.summary()})")
    print(f"  whole import {whole:.3f} s (parse alone {parse:.3f} s, so the write about "
          f"{max(whole - parse, 0.0):.3f} s; best of 2)")
    print(ratio_line("import rate", units / whole, LIMIT_UNITS_PER_S, "units/s",
                     higher_is_better=True))
    with tempfile.TemporaryDirectory(prefix="withstand-bench-") as folder:
        for suffix in (".json", ".yaml"):
            file = Path(folder) / f"fleet{suffix}"
            dump_document(doc, file)
            from_file = min(_import_once(f"import-file-{run}", lambda f=file: read_document(f))[0]
                            for run in range(2))
            print(f"  from a {suffix[1:].upper()} file of {file.stat().st_size / 1e6:.1f} MB, "
                  f"reading it included: {from_file:.3f} s (best of 2)")
            print(ratio_line(f"import rate from {suffix[1:].upper()}", units / from_file,
                             LIMIT_UNITS_PER_S, "units/s", higher_is_better=True))


if __name__ == "__main__":
    main()
