"""Benchmark: the audit workbook of the bench fleet (target: at most 1.5x a plain
`pandas.DataFrame.to_excel` of the same rows).

    .venv/bin/python -m bench.bench_audit            # 20 000 units over 400 models
    .venv/bin/python -m bench.bench_audit --smoke    # 600 units, for CI

`export_audit` writes the workbook from the database (reading every table, the chain checks,
the findings, the formatting and the sheet-safety pass). The baseline, in the same run, writes
the very tables the audit holds (every sheet, the Summary and its coverage table) with plain
`DataFrame.to_excel` through pandas' openpyxl writer and nothing else. Prints both and their
ratio; asserts nothing.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from .timing import chain_key_for_bench, ratio_line

LIMIT_RATIO = 1.5


def plain_to_excel(audit, path: Path) -> None:
    import pandas as pd
    with pd.ExcelWriter(path, engine="openpyxl") as writer:
        audit.summary.to_excel(writer, sheet_name="Summary", index=False)
        audit.coverage.to_excel(writer, sheet_name="Summary", index=False,
                                startrow=len(audit.summary) + 3)
        for name, df in audit.sheets.items():
            df.to_excel(writer, sheet_name=name, index=False)


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="600 units instead of 20 000")
    args = ap.parse_args(argv)
    chain_key_for_bench()
    from registry.store.audit import build_audit, export_audit
    from registry.store.db import Database

    from .fleetgen import SMOKE_UNITS, fleet_database, url_of
    units = SMOKE_UNITS if args.smoke else 20_000
    db = Database(url_of(fleet_database(units)))
    out = Path(tempfile.mkdtemp(prefix="withstand-bench-audit-"))
    audits, plains = [], []
    try:
        with db.transaction() as session:
            audit = build_audit(session)
        for _ in range(2):  # best of two of each, interleaved, on a shared machine
            t = time.perf_counter()
            export_audit(db, out / "audit.xlsx")
            audits.append(time.perf_counter() - t)
            t = time.perf_counter()
            plain_to_excel(audit, out / "plain.xlsx")
            plains.append(time.perf_counter() - t)
    finally:
        db.dispose()
        for f in out.iterdir():
            f.unlink()
        out.rmdir()
    rows = sum(len(df) for df in audit.sheets.values())
    print(f"audit workbook: {units} units, {rows} rows over {len(audit.sheets)} sheets")
    print(f"  export_audit {min(audits):.3f} s, plain to_excel {min(plains):.3f} s (best of 2)")
    print(ratio_line("workbook / to_excel", min(audits) / min(plains), LIMIT_RATIO, "x"))


if __name__ == "__main__":
    main()
