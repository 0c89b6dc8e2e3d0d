"""Create or edit a model of the library (the use case behind the steward's model form).

A model arrives as the document a fleet file holds for it (``models[i]`` of
``withstand-fleet/1``) and is validated by the fleet file's own validator, so its problems
carry the paths an import would give, relative to the model (``modes[1].max_input``). Each
function owns its transaction: nothing is written unless the whole model is valid, and every
changed field is recorded on the change chain as an import records it.
"""

from __future__ import annotations

from dataclasses import dataclass

from sqlalchemy import select
from sqlalchemy.orm import Session, selectinload

from ..engine import spec
from ..errors import FieldProblem, InvalidInput, NotFound
from ..formats.fleet import FORMAT, model_to_document, parse_fleet
from ..store import models as m
from ..store.db import Database
from ..store.fleet import diff_documents, known_keys, record_changes
from ..store.specs import model_spec, write_model


@dataclass(frozen=True)
class ModelSaved:
    key: str
    created: bool
    changes: int  # the fields recorded on the change chain (every field of a new model)


def _relative(path: str) -> str:
    """``models[0].modes[1].max_input`` -> ``modes[1].max_input``; ``models[0]`` -> ``""``."""
    return path.removeprefix("models[0]").removeprefix(".")


def validate_model(session: Session, doc) -> spec.ModelSpec:
    """The model ``doc`` describes, checked whole exactly as an import checks ``models[0]``;
    :class:`InvalidInput` lists every problem with its path relative to the model."""
    if not isinstance(doc, dict):
        raise InvalidInput("a model is a mapping of its fields")
    models, sites = known_keys(session)
    try:
        content = parse_fleet({"format": FORMAT, "models": [doc]}, known_models=models,
                              known_sites=sites)
    except InvalidInput as exc:
        raise InvalidInput([FieldProblem(_relative(p.path), p.message)
                            for p in exc.problems]) from None
    return content.models[0]


def _row(session: Session, key: str) -> m.Model | None:
    return session.scalar(select(m.Model).where(m.Model.key == key).options(
        selectinload(m.Model.ratings), selectinload(m.Model.modes),
        selectinload(m.Model.elements)))


def create_model(database: Database, doc: dict, *, actor: str,
                 user_id: int | None = None) -> ModelSaved:
    """Add a new model. Its key must be new: a key already in the library is refused (at
    ``key``) rather than overwritten, as a form for a new model promises."""
    with database.transaction(immediate=True) as session:
        new = validate_model(session, doc)
        if _row(session, new.key) is not None:
            raise InvalidInput(f"'{new.key}' is already a model of the library; edit that "
                               "one or choose another key", "key")
        row = m.Model(key=new.key, kind=new.kind)
        session.add(row)
        write_model(row, new, session)
        # the whole new model on the change chain, so the record says who added it and when
        diffs = diff_documents({}, model_to_document(new))
        record_changes(session, "model", new.key, diffs, actor, user_id)
        return ModelSaved(new.key, True, len(diffs))


def edit_model(database: Database, key: str, doc: dict, *, actor: str,
               user_id: int | None = None) -> ModelSaved:
    """Make the model ``key`` hold ``doc``; its ratings, modes and front end are replaced
    whole. The key stays: units, events and change records name the model by it (a file
    import cannot rename a model either; a new key is a new model)."""
    with database.transaction(immediate=True) as session:
        row = _row(session, key)
        if row is None:
            raise NotFound(f"no model '{key}'")
        if isinstance(doc, dict) and doc.get("key", key) != key:
            raise InvalidInput(f"the key of '{key}' cannot be changed: its units and records "
                               "name it; create a new model instead", "key")
        new = validate_model(session, dict(doc, key=key))
        current = model_to_document(model_spec(row))
        diffs = diff_documents(current, model_to_document(new))
        if diffs:
            write_model(row, new, session)
            record_changes(session, "model", key, diffs, actor, user_id)
        return ModelSaved(key, False, len(diffs))


def model_document(database: Database, key: str) -> dict:
    """The model ``key`` as a fleet file writes it (what the edit form starts from)."""
    with database.transaction() as session:
        row = _row(session, key)
        if row is None:
            raise NotFound(f"no model '{key}'")
        return model_to_document(model_spec(row))
