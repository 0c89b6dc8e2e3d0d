"""What a gap in air withstands: IEC 60664-1 clearance tables read backwards, altitude corrected.

Table F.2 gives the minimum clearance for a required impulse withstand voltage; Table F.8 of
the 2020 edition (Table F.7 of the 2007 edition) the minimum clearance to withstand
steady-state voltages, temporary overvoltages or recurring peak voltages. Read the other way, a
gap withstands the highest row whose clearance it meets. Case A (inhomogeneous field) is the
one for switch contacts and other gaps whose field is not known to be uniform; it is the
conservative case. Pure: SI floats (V, m).

Every row used below was read in two published reproductions of IEC 60664-1:2020 that agree
with each other: the KiCad project's PCB calculator (pcb_calculator iec60664.cpp, "Based on
IEC60664-1 : 2020-05", Tables F.2 and F.8) and the OpenMagnetics project's insulation-standard
data (MKF, IEC_60664-1.json, keys "F.2" and "F.8").
"""

from __future__ import annotations

import math

from .altitude import SOURCE as ALTITUDE_SOURCE
from .altitude import altitude_factor

SOURCE = ("IEC 60664-1 Table F.2 (clearances to withstand transient overvoltages, case A "
          "inhomogeneous field, up to 2000 m)")

# (impulse withstand voltage V peak, minimum clearance m), case A, pollution degree 1 (the
# smallest clearances; the pollution-degree minimums of the table's notes only raise the
# lowest rows, which makes reading them for a known gap more conservative, not less). Every
# row read in both reproductions named above; the table's intermediate rows (400, 600, 1000,
# 1200, 2000, 3000, 5000, 10000 V) are left out, which only makes the reading more cautious.
ROWS: tuple[tuple[float, float], ...] = (
    (330.0, 0.01e-3),   # read (both reproductions)
    (500.0, 0.04e-3),   # read (both reproductions)
    (800.0, 0.1e-3),    # read (both reproductions)
    (1500.0, 0.5e-3),   # read (both reproductions)
    (2500.0, 1.5e-3),   # read (both reproductions)
    (4000.0, 3.0e-3),   # read (both reproductions)
    (6000.0, 5.5e-3),   # read (both reproductions)
    (8000.0, 8.0e-3),   # read (both reproductions)
    (12000.0, 14e-3),   # read (both reproductions)
)

STEADY_SOURCE = ("IEC 60664-1:2020 Table F.8 (Table F.7 in the 2007 edition): clearances to "
                 "withstand steady-state voltages, temporary overvoltages or recurring peak "
                 "voltages, case A inhomogeneous field, up to 2000 m")

# (voltage V peak, minimum clearance m), IEC 60664-1:2020 Table F.8, case A (inhomogeneous
# field). Every row read in both reproductions named above, which agree row for row.
STEADY_ROWS: tuple[tuple[float, float], ...] = (
    (40.0, 0.001e-3),
    (60.0, 0.002e-3),
    (100.0, 0.003e-3),
    (120.0, 0.004e-3),
    (150.0, 0.005e-3),
    (200.0, 0.006e-3),
    (250.0, 0.008e-3),
    (330.0, 0.01e-3),
    (400.0, 0.02e-3),
    (500.0, 0.04e-3),
    (600.0, 0.06e-3),
    (800.0, 0.13e-3),
    (1000.0, 0.26e-3),
    (1200.0, 0.42e-3),
    (1500.0, 0.76e-3),
    (2000.0, 1.27e-3),
    (2500.0, 1.8e-3),
    (3000.0, 2.4e-3),
    (4000.0, 3.8e-3),
    (5000.0, 5.7e-3),
    (6000.0, 7.9e-3),
    (8000.0, 11.0e-3),
    (10000.0, 15.2e-3),
    (12000.0, 19e-3),
    (15000.0, 25e-3),
    (20000.0, 34e-3),
    (25000.0, 44e-3),
    (30000.0, 55e-3),
    (40000.0, 77e-3),
    (50000.0, 100e-3),
)


def _read_back(rows, gap_m: float) -> float:
    """The highest voltage of ``rows`` whose clearance ``gap_m`` (m) meets; 0 below the first."""
    if not math.isfinite(gap_m) or gap_m < 0:
        raise ValueError(f"a gap must be a finite non-negative length in m, not {gap_m!r}")
    best = 0.0
    # The rows are in metres with rounding of their own; compare with a relative tolerance of
    # 1e-9 so that a stated 1.5 mm meets the 1.5 mm row despite binary floating point.
    for voltage, clearance in rows:
        if gap_m >= clearance * (1 - 1e-9):
            best = voltage
    return best


def table_withstand(gap_m: float) -> float:
    """Impulse withstand (V peak) of a ``gap_m`` (m) clearance at up to 2000 m: the highest row
    of :data:`ROWS` whose clearance the gap meets, no interpolation upward (a 2 mm gap meets the
    1.5 mm row, so it withstands 2.5 kV, not the 3.1 kV a straight line would give). A gap
    smaller than the first row's withstands 0 V for this reading. Beyond the last row the
    table says nothing more, so the last row's voltage is returned. Source: :data:`SOURCE`."""
    return _read_back(ROWS, gap_m)


def steady_table_withstand(gap_m: float) -> float:
    """Steady-state, temporary or recurring peak voltage (V peak) a ``gap_m`` (m) clearance
    withstands at up to 2000 m: the highest row of :data:`STEADY_ROWS` whose clearance the gap
    meets, no interpolation upward (a 2 mm gap meets the 1.8 mm row: 2.5 kV peak). A gap
    smaller than the first row's withstands 0 V for this reading; beyond the last row the last
    row's voltage. Source: :data:`STEADY_SOURCE`."""
    return _read_back(STEADY_ROWS, gap_m)


def gap_withstand(gap_m: float, altitude_m: float) -> float:
    """Impulse withstand (V peak) of a ``gap_m`` (m) gap at ``altitude_m`` (m):
    :func:`table_withstand` divided by the altitude correction factor of IEC 60664-1 Table A.2
    (1.0 at or below 2000 m). Sources: :data:`SOURCE`; the altitude module's source."""
    return table_withstand(gap_m) / altitude_factor(altitude_m)


def gap_steady_withstand(gap_m: float, altitude_m: float) -> float:
    """Steady-state / recurring peak withstand (V peak) of a ``gap_m`` (m) gap at
    ``altitude_m`` (m): :func:`steady_table_withstand` divided by the altitude correction
    factor of IEC 60664-1 Table A.2. Sources: :data:`STEADY_SOURCE`; the altitude module's."""
    return steady_table_withstand(gap_m) / altitude_factor(altitude_m)


def implied_gap(withstand_v: float) -> float:
    """The least gap (m) a stated impulse withstand of ``withstand_v`` (V peak) vouches for,
    read in :data:`ROWS` (case A): the clearance of the highest row at or below the stated
    withstand; 0 below the first row. A stated impulse figure says nothing directly about
    steady-state voltages; in an inhomogeneous field a gap withstands less steady voltage than
    impulse (Table F.8 against Table F.2), so the steady limit of a switch known only by its
    stated impulse withstand is read from the gap that withstand implies. Common practice (no
    source) on :data:`SOURCE` and :data:`STEADY_SOURCE`."""
    best = 0.0
    for voltage, clearance in ROWS:
        if voltage <= withstand_v * (1 + 1e-9):
            best = clearance
    return best


def stated_withstand(withstand_v: float, altitude_m: float) -> float:
    """A withstand stated by the maker (V peak), taken as holding up to 2000 m and divided by
    the altitude factor above it, as a clearance would be. Common practice (no source): a
    datasheet figure without an altitude is read as the standard's 2000 m default."""
    return withstand_v / altitude_factor(altitude_m)


__all__ = ["ROWS", "SOURCE", "STEADY_ROWS", "STEADY_SOURCE", "ALTITUDE_SOURCE",
           "table_withstand", "steady_table_withstand", "gap_withstand",
           "gap_steady_withstand", "implied_gap", "stated_withstand"]
