"""What every link of the record is made of: the chain key, the canonical JSON, the keyed
hash, the first link's ``prev_hash`` (:data:`GENESIS`) and the state a verification reports.
The event chain (:mod:`.events`) and the hold and change chains (:mod:`.chain`) both build on
it, so neither needs the other's module for these.
"""

from __future__ import annotations

import hashlib
import hmac
import json
from dataclasses import dataclass

GENESIS = "0" * 64


def chain_key() -> bytes:
    from ..config import chain_key as configured
    return configured().encode("utf-8")


def canonical(doc: dict) -> bytes:
    """Sorted keys, no spaces, UTF-8, no NaN: one byte string per content."""
    return json.dumps(doc, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      allow_nan=False).encode("utf-8")


def keyed_hash(key: bytes, doc: dict) -> str:
    """HMAC-SHA256 (RFC 2104, FIPS 180-4) of the canonical JSON of ``doc``, hex."""
    return hmac.new(key, canonical(doc), hashlib.sha256).hexdigest()


@dataclass(frozen=True)
class ChainState:
    ok: bool
    count: int  # entries read
    broken_at: int | None  # id of the first entry (event, hold, change) whose link fails
    problem: str  # what is wrong there; "" when ok
    head: str  # the last link (GENESIS when there is none)
    noun: str = "event"

    def summary(self) -> str:
        if self.ok:
            counted = (f"{self.count} event{'s' if self.count != 1 else ''}"
                       if self.noun == "event"
                       else f"{self.count} entr{'y' if self.count == 1 else 'ies'}")
            return f"intact: {counted}, head {self.head[:16]}"
        if self.broken_at is None:
            return f"broken: {self.problem}"
        return f"broken at {self.noun} {self.broken_at}: {self.problem}"
