"""A finding: one check's word on one item of a setup, with its numbers and its source.

A numeric finding carries what the job asks of the item (``required_value``) and what the item
offers (``available_value``) as SI floats in ``unit``; the readable ``required``/``available``
texts are rendered from them unless a check words them itself ("CAT III 480 V"). Status,
verdict and check names are :class:`~enum.StrEnum` members: they compare equal to, hash like
and serialize as the same strings as before ("pass", "unsuitable", "mode-input"), so JSON and
stored text do not change.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from enum import StrEnum
from typing import Literal

from .quantity import DIMENSIONS, format_quantity


class Status(StrEnum):
    """One finding's word."""

    PASS = "pass"
    CAUTION = "caution"
    FAIL = "fail"
    UNKNOWN = "unknown"
    NOT_RUN = "not-run"


class Verdict(StrEnum):
    """A setup's word, from its findings (:func:`verdict_of`)."""

    SUITABLE = "suitable"
    CONDITIONAL = "conditional"
    UNVERIFIED = "unverified"
    UNSUITABLE = "unsuitable"


class CheckName(StrEnum):
    """The checks that give findings; docs/rules.md lists each with its rule and sources."""

    SETUP = "setup"                          # check 1
    CATEGORY = "category"                    # check 2
    TIP = "tip"                              # check 2, the exposed tip
    TRANSIENT = "transient"                  # check 3
    ALTITUDE = "altitude"                    # check 4
    MODE_INPUT = "mode-input"                # check 5
    MISUSE = "misuse"                        # check 6
    LOADING = "loading"                      # check 7
    LOW_Z = "low-z"                          # check 8
    DISCHARGE = "discharge"                  # check 9
    PROTECTION_PATH = "protection-path"      # check 10
    INPUT_CONSISTENCY = "input-consistency"  # check 10, the front end against the data
    HISTORY = "history"                      # check 11
    PROVING_DEAD = "proving-dead"            # beside checks 2 to 9 on verify-absence


class Compare(StrEnum):
    """How ``available_value`` must stand to ``required_value`` for the finding to hold."""

    AT_LEAST = "at-least"  # a rating or limit the item offers, at least what the job asks
    AT_MOST = "at-most"    # a limit the job sets ("<= 2 mm"), what the item has at most that
    MATCH = "match"        # two values that should agree (a divider's load), not a headroom


# The same names as Literal types, so that mypy checks a name written as text at a call site;
# __post_init__ turns the text into the enum member.
StatusText = Literal["pass", "caution", "fail", "unknown", "not-run"]
CheckText = Literal["setup", "category", "tip", "transient", "altitude", "mode-input", "misuse",
                    "loading", "low-z", "discharge", "protection-path", "input-consistency",
                    "history", "proving-dead"]
CompareText = Literal["at-least", "at-most", "match"]

STATUSES = tuple(s.value for s in Status)

# The units a numeric finding may carry: the canonical SI units of the engine's dimensions,
# and "1" for a dimensionless ratio or count.
UNITS = tuple(d.unit for d in DIMENSIONS) + ("1",)
_DIMENSION_OF = {d.unit: d for d in DIMENSIONS}

# How bad each status is, for a verdict: fail > unknown > caution > pass/not-run.
_SEVERITY = {Status.PASS: 0, Status.NOT_RUN: 0, Status.CAUTION: 1, Status.UNKNOWN: 2,
             Status.FAIL: 3}


@dataclass(frozen=True)
class Finding:
    """``required``/``available`` are short readable texts ("CAT III 480 V"); where a check
    leaves them empty and gives the numbers, they are rendered from ``required_value`` and
    ``available_value`` (SI floats in ``unit``, "V", "J", "s", ... or "1"), with "<= " before
    a required limit (:attr:`Compare.AT_MOST`) and ``basis`` ("peak", "rms") after each.

    ``margin`` is the relative headroom of a numeric check, (available - required) / required
    (for an :attr:`Compare.AT_MOST` limit: (limit - value) / value), or ``None`` where the check
    is not numeric, could not be computed, or a number does not measure the shortfall (a
    category too low at a voltage high enough). :attr:`margin_ratio` is the same as the ratio
    people read, available / required. Where both numbers and a margin are given they must
    agree. ``source`` names the standard's clause or table, the published method, or "common
    practice (no source)".
    """

    check: CheckName | CheckText
    status: Status | StatusText
    subject: str
    message: str
    source: str
    required: str = ""
    available: str = ""
    margin: float | None = None
    required_value: float | None = None
    available_value: float | None = None
    unit: str = ""
    compare: Compare | CompareText = Compare.AT_LEAST
    basis: str = ""

    def __post_init__(self):
        try:
            object.__setattr__(self, "status", Status(self.status))
        except ValueError:
            raise ValueError(f"finding status must be one of {STATUSES}, not "
                             f"{self.status!r}") from None
        try:
            object.__setattr__(self, "check", CheckName(self.check))
        except ValueError:
            raise ValueError(f"finding check must be one of {tuple(c.value for c in CheckName)},"
                             f" not {self.check!r}") from None
        object.__setattr__(self, "compare", Compare(self.compare))
        numeric = self.required_value is not None or self.available_value is not None
        if numeric and self.unit not in UNITS:
            raise ValueError(f"a numeric finding needs a unit of {UNITS}, not {self.unit!r}")
        if not numeric and self.unit:
            raise ValueError("a finding with a unit needs a required or available value")
        if not self.required and self.required_value is not None:
            limit = "<= " if self.compare is Compare.AT_MOST else ""
            object.__setattr__(self, "required", limit + self._text(self.required_value))
        if not self.available and self.available_value is not None:
            object.__setattr__(self, "available", self._text(self.available_value))
        expected = self.value_headroom
        if (self.margin is not None and expected is not None
                and not _same(self.margin, expected)):
            raise ValueError(f"margin {self.margin!r} disagrees with the numbers "
                             f"({self.required_value!r} required, {self.available_value!r} "
                             f"available: {expected!r})")

    def _text(self, value: float) -> str:
        dim = _DIMENSION_OF.get(self.unit)
        text = format_quantity(value, dim) if dim is not None else f"{value:.4g}"
        return f"{text} {self.basis}" if self.basis else text

    @property
    def numeric(self) -> bool:
        """Both numbers are there and finite: a needs-against-has pair."""
        return (self.required_value is not None and self.available_value is not None
                and math.isfinite(self.required_value) and math.isfinite(self.available_value))

    @property
    def value_headroom(self) -> float | None:
        """The headroom the two numbers give, per :attr:`compare`; ``None`` when one is
        missing or the two are to match rather than leave room."""
        if (self.required_value is None or self.available_value is None
                or self.compare is Compare.MATCH):
            return None
        if self.compare is Compare.AT_MOST:
            return headroom(self.required_value, self.available_value)
        return headroom(self.available_value, self.required_value)

    @property
    def value_ratio(self) -> float | None:
        """What the item may take over what it must take, from the numbers (for a limit: the
        limit over the value); ``None`` where :attr:`value_headroom` is."""
        return margin_ratio(self.value_headroom)

    @property
    def margin_ratio(self) -> float | None:
        """:attr:`margin` as the ratio available / required (see :func:`margin_ratio`)."""
        return margin_ratio(self.margin)

    def as_dict(self) -> dict:
        return {"check": CheckName(self.check).value, "status": Status(self.status).value,
                "subject": self.subject, "required": self.required,
                "available": self.available, "message": self.message, "source": self.source,
                "margin": _finite(self.margin), "margin_ratio": _finite(self.margin_ratio),
                "required_value": _finite(self.required_value),
                "available_value": _finite(self.available_value), "unit": self.unit,
                "compare": Compare(self.compare).value, "basis": self.basis}


def _finite(x: float | None) -> float | None:
    """JSON has no infinity: a non-finite number is written as null (the text says it)."""
    return None if x is None or not math.isfinite(x) else x


def _same(a: float, b: float) -> bool:
    if math.isinf(a) or math.isinf(b):
        return a == b
    return math.isclose(a, b, rel_tol=1e-9, abs_tol=1e-12)


def headroom(available: float, required: float) -> float:
    """Relative headroom (available - required) / required; infinite when nothing is required."""
    if required <= 0:
        return float("inf") if available >= required else float("-inf")
    return (available - required) / required


def margin_ratio(margin: float | None) -> float | None:
    """What an item may take over what it must take, available / required = 1 + headroom
    (headroom as :func:`headroom` gives it); ``None`` when not numeric; ``inf`` when nothing
    is required; never below 0."""
    if margin is None:
        return None
    if math.isinf(margin):
        return math.inf if margin > 0 else 0.0
    return max(0.0, 1.0 + margin)


def verdict_of(findings) -> Verdict:
    """Unsuitable if any fails; else unverified if any unknown; else conditional if any
    caution; else suitable (docs/rules.md, "Verdicts")."""
    worst = max((_SEVERITY[f.status] for f in findings), default=0)
    return {0: Verdict.SUITABLE, 1: Verdict.CONDITIONAL, 2: Verdict.UNVERIFIED,
            3: Verdict.UNSUITABLE}[worst]
