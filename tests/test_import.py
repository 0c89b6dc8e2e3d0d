"""Importing fleet files into a real database: atomicity, updates, change records."""

import pytest
import yaml
from sqlalchemy import func, select

from registry.demo import demo_fleet_path
from registry.errors import InvalidInput
from registry.formats.fleet import fleet_to_document
from registry.store import models as m
from registry.store.fleet import export_fleet, import_fleet


@pytest.fixture
def doc():
    return yaml.safe_load(demo_fleet_path().read_text())


def count(database, table):
    with database.transaction() as s:
        return s.scalar(select(func.count()).select_from(table))


def test_import_writes_everything(database, doc):
    report = import_fleet(database, doc)
    assert count(database, m.Model) == len(doc["models"])
    assert count(database, m.Unit) == len(doc["units"])
    assert count(database, m.Site) == len(doc["sites"])
    assert len(report.added) == len(doc["models"]) + len(doc["units"]) + len(doc["sites"])
    with database.transaction() as s:
        kx7 = s.scalar(select(m.Model).where(m.Model.key == "kx-7"))
        assert [r.category for r in kx7.ratings] == ["III", "IV"]
        lowz = next(x for x in kx7.modes if x.key == "lowz")
        assert lowz.input_resistance == 2600.0 and lowz.closes == ["S1"]
        assert {e.element_id for e in kx7.elements} >= {"R1", "PT1", "RV1", "S1", "IN"}


def test_invalid_unit_after_valid_ones_writes_nothing(database, doc):
    doc["units"][-1]["status"] = "misplaced"
    with pytest.raises(InvalidInput) as err:
        import_fleet(database, doc)
    assert err.value.problems[0].path == f"units[{len(doc['units']) - 1}].status"
    assert count(database, m.Model) == 0
    assert count(database, m.Unit) == 0
    assert count(database, m.Site) == 0


def test_reimport_updates_and_records_changes(database, doc):
    import_fleet(database, doc)
    kx7 = next(x for x in doc["models"] if x["key"] == "kx-7")
    kx7["modes"][0]["max_input"] = "1100 V"
    kx7["ratings"][1]["voltage"] = "550 V"
    doc["units"][0]["custodian"] = "Maeve Lintott"
    report = import_fleet(database, doc, actor="ines")
    assert sorted(report.updated) == ["model kx-7", "unit NB-0001"]
    with database.transaction() as s:
        changes = {(c.entity, c.entity_key, c.field): (c.old, c.new, c.actor)
                   for c in s.scalars(select(m.Change))}
        assert count(database, m.Model) == len(doc["models"])  # updated, not duplicated
    assert changes[("model", "kx-7", "modes[vdc].max_input")] == ("1 kV", "1.1 kV", "ines")
    assert changes[("model", "kx-7", "ratings[1].voltage")] == ("500 V", "550 V", "ines")
    assert changes[("unit", "NB-0001", "custodian")] == ("Ines Marrow", "Maeve Lintott", "ines")
    assert len(changes) == 3


def test_reimport_of_the_same_file_changes_nothing(database, doc):
    import_fleet(database, doc)
    report = import_fleet(database, doc)
    assert not report.added and not report.updated and not report.changes


def test_dry_run_writes_nothing(database, doc):
    report = import_fleet(database, doc, dry_run=True)
    assert report.added
    assert count(database, m.Model) == 0


def test_database_round_trip(database, doc):
    import_fleet(database, doc)
    with database.transaction() as s:
        first = fleet_to_document(export_fleet(s))
    import_fleet(database, first)
    with database.transaction() as s:
        assert fleet_to_document(export_fleet(s)) == first


@pytest.mark.postgres
def test_import_export_on_postgres(pg_url, doc):
    from registry.store import db as store_db
    database = store_db.Database(pg_url)
    try:
        store_db.upgrade(database.engine)
        import_fleet(database, doc)
        with database.transaction() as s:
            first = fleet_to_document(export_fleet(s))
        assert len(first["units"]) == len(doc["units"])
        doc["units"][0]["status"] = "away"
        report = import_fleet(database, doc)
        assert report.updated == ["unit NB-0001"]
        doc["units"][1]["status"] = "nowhere"
        with pytest.raises(InvalidInput):
            import_fleet(database, doc)
        with database.transaction() as s:
            assert s.scalar(select(m.Unit.status).where(m.Unit.tag == "NB-0002")) == "in-service"
    finally:
        database.dispose()


def _status_and_open_hold(database, tag):
    with database.transaction() as s:
        unit = s.scalar(select(m.Unit).where(m.Unit.tag == tag))
        return unit.status, [h.id for h in unit.holds if h.released_at is None]


def test_an_import_cannot_return_a_held_unit_to_service(demo):
    """An open hold ends only by a steward's release with its inspection result; re-importing
    an older export that says in-service keeps the unit on-hold, says so, and records no
    status change (the rest of the file is still applied)."""
    from registry.services.events import log_event
    with demo.transaction() as s:
        before = fleet_to_document(export_fleet(s))
    held = log_event(demo, unit="NB-0001", kind="mechanical", symptoms=["visible-damage"],
                     by="tech")
    assert held.hold_id is not None
    assert _status_and_open_hold(demo, "NB-0001") == ("on-hold", [held.hold_id])
    unit = next(u for u in before["units"] if u["tag"] == "NB-0001")
    assert unit["status"] == "in-service"
    unit["notes"] = "recalibrated 2026-11"
    report = import_fleet(demo, before, actor="steward")
    assert report.kept_on_hold == [("NB-0001", "in-service")]
    assert _status_and_open_hold(demo, "NB-0001") == ("on-hold", [held.hold_id])
    paths = [(key, path) for _e, key, path, _a, _b in report.changes]
    assert ("NB-0001", "notes") in paths and ("NB-0001", "status") not in paths


def test_the_cli_import_says_which_units_stay_on_hold(runner, demo, tmp_path):
    """The same rule on the command line, with the reason printed beside the unit."""
    from registry.cli import main
    out = tmp_path / "fleet.yaml"
    assert runner.invoke(main, ["export", str(out)]).exit_code == 0
    logged = runner.invoke(main, ["event", "add", "--unit", "NB-0001", "--kind", "mechanical",
                                  "--symptom", "visible-damage", "--by", "tech"])
    assert logged.exit_code == 0 and "Hold" in logged.output
    result = runner.invoke(main, ["import", str(out), "--by", "steward"])
    assert result.exit_code == 0, result.output
    assert "unit NB-0001 stays on-hold, not in-service: its hold is open" in result.output
    assert "NB-0001 status" not in result.output
