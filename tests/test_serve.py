"""What `make run` does, piece by piece, with the real command and the real server: migrate,
load the demo when empty, serve on a free port and answer a login."""

import os
import re
import subprocess
import time
import urllib.request
from http.cookiejar import CookieJar
from urllib.parse import urlencode

import pytest

from helpers import live_server
from helpers.live_server import WITHSTAND, free_port


@pytest.fixture
def server(tmp_path):
    base, proc = live_server.start(tmp_path)
    assert (tmp_path / "instance" / "withstand.sqlite3").exists()
    yield base
    live_server.stop(proc)


def test_server_answers_and_logs_in(server):
    jar = CookieJar()
    opener = urllib.request.build_opener(urllib.request.HTTPCookieProcessor(jar))
    page = opener.open(server + "/login").read().decode()
    token = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
    body = urlencode({"username": "steward", "password": "larkspur-steward",
                      "csrf_token": token}).encode()
    fleet = opener.open(server + "/login", data=body).read().decode()
    assert "NB-0001" in fleet and "Fleet" in fleet


def test_demo_command_serves_a_fresh_demo(tmp_path):
    env = dict(os.environ, WITHSTAND_INSTANCE=str(tmp_path / "instance"))
    port = free_port()
    proc = subprocess.Popen([str(WITHSTAND), "demo", "--port", str(port)], env=env,
                            cwd=tmp_path, stdout=subprocess.PIPE, stderr=subprocess.STDOUT,
                            text=True)
    try:
        for _ in range(150):
            try:
                page = urllib.request.urlopen(f"http://127.0.0.1:{port}/login", timeout=2)
                break
            except OSError:
                assert proc.poll() is None, proc.stdout.read()
                time.sleep(0.1)
        assert page.status == 200
        assert (tmp_path / "instance" / "demo.sqlite3").exists()
    finally:
        proc.terminate()
        out = proc.communicate(timeout=10)[0]
    assert "larkspur-steward" in out
