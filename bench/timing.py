"""Small helpers the scale benchmarks share: a scratch database and the printed ratio line."""

from __future__ import annotations

import os
import tempfile
import time
from contextlib import contextmanager
from pathlib import Path

from registry.store.db import Database, make_engine, upgrade


def scratch_database(name: str) -> tuple[Database, Path]:
    """A freshly migrated SQLite file in a scratch folder (removed first if left over)."""
    folder = Path(os.environ.get("WITHSTAND_BENCH_DIR", "/tmp/withstand-bench"))
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"scratch-{name}-{os.getpid()}.sqlite3"
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    url = f"sqlite:///{path}"
    upgrade(make_engine(url))
    return Database(url), path


def remove(path: Path) -> None:
    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)


@contextmanager
def timed(into: list):
    """Append the wall-clock seconds of the block to ``into``."""
    t = time.perf_counter()
    yield
    into.append(time.perf_counter() - t)


def ratio_line(what: str, measured: float, limit: float, unit: str, *,
               higher_is_better: bool = False) -> str:
    """One line: the measured figure, the limit and their ratio, and whether it is met."""
    ratio = measured / limit
    met = ratio >= 1 if higher_is_better else ratio <= 1
    return (f"  {what}: {measured:.3g} {unit} against the limit {limit:g} {unit}: "
            f"ratio {ratio:.2f} ({'met' if met else 'NOT met'})")


def chain_key_for_bench() -> None:
    """A fixed chain key, so a benchmark never writes a key file into the user's folder."""
    os.environ.setdefault("WITHSTAND_CHAIN_KEY", "bench-chain-key-not-secret")
    os.environ.setdefault("WITHSTAND_INSTANCE", tempfile.mkdtemp(prefix="withstand-bench-"))


def fleet_bench(description: str, argv=None, *, default_units: int = 20_000,
                smoke_units: int = 600) -> tuple[int, dict]:
    """The command line and setup the import benchmarks share: ``--smoke`` (``smoke_units``)
    or ``--units N`` (default ``default_units``), the fixed chain key, and the bench fleet's
    withstand-fleet/1 document (``bench/fleetgen.py``). Returns (units, document)."""
    import argparse
    ap = argparse.ArgumentParser(description=description)
    ap.add_argument("--smoke", action="store_true",
                    help=f"{smoke_units} units instead of {default_units:,}".replace(",", " "))
    ap.add_argument("--units", type=int, default=None)
    args = ap.parse_args(argv)
    chain_key_for_bench()
    from .fleetgen import fleet_document
    units = args.units or (smoke_units if args.smoke else default_units)
    return units, fleet_document(units)
