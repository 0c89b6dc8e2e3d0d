"""Benchmark: 8 concurrent clients on the bench fleet against the real server (targets: p95
of the fleet page, a unit page and the dashboard at most 50 ms; a check result page at most
300 ms after the first).

    .venv/bin/python -m bench.bench_pages            # 20 000 units over 400 models
    .venv/bin/python -m bench.bench_pages --smoke    # 600 units, fewer requests, for CI

`withstand serve` runs in a subprocess on a copy of the bench database (bench/fleetgen.py).
Each client logs in through the form, then asks in turn for the fleet page (a page of it, as a
user pages through), a unit page (a different unit each time), the dashboard and the result
of one CAT III panel check. The first check result is asked for alone beforehand and not
counted: the targets are for the pages after it. Prints the p95 of each page against its
limit; asserts nothing.
"""

from __future__ import annotations

import argparse
import os
import re
import shutil
import statistics
import subprocess
import sys
import threading
import time
import urllib.parse
from pathlib import Path

from .timing import chain_key_for_bench, ratio_line

CLIENTS = 8
LIMITS_MS = {"fleet page": 50, "unit page": 50, "dashboard": 50, "check result": 300}
PLAN = {"title": "Panel", "task": "measure-voltage", "supply": "mains", "category": "III",
        "waveform": "ac", "voltage": "480 V", "voltage_to_earth": "277 V",
        "duration": "60 s", "site": "North bench"}


def _withstand() -> str:
    return str(Path(sys.executable).with_name("withstand"))


def start_server(db_path: Path, instance: Path, log) -> tuple[str, subprocess.Popen]:
    """``withstand serve`` on a free port, its output (Flask's log of any error with its
    traceback) written to ``log``."""
    import socket
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    env = dict(os.environ, WITHSTAND_INSTANCE=str(instance),
               WITHSTAND_DATABASE_URL=f"sqlite:///{db_path}")
    proc = subprocess.Popen([_withstand(), "serve", "--port", str(port)], env=env,
                            stdout=log, stderr=subprocess.STDOUT)
    base = f"http://127.0.0.1:{port}"
    import requests
    for _ in range(300):
        try:
            requests.get(base + "/login", timeout=2)
            return base, proc
        except requests.RequestException:
            if proc.poll() is not None:
                raise RuntimeError("the server exited") from None
            time.sleep(0.1)
    proc.terminate()
    raise RuntimeError("the server did not answer")


def logged_in(base: str):
    import requests
    s = requests.Session()
    page = s.get(base + "/login").text
    token = re.search(r'name="csrf_token" value="([^"]+)"', page).group(1)
    r = s.post(base + "/login", data={"username": "bench", "password": "bench-password-1",
                                      "csrf_token": token})
    r.raise_for_status()
    return s


def p95(values: list[float]) -> float:
    if len(values) < 2:
        return values[0]
    return statistics.quantiles(values, n=20, method="inclusive")[-1]


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--smoke", action="store_true", help="600 units, 3 rounds per client")
    ap.add_argument("--rounds", type=int, default=None, help="rounds per client (default 25)")
    ap.add_argument("--no-check", action="store_true",
                    help="leave the check result out (when the first check takes too long)")
    args = ap.parse_args(argv)
    chain_key_for_bench()
    from .fleetgen import SMOKE_UNITS, fleet_database
    units = SMOKE_UNITS if args.smoke else 20_000
    rounds = args.rounds or (3 if args.smoke else 25)
    work = Path(os.environ["WITHSTAND_INSTANCE"])
    db_path = work / "bench.sqlite3"
    shutil.copyfile(fleet_database(units), db_path)
    log_path = work / "server.log"
    log = open(log_path, "wb")  # closed once the server has stopped
    base, proc = start_server(db_path, work, log)
    times: dict[str, list[float]] = {k: [] for k in LIMITS_MS}
    failures: list[str] = []
    lock = threading.Lock()
    result_url = base + "/checks/result?" + urllib.parse.urlencode(PLAN)
    try:
        first = logged_in(base)
        t = time.perf_counter()
        r = first.get(result_url if not args.no_check else base + "/dashboard")
        first_check = time.perf_counter() - t
        if r.status_code != 200:
            failures.append(f"first check result: HTTP {r.status_code}")
        if args.no_check:
            del times["check result"]
        pages = max(units // 50, 1)

        def client(n: int):
            s = logged_in(base)
            for i in range(rounds):
                k = n * rounds + i
                urls = {"fleet page": f"{base}/?page={k % pages + 1}",
                        "unit page": f"{base}/units/B-{(k * 7919) % units:06d}",
                        "dashboard": f"{base}/dashboard",
                        "check result": result_url}
                for name, url in urls.items():
                    if name not in times:
                        continue
                    t = time.perf_counter()
                    r = s.get(url)
                    took = time.perf_counter() - t
                    with lock:
                        times[name].append(took)
                        if r.status_code != 200:
                            failures.append(f"{name} {url}: HTTP {r.status_code}")

        threads = [threading.Thread(target=client, args=(n,)) for n in range(CLIENTS)]
        for th in threads:
            th.start()
        for th in threads:
            th.join()
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            proc.kill()
        log.close()
    print(f"{CLIENTS} concurrent clients, {rounds} rounds each, {units} units "
          f"(first {'dashboard' if args.no_check else 'check result'} alone: "
          f"{first_check:.2f} s)")
    for name, limit in LIMITS_MS.items():
        if name not in times:
            print(f"  {name}: not measured (--no-check)")
            continue
        ms = [x * 1000 for x in times[name]]
        print(ratio_line(f"{name} p95 (median {statistics.median(ms):.0f} ms, "
                         f"{len(ms)} requests)", p95(ms), limit, "ms"))
    for f in failures[:5]:
        print(f"  failed: {f}")
    server_errors(log_path)


def server_errors(log_path: Path) -> None:
    """The server's log: every 500 it answered and the first traceback, or that there were
    none (a 500 under load is a defect, whatever the timings)."""
    text = log_path.read_text(errors="replace")
    answered = [line for line in text.splitlines() if "answered 500" in line]
    print(f"  server log ({log_path}): {len(answered)} answered 500, "
          f"{text.count('Traceback')} tracebacks")
    for line in answered[:5]:
        print(f"    {line}")
    if "Traceback" in text:
        start = text.index("Traceback")
        print("    " + "\n    ".join(text[start:].splitlines()[:40]))


if __name__ == "__main__":
    main()
