"""Exposed metal at probe tips.

Read: HSE Guidance Note GS38 (fourth edition, 2015), paragraph 9: probes and clips "insulated
to leave an exposed metal tip not exceeding 4 mm measured across any surface of the tip.
Where practicable it is strongly recommended that this is reduced to 2 mm or less".
IEC 61010-031:2015 sets the same 4 mm as a requirement for probe assemblies of measurement
category III and IV (from memory: the exposed conductive part of the tip at most 4 mm long).
Pure: SI floats (m).
"""

from __future__ import annotations

SOURCE = "HSE GS38 (4th edition, 2015) para 9: exposed tip at most 4 mm, 2 mm or less preferred"
# From memory: IEC 61010-031:2015's 4 mm limit for CAT III / CAT IV probe assemblies (the
# clause was not read; GS38's 4 mm, read, agrees).
SOURCE_CAT = ("IEC 61010-031:2015, CAT III / CAT IV probe assemblies: exposed tip at most "
              "4 mm; " + SOURCE)

MAX_EXPOSURE = 4e-3        # m
PREFERRED_EXPOSURE = 2e-3  # m

# The categories whose probe assemblies IEC 61010-031 holds to the 4 mm limit: beyond it the
# tip fails there. On other hazardous-live work (CAT II, isolated circuits) GS38's guidance
# applies as a caution.
FAIL_CATEGORIES = ("III", "IV")


def tip_status(exposure: float | None, category: str | None) -> str:
    """``pass``, ``caution``, ``fail`` or ``unknown`` for a tip with ``exposure`` (m) of bare
    metal used on hazardous-live work of ``category`` (``None`` for an isolated circuit, which
    has none). Whether the work is hazardous-live, so that the rule applies at all, is the
    caller's to decide.

    CAT III and CAT IV: more than 4 mm fails (IEC 61010-031:2015; GS38), more than 2 mm is a
    caution (GS38's recommendation). Other work: more than 2 mm is a caution (GS38 covers
    low-voltage work generally; IEC 61010-031's limit is for CAT III/IV probes only).
    Not recorded: unknown."""
    if exposure is None:
        return "unknown"
    if category in FAIL_CATEGORIES and exposure > MAX_EXPOSURE:
        return "fail"
    return "caution" if exposure > PREFERRED_EXPOSURE else "pass"
