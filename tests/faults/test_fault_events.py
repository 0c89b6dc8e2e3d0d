"""The real server SIGKILLed while 8 clients log events through the API, then restarted on the
same database: every event the API acknowledged (201 with its id) is stored with the content
it was acknowledged with, the hash chain verifies (`withstand audit verify`, exit 0) and, on
SQLite, `PRAGMA integrity_check` says ok.

The durability being checked is the database's own promise: a transaction that committed
survives the death of the process that committed it (SQLite: "Atomic Commit In SQLite" and
"Write-Ahead Logging", sqlite.org; PostgreSQL manual, "Reliability and the Write-Ahead Log").
An event is acknowledged only after `log_event`'s transaction committed, so none may be lost.
"""

from __future__ import annotations

import http.client
import random
import threading
import time

import pytest

from helpers import faultwork as fw

CLIENTS = 8
MAX_POSTS_PER_CLIENT = 400  # a bound on the loop; the kill comes long before
# in-service demo units whose model has a dc volts mode; 100 V is within every rating, so no
# hold opens and each post writes one event
TAGS = ("NB-0001", "NB-0002", "NB-0004", "NB-0007")
# fields of an event as the API returns it (GET /events and the 201 body alike)
EVENT_FIELDS = ("id", "unit", "occurred_at", "logged_at", "logged_by", "mode", "kind",
                "voltage", "energy", "duration", "waveform", "symptoms", "note",
                "within_rating", "hash")


def _post_until_killed(base, token, client, run, acked, problems, stop):
    for seq in range(MAX_POSTS_PER_CLIENT):
        if stop.is_set():
            return
        sent = {"unit": TAGS[client % len(TAGS)], "kind": "overvoltage", "mode": "vdc",
                "voltage": f"{100 + seq} V", "symptoms": ["none"],
                "note": f"run {run} client {client} post {seq}"}
        try:
            status, body = fw.request(base, token, "POST", "/events", sent)
        except (OSError, http.client.HTTPException):
            # the server is gone, or died mid-answer (an answer cut short): this post is
            # unacknowledged, stored or not
            return
        if status != 201 or not isinstance(body, dict) or "id" not in body:
            problems.append((client, seq, status, body))
            return
        acked.append((sent, {k: body.get(k) for k in EVENT_FIELDS}))


def _kill_while_posting(server, token, run, rng):
    acked, problems, stop = [], [], threading.Event()
    threads = [threading.Thread(target=_post_until_killed, daemon=True,
                                args=(server.base, token, c, run, acked, problems, stop))
               for c in range(CLIENTS)]
    for t in threads:
        t.start()
    # let every client get going (bounded), then kill at a random moment among their posts
    for _ in range(600):
        if len(acked) >= 2 * CLIENTS or problems or not any(t.is_alive() for t in threads):
            break
        time.sleep(0.05)
    time.sleep(rng.uniform(0.2, 1.5))
    in_flight = sum(t.is_alive() for t in threads)
    server.kill()
    stop.set()
    for t in threads:
        t.join(timeout=60)
    assert not any(t.is_alive() for t in threads), "a client did not stop"
    return acked, problems, in_flight


def _stored_events(env, token, tmp_path):
    server = fw.Server(env, tmp_path)
    try:
        status, body = fw.request(server.base, token, "GET", "/events", timeout=120)
        assert status == 200, body
        # the chain goes on after the restart: one more event from each client's unit
        for tag in TAGS:
            status, after = fw.request(server.base, token, "POST", "/events", {
                "unit": tag, "kind": "overvoltage", "mode": "vdc", "voltage": "50 V",
                "symptoms": ["none"], "note": f"after the restart on {tag}"})
            assert status == 201, after
    finally:
        server.stop()
    return body["events"]


def _check_after_kill(env, tmp_path, seed):
    """``env`` names a database holding the demo, as `init --with-demo` leaves it."""
    rng = random.Random(seed)
    token = fw.api_token(env, "tech")
    server = fw.Server(env, tmp_path)
    try:
        acked, problems, in_flight = _kill_while_posting(server, token, seed, rng)
    finally:
        server.stop()
    where = f"(seed {seed}; {len(acked)} acknowledged)"
    assert not problems, f"posts refused before the kill {where}: {problems[:3]}"
    assert len(acked) >= 2 * CLIENTS, f"the clients hardly posted {where}"
    assert in_flight > 0, f"no client was posting when the server was killed {where}"

    stored = _stored_events(env, token, tmp_path)
    by_id = {e["id"]: {k: e.get(k) for k in EVENT_FIELDS} for e in stored}
    for sent, ack in acked:
        assert ack["id"] in by_id, f"acknowledged event {ack['id']} was lost {where}"
        assert by_id[ack["id"]] == ack, f"event {ack['id']} differs from its acknowledgement"
        assert ack["note"] == sent["note"] and ack["unit"] == sent["unit"]
        assert ack["voltage"] == sent["voltage"]  # "100 V" back as the same text
    notes = [e["note"] for e in stored if e["note"].startswith(f"run {seed} ")]
    assert len(notes) == len(set(notes)), "a post was stored twice"
    assert len(notes) >= len(acked)  # the rest were in flight: stored or not, never half

    verify = fw.cli(env, "audit", "verify", check=False)
    assert verify.returncode == 0, verify.stdout + verify.stderr
    # every event is in the chain: those listed before, plus the 4 logged after the restart
    assert f"intact: {len(stored) + len(TAGS)} events" in verify.stdout, verify.stdout
    return len(acked)


def test_server_killed_while_clients_log_events_on_sqlite(tmp_path, templates):
    env = fw.instance_env(tmp_path)
    templates.demo_instance(tmp_path / "instance")
    seed = random.randrange(10**6)
    _check_after_kill(env, tmp_path, seed)
    # SQLite's own check of the file the killed server left (its WAL recovered on opening)
    assert fw.integrity(fw.sqlite_file(tmp_path)) == "ok"


@pytest.mark.postgres
def test_server_killed_while_clients_log_events_on_postgresql(tmp_path, instance, pg_demo):
    assert instance == tmp_path / "instance"  # where pg_demo put the key that signed it
    env = fw.instance_env(tmp_path, pg_demo.url)
    seed = random.randrange(10**6)
    _check_after_kill(env, tmp_path, seed)
