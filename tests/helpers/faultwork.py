"""What the fault tests share: the `withstand` command run as a subprocess on one instance
folder, the real server started and SIGKILLed, the API called with the standard library only,
and SQLite files read back with Python's own sqlite3 (integrity check, a canonical dump)."""

from __future__ import annotations

import json
import os
import signal
import sqlite3
import subprocess
import time
import urllib.error
import urllib.request
from pathlib import Path

from .live_server import WITHSTAND, free_port

CLI_TIMEOUT_S = 300  # a bound on any one command, never a claim about how fast it is


def instance_env(tmp_path: Path, url: str | None = None) -> dict:
    """The environment of every command of one test: its own instance folder and, for
    PostgreSQL, the database URL (SQLite otherwise: the instance's withstand.sqlite3)."""
    env = dict(os.environ, WITHSTAND_INSTANCE=str(tmp_path / "instance"))
    env.pop("WITHSTAND_DATABASE_URL", None)
    if url:
        env["WITHSTAND_DATABASE_URL"] = url
    return env


def sqlite_file(tmp_path: Path) -> Path:
    return tmp_path / "instance" / "withstand.sqlite3"


def cli(env: dict, *args: str, timeout: float = CLI_TIMEOUT_S, check: bool = True):
    proc = subprocess.run([str(WITHSTAND), *args], env=env, capture_output=True, text=True,
                          timeout=timeout)
    if check and proc.returncode != 0:
        raise AssertionError(f"withstand {' '.join(args)} exited {proc.returncode}:\n"
                             f"{proc.stdout}\n{proc.stderr}")
    return proc


def api_token(env: dict, user: str) -> str:
    """A new API token (`withstand user token`: the last line of its output)."""
    return cli(env, "user", "token", user).stdout.strip().splitlines()[-1]


class Server:
    """`withstand serve` on a free port of 127.0.0.1, as a subprocess."""

    def __init__(self, env: dict, cwd: Path):
        self.port = free_port()
        self.base = f"http://127.0.0.1:{self.port}"
        self.log = open(cwd / f"serve-{self.port}.log", "w")
        self.proc = subprocess.Popen([str(WITHSTAND), "serve", "--port", str(self.port)],
                                     env=env, cwd=cwd, stdout=self.log,
                                     stderr=subprocess.STDOUT)
        for _ in range(300):  # up to about 60 s for a slow, shared machine
            try:
                urllib.request.urlopen(self.base + "/login", timeout=2).close()
                return
            except OSError:
                if self.proc.poll() is not None:
                    break
                time.sleep(0.2)
        self.stop()
        raise RuntimeError(f"the server did not answer: {self.output()}")

    def output(self) -> str:
        self.log.flush()
        return Path(self.log.name).read_text()

    def kill(self) -> None:
        """SIGKILL: no handler runs, nothing is flushed or closed by the server."""
        os.kill(self.proc.pid, signal.SIGKILL)
        self.proc.wait(timeout=30)

    def stop(self) -> None:
        if self.proc.poll() is None:
            self.proc.terminate()
            try:
                self.proc.wait(timeout=15)
            except subprocess.TimeoutExpired:
                self.proc.kill()
                self.proc.wait(timeout=15)
        self.log.close()


def request(base: str, token: str, method: str, path: str, body=None, timeout: float = 30):
    """(status, parsed JSON body) of one API call; raises OSError when the connection
    fails (refused, reset, timed out)."""
    data = None if body is None else json.dumps(body).encode()
    req = urllib.request.Request(base + "/api/v1" + path, data=data, method=method,
                                 headers={"Authorization": f"Bearer {token}",
                                          "Content-Type": "application/json"})
    try:
        with urllib.request.urlopen(req, timeout=timeout) as resp:
            return resp.status, json.loads(resp.read())
    except urllib.error.HTTPError as exc:
        return exc.code, json.loads(exc.read() or b"null")


# -- SQLite files read back --------------------------------------------------------------------

def integrity(path: Path) -> str:
    con = sqlite3.connect(path)
    try:
        return "\n".join(r[0] for r in con.execute("PRAGMA integrity_check"))
    finally:
        con.close()


def dump(path: Path, skip_columns: dict[str, set[str]] | None = None) -> dict[str, list]:
    """Every table's rows, sorted, as plain tuples: two files with the same content give the
    same dump whatever their page layout. ``skip_columns`` leaves out columns by table (times
    a run sets to its own clock)."""
    skip_columns = skip_columns or {}
    con = sqlite3.connect(path)
    try:
        tables = [r[0] for r in con.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' "
            "ORDER BY name")]
        out = {}
        for t in tables:
            cols = [r[1] for r in con.execute(f'PRAGMA table_info("{t}")')
                    if r[1] not in skip_columns.get(t, set())]
            listed = ", ".join(f'"{c}"' for c in cols)
            out[t] = sorted((tuple(r) for r in con.execute(f'SELECT {listed} FROM "{t}"')),
                            key=repr)
        return out
    finally:
        con.close()


def copy_sqlite(source: Path, target: Path) -> None:
    """A consistent copy through SQLite's backup API (the WAL included)."""
    src, dst = sqlite3.connect(source), sqlite3.connect(target)
    try:
        src.backup(dst)
    finally:
        dst.close()
        src.close()
