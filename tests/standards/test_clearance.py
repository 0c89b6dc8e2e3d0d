"""IEC 60664-1 Table F.2 (case A) read for a known gap, and the altitude division."""

import pytest

from registry.standards import clearance
from registry.standards.altitude import altitude_factor


def test_rows_as_published():
    # Rows seen in published reproductions of IEC 60664-1 Table F.2, case A (inhomogeneous
    # field): 1.5 kV 0.5 mm, 2.5 kV 1.5 mm, 4 kV 3.0 mm, 6 kV 5.5 mm, 8 kV 8.0 mm, 12 kV 14 mm.
    rows = dict(clearance.ROWS)
    for kv, mm in ((1.5, 0.5), (2.5, 1.5), (4, 3.0), (6, 5.5), (8, 8.0), (12, 14)):
        assert rows[kv * 1e3] == pytest.approx(mm * 1e-3)
    # lower rows from memory: 0.33 kV 0.01 mm, 0.5 kV 0.04 mm, 0.8 kV 0.1 mm
    assert rows[330.0] == pytest.approx(0.01e-3)
    volts = [v for v, _ in clearance.ROWS]
    gaps = [g for _, g in clearance.ROWS]
    assert volts == sorted(volts) and gaps == sorted(gaps)


@pytest.mark.parametrize("gap_mm,kv", [
    (0.5, 1.5), (1.49, 1.5), (1.5, 2.5), (2.0, 2.5), (2.99, 2.5), (3.0, 4.0), (5.4, 4.0),
    (5.5, 6.0), (13.9, 8.0), (14.0, 12.0), (30.0, 12.0), (0.005, 0.0), (0.05, 0.5)])
def test_conservative_reading(gap_mm, kv):
    # A gap withstands the highest row whose clearance it meets: no interpolation upward
    # (2 mm would be 3.1 kV on a straight line between the rows; the table gives 2.5 kV).
    assert clearance.table_withstand(gap_mm * 1e-3) == pytest.approx(kv * 1e3)


def test_altitude_division():
    # IEC 60664-1 Table A.2: 3000 m 1.14, 4000 m 1.29, 5000 m 1.48; 1.0 at or below 2000 m.
    assert clearance.gap_withstand(2e-3, 2000.0) == pytest.approx(2500.0)
    assert clearance.gap_withstand(2e-3, 3000.0) == pytest.approx(2500.0 / 1.14)
    assert clearance.gap_withstand(3e-3, 5000.0) == pytest.approx(4000.0 / 1.48)
    assert clearance.gap_withstand(3e-3, 3100.0) == pytest.approx(
        4000.0 / altitude_factor(3100.0))
    assert clearance.stated_withstand(6000.0, 4000.0) == pytest.approx(6000.0 / 1.29)


def test_rejects_nonsense():
    with pytest.raises(ValueError):
        clearance.table_withstand(-1e-3)
