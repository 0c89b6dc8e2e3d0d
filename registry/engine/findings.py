"""A finding: one check's word on one item of a setup, with its numbers and its source."""

from __future__ import annotations

from dataclasses import dataclass

STATUSES = ("pass", "caution", "fail", "unknown", "not-run")

# How bad each status is, for a verdict: fail > unknown > caution > pass/not-run.
_SEVERITY = {"pass": 0, "not-run": 0, "caution": 1, "unknown": 2, "fail": 3}


@dataclass(frozen=True)
class Finding:
    """``required``/``available`` are short readable texts ("CAT III 480 V").

    ``margin`` is the relative headroom of a numeric check, (available - required) / required,
    or ``None`` where the check is not numeric or could not be computed. ``source`` names the
    standard's clause or table, the published method, or "common practice (no source)".
    """

    check: str
    status: str
    subject: str
    message: str
    source: str
    required: str = ""
    available: str = ""
    margin: float | None = None

    def __post_init__(self):
        if self.status not in STATUSES:
            raise ValueError(f"finding status must be one of {STATUSES}, not {self.status!r}")

    def as_dict(self) -> dict:
        return {"check": self.check, "status": self.status, "subject": self.subject,
                "required": self.required, "available": self.available,
                "message": self.message, "source": self.source, "margin": self.margin}


def headroom(available: float, required: float) -> float:
    """Relative headroom (available - required) / required; infinite when nothing is required."""
    if required <= 0:
        return float("inf") if available >= required else float("-inf")
    return (available - required) / required


def verdict_of(findings) -> str:
    """SPEC §4: unsuitable if any fails; else unverified if any unknown; else conditional if any
    caution; else suitable."""
    worst = max((_SEVERITY[f.status] for f in findings), default=0)
    return {0: "suitable", 1: "conditional", 2: "unverified", 3: "unsuitable"}[worst]
