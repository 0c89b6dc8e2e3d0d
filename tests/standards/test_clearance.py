"""IEC 60664-1 Tables F.2 and F.8 (case A) read for a known gap, and the altitude division.

The rows are held against two reproductions of IEC 60664-1:2020 that agree with each other:
the KiCad PCB calculator (iec60664.cpp, Tables F.2 and F.8) and the OpenMagnetics MKF data
(IEC_60664-1.json, keys "F.2" and "F.8"). Table F.8 is the 2020 edition's number for the
table of clearances to withstand steady-state voltages, temporary overvoltages or recurring
peak voltages (Table F.7 in the 2007 edition).
"""

import pytest

from registry.standards import clearance
from registry.standards.altitude import altitude_factor


def test_rows_as_published():
    # IEC 60664-1 Table F.2, case A (inhomogeneous field), pollution degree 1, as both
    # reproductions give it: 0.33 kV 0.01 mm, 0.5 kV 0.04 mm, 0.8 kV 0.1 mm, 1.5 kV 0.5 mm,
    # 2.5 kV 1.5 mm, 4 kV 3.0 mm, 6 kV 5.5 mm, 8 kV 8.0 mm, 12 kV 14 mm.
    rows = dict(clearance.ROWS)
    for kv, mm in ((0.33, 0.01), (0.5, 0.04), (0.8, 0.1), (1.5, 0.5), (2.5, 1.5), (4, 3.0),
                   (6, 5.5), (8, 8.0), (12, 14)):
        assert rows[kv * 1e3] == pytest.approx(mm * 1e-3)
    assert len(rows) == 9
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


def test_steady_rows_as_published():
    # IEC 60664-1:2020 Table F.8 (2007: Table F.7), case A, kV peak -> mm, as both
    # reproductions give it.
    published = {0.04: 0.001, 0.06: 0.002, 0.1: 0.003, 0.12: 0.004, 0.15: 0.005, 0.2: 0.006,
                 0.25: 0.008, 0.33: 0.01, 0.4: 0.02, 0.5: 0.04, 0.6: 0.06, 0.8: 0.13,
                 1.0: 0.26, 1.2: 0.42, 1.5: 0.76, 2.0: 1.27, 2.5: 1.8, 3.0: 2.4, 4.0: 3.8,
                 5.0: 5.7, 6.0: 7.9, 8.0: 11.0, 10: 15.2, 12: 19, 15: 25, 20: 34, 25: 44,
                 30: 55, 40: 77, 50: 100}
    rows = dict(clearance.STEADY_ROWS)
    assert len(rows) == len(published)
    for kv, mm in published.items():
        assert rows[kv * 1e3] == pytest.approx(mm * 1e-3)
    volts = [v for v, _ in clearance.STEADY_ROWS]
    gaps = [g for _, g in clearance.STEADY_ROWS]
    assert volts == sorted(volts) and gaps == sorted(gaps)


@pytest.mark.parametrize("gap_mm,kv", [
    (0.5, 1.2), (0.42, 1.2), (0.41, 1.0), (1.27, 2.0), (1.26, 1.5), (2.0, 2.5), (3.0, 3.0),
    (5.5, 4.0), (14.0, 8.0), (200.0, 50.0), (0.0005, 0.0)])
def test_steady_reading_is_conservative(gap_mm, kv):
    # The highest Table F.8 row whose clearance the gap meets, no interpolation upward.
    assert clearance.steady_table_withstand(gap_mm * 1e-3) == pytest.approx(kv * 1e3)


def test_a_gap_withstands_less_steady_voltage_than_impulse():
    # Case A: 0.5 mm takes 1.5 kV of impulse (Table F.2) but only 1.2 kV peak steady (F.8);
    # 3 mm takes 4 kV of impulse, 3 kV peak steady.
    for mm in (0.5, 1.5, 3.0, 5.5, 8.0):
        assert clearance.steady_table_withstand(mm * 1e-3) < clearance.table_withstand(mm * 1e-3)


def test_implied_gap_of_a_stated_impulse_withstand():
    # Table F.2 case A: 6 kV needs 5.5 mm, 2.5 kV 1.5 mm; 2.4 kV vouches only for the 1.5 kV
    # row's 0.5 mm; below 330 V for nothing.
    assert clearance.implied_gap(6000.0) == pytest.approx(5.5e-3)
    assert clearance.implied_gap(2500.0) == pytest.approx(1.5e-3)
    assert clearance.implied_gap(2400.0) == pytest.approx(0.5e-3)
    assert clearance.implied_gap(300.0) == 0.0


def test_altitude_division():
    # IEC 60664-1 Table A.2: 3000 m 1.14, 4000 m 1.29, 5000 m 1.48; 1.0 at or below 2000 m;
    # between rows the next row up (3100 m takes the 4000 m row's 1.29).
    assert clearance.gap_withstand(2e-3, 2000.0) == pytest.approx(2500.0)
    assert clearance.gap_withstand(2e-3, 3000.0) == pytest.approx(2500.0 / 1.14)
    assert clearance.gap_withstand(3e-3, 5000.0) == pytest.approx(4000.0 / 1.48)
    assert clearance.gap_withstand(3e-3, 3100.0) == pytest.approx(4000.0 / 1.29)
    assert altitude_factor(3100.0) == 1.29
    assert clearance.gap_steady_withstand(2e-3, 2500.0) == pytest.approx(2500.0 / 1.14)
    assert clearance.stated_withstand(6000.0, 4000.0) == pytest.approx(6000.0 / 1.29)


def test_rejects_nonsense():
    with pytest.raises(ValueError):
        clearance.table_withstand(-1e-3)
