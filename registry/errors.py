"""The one exception hierarchy of the package.

Every error a user can cause derives from :class:`WithstandError`; the CLI turns it into a
one-line message and an exit code, the web app into a 4xx page or a JSON error.
"""

from __future__ import annotations

import unicodedata
from dataclasses import dataclass


def shown(value, limit: int = 60) -> str:
    """Text typed by someone, made safe to put in a message: control and format characters
    (NUL, escape, bidirectional overrides) written as escapes (``\\x00``), and cut to
    ``limit`` characters with an ellipsis, so a message never carries a terminal escape or a
    whole oversized value."""
    text = value if isinstance(value, str) else str(value)
    cut = len(text) > limit
    text = text[:limit]
    out = []
    for ch in text:
        if unicodedata.category(ch) in ("Cc", "Cf", "Cs", "Zl", "Zp"):
            code = ord(ch)
            out.append(f"\\x{code:02x}" if code < 0x100 else
                       f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}")
        else:
            out.append(ch)
    return "".join(out) + ("..." if cut else "")


class WithstandError(Exception):
    """Base of every error the package raises on purpose."""

    exit_code = 2


@dataclass(frozen=True)
class FieldProblem:
    """One thing wrong with one field: ``path`` like ``models[2].modes[1].max_input``."""

    path: str
    message: str

    def __str__(self) -> str:
        return f"{self.path}: {self.message}" if self.path else self.message


class InvalidInput(WithstandError):
    """Input that cannot be accepted; carries every problem found, each naming its field."""

    def __init__(self, problems: list[FieldProblem] | FieldProblem | str, path: str = ""):
        if isinstance(problems, str):
            problems = [FieldProblem(path, problems)]
        elif isinstance(problems, FieldProblem):
            problems = [problems]
        self.problems: list[FieldProblem] = list(problems)
        super().__init__("; ".join(str(p) for p in self.problems))



class NotFound(WithstandError):
    """A named unit, model, user or hold that does not exist."""


class NotAllowed(WithstandError):
    """The user's role may not do this, or a rule forbids it (a steward lowering their own
    role)."""


class Conflict(WithstandError):
    """The thing asked for was done already or the record's state forbids it now (a hold
    released already); the web answers 409."""


class DatabaseNotReady(WithstandError):
    """The database is missing or not migrated to the latest revision."""
