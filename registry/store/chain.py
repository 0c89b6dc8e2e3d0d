"""The keyed links of the record: the key, the HMAC, the hold and change chains, the seal of
what an upgraded database held before the key, and the check against an exported workbook.

Every link is ``HMAC-SHA256(key, canonical JSON of the content + prev_hash)`` (HMAC: RFC 2104;
SHA-256: FIPS 180-4), the key kept outside the database (:func:`registry.config.chain_key`).
Someone who can write the database but lacks the key can neither recompute a link after an
edit nor forge an appended one. Someone with both can rewrite everything; and removing the
newest entries leaves no later link to break, so that is found only against a head recorded
outside the database (an exported workbook, :func:`compare_with`).

Chains: ``event`` (the links are the event rows' own ``prev_hash``/``hash``, see
:mod:`.events`), ``hold`` (a link when a hold opens and one when it is released) and
``change`` (a link per recorded field change), the last two in ``record_link``.
"""

from __future__ import annotations

import hmac
from datetime import datetime, UTC

from sqlalchemy import func, select, text
from sqlalchemy.orm import Session

from . import models as m
from .keys import GENESIS, ChainState, canonical, chain_key, keyed_hash  # noqa: F401  (the chain's names)

CHAIN_LOCK_KEY = 0x77697468  # the same advisory lock as event appends: one writer at a time


def lock(session: Session) -> None:
    """Serialise appends on PostgreSQL (SQLite's BEGIN IMMEDIATE, or its single writer)."""
    if session.get_bind().dialect.name == "postgresql":
        session.execute(text("SELECT pg_advisory_xact_lock(:k)"), {"k": CHAIN_LOCK_KEY})


def _iso(t: datetime | None) -> str | None:
    return None if t is None else t.isoformat(timespec="microseconds")


def _username(session: Session, user_id: int | None) -> str | None:
    if user_id is None:
        return None
    user = session.get(m.User, user_id)
    return None if user is None else user.username


def _tag(session: Session, unit_id: int | None) -> str | None:
    unit = None if unit_id is None else session.get(m.Unit, unit_id)
    return None if unit is None else unit.tag


def hold_opened_content(session: Session, h: m.Hold) -> dict:
    return {"chain": "hold", "kind": "hold-opened", "hold": h.id, "unit_id": h.unit_id,
            "unit": _tag(session, h.unit_id), "event_id": h.event_id,
            "opened_at": _iso(h.opened_at), "reason": h.reason or ""}


def hold_released_content(session: Session, h: m.Hold) -> dict:
    return {"chain": "hold", "kind": "hold-released", "hold": h.id, "unit_id": h.unit_id,
            "unit": _tag(session, h.unit_id), "released_at": _iso(h.released_at),
            "released_by_id": h.released_by_id,
            "released_by": _username(session, h.released_by_id), "result": h.result,
            "notes": h.notes or ""}


def change_doc(c: dict, user: str | None) -> dict:
    """What a change's link signs, from the change's fields (``id``, ``at``, ``user_id``,
    ``actor``, ``entity``, ``entity_key``, ``field``, ``old``, ``new``) and its user's name."""
    return {"chain": "change", "kind": "change", "id": c["id"], "at": _iso(c["at"]),
            "user_id": c["user_id"], "user": user, "actor": c["actor"] or "",
            "entity": c["entity"], "entity_key": c["entity_key"], "field": c["field"],
            "old": c["old"], "new": c["new"]}


_CHANGE_FIELDS = ("id", "at", "user_id", "actor", "entity", "entity_key", "field", "old", "new")


def change_content(session: Session, c: m.Change) -> dict:
    return change_doc({f: getattr(c, f) for f in _CHANGE_FIELDS},
                      _username(session, c.user_id))


def _content(session: Session, kind: str, subject) -> dict:
    if kind == "hold-opened":
        return hold_opened_content(session, subject)
    if kind == "hold-released":
        return hold_released_content(session, subject)
    return change_content(session, subject)


def append_link(session: Session, kind: str, subject, key: bytes | None = None) -> m.Link:
    """Chain ``subject`` (a flushed hold or change) onto its chain."""
    key = key or chain_key()
    lock(session)
    session.flush()
    chain = "change" if kind == "change" else "hold"
    prev = session.scalar(select(m.Link.hash).where(m.Link.chain == chain)
                          .order_by(m.Link.id.desc()).limit(1)) or GENESIS
    link = m.Link(chain=chain, kind=kind, subject_id=subject.id, prev_hash=prev,
                  hash=keyed_hash(key, dict(_content(session, kind, subject), prev_hash=prev)))
    session.add(link)
    session.flush()
    return link


def link_hold_opened(session: Session, hold: m.Hold) -> m.Link:
    """Call after adding a hold (the store's ``open_hold`` and the fleet import do)."""
    return append_link(session, "hold-opened", hold)


def link_hold_released(session: Session, hold: m.Hold) -> m.Link:
    """Call after setting a hold's release fields (the store's ``release_hold`` does)."""
    return append_link(session, "hold-released", hold)


def link_change(session: Session, change: m.Change) -> m.Link:
    """Call after adding a change record (``fleet.record_changes`` does)."""
    return append_link(session, "change", change)


def link_changes(session: Session, changes: list[dict], key: bytes | None = None) -> None:
    """Chain many written change rows (plain dicts with their ``id``, in id order) onto the
    change chain at once: the same links :func:`link_change` makes one by one, computed in
    order from the newest link and written in one multi-row INSERT (``fleet.record_changes``
    does this for an import's thousands of changes)."""
    from sqlalchemy import insert
    if not changes:
        return
    key = key or chain_key()
    lock(session)
    session.flush()
    prev = session.scalar(select(m.Link.hash).where(m.Link.chain == "change")
                          .order_by(m.Link.id.desc()).limit(1)) or GENESIS
    users = {uid: _username(session, uid) for uid in {c["user_id"] for c in changes}}
    links = []
    for c in changes:
        digest = keyed_hash(key, dict(change_doc(c, users[c["user_id"]]), prev_hash=prev))
        links.append({"chain": "change", "kind": "change", "subject_id": c["id"],
                      "prev_hash": prev, "hash": digest})
        prev = digest
    session.execute(insert(m.Link.__table__), links)


def seal_content(seal: m.ChainSeal) -> dict:
    return {"chain": "seal", "legacy_last_event_id": seal.legacy_last_event_id,
            "legacy_events": seal.legacy_events, "legacy_head": seal.legacy_head,
            "legacy_last_hold_id": seal.legacy_last_hold_id,
            "legacy_last_change_id": seal.legacy_last_change_id,
            "sealed_at": _iso(seal.sealed_at)}


def seal_problem(session: Session, key: bytes) -> str:
    """"" when there is no seal (nothing predates the key) or it holds."""
    seal = session.get(m.ChainSeal, 1)
    if seal is None:
        return ""
    if seal.mac is None:
        return ("the entries written before the chain key was introduced are not sealed yet "
                "(run `withstand init`)")
    if not hmac.compare_digest(seal.mac, keyed_hash(key, seal_content(seal))):
        return "the seal of the entries written before the chain key does not match its key"
    return ""


def verify_links(session: Session, chain: str, key: bytes | None = None) -> ChainState:
    """Recompute the hold or change chain link by link, then check every hold (change) row
    against it: a row without its link was written outside the store, a release without its
    link was made by hand, a link whose row is gone marks a deletion."""
    key = key or chain_key()
    noun = "hold" if chain == "hold" else "change"
    table = m.Hold if chain == "hold" else m.Change
    seal = session.get(m.ChainSeal, 1)
    unsealed_up_to = 0
    if seal is not None and seal.mac is None:  # reported by seal_problem
        unsealed_up_to = seal.legacy_last_hold_id if chain == "hold" else seal.legacy_last_change_id
    rows = {r.id: r for r in session.scalars(select(table))}
    prev, count, seen = GENESIS, 0, set()

    def broken(at, problem):
        return ChainState(False, count, at, problem, prev, noun)

    for link in session.scalars(select(m.Link).where(m.Link.chain == chain)
                                .order_by(m.Link.id)):
        count += 1
        if link.prev_hash != prev:
            return broken(link.subject_id, "its link does not follow the one before: an entry "
                                           "was deleted, inserted or moved there")
        row = rows.get(link.subject_id)
        if row is None:
            return broken(link.subject_id, f"the {noun} was deleted from the database")
        want = keyed_hash(key, dict(_content(session, link.kind, row), prev_hash=link.prev_hash))
        if not hmac.compare_digest(want, link.hash):
            what = ("its release was edited or undone" if link.kind == "hold-released"
                    else "its content does not match its signed link: the row was edited")
            return broken(link.subject_id, what)
        seen.add((link.kind, link.subject_id))
        prev = link.hash
    for rid in sorted(rows):
        if rid <= unsealed_up_to:
            continue
        row = rows[rid]
        first = "hold-opened" if chain == "hold" else "change"
        if (first, rid) not in seen:
            return broken(rid, f"the {noun} is not on the chain: it was written outside the "
                               "store")
        if chain == "hold" and row.released_at is not None and ("hold-released", rid) not in seen:
            return broken(rid, "the hold is released but its release is not on the chain: it "
                               "was released outside the store")
    return ChainState(True, count, None, "", prev, noun)


def verify_all(session: Session) -> dict[str, ChainState]:
    """Every chain's state, and the seal's (``seal`` only when it fails)."""
    from .events import verify_chain
    key = chain_key()
    out = {"event": verify_chain(session, key), "hold": verify_links(session, "hold", key),
           "change": verify_links(session, "change", key)}
    problem = seal_problem(session, key)
    if problem:
        out["seal"] = ChainState(False, 0, None, problem, GENESIS, "seal")
    return out


# -- sealing an upgraded database ----------------------------------------------------------

def seal_legacy(session: Session) -> str:
    """Seal what migration 0003 found: check the plain SHA-256 event links up to the recorded
    boundary, link the holds and changes written before the key, and sign the seal row.
    Returns what was done ("" when there is nothing to seal); raises ``ValueError`` with the
    reason when the old chain does not verify (then nothing is sealed)."""
    from .events import legacy_event_hash
    seal = session.get(m.ChainSeal, 1)
    if seal is None or seal.mac is not None:
        return ""
    key = chain_key()
    lock(session)
    prev, count = GENESIS, 0
    for row in session.scalars(select(m.Event).where(m.Event.id <= seal.legacy_last_event_id)
                               .order_by(m.Event.id)):
        count += 1
        if row.prev_hash != prev or legacy_event_hash(row, prev) != row.hash:
            raise ValueError(f"the event chain written before the key is broken at event "
                             f"{row.id}; not sealed")
        prev = row.hash
    if count != seal.legacy_events or prev != seal.legacy_head:
        raise ValueError(f"the events written before the key are not what the upgrade "
                         f"recorded ({count} with head {prev[:16]}, recorded "
                         f"{seal.legacy_events} with head {seal.legacy_head[:16]}); not sealed")
    linked = set(session.execute(select(m.Link.kind, m.Link.subject_id)).all())
    holds = changes = 0
    for h in session.scalars(select(m.Hold).where(m.Hold.id <= seal.legacy_last_hold_id)
                             .order_by(m.Hold.id)):
        if ("hold-opened", h.id) not in linked:
            append_link(session, "hold-opened", h, key)
            holds += 1
        if h.released_at is not None and ("hold-released", h.id) not in linked:
            append_link(session, "hold-released", h, key)
    for c in session.scalars(select(m.Change).where(m.Change.id <= seal.legacy_last_change_id)
                             .order_by(m.Change.id)):
        if ("change", c.id) not in linked:
            append_link(session, "change", c, key)
            changes += 1
    seal.sealed_at = datetime.now(UTC).replace(tzinfo=None)
    seal.mac = keyed_hash(key, seal_content(seal))
    session.flush()
    return (f"sealed the record written before the chain key: {count} events on plain "
            f"SHA-256 links (head {prev}), {holds} holds and {changes} changes linked")


# -- against an exported workbook ----------------------------------------------------------

# (Summary section, count item, head item) per chain, as build_audit writes them
SUMMARY_ITEMS = {"event": ("chain", "events in the chain", "head hash"),
                 "hold": ("hold chain", "entries in the chain", "head hash"),
                 "change": ("change chain", "entries in the chain", "head hash")}


def read_exported_heads(path) -> dict[str, tuple[int, str]]:
    """(count, head) per chain from an audit workbook's Summary sheet (or a CSV folder's
    summary.csv). A workbook made before the hold and change chains has only the events'."""
    from pathlib import Path

    from ..errors import InvalidInput
    path = Path(path)
    rows: list[tuple] = []
    try:
        if path.is_dir():
            import csv
            with open(path / "summary.csv", newline="", encoding="utf-8") as f:
                rows = [tuple(r[:3]) for r in csv.reader(f) if len(r) >= 3]
        else:
            from openpyxl import load_workbook
            book = load_workbook(path, read_only=True, data_only=True)
            rows = [tuple(r[:3]) for r in book["Summary"].iter_rows(values_only=True)
                    if r and len(r) >= 3]
            book.close()
    except (OSError, KeyError, ValueError) as exc:
        raise InvalidInput(f"cannot read the Summary of {path}: {exc}", "--against") from None
    values = {(str(a).strip(), str(b).strip()): c for a, b, c in rows
              if a is not None and b is not None}
    out = {}
    for chain, (section, count_item, head_item) in SUMMARY_ITEMS.items():
        count, head = values.get((section, count_item)), values.get((section, head_item))
        if count in (None, "") and head in (None, ""):
            continue
        if head in (None, ""):
            raise InvalidInput(f"the {chain} chain was not intact when {path.name} was "
                               "exported: it records no head to compare with", "--against")
        try:
            out[chain] = (int(float(count)), str(head).strip())
        except (TypeError, ValueError):
            raise InvalidInput(f"'{count}' in {path.name} is not a count of the {chain} chain",
                               "--against") from None
    if "event" not in out:
        raise InvalidInput(f"{path.name} records no head of the event chain in its Summary",
                           "--against")
    return out


def link_at(session: Session, chain: str, count: int) -> tuple[int, str | None]:
    """(entries in the chain now, the hash of its ``count``-th entry; GENESIS for 0)."""
    if chain == "event":
        total = session.scalar(select(func.count()).select_from(m.Event))
        q = select(m.Event.hash).order_by(m.Event.id)
    else:
        total = session.scalar(select(func.count()).select_from(m.Link)
                               .where(m.Link.chain == chain))
        q = select(m.Link.hash).where(m.Link.chain == chain).order_by(m.Link.id)
    if count == 0:
        return total, GENESIS
    return total, session.scalar(q.offset(count - 1).limit(1))


def compare_with(session: Session,
                 exported: dict[str, tuple[int, str]]) -> list[tuple[str, bool, str]]:
    """(chain, holds, what) per exported chain: the database must still hold the exported
    head as its entry number ``count``, and at least that many entries."""
    out = []
    for chain, (count, head) in exported.items():
        total, here = link_at(session, chain, count)
        noun = "events" if chain == "event" else "entries"
        if total < count:
            out.append((chain, False, f"{total} {noun} now, {count} when exported: entries "
                                      "were removed"))
        elif here != head:
            out.append((chain, False, f"entry {count} is not the exported head "
                                      f"{head[:16]}: entries up to it were removed or "
                                      "rewritten"))
        else:
            out.append((chain, True, f"the exported head {head[:16]} is still entry {count} "
                                     f"({total - count} added since)"))
    return out
