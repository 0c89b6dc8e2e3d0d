"""Every table value against its source, and the altitude factors against ISO 2533."""

import inspect
import math

import pytest

from registry.standards import altitude, hazardous_live, impulse, probe_tips, stored_energy


# IEC 61010-2-030:2010 impulse test voltages as reproduced in a data-recorder manual
# ("Table 2.1: Insulation test voltages in accordance with IEC 61010-2-030:2010") and a meter
# maker's IEC 61010 summary (300/600/1000 V rows). The <=150 V CAT II cell is 1500 V from
# IEC 60664-1 Table F.1 (from memory): the manual prints 1550 V there.
@pytest.mark.parametrize("category,row,expected", [
    ("II", 150, 1500), ("III", 150, 2500), ("IV", 150, 4000),
    ("II", 300, 2500), ("III", 300, 4000), ("IV", 300, 6000),
    ("II", 600, 4000), ("III", 600, 6000), ("IV", 600, 8000),
    ("II", 1000, 6000), ("III", 1000, 8000), ("IV", 1000, 12000),
])
def test_impulse_table(category, row, expected):
    assert impulse.expected_impulse(category, row) == expected


def test_impulse_rounds_up_to_next_row():
    # docs/rules.md, check 3 (IEC 61010-2-030 Table 102): the nominal voltage to earth rounded up to
    # the table's next row.
    assert impulse.expected_impulse("III", 277) == 4000  # 480/277 V board -> 300 V row
    assert impulse.expected_impulse("III", 120) == 2500
    assert impulse.expected_impulse("IV", 400) == 8000
    assert impulse.expected_impulse("II", 150.01) == 2500
    assert impulse.expected_impulse("III", 1000.1) is None  # beyond the low-voltage table


def test_withstand_of_rating():
    assert impulse.withstand_of_rating("III", 600) == 6000
    assert impulse.withstand_of_rating("IV", 600) == 8000
    assert impulse.withstand_of_rating("III", 500) == 6000  # tested on the >300..600 V row
    assert impulse.withstand_of_rating("II", 1500) == 6000  # above the table: 1000 V row
    assert impulse.withstand_of_rating("none", 1000) is None


def test_generator_impedance():
    # IEC 61010-2-030 impulse test: 12 ohm for CAT II, 2 ohm for CAT III and IV (meter
    # maker's IEC 61010 summary; IEC 61010-2-033 101.4 "output impedance ... of 2 ohm").
    assert impulse.GENERATOR_IMPEDANCE == {"II": 12.0, "III": 2.0, "IV": 2.0}


def test_hazardous_live_levels():
    # IEC webstore abstract of IEC 61010-031:2015: 30 V r.m.s., 42,4 V peak, 60 V d.c.
    # "instead of 33 V r.m.s., 46,7 V peak, or 70 V d.c." (the IEC 61010-1 levels).
    assert (hazardous_live.IEC_61010_1.rms, hazardous_live.IEC_61010_1.peak,
            hazardous_live.IEC_61010_1.dc) == (33.0, 46.7, 70.0)
    assert (hazardous_live.IEC_61010_031.rms, hazardous_live.IEC_61010_031.peak,
            hazardous_live.IEC_61010_031.dc) == (30.0, 42.4, 60.0)
    # Wet locations, IEC 61010-1 6.3.1 (from memory).
    assert (hazardous_live.IEC_61010_1_WET.rms, hazardous_live.IEC_61010_1_WET.peak,
            hazardous_live.IEC_61010_1_WET.dc) == (16.0, 22.6, 35.0)
    # the mark stays in the code beside the value; what users read names only the source
    assert "from memory" not in hazardous_live.IEC_61010_1_WET.source
    code = inspect.getsource(hazardous_live)
    assert "# From memory: the lower levels IEC 61010-1 6.3.1 gives" in code


def test_peak_levels_are_sqrt2_times_rms():
    # The peak levels are the rms levels of a sine times sqrt(2) (to the standards' rounding).
    for lv in (hazardous_live.IEC_61010_1, hazardous_live.IEC_61010_031,
               hazardous_live.IEC_61010_1_WET):
        assert lv.peak == pytest.approx(lv.rms * math.sqrt(2), abs=0.05)


def test_plan_level_is_the_lowest_that_applies():
    assert hazardous_live.plan_level("ac") == (30.0, hazardous_live.IEC_61010_031.source)
    assert hazardous_live.plan_level("dc")[0] == 60.0
    assert hazardous_live.plan_level("dc", wet=True)[0] == 35.0
    assert hazardous_live.dc_level(wet=True)[0] == 35.0


def _iso2533_pressure(h):
    """ISO 2533 standard atmosphere from its defining constants, written here independently of
    the module: troposphere p = p0 (1 - L h / T0) ** (g0 M / (R L)) up to 11 000 m, then the
    isothermal layer at 216.65 K, p = p11 exp(-g0 M (h - 11 000) / (R T11))."""
    p0, t0, lapse = 101325.0, 288.15, 0.0065
    g0, molar, r = 9.80665, 0.0289644, 8.3144598
    if h <= 11000.0:
        return p0 * (1 - lapse * h / t0) ** (g0 * molar / (r * lapse))
    t11 = t0 - lapse * 11000.0
    return _iso2533_pressure(11000.0) * math.exp(-g0 * molar * (h - 11000.0) / (r * t11))


@pytest.mark.parametrize("h,factor", altitude.TABLE)
def test_altitude_factors_follow_pressure_ratio(h, factor):
    # IEC 60664-1 Table A.2 rows against p(2000 m)/p(h) of ISO 2533: within 2 %.
    ratio = _iso2533_pressure(2000) / _iso2533_pressure(h)
    assert factor == pytest.approx(ratio, rel=0.02)
    assert altitude.altitude_factor(h) == factor


def test_altitude_table_values():
    # IEC 60664-1:2020 Table A.2 as reproduced in the KiCad PCB calculator (iec60664.cpp) and
    # in the OpenMagnetics MKF data (IEC_60664-1.json, "A.2"); the two agree row for row.
    assert dict(altitude.TABLE) == {2000.0: 1.00, 3000.0: 1.14, 4000.0: 1.29, 5000.0: 1.48,
                                    6000.0: 1.70, 7000.0: 1.95, 8000.0: 2.25, 9000.0: 2.62,
                                    10000.0: 3.02, 15000.0: 6.67, 20000.0: 14.5}


def test_altitude_factor_takes_the_next_row_up():
    # IEC 60664-1 Table A.2 read as clearances are: the next row up, no interpolation.
    assert altitude.altitude_factor(0) == 1.0
    assert altitude.altitude_factor(2000) == 1.00  # 2000 m exactly: the 2000 m row
    assert altitude.altitude_factor(2000.5) == 1.14
    assert altitude.altitude_factor(2500) == 1.14  # not the 1.07 of a straight line
    assert altitude.altitude_factor(3000) == 1.14
    assert altitude.altitude_factor(3001) == 1.29
    assert altitude.altitude_factor(4500) == 1.48
    assert altitude.altitude_factor(10001) == 6.67
    assert altitude.table_row(2500) == (3000.0, 1.14)
    # never less than the physics says (ISO 2533 pressure ratio), at any altitude in the table
    for h in range(0, 20001, 250):
        ratio = _iso2533_pressure(2000) / _iso2533_pressure(max(h, 2000))
        assert altitude.altitude_factor(h) >= ratio * 0.98
    with pytest.raises(altitude.BeyondAltitudeTable):
        altitude.altitude_factor(20001)
    # a rating between rows is credited only the row at or below it
    assert altitude.credited_factor(2500) == 1.00
    assert altitude.credited_factor(3000) == 1.14
    assert altitude.credited_factor(500) == 1.00


def test_capacitor_hazard_thresholds():
    # LBNL Electrical Safety Program, capacitor rows: shock >= 100 V and >= 10 J; arc flash
    # >= 100 V and >= 10 kJ; thermal < 100 V and > 100 J.
    def kinds(v, e):
        return {h.kind for h in stored_energy.hazards(v, e)}
    assert kinds(100, 10) == {"shock"}
    assert kinds(99.9, 10) == set()
    assert kinds(100, 9.99) == set()
    assert kinds(800, 10_000) == {"shock", "arc-flash"}
    assert kinds(800, 9_999) == {"shock"}
    assert kinds(48, 100.1) == {"thermal"}
    assert kinds(48, 100) == set()


def test_stored_energy_hand_worked():
    # E = C V^2 / 2, worked by hand: 2 mF at 800 V = 0.5 * 2e-3 * 640000 = 640 J;
    # 4.7 uF at 400 V = 0.5 * 4.7e-6 * 160000 = 0.376 J; 10 nF at 20 kV = 2 J.
    assert stored_energy.stored_energy(2e-3, 800) == pytest.approx(640)
    assert stored_energy.stored_energy(4.7e-6, 400) == pytest.approx(0.376)
    assert stored_energy.stored_energy(10e-9, 20e3) == pytest.approx(2.0)
    assert stored_energy.capacitance_for(640, 800) == pytest.approx(2e-3)


def test_probe_tips():
    # HSE GS38 (4th edition, 2015) para 9: not exceeding 4 mm, 2 mm or less recommended;
    # IEC 61010-031:2015 holds CAT III / CAT IV probe assemblies to 4 mm (from memory).
    assert probe_tips.MAX_EXPOSURE == 4e-3
    assert probe_tips.PREFERRED_EXPOSURE == 2e-3
    assert probe_tips.tip_status(2e-3, "III") == "pass"
    assert probe_tips.tip_status(3e-3, "III") == "caution"
    assert probe_tips.tip_status(4e-3, "IV") == "caution"
    assert probe_tips.tip_status(4.5e-3, "III") == "fail"
    assert probe_tips.tip_status(19e-3, "IV") == "fail"
    # CAT II and isolated hazardous-live work: GS38 as a caution, never the CAT III/IV fail
    assert probe_tips.tip_status(19e-3, "II") == "caution"
    assert probe_tips.tip_status(4.5e-3, None) == "caution"
    assert probe_tips.tip_status(2e-3, None) == "pass"
    assert probe_tips.tip_status(None, "IV") == "unknown"
    assert probe_tips.tip_status(None, None) == "unknown"
