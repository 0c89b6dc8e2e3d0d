"""Worker processes for the concurrency tests: each appends events through the store."""

import os
import sys


def append_many(url: str, tag: str, n: int) -> int:
    from registry.store.db import Database
    from registry.services.events import log_event
    db = Database(url)
    try:
        for i in range(n):
            log_event(db, unit=tag, kind="overvoltage", mode="vdc", voltage=100.0 + i,
                      symptoms=["none"], note=f"{tag} #{i} from {os.getpid()}", by="tech")
    finally:
        db.dispose()
    return n


def append_until(url: str, tag: str, stop_file: str) -> int:
    from registry.store.db import Database
    from registry.services.events import log_event
    db = Database(url)
    done = 0
    try:
        while not os.path.exists(stop_file):
            log_event(db, unit=tag, kind="transient", mode="vdc", voltage=500.0,
                      symptoms=["none"], by="tech")
            done += 1
    finally:
        db.dispose()
    return done


if __name__ == "__main__":
    print(append_many(sys.argv[1], sys.argv[2], int(sys.argv[3])))
