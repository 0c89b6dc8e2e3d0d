"""Quantity parsing at the edges, checked against pint's own conversions and the SI prefix
definitions of the BIPM SI Brochure (9th edition, 2019, Table 7: k = 1e3, M = 1e6, m = 1e-3,
u (micro) = 1e-6)."""

import math

import pint
import pytest

from registry import units as u
from registry.errors import InvalidInput

# An independent registry: the conversion it gives is the reference, not ours.
REF = pint.UnitRegistry()

SI_PREFIX = {"k": 1e3, "M": 1e6, "m": 1e-3, "u": 1e-6}  # BIPM SI Brochure, Table 7


@pytest.mark.parametrize("text, dim, ref_text, ref_unit", [
    ("2 kV", u.VOLTAGE, "2 kilovolt", "volt"),
    ("1 mF", u.CAPACITANCE, "1 millifarad", "farad"),
    ("4.7 uF", u.CAPACITANCE, "4.7 microfarad", "farad"),
    ("10 Mohm", u.RESISTANCE, "10 megaohm", "ohm"),
    ("3 kohm", u.RESISTANCE, "3 kiloohm", "ohm"),
    ("2.0 mm", u.LENGTH, "2 millimeter", "meter"),
    ("2000 m", u.LENGTH, "2000 meter", "meter"),
    ("20 kA", u.CURRENT, "20 kiloampere", "ampere"),
    ("50 J", u.ENERGY, "50 joule", "joule"),
    ("1.5 kJ", u.ENERGY, "1.5 kilojoule", "joule"),
])
def test_parse_matches_pint(text, dim, ref_text, ref_unit):
    expected = REF.Quantity(ref_text).to(ref_unit).magnitude
    assert u.parse_quantity(text, dim, "f") == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("prefix, factor", sorted(SI_PREFIX.items()))
def test_prefixes_follow_si_brochure(prefix, factor):
    assert u.parse_quantity(f"3 {prefix}V", u.VOLTAGE) == pytest.approx(3 * factor, rel=1e-12)


def test_micro_sign_and_ohm_sign():
    assert u.parse_quantity("4.7 µF", u.CAPACITANCE) == pytest.approx(4.7e-6)
    assert u.parse_quantity("3 kΩ", u.RESISTANCE) == pytest.approx(3000)
    # The Unicode Standard, code chart 2100 (Letterlike Symbols): U+2126 OHM SIGN, canonically
    # equivalent to U+03A9 GREEK CAPITAL LETTER OMEGA; both are typed for ohms
    assert u.parse_quantity("3 k\u2126", u.RESISTANCE) == pytest.approx(3000)
    assert u.parse_quantity("3 k\u03a9", u.RESISTANCE) == pytest.approx(3000)


@pytest.mark.parametrize("text, words", [
    ("2 kA", "'2 kA' is a current; this field needs a voltage"),
    ("5 J", "is an energy; this field needs a voltage"),
    ("", "is empty"),
    ("   ", "is empty"),
    ("nan V", "not a finite voltage"),
    ("inf V", "not a finite voltage"),
    ("-5 V", "is negative"),
    ("volts please", "is not a quantity this field understands"),
    ("12", "has no unit"),
])
def test_rejections_name_the_field(text, words):
    with pytest.raises(InvalidInput) as err:
        u.parse_quantity(text, u.VOLTAGE, "circuit.voltage")
    problem = err.value.problems[0]
    assert problem.path == "circuit.voltage"
    assert words in problem.message


def test_bare_number_takes_documented_default_unit():
    assert u.parse_quantity(2000, u.LENGTH, "altitude", default_unit="m") == 2000.0
    assert u.parse_quantity("30", u.TIME, "duration", default_unit="s") == 30.0
    with pytest.raises(InvalidInput):
        u.parse_quantity(2000, u.LENGTH, "altitude")


def test_zero_refused_where_it_makes_no_sense():
    with pytest.raises(InvalidInput, match="must be more than zero"):
        u.parse_quantity("0 ohm", u.RESISTANCE, "r", allow_zero=False)


@pytest.mark.parametrize("value, dim", [
    (2000.0, u.VOLTAGE), (4.7e-6, u.CAPACITANCE), (0.02, u.RESISTANCE), (1e7, u.RESISTANCE),
    (0.002, u.LENGTH), (3100.0, u.LENGTH), (2e4, u.CURRENT), (0.5, u.TIME), (1.5e-3, u.ENERGY),
])
def test_format_parses_back(value, dim):
    text = u.format_quantity(value, dim)
    assert math.isclose(u.parse_quantity(text, dim), value, rel_tol=1e-9)


def test_format_reads_like_the_trade():
    assert u.format_quantity(2000, u.VOLTAGE) == "2 kV"
    assert u.format_quantity(0.5, u.RESISTANCE) == "0.5 ohm"  # not "500 mohm"
    assert u.format_quantity(1e7, u.RESISTANCE) == "10 Mohm"
    assert u.format_quantity(0.002, u.LENGTH) == "2 mm"
