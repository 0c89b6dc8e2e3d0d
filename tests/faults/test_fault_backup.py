"""`withstand backup` SIGKILLed part-way: the target name then holds either nothing or a
complete copy (SQLite's `PRAGMA integrity_check` ok, the same rows as the database), never
half a file. The copy is built under a temporary name beside the target and given the
target's name in one atomic step (POSIX link(2)/rename(2) replace a name atomically, IEEE Std
1003.1), so the kill cannot leave anything in between at that name."""

from __future__ import annotations

import random
import signal
import sqlite3
import subprocess
import time

from helpers import faultwork as fw

BALLAST_MB = 48  # large enough that the copy takes a while, so a kill lands inside it


def _database(tmp_path, templates):
    env = fw.instance_env(tmp_path)
    templates.demo_instance(tmp_path / "instance")  # as `init --with-demo` leaves it
    fw.cli(env, "event", "add", "--unit", "NB-0001", "--kind", "overvoltage", "--mode", "vdc",
           "--voltage", "200 V", "--symptom", "none", "--by", "tech")
    path = fw.sqlite_file(tmp_path)
    con = sqlite3.connect(path)
    try:  # rows the copy must carry too; random blobs, so the pages do not compress away
        con.execute("CREATE TABLE ballast (id INTEGER PRIMARY KEY, data BLOB)")
        con.execute("WITH RECURSIVE n(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM n "
                    f"WHERE i < {BALLAST_MB * 256}) "
                    "INSERT INTO ballast (data) SELECT randomblob(4096) FROM n")
        con.commit()
        con.execute("PRAGMA wal_checkpoint(TRUNCATE)")
    finally:
        con.close()
    return env, path


def _new_file_written(folder, before):
    for p in folder.iterdir():
        if p.name not in before and p.is_file() and p.stat().st_size > 0:
            return True
    return False


def _run_and_kill(env, target, *, delay=None, when_writing=False):
    """Start `withstand backup TARGET`, SIGKILL it after ``delay`` seconds or as soon as a
    new file in the target's folder has data; True if it was killed before it finished."""
    folder = target.parent
    before = {p.name for p in folder.iterdir()}
    proc = subprocess.Popen([str(fw.WITHSTAND), "backup", str(target)], env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    start = time.monotonic()
    for _ in range(20_000):  # bounded: 20 000 polls of 5 ms
        if proc.poll() is not None:
            break
        if when_writing and _new_file_written(folder, before):
            break
        if delay is not None and time.monotonic() - start >= delay:
            break
        time.sleep(0.005)
    killed = proc.poll() is None
    if killed:
        proc.send_signal(signal.SIGKILL)
    proc.communicate(timeout=60)
    assert killed or proc.returncode == 0, proc.stderr
    return killed


def _target_absent_or_complete(target, expected):
    if not target.exists():
        return "absent"
    assert fw.integrity(target) == "ok"
    assert fw.dump(target) == expected, "the copy at the target name is not the database"
    return "complete"


def test_backup_killed_midway_leaves_no_half_file(tmp_path, templates):
    env, path = _database(tmp_path, templates)
    expected = fw.dump(path)
    out = tmp_path / "copies"
    out.mkdir()
    rng = random.Random()
    seen = []
    # killed while the copy is being written, then at random moments, then left to finish
    cases = [dict(when_writing=True), dict(delay=rng.uniform(0.05, 0.5)),
             dict(delay=rng.uniform(0.3, 1.5)), dict()]
    for i, case in enumerate(cases):
        target = out / f"copy-{i}.sqlite3"
        killed = _run_and_kill(env, target, **case)
        state = _target_absent_or_complete(target, expected)
        seen.append((case, killed, state))
        if not killed:
            assert state == "complete"
    assert seen[0][1] and seen[0][2] == "absent", seen  # the kill inside the copy
    assert seen[-1][2] == "complete", seen
    # what a killed run leaves is a hidden partial file (and its journal), never at a target
    # name
    for p in out.iterdir():
        assert (p.name in {f"copy-{i}.sqlite3" for i in range(len(cases))}
                or (p.name.startswith(".copy-") and ".partial" in p.name)), p.name
