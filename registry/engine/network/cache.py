"""Keeping solves beyond the process: a small pluggable store for the results of the front-end
solves (the steady state, the impulse and the discharge integration of check 10), looked up by
a content hash.

The engine knows nothing of where the store keeps them. Whoever runs a check may plug in an
object with ``get(key) -> str | None`` and ``put(key, text, kind)`` for the duration of the check
(:func:`using_store`); the database's implementation is ``registry.store.solves``, so the
CLI and the web share their solves, and a cold process reads a solve another one made instead
of integrating again. Without a store the in-process caches alone apply.

The key is the SHA-256 of the canonical JSON of: what is solved (``steady``, ``impulse`` or
``discharge``), the netlist
(every element with its type, nodes and parameters; the driven and return terminals; the
switches closed in the mode), the scenario's values as exact float text, and a digest of the
engine's own solver source, so a changed solver never reads a result of the old one.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from contextvars import ContextVar
from pathlib import Path
from typing import Protocol, TypeVar

from .netlist import Netlist

T = TypeVar("T")


class SolveStore(Protocol):
    def get(self, key: str) -> str | None: ...

    def put(self, key: str, text: str, kind: str) -> None: ...


_store: ContextVar[SolveStore | None] = ContextVar("withstand_solve_store", default=None)

# What a stored result depends on besides its inputs: the code that computes it.
_SOLVER_FILES = ("netlist.py", "devices.py", "solver.py", "scenarios.py", "cache.py")
SOLVER_DIGEST = hashlib.sha256(b"".join(
    (Path(__file__).with_name(name)).read_bytes() for name in _SOLVER_FILES)).hexdigest()[:16]


@contextmanager
def using_store(store: SolveStore | None) -> Iterator[None]:
    """Look solves up in ``store`` (and keep new ones there) within the block."""
    token = _store.set(store)
    try:
        yield
    finally:
        _store.reset(token)


def netlist_doc(net: Netlist) -> dict:
    return {"elements": [[e.id, e.type, list(e.between), [[k, repr(float(v))] for k, v in e.params]]
                         for e in net.elements],
            "drive": net.drive, "ret": net.ret, "closed": sorted(net.closed)}


def solve_key(kind: str, net: Netlist, values: tuple) -> str:
    """The content hash of one solve: ``kind``, the netlist and the scenario's ``values``
    (floats as their exact text, None, or a text such as the waveform)."""
    doc = {"kind": kind, "solver": SOLVER_DIGEST, "net": netlist_doc(net),
           "values": [None if v is None else v if isinstance(v, str) else repr(float(v))
                      for v in values]}
    text = json.dumps(doc, sort_keys=True, separators=(",", ":"))
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def stored(kind: str, net: Netlist, values: tuple, compute: Callable[[], T],
           dump: Callable[[T], str], load: Callable[[str], T]) -> T:
    """``compute()``, or what the plugged-in store holds for the same content. A result the
    store cannot give back (absent, or text ``load`` refuses) is computed again and kept."""
    store = _store.get()
    if store is None:
        return compute()
    key = solve_key(kind, net, values)
    text = store.get(key)
    if text is not None:
        try:
            return load(text)
        except (ValueError, TypeError, KeyError):
            pass  # not a result this code can read: solved again below
    result = compute()
    store.put(key, dump(result), kind)
    return result
