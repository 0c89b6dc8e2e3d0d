"""Rules the engine, the store's queries, the audit workbook and the web pages all apply: one
function each, so that a filter written in SQL and a check run in Python cannot drift apart.

Where SQL must filter (a paginated list), the store builds its condition from the data these
functions use (:func:`categories_at_least`, :data:`VERIFIED_STATUSES`, :func:`due_by`), and a
property test holds the two to each other.

Pure: names, SI floats (V) and dates.
"""

from __future__ import annotations

from datetime import date, timedelta

from .spec import CATEGORIES, MAINS_CATEGORIES, UNIT_STATUSES

# -- measurement categories -------------------------------------------------------------------
# The order is spec.MAINS_CATEGORIES, lowest first: IEC 61010-1 measurement categories, CAT II
# < CAT III < CAT IV (a higher category is nearer the source of the installation and sees
# larger transients). ``none`` (not for mains) ranks below all of them.


def category_rank(category: str | None) -> int:
    """II -> 2, III -> 3, IV -> 4 (IEC 61010-1 order); ``none``, ``None`` or anything else -> 0."""
    return MAINS_CATEGORIES.index(category) + 2 if category in MAINS_CATEGORIES else 0


def categories_at_least(category: str | None) -> tuple[str, ...]:
    """The rating categories that cover a requirement of ``category``: CAT III is covered by
    III and IV. No category asked (``None``, or ``none``) is covered by every category."""
    need = category_rank(category)
    return tuple(c for c in CATEGORIES if category_rank(c) >= need)


def rating_covers(rating_category: str, rating_voltage: float, category: str | None,
                  voltage: float) -> bool:
    """Whether one rating (category, V) covers a requirement (category or ``None``, V): at
    least that category and at least that voltage at the same time. Neither a higher category
    at a lower voltage nor a higher voltage at a lower category stands in for the other: a
    rating is marked as the pair (CAT III 600 V, IEC 61010-1 marking), and reading it only as
    the pair is common practice (no source)."""
    return rating_voltage >= voltage and rating_category in categories_at_least(category)


# -- verification dates -----------------------------------------------------------------------
# Common practice (no source): a verification "due" on a day is still good on that day and
# overdue from the next; a retired unit's date no longer matters.

VERIFIED_STATUSES = tuple(s for s in UNIT_STATUSES if s != "retired")


def verification_overdue(due: date | None, on: date) -> bool:
    """Whether a verification due on ``due`` is overdue on ``on``: due before that day. No date
    on record is not overdue (it is its own caution)."""
    return due is not None and due < on


def unit_overdue(status: str, due: date | None, on: date) -> bool:
    """A unit whose verification counts (not retired) and is overdue on ``on``."""
    return status in VERIFIED_STATUSES and verification_overdue(due, on)


def due_by(on: date, days: int) -> date:
    """The last due date that falls within ``days`` days of ``on`` (``on`` + ``days``)."""
    return on + timedelta(days=days)


def unit_due_within(status: str, due: date | None, on: date, days: int) -> bool:
    """A unit whose verification counts (not retired) and falls due within ``days`` days of
    ``on``, or is already overdue."""
    return status in VERIFIED_STATUSES and due is not None and due <= due_by(on, days)
