"""Exposed metal at probe tips.

Read: HSE Guidance Note GS38 (fourth edition, 2015), paragraph 9: probes and clips "insulated
to leave an exposed metal tip not exceeding 4 mm measured across any surface of the tip.
Where practicable it is strongly recommended that this is reduced to 2 mm or less".
Pure: SI floats (m).
"""

from __future__ import annotations

SOURCE = "HSE GS38 (4th edition, 2015) para 9: exposed tip at most 4 mm, 2 mm or less preferred"

MAX_EXPOSURE = 4e-3        # m
PREFERRED_EXPOSURE = 2e-3  # m

# GS38 is guidance for low-voltage systems generally; the lab applies it as a caution where
# the fault energy is highest, on CAT III and CAT IV work (common practice, no source).
CAUTION_CATEGORIES = ("III", "IV")


def tip_status(exposure: float | None, category: str | None) -> str:
    """``pass``, ``caution`` or ``unknown`` for a tip with ``exposure`` (m) of bare metal used
    on a circuit of ``category`` (``None`` for an isolated circuit)."""
    if category not in CAUTION_CATEGORIES:
        return "pass"
    if exposure is None:
        return "unknown"
    return "caution" if exposure > PREFERRED_EXPOSURE else "pass"
