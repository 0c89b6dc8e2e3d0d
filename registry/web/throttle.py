"""Login throttling: after repeated failures for one username from one address, refuse further
attempts for a while, so that a password cannot be guessed at the speed of the server.

The counter lives in the process (one per app): a restart forgets it, which is acceptable for a
lab server behind its own network; the slow password hash limits guessing anyway.
"""

from __future__ import annotations

import threading
import time
from dataclasses import dataclass, field

MAX_FAILURES = 5  # failures allowed in the window before a lockout: common practice (no source)
WINDOW_S = 15 * 60  # the failures counted are those of the last 15 minutes
LOCKOUT_S = 15 * 60  # how long a locked pair is refused


@dataclass
class LoginThrottle:
    max_failures: int = MAX_FAILURES
    window: float = WINDOW_S
    lockout: float = LOCKOUT_S
    clock: callable = time.monotonic
    _failures: dict = field(default_factory=dict)
    _locked_until: dict = field(default_factory=dict)
    _lock: threading.Lock = field(default_factory=threading.Lock)

    @staticmethod
    def _key(username: str, address: str | None) -> tuple[str, str]:
        return ((username or "").strip().lower(), address or "")

    def retry_after(self, username: str, address: str | None) -> float:
        """Seconds until this pair may try again; 0 when it may try now."""
        key = self._key(username, address)
        with self._lock:
            until = self._locked_until.get(key)
            if until is None:
                return 0.0
            left = until - self.clock()
            if left <= 0:
                self._locked_until.pop(key, None)
                self._failures.pop(key, None)
                return 0.0
            return left

    def failed(self, username: str, address: str | None) -> bool:
        """Count a failure; True when it locks the pair out."""
        key = self._key(username, address)
        now = self.clock()
        with self._lock:
            recent = [t for t in self._failures.get(key, []) if now - t < self.window]
            recent.append(now)
            self._failures[key] = recent
            if len(recent) >= self.max_failures:
                self._locked_until[key] = now + self.lockout
                return True
            return False

    def succeeded(self, username: str, address: str | None) -> None:
        key = self._key(username, address)
        with self._lock:
            self._failures.pop(key, None)
            self._locked_until.pop(key, None)
