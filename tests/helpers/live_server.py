"""The real server, as `make run` starts it: `withstand init --with-demo` on a scratch
instance, then `withstand serve` on a free port (tests/test_serve.py, the browser tests).
Tests of something other than `init` pass the session's templates, and the instance gets a
copy of the demo template instead (what `init --with-demo` would have made)."""

import os
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

WITHSTAND = Path(sys.executable).with_name("withstand")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def start(tmp_path: Path, templates=None):
    """(base URL, process); the caller stops the process. With ``templates``
    (helpers.databases.Templates) the demo comes from the template, not from `init`."""
    env = dict(os.environ, WITHSTAND_INSTANCE=str(tmp_path / "instance"))
    env.pop("WITHSTAND_DATABASE_URL", None)
    if templates is not None:
        templates.demo_instance(tmp_path / "instance")
    else:
        init = subprocess.run([str(WITHSTAND), "init", "--with-demo"], env=env, cwd=tmp_path,
                              capture_output=True, text=True, timeout=120)
        if init.returncode != 0:
            raise RuntimeError(init.stderr)
    port = free_port()
    proc = subprocess.Popen([str(WITHSTAND), "serve", "--port", str(port)], env=env,
                            cwd=tmp_path, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                            text=True)
    base = f"http://127.0.0.1:{port}"
    for _ in range(200):
        try:
            urllib.request.urlopen(base + "/login", timeout=2)
            return base, proc
        except OSError:
            if proc.poll() is not None:
                raise RuntimeError(f"server exited: {proc.stdout.read()}") from None
            time.sleep(0.1)
    proc.terminate()
    raise RuntimeError("the server did not answer")


def stop(proc) -> None:
    proc.terminate()
    try:
        proc.wait(timeout=10)
    except subprocess.TimeoutExpired:
        proc.kill()
        proc.wait(timeout=10)
