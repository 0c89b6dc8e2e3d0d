"""Check results kept per (plan, fleet version) for the result page, its plots and images and
the job card: each of those is its own request, and without this each would run the whole
check again. A new event, hold, unit or model changes the fleet version
(:func:`registry.store.versions.fleet_version`), so a kept result is never shown for a fleet
that has changed since.

One cache per app (``app.extensions``), shared by the server's threads. When several requests
want the same result at once, one computes it and the others wait for it, so a page with four
plots still runs one check.
"""

from __future__ import annotations

import threading
from collections import OrderedDict
from collections.abc import Callable, Hashable

from flask import current_app

RESULTS_KEPT = 8  # distinct (plan, fleet version) pairs; each holds a result and its fleet


class ResultCache:
    """A small thread-safe least-recently-used map whose misses are computed once."""

    def __init__(self, size: int = RESULTS_KEPT):
        self.size = size
        self._items: OrderedDict = OrderedDict()
        self._lock = threading.Lock()
        self._computing: dict[Hashable, threading.Lock] = {}
        self.computed = 0  # how many misses were computed (read by the tests)

    def get(self, key: Hashable, compute: Callable[[], object]):
        with self._lock:
            if key in self._items:
                self._items.move_to_end(key)
                return self._items[key]
            flight = self._computing.setdefault(key, threading.Lock())
        with flight:
            with self._lock:
                if key in self._items:
                    return self._items[key]
            try:
                value = compute()
                with self._lock:
                    self.computed += 1
                    self._items[key] = value
                    while len(self._items) > self.size:
                        self._items.popitem(last=False)
            finally:
                with self._lock:
                    self._computing.pop(key, None)
        return value

    def clear(self) -> None:
        with self._lock:
            self._items.clear()


def results() -> ResultCache:
    """The app's cache of check results."""
    return current_app.extensions.setdefault("withstand.results", ResultCache())
