"""What a gap in air withstands: IEC 60664-1 Table F.2 read backwards, altitude corrected.

Table F.2 gives the minimum clearance for a required impulse withstand voltage; read the other
way, a gap withstands the highest row whose clearance it meets. Case A (inhomogeneous field)
is the one for switch contacts and other gaps whose field is not known to be uniform; it is the
conservative case. Pure: SI floats (V, m).
"""

from __future__ import annotations

import math

from .altitude import SOURCE as ALTITUDE_SOURCE
from .altitude import altitude_factor

SOURCE = ("IEC 60664-1 Table F.2 (clearances to withstand transient overvoltages, case A "
          "inhomogeneous field, up to 2000 m)")

# (impulse withstand voltage V peak, minimum clearance m), case A, pollution degree 1 (the
# smallest clearances; the pollution-degree minimums of the table's notes only raise the
# lowest rows, which makes reading them for a known gap more conservative, not less).
ROWS: tuple[tuple[float, float], ...] = (
    (330.0, 0.01e-3),   # from memory
    (500.0, 0.04e-3),   # from memory
    (800.0, 0.1e-3),    # from memory
    (1500.0, 0.5e-3),   # seen in published reproductions of the table
    (2500.0, 1.5e-3),   # seen in published reproductions of the table
    (4000.0, 3.0e-3),   # seen in published reproductions of the table
    (6000.0, 5.5e-3),   # seen in published reproductions of the table
    (8000.0, 8.0e-3),   # seen in published reproductions of the table
    (12000.0, 14e-3),   # seen in published reproductions of the table
)


def table_withstand(gap_m: float) -> float:
    """Impulse withstand (V peak) of a ``gap_m`` (m) clearance at up to 2000 m: the highest row
    of :data:`ROWS` whose clearance the gap meets, no interpolation upward (a 2 mm gap meets the
    1.5 mm row, so it withstands 2.5 kV, not the 3.1 kV a straight line would give). A gap
    smaller than the first row's withstands 0 V for this reading. Beyond the last row the
    table says nothing more, so the last row's voltage is returned. Source: :data:`SOURCE`."""
    if not math.isfinite(gap_m) or gap_m < 0:
        raise ValueError(f"a gap must be a finite non-negative length in m, not {gap_m!r}")
    best = 0.0
    # The rows are in metres with rounding of their own; compare with a relative tolerance of
    # 1e-9 so that a stated 1.5 mm meets the 1.5 mm row despite binary floating point.
    for voltage, clearance in ROWS:
        if gap_m >= clearance * (1 - 1e-9):
            best = voltage
    return best


def gap_withstand(gap_m: float, altitude_m: float) -> float:
    """Impulse withstand (V peak) of a ``gap_m`` (m) gap at ``altitude_m`` (m):
    :func:`table_withstand` divided by the altitude correction factor of IEC 60664-1 Table A.2
    (1.0 at or below 2000 m). Sources: :data:`SOURCE`; the altitude module's source."""
    return table_withstand(gap_m) / altitude_factor(altitude_m)


def stated_withstand(withstand_v: float, altitude_m: float) -> float:
    """A withstand stated by the maker (V peak), taken as holding up to 2000 m and divided by
    the altitude factor above it, as a clearance would be. Common practice (no source): a
    datasheet figure without an altitude is read as the standard's 2000 m default."""
    return withstand_v / altitude_factor(altitude_m)


__all__ = ["ROWS", "SOURCE", "ALTITUDE_SOURCE", "table_withstand", "gap_withstand",
           "stated_withstand"]
