"""Altitude correction of clearances (IEC 60664-1, Table A.2).

Air insulates less as pressure falls (Paschen's law), so a clearance sized for 2000 m must be
multiplied by a factor above it. Pure: SI floats (m).
"""

from __future__ import annotations

import bisect
import math

SOURCE = "IEC 60664-1 Table A.2 (altitude correction factors for clearances)"

# (altitude m, multiplication factor), the rows of IEC 60664-1:2020 Table A.2. Every row read
# in two published reproductions that agree with each other: the KiCad project's PCB
# calculator (iec60664.cpp, "Based on IEC60664-1 : 2020-05 Table A.2") and the OpenMagnetics
# project's insulation-standard data (MKF, IEC_60664-1.json, key "A.2"); 5000 m -> 1.48 also
# in a meter maker's guidance on IEC 61010-1 ("1.48 at operation from 4001 to 5000 m").
# tests/standards checks them against the ratio of ISO 2533 standard-atmosphere pressures
# p(2000 m)/p(h), which they follow within 2 %.
TABLE: tuple[tuple[float, float], ...] = (
    (2000.0, 1.00),
    (3000.0, 1.14),
    (4000.0, 1.29),
    (5000.0, 1.48),
    (6000.0, 1.70),
    (7000.0, 1.95),
    (8000.0, 2.25),
    (9000.0, 2.62),
    (10000.0, 3.02),
    (15000.0, 6.67),
    (20000.0, 14.5),
)


class BeyondAltitudeTable(ValueError):
    """An altitude beyond the last row of Table A.2 (above 20 000 m)."""


def in_table(altitude_m: float) -> bool:
    """Whether ``altitude_m`` lies within IEC 60664-1 Table A.2 (up to 20 000 m)."""
    return altitude_m <= TABLE[-1][0]


def table_row(altitude_m: float) -> tuple[float, float]:
    """(row altitude m, factor) of the Table A.2 row that covers ``altitude_m`` (m), read as
    clearances are read: the next row up, never an interpolation (2500 m takes the 3000 m
    row, 1.14). At or below 2000 m the 2000 m row (1.00). Above 20 000 m raises
    :class:`BeyondAltitudeTable`. Source: :data:`SOURCE`."""
    if not math.isfinite(altitude_m):
        raise ValueError("altitude must be finite")
    if not in_table(altitude_m):
        raise BeyondAltitudeTable(f"{altitude_m:g} m is above the 20 000 m row of IEC "
                                  "60664-1 Table A.2: no clearance correction is given for it")
    heights = [h for h, _ in TABLE]
    return TABLE[bisect.bisect_left(heights, altitude_m)]


def altitude_factor(altitude_m: float) -> float:
    """Clearance multiplication factor at ``altitude_m`` (m) relative to the 2000 m design:
    the factor of :func:`table_row`, so 1.00 up to 2000 m, 1.14 above 2000 m up to 3000 m,
    and so on; no interpolation (the conservative reading). Source: :data:`SOURCE`."""
    return table_row(altitude_m)[1]


def credited_factor(rated_m: float) -> float:
    """The factor an item rated for use up to ``rated_m`` (m) can be credited with: the row at
    or below its rated altitude (2500 m is credited 1.00, 3000 m 1.14), since a rating between
    rows says nothing about the larger factor. Above 20 000 m the last row. Source:
    :data:`SOURCE`."""
    if not math.isfinite(rated_m):
        raise ValueError("altitude must be finite")
    heights = [h for h, _ in TABLE]
    i = bisect.bisect_right(heights, rated_m) - 1
    return TABLE[max(i, 0)][1]
