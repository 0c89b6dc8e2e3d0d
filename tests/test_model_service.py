"""The use case behind the model form (registry/services/models.py), without the web: a model
document is validated by the fleet file's validator (the same problems an import of a file
holding it reports, with the paths relative to the model), written whole in one transaction
with its changes on the change chain, or refused with nothing written. On SQLite and on
PostgreSQL."""

from __future__ import annotations

import pytest
from sqlalchemy import func, select

from registry.errors import InvalidInput, NotFound
from registry.formats.fleet import FORMAT, parse_fleet
from registry.services.models import create_model, edit_model, model_document
from registry.store import models as m
from registry.store.chain import verify_all

LEADS = {"key": "qf-ld9", "kind": "test-leads", "maker": "Quillfeather Labs",
         "name": "LD9 silicone leads", "connectors": ["4mm-tip"],
         "ratings": [{"category": "III", "voltage": "1 kV"},
                     {"category": "IV", "voltage": "600 V"}],
         "current_rating": "10 A"}


def rows(database) -> tuple:
    with database.transaction() as s:
        return tuple(s.scalar(select(func.count()).select_from(t))
                     for t in (m.Model, m.Rating, m.Mode, m.FrontEndElement, m.Change))


def import_messages(doc: dict) -> dict[str, str]:
    with pytest.raises(InvalidInput) as exc:
        parse_fleet({"format": FORMAT, "models": [doc]})
    return {p.path: p.message for p in exc.value.problems}


@pytest.fixture(params=["sqlite", "postgresql"])
def db(request):
    return request.getfixturevalue("demo" if request.param == "sqlite" else "pg_demo")


def test_create_then_edit_records_each_change_on_the_chain(db, instance):
    n = rows(db)
    saved = create_model(db, LEADS, actor="steward")
    assert (saved.key, saved.created) == ("qf-ld9", True) and saved.changes > 5
    assert model_document(db, "qf-ld9")["ratings"][1] == {"category": "IV", "voltage": "600 V"}
    edited = edit_model(db, "qf-ld9", dict(LEADS, current_rating="16 A"), actor="steward")
    assert (edited.created, edited.changes) == (False, 1)
    with db.transaction() as s:
        change = s.scalars(select(m.Change).where(m.Change.entity_key == "qf-ld9")
                           .order_by(m.Change.id.desc())).first()
        assert (change.field, change.old, change.new, change.actor) == (
            "current_rating", "10 A", "16 A", "steward")
    assert rows(db)[0] == n[0] + 1 and rows(db)[1] == n[1] + 2
    # the same document again changes nothing and records nothing
    before = rows(db)
    assert edit_model(db, "qf-ld9", dict(LEADS, current_rating="16 A"),
                      actor="steward").changes == 0
    assert rows(db) == before
    # every change the service recorded is linked on the change chain: the audit verifies
    with db.transaction() as s:
        states = verify_all(s)
    assert states["change"].ok and states["change"].count >= n[4] + saved.changes + 1, states


def test_problems_are_the_imports_with_paths_relative_to_the_model(db):
    n = rows(db)
    bad = dict(LEADS, ratings=[{"category": "III", "voltage": "2 kA"}], current_rating="x",
               attenuation="1:1000")
    with pytest.raises(InvalidInput) as exc:
        create_model(db, bad, actor="steward")
    got = {p.path: p.message for p in exc.value.problems}
    expected = {k.removeprefix("models[0]."): v for k, v in import_messages(bad).items()}
    assert got == expected and "ratings[0].voltage" in got and "attenuation" in got
    assert rows(db) == n


def test_the_rules_of_the_use_case(db):
    n = rows(db)
    with pytest.raises(InvalidInput) as exc:  # a new model's key must be new
        create_model(db, dict(LEADS, key="kx-7"), actor="steward")
    assert exc.value.problems[0].path == "key" and "already a model" in str(exc.value)
    with pytest.raises(InvalidInput) as exc:  # an edited model keeps its key
        edit_model(db, "kx-7", dict(model_document(db, "kx-7"), key="kx-8"), actor="steward")
    assert exc.value.problems[0].path == "key" and "cannot be changed" in str(exc.value)
    with pytest.raises(NotFound):
        edit_model(db, "no-such-model", LEADS, actor="steward")
    with pytest.raises(InvalidInput):
        create_model(db, ["not", "a", "mapping"], actor="steward")
    assert rows(db) == n
    assert model_document(db, "kx-7")["kind"] == "multimeter"
