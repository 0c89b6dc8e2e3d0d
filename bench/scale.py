"""What the scale benchmarks share: the plan, a raw read of every table, one timed check, and
one `withstand check` run as its own process (peak memory, JSON size).

The check is timed in-process, after its modules are imported (that import is the CLI's
start-up), with the solve cache cleared before each run, as a fresh process has it: opening a
session, loading the fleet, the whole check and the JSON text of the result.
"""

from __future__ import annotations

import json
import os
import sqlite3
import subprocess
import sys
import tempfile
import time
from datetime import date
from importlib import resources
from pathlib import Path

PLAN = "mains-panel"  # the CAT III 480 V panel
JOB_DAY = date(2026, 12, 2)


def plan_path() -> Path:
    return Path(str(resources.files("registry.seeddata") / "plans" / f"{PLAN}.yaml"))


def raw_read(path: Path, repeat: int = 3) -> float:
    """Best of ``repeat``: a plain sqlite3 read of every row of every table."""
    best = float("inf")
    for _ in range(repeat):
        t = time.perf_counter()
        con = sqlite3.connect(path)
        tables = [r[0] for r in con.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table'")]
        for name in tables:
            con.execute(f'SELECT * FROM "{name}"').fetchall()
        con.close()
        best = min(best, time.perf_counter() - t)
    return best


def timed_check(path: Path, repeat: int = 3) -> tuple[float, float, int, float, dict]:
    """Best of ``repeat`` cold checks of the plan against the database, as `withstand check`
    does them less its start-up: (seconds with the text report, seconds with the JSON text
    instead, setups, seconds of the raw read, where the solves came from). The raw read
    (:func:`raw_read`) is taken again just before each text check, so that on a shared
    machine the two are measured in the same moments and their ratio does not move with the
    other work as much.

    Each run starts with the in-process solve caches cleared, as a fresh process has them;
    check 10's solves then come from the file's solve cache (``store/solves.py``), as they do
    for a fresh `withstand check` on a file that was checked before. The file's solve cache
    is emptied first, so the first text check on it makes every solve and writes it: its
    seconds (after one untimed check that makes the imports a solve needs) are ``first`` in
    the last item, with ``first_solved`` (the solves it wrote) and,
    over the best-of runs, ``looked_up`` and ``from_file`` (look-ups answered from the file)
    and ``solved`` (solves made and written again)."""
    from registry.engine.network import cache_clear
    from registry.plans import read_plan_file
    from registry.report import render_text
    from registry.services.checks import check_registry, plan_from
    from registry.store import models as m
    from registry.store.db import Database

    data = read_plan_file(plan_path())
    db = Database(f"sqlite:///{path}")

    def empty_solve_cache():
        with db.engine.begin() as conn:  # only a cache: the next check solves again
            conn.execute(m.SolveCache.__table__.delete())

    # One untimed check first, so the first timed one does not pay the imports a solve makes
    # (scipy's, which a process that reads its solves from the file never makes).
    empty_solve_cache()
    with db.transaction() as session:
        check_registry(plan_from(data, session, JOB_DAY), session)
    empty_solve_cache()
    best_text = best_json = best_raw = float("inf")
    setups = 0
    solves: dict = {"first": 0.0, "first_solved": 0, "looked_up": 0, "from_file": 0,
                    "solved": 0}
    for run in range(repeat + 1):
        for form in ("text", "json"):
            if run == 0 and form == "json":
                continue  # the first run on the file: its text check only
            if form == "text":
                best_raw = min(best_raw, raw_read(path, repeat=1))
            cache_clear()
            stores: list = []
            t = time.perf_counter()
            with db.transaction() as session:
                result = check_registry(plan_from(data, session, JOB_DAY), session,
                                        solves=stores)
            if form == "text":
                render_text(result)
                took = time.perf_counter() - t
                if run == 0:
                    solves["first"], solves["first_solved"] = took, stores[0].written
                else:
                    best_text = min(best_text, took)
            else:
                json.dumps(result.as_json(), indent=2, ensure_ascii=False)
                best_json = min(best_json, time.perf_counter() - t)
            if run > 0:
                solves["looked_up"] += stores[0].read
                solves["from_file"] += stores[0].found
                solves["solved"] += stores[0].written
            setups = len(result.setups)
            # Freed here, after the timer: a `withstand check` process never frees a result
            # of an earlier check while it checks, as the next run here would otherwise do.
            del result
    db.dispose()
    return best_text, best_json, setups, best_raw, solves


def cli_check(path: Path, *extra: str) -> tuple[int, int, float]:
    """`withstand check PLAN --json` as its own process: (peak RSS in bytes, JSON bytes,
    wall seconds including start-up)."""
    env = dict(os.environ, WITHSTAND_DATABASE_URL=f"sqlite:///{path}")
    with tempfile.TemporaryDirectory() as tmp:
        peak_file = Path(tmp) / "peak"
        cmd = [sys.executable, "-m", "bench.cli_peak", str(peak_file), "check",
               str(plan_path()), "--json", "--on", JOB_DAY.isoformat(), *extra]
        t = time.perf_counter()
        proc = subprocess.run(cmd, env=env, capture_output=True,
                              cwd=Path(__file__).resolve().parent.parent)
        wall = time.perf_counter() - t
        if proc.returncode not in (0, 1):
            raise RuntimeError(f"withstand check failed ({proc.returncode}): "
                               f"{proc.stderr.decode()[-500:]}")
        return int(peak_file.read_text()), len(proc.stdout), wall


def sizes(smoke: bool, only: str | None = None) -> list[tuple[str, int]]:
    from .fleetgen import SIZES, SMOKE_UNITS
    if smoke:
        return [("smoke", SMOKE_UNITS)]
    chosen = [(k, v) for k, v in SIZES.items() if only is None or k == only]
    return chosen
