"""`withstand import` SIGKILLed at several moments, one of them while it writes: the database
is afterwards either exactly as before (the same rows in every table) or holds the whole file
(every unit with every field), never part of it; SQLite's `PRAGMA integrity_check` says ok.

The import writes in one transaction; SQLite promises that a transaction interrupted by the
death of its process leaves the database as it was ("Atomic Commit In SQLite", sqlite.org).
The test checks the imported units against the file it wrote, not against the store's code.
"""

from __future__ import annotations

import json
import random
import signal
import subprocess
import time
from datetime import date, timedelta
from pathlib import Path

import pytest

from helpers import faultwork as fw
from registry.formats.common import read_document

SEED_FLEET = Path(__file__).resolve().parents[2] / "seeddata" / "fleet.yaml"
STATUSES = ("in-service", "in-service", "in-service", "away", "retired")
PEOPLE = ("Ines Marrow", "Tobias Quell", "Priya Sandover", "")
# unit columns a run sets by its own clock: left out when comparing with the state before
CLOCK_COLUMNS = {"hold": {"opened_at"}}


def fleet_file(folder: Path, count: int) -> tuple[Path, list[tuple]]:
    """A withstand-fleet/1 file: the demo fleet's sites and models, and ``count`` new units
    spread over them; with the rows each unit must become (tag, model, serial, site,
    custodian, status, verified_on, verification_due, notes)."""
    demo = read_document(SEED_FLEET)
    models = [m["key"] for m in demo["models"]]
    sites = [s["name"] for s in demo["sites"]]
    units, rows = [], []
    for i in range(count):
        verified = date(2026, 1, 1) + timedelta(days=i % 300)
        status = "on-hold" if i % 2000 == 7 else STATUSES[i % len(STATUSES)]
        unit = {"tag": f"FT-{i:05d}", "model": models[i % len(models)],
                "serial": f"{i:06d}",  # leading zeros: text, kept as written
                "site": sites[i % len(sites)], "custodian": PEOPLE[i % len(PEOPLE)],
                "status": status, "verified_on": verified.isoformat(),
                "verification_due": (verified + timedelta(days=365)).isoformat(),
                "notes": f"fault-test unit {i}" if i % 3 == 0 else ""}
        units.append({k: v for k, v in unit.items() if v != ""})
        rows.append(tuple(unit[k] for k in ("tag", "model", "serial", "site", "custodian",
                                            "status", "verified_on", "verification_due",
                                            "notes")))
    path = folder / f"fleet-{count}.json"
    path.write_text(json.dumps({"format": "withstand-fleet/1", "sites": demo["sites"],
                                "models": demo["models"], "units": units}))
    return path, rows


def unit_rows(path: Path) -> dict[str, tuple]:
    import sqlite3
    con = sqlite3.connect(path)
    try:
        return {r[0]: r for r in con.execute(
            "SELECT u.tag, m.key, u.serial, s.name, u.custodian, u.status, u.verified_on, "
            "u.verification_due, u.notes FROM unit u JOIN model m ON m.id = u.model_id "
            "LEFT JOIN site s ON s.id = u.site_id")}
    finally:
        con.close()


def state_after(path: Path, before: dict, rows: list[tuple]) -> str:
    """'before' or 'imported'; fails when the database is anything else."""
    assert fw.integrity(path) == "ok"
    now = fw.dump(path, CLOCK_COLUMNS)
    if now == before:
        return "before"
    # else the whole file must be in: every unit, every field, and nothing else changed
    # but the unit rows, the holds of the units the file marks on-hold and those holds' links
    # on the hold chain
    for table in set(before) | set(now):
        if table not in ("unit", "hold", "record_link"):
            assert now.get(table) == before.get(table), f"table {table} changed"
    stored = unit_rows(path)
    missing = [r[0] for r in rows if r[0] not in stored]
    assert not missing, f"a partial import: {len(missing)} of {len(rows)} units missing"
    for r in rows:
        assert stored[r[0]] == r, f"unit {r[0]} stored as {stored[r[0]]}, the file says {r}"
    assert len(now["unit"]) == len(before["unit"]) + len(rows)
    on_hold = sum(r[5] == "on-hold" for r in rows)
    assert len(now["hold"]) == len(before["hold"]) + on_hold
    # one "hold-opened" link for each new hold, nothing else added to the record
    assert len(now.get("record_link", [])) == len(before.get("record_link", [])) + on_hold
    return "imported"


def _wal_grew(db_path: Path) -> bool:
    """The import's writes reach the file: SQLite spills them to the WAL as its page cache
    fills, before the commit."""
    wal = Path(f"{db_path}-wal")
    return wal.exists() and wal.stat().st_size > 0


def run_import(env, fleet: Path, db_path: Path, *, delay=None, when_writing=None) -> str:
    """`withstand import FILE`, SIGKILLed after ``delay`` s, or ``when_writing`` s after its
    writes reached the WAL; what happened to it: 'killed-writing', 'killed' or 'finished'.
    (At 20 000 units the import spends most of its time building rows in Python; SQLite's
    writes come in the last fraction of a second, at the flush and commit.)"""
    assert not _wal_grew(db_path)
    log = db_path.parent / "import.log"  # a file, not a pipe: its 20 000 lines never block
    with open(log, "w") as out:
        proc = subprocess.Popen([str(fw.WITHSTAND), "import", str(fleet)], env=env,
                                stdout=out, stderr=subprocess.STDOUT)
        start, writing_since = time.monotonic(), None
        for _ in range(60_000):  # bounded: 60 000 polls of 5 ms
            if proc.poll() is not None:
                break
            if writing_since is None and _wal_grew(db_path):
                writing_since = time.monotonic()
            if (when_writing is not None and writing_since is not None
                    and time.monotonic() - writing_since >= when_writing):
                break
            if delay is not None and time.monotonic() - start >= delay:
                break
            time.sleep(0.002 if writing_since else 0.005)
        killed = proc.poll() is None
        if killed:
            proc.send_signal(signal.SIGKILL)
        proc.wait(timeout=120)
    if not killed:
        assert proc.returncode == 0, log.read_text()[-2000:]
        return "finished"
    return "killed-writing" if writing_since is not None else "killed"


def _fresh(tmp_path, pristine: Path) -> None:
    db_path = fw.sqlite_file(tmp_path)
    for suffix in ("", "-wal", "-shm"):
        Path(f"{db_path}{suffix}").unlink(missing_ok=True)
    fw.copy_sqlite(pristine, db_path)


def _setup(tmp_path, templates):
    env = fw.instance_env(tmp_path)
    templates.demo_instance(tmp_path / "instance")  # as `init --with-demo` leaves it
    db_path = fw.sqlite_file(tmp_path)
    pristine = tmp_path / "pristine.sqlite3"
    fw.copy_sqlite(db_path, pristine)
    return env, db_path, pristine, fw.dump(pristine, CLOCK_COLUMNS)


def test_import_killed_at_random_moments_is_all_or_nothing(tmp_path, templates):
    """2 000 units: killed at three random moments, then left to finish."""
    env, db_path, pristine, before = _setup(tmp_path, templates)
    fleet, rows = fleet_file(tmp_path, 2000)
    rng = random.Random()
    delays = sorted(rng.uniform(0.2, 4.0) for _ in range(3))
    seen = []
    for delay in [*delays, None]:
        _fresh(tmp_path, pristine)
        how = run_import(env, fleet, db_path, delay=delay)
        seen.append((delay, how, state_after(db_path, before, rows)))
        if how == "finished":
            assert seen[-1][2] == "imported", seen
    assert seen[-1][1:] == ("finished", "imported"), seen


@pytest.mark.faults_long
def test_import_of_20k_units_killed_while_writing_is_all_or_nothing(tmp_path, templates):
    """20 000 units: killed as soon as its writes reach the file, and once more a random
    moment later, while SQLite writes the rows."""
    env, db_path, pristine, before = _setup(tmp_path, templates)
    fleet, rows = fleet_file(tmp_path, 20_000)
    seen = []
    for after in (0.0, random.uniform(0.02, 0.2)):
        _fresh(tmp_path, pristine)
        how = run_import(env, fleet, db_path, when_writing=after)
        # killed with its writes under way: as before, or (had the commit just gone
        # through) the whole file, never part of it
        seen.append((after, how, state_after(db_path, before, rows)))
    assert seen[0][1] == "killed-writing", seen
