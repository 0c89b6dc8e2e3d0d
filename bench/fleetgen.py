"""The bench fleet for the scale targets: the demo lab's models copied into 400 variants, with
5 000, 20 000 or 50 000 units, imported into a real SQLite file.

Every variant is a content-identical copy of a demo model under a new key (``kx-7-v012``), as
in a lab that registers the same instrument bought in several batches: the instruments fill
the 400 models, the accessories (leads, probes, clips, clamps, dividers) are copied
``ACCESSORY_COPIES`` times each, so the combinations still multiply as instruments x leads x
tips. The units are spread round-robin over the models (accessory units as often as the demo
has them), take the demo units' sites, states and dates in turn, and every 50th unit has a
logged event, so check 11 reads some history.

    fleet_database(20_000)   # -> path of a migrated, loaded SQLite file, cached per size

The file is built once per size and kept in ``$WITHSTAND_BENCH_DIR`` (default
``/tmp/withstand-bench``); a change of this module's text or of the migrations builds it
again.
"""

from __future__ import annotations

import hashlib
import os
from datetime import datetime
from pathlib import Path

from registry.demo import demo_fleet_path
from registry.formats.common import read_document
from registry.store.db import Database, make_engine, upgrade

MODELS = 400
ACCESSORY_COPIES = 2
ACCESSORY_KINDS = ("test-leads", "probe", "clip", "current-clamp", "hv-divider")
SIZES = {"5k": 5_000, "20k": 20_000, "50k": 50_000}
SMOKE_UNITS = 600
EVENT_EVERY = 50


def fleet_document(units: int) -> dict:
    """The withstand-fleet/1 document of the bench fleet with ``units`` units."""
    base = read_document(str(demo_fleet_path()))
    demo_models = base["models"]
    accessories = [m for m in demo_models if m["kind"] in ACCESSORY_KINDS]
    instruments = [m for m in demo_models if m["kind"] not in ACCESSORY_KINDS]
    models: list[dict] = []
    for c in range(ACCESSORY_COPIES):
        models += [dict(m, key=f"{m['key']}-v{c:03d}") for m in accessories]
    c = 0
    while len(models) < MODELS:
        for m in instruments:
            if len(models) < MODELS:
                models.append(dict(m, key=f"{m['key']}-v{c:03d}"))
        c += 1
    # the demo's share of accessory units, spread over the accessory copies
    demo_units = base["units"]
    kinds = {m["key"]: m["kind"] for m in demo_models}
    acc_share = sum(1 for u in demo_units if kinds[u["model"]] in ACCESSORY_KINDS) / len(demo_units)
    acc_models = [m["key"] for m in models if m["kind"] in ACCESSORY_KINDS]
    inst_models = [m["key"] for m in models if m["kind"] not in ACCESSORY_KINDS]
    out_units = []
    n_acc = round(units * acc_share)
    for i in range(units):
        template = demo_units[i % len(demo_units)]
        model = acc_models[i % len(acc_models)] if i < n_acc else inst_models[i % len(inst_models)]
        u = {k: v for k, v in template.items() if k not in ("notes",)}
        u.update(tag=f"B-{i:06d}", model=model, serial=f"S{i:06d}")
        if u.get("status") == "on-hold":
            u["status"] = "in-service"  # a hold needs its record; the demo's status mix aside
        out_units.append(u)
    return {"format": base["format"], "sites": base["sites"], "models": models,
            "units": out_units}


def _stamp() -> str:
    """This module's text and the migrations' names: either changed builds the file again."""
    from importlib import resources
    versions = resources.files("registry.migrations") / "versions"
    names = sorted(p.name for p in versions.iterdir() if p.name.endswith(".py"))
    return hashlib.sha256(Path(__file__).read_bytes() + "\n".join(names).encode()
                          ).hexdigest()[:12]


def fleet_database(units: int) -> Path:
    """A migrated SQLite file holding the bench fleet of ``units`` units (built if missing)."""
    folder = Path(os.environ.get("WITHSTAND_BENCH_DIR", "/tmp/withstand-bench"))
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / f"fleet-{units}-{_stamp()}.sqlite3"
    if path.exists():
        return path
    tmp = path.with_suffix(".building")
    tmp.unlink(missing_ok=True)
    url = f"sqlite:///{tmp}"
    migrating = make_engine(url)
    upgrade(migrating)
    migrating.dispose()
    db = Database(url)
    from registry.store.fleet import import_fleet
    import_fleet(db, fleet_document(units), actor="bench")
    _log_events(db, units)
    db.dispose()
    import sqlite3
    # everything into the file itself before it is renamed: a WAL file left beside the old
    # name would be lost with what it holds
    conn = sqlite3.connect(tmp)
    conn.execute("PRAGMA journal_mode=DELETE")
    conn.close()
    tmp.rename(path)
    return path


def _log_events(db: Database, units: int) -> None:
    """Every ``EVENT_EVERY``-th unit took a transient of 200 V, logged through the store."""
    from registry.services.events import log_event
    from registry.store.users import add_user
    with db.transaction() as session:
        add_user(session, "bench", "technician", "bench-password-1")
    for i in range(0, units, EVENT_EVERY):
        log_event(db, unit=f"B-{i:06d}", kind="transient", by="bench", voltage=200.0,
                  at=datetime(2026, 6, 1, 12, 0))


def url_of(path: Path) -> str:
    return f"sqlite:///{path}"
