"""What the HTML forms share: problems keyed by field for the templates, and quantity fields
parsed the way people type them."""

from __future__ import annotations

from ..errors import FieldProblem, InvalidInput
from .. import units as u


class FieldErrors(dict):
    """field name -> list of messages; ``errors.of('voltage')`` in a template."""

    def add(self, name: str, message: str) -> None:
        self.setdefault(name, []).append(message)

    def of(self, name: str) -> list[str]:
        return self.get(name, [])

    def extend(self, problems, mapping=None, default: str = "_form") -> None:
        """Put each :class:`FieldProblem` under the form field its path names (``mapping``
        from paths, or path prefixes, to field names); the rest under ``default``."""
        for p in problems:
            self.add(_field_of(p, mapping or {}, default), p.message)


def _field_of(p: FieldProblem, mapping: dict, default: str) -> str:
    if p.path in mapping:
        return mapping[p.path]
    best = ""
    for prefix in mapping:
        if p.path.startswith(prefix) and len(prefix) > len(best):
            best = prefix
    return mapping[best] if best else default


def quantity_or_none(text: str | None, dim, field: str, errors: FieldErrors, *,
                     default_unit: str | None = None) -> float | None:
    """The SI value of an optional form field, or ``None`` (blank) with problems in ``errors``."""
    if text is None or not str(text).strip():
        return None
    try:
        return u.parse_quantity(text, dim, field, default_unit=default_unit)
    except InvalidInput as exc:
        for p in exc.problems:
            errors.add(field, p.message)
        return None
