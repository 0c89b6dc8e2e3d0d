"""Logged events: the append-only, hash-chained record of what each unit went through.

Every event row carries ``hash = HMAC-SHA256(key, canonical JSON of its content + prev_hash)``
(HMAC: RFC 2104; SHA-256: FIPS 180-4), where ``prev_hash`` is the hash of the event before it
(by id), the first event's is :data:`GENESIS`, and the key is kept outside the database
(:func:`.keys.chain_key`). The content names the unit and the user by id and by tag and
login, so renaming either breaks the link. An edit of any hashed field changes that row's
hash, and without the key nobody can recompute it; a deletion or a reordering breaks the next
row's ``prev_hash``. :func:`verify_chain` names the first broken link. Events written before
the key (a database upgraded by migration 0003) keep their plain SHA-256 links up to the
boundary the seal records (:func:`.chain.seal_legacy`).

Appends are serialised so that two writers cannot both chain onto the same last event: on
SQLite the transaction takes the write lock at its start (``BEGIN IMMEDIATE``), on PostgreSQL
it takes a transaction-level advisory lock (:func:`lock_chain`). Logging an event, the use
case, is :func:`registry.services.events.log_event`.
"""

from __future__ import annotations

import hashlib
import hmac
import json
import uuid
from datetime import datetime

from sqlalchemy import select, text
from sqlalchemy.orm import Session

from ..errors import NotFound
from . import models as m
from .keys import GENESIS, ChainState, chain_key, keyed_hash

# An arbitrary constant naming the event-chain lock among PostgreSQL advisory locks.
CHAIN_LOCK_KEY = 0x77697468  # "with"


def _iso(t: datetime | None) -> str | None:
    return None if t is None else t.isoformat(timespec="microseconds")


def canonical_content(row: m.Event) -> dict:
    """The hashed fields of an event, as plain JSON values (ids, ISO times, SI floats).

    ``waveform`` (added by migration 0002) enters only when it was logged: an event without
    one hashes exactly as it did before the field existed, so chains written earlier still
    verify, while setting, changing or clearing a logged waveform changes the hash."""
    content = {
        "id": row.id, "unit_id": row.unit_id, "occurred_at": _iso(row.occurred_at),
        "logged_at": _iso(row.logged_at), "logged_by_id": row.logged_by_id,
        "mode": row.mode_key, "kind": row.kind,
        "voltage": None if row.voltage is None else float(row.voltage),
        "energy": None if row.energy is None else float(row.energy),
        "duration": None if row.duration is None else float(row.duration),
        "symptoms": list(row.symptoms or []), "notes": row.notes or "",
        "within_rating": row.within_rating, "clamp_conducted": bool(row.clamp_conducted),
    }
    if row.waveform is not None:
        content["waveform"] = row.waveform
    return content


def legacy_event_hash(row: m.Event, prev_hash: str) -> str:
    """The link as written before migration 0003: plain SHA-256 (FIPS 180-4) over the
    canonical JSON (sorted keys, no spaces, UTF-8) of the content with ``prev_hash``."""
    doc = dict(canonical_content(row), prev_hash=prev_hash)
    data = json.dumps(doc, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      allow_nan=False)
    return hashlib.sha256(data.encode("utf-8")).hexdigest()


def signed_content(row: m.Event) -> dict:
    """What a keyed link covers: the content, the unit's tag and the logging user's login
    beside their ids, and the chain's name (so a link of another chain cannot stand in)."""
    by = row.logged_by if row.logged_by_id is not None else None
    return dict(canonical_content(row), chain="event",
                unit=row.unit.tag if row.unit is not None else None,
                logged_by=by.username if by is not None else None)


def event_hash(row: m.Event, prev_hash: str, key: bytes | None = None) -> str:
    """HMAC-SHA256 (RFC 2104, FIPS 180-4) with the chain key over the canonical JSON of
    :func:`signed_content` with ``prev_hash`` included."""
    return keyed_hash(key or chain_key(), dict(signed_content(row), prev_hash=prev_hash))


def lock_chain(session: Session) -> None:
    """Serialise appends on PostgreSQL (SQLite's BEGIN IMMEDIATE already did it)."""
    if session.get_bind().dialect.name == "postgresql":
        session.execute(text("SELECT pg_advisory_xact_lock(:k)"), {"k": CHAIN_LOCK_KEY})


def last_hash(session: Session) -> str:
    h = session.scalar(select(m.Event.hash).order_by(m.Event.id.desc()).limit(1))
    return h or GENESIS


def unit_by_tag(session: Session, tag: str) -> m.Unit:
    unit = session.scalar(select(m.Unit).where(m.Unit.tag == tag))
    if unit is None:
        raise NotFound(f"no unit '{tag}'")
    return unit


def append_event(session: Session, row: m.Event) -> m.Event:
    """Chain ``row`` onto the last event and insert it. The caller holds the chain lock (the
    logging service, :mod:`registry.services.events`, takes it first); the hash needs the row's
    id, so the row goes in with a placeholder hash that only this transaction ever sees."""
    lock_chain(session)
    key = chain_key()
    row.prev_hash = last_hash(session)
    row.hash = "pending-" + uuid.uuid4().hex
    session.add(row)
    session.flush()
    session.refresh(row, ["unit", "logged_by"])
    row.hash = event_hash(row, row.prev_hash, key)
    session.flush()
    return row


# -- verification ---------------------------------------------------------------------------

def verify_chain(session: Session, key: bytes | None = None) -> ChainState:
    """Recompute every event's link in id order; the first event whose ``prev_hash`` is not
    its predecessor's hash (a deletion or reordering before it) or whose content does not give
    its hash (an edit, a renamed unit or user, a forged row) is the broken link. Events up to
    the sealed boundary of an upgraded database are checked on their plain SHA-256 links and
    must end on the head the seal recorded."""
    key = key or chain_key()
    seal = session.get(m.ChainSeal, 1)
    legacy_last = seal.legacy_last_event_id if seal is not None else 0
    expected_prev, count, previous_id = GENESIS, 0, None
    rows = session.scalars(select(m.Event).order_by(m.Event.id)).yield_per(500)
    for row in rows:
        if (seal is not None and previous_id is not None and previous_id <= legacy_last < row.id
                and (count != seal.legacy_events or expected_prev != seal.legacy_head)):
            return ChainState(False, count, previous_id, "the events written before the chain "
                              "key are not those the seal recorded", expected_prev)
        count += 1
        if row.prev_hash != expected_prev:
            before = (f"event {previous_id}" if previous_id is not None
                      else "the start of the chain")
            return ChainState(False, count, row.id,
                              f"its prev_hash does not match the hash of {before}: an event "
                              "was deleted, inserted or moved there", expected_prev)
        want = (legacy_event_hash(row, row.prev_hash) if row.id <= legacy_last
                else event_hash(row, row.prev_hash, key))
        if not hmac.compare_digest(want, row.hash):
            return ChainState(False, count, row.id,
                              "its content does not match its hash: the row was edited (or "
                              "its unit or user renamed, or it was written without the key)",
                              expected_prev)
        expected_prev, previous_id = row.hash, row.id
    if (seal is not None and (previous_id or 0) <= legacy_last
            and (count != seal.legacy_events or expected_prev != seal.legacy_head)):
        return ChainState(False, count, previous_id, "the events written before the chain key "
                          "are not those the seal recorded", expected_prev)
    return ChainState(True, count, None, "", expected_prev)


__all__ = ["GENESIS", "ChainState", "canonical_content", "event_hash",
           "legacy_event_hash", "verify_chain", "append_event"]
