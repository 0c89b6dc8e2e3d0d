"""The demo fleet's front ends (seeddata/fleet.yaml) give the findings its comments describe."""

from pathlib import Path

import pytest

from registry.engine.network import protection_path_findings, protection_path_report
from registry.formats.fleet import fleet_from_file

FLEET = Path(__file__).resolve().parents[2] / "seeddata" / "fleet.yaml"

# 230 V mains, CAT II: IEC 61010-2-030 expected impulse 2.5 kV for the 300 V row, 12 ohm.
CAT_II = dict(working_voltage=230.0, waveform="ac", source_impedance=0.2, impulse_peak=2500.0,
              generator_impedance=12.0, capacitance=None, safe_voltage=60.0, altitude=40.0,
              duration=60.0)


@pytest.fixture(scope="module")
def fleet():
    return fleet_from_file(FLEET)


def _of(findings, element, word):
    return [f for f in findings if f.subject.endswith(" " + element) and word in f.message]


@pytest.mark.parametrize("mode", ["vdc", "vac"])
def test_kx3_ohms_contact_ahead_of_the_limiter_fails_under_impulse(fleet, mode):
    m = fleet.models["kx-3"]
    fs = protection_path_findings(m, m.mode(mode), **CAT_II)
    s1 = _of(fs, "S1", "impulse")
    # 0.5 mm withstands 1.5 kV (IEC 60664-1 Table F.2); the open contact sees nearly 2.5 kV.
    assert [f.status for f in s1] == ["fail"]
    assert "0.5 mm" in s1[0].message
    # the varistor behind R1 keeps the measuring input within its 1 kV
    assert [f.status for f in _of(fs, "IN", "impulse")] == ["pass"]


def test_kx3_ohm_mode_on_mains_overloads_its_source_resistor(fleet):
    m = fleet.models["kx-3"]
    fs = protection_path_findings(m, m.mode("ohm"), misuse=True, **CAT_II)
    rs = _of(fs, "RS", "power")
    # 230 V across 1 kohm is 52.9 W (by hand, less the source's 0.2 ohm drop) against
    # 0.25 W: a misuse caution.
    assert rs[0].status == "caution" and (rs[0].available_value, rs[0].unit) == (0.25, "W")
    assert rs[0].required_value == pytest.approx(230.0 ** 2 / 1e3, rel=1e-3)
    rep = protection_path_report(m, m.mode("ohm"), **CAT_II)
    seen = next(s.seen for s in rep.stresses if s.element == "RS" and s.quantity == "power")
    assert seen == pytest.approx(230.0 ** 2 / 1000.0, rel=2e-3)


def test_kx7_contact_behind_limiter_sees_only_the_clamp_voltage(fleet):
    m = fleet.models["kx-7"]
    rep = protection_path_report(m, m.mode("vdc"), **CAT_II)
    s1 = next(s for s in rep.stresses if s.element == "S1" and s.scenario == "impulse")
    rv = next(s for s in rep.stresses if s.element == "RV1" and s.scenario == "impulse")
    sol_v = float(rv.message.split("clamps at ")[1].split(" kV")[0]) * 1e3
    # S1 (n2-n3, RL to COM) sits across RV1: it sees the clamp's voltage, not the impulse
    # less the drop in the generator's 12 ohm, which is what kx-3's contact sees.
    assert s1.seen == pytest.approx(sol_v, rel=1e-3)
    assert s1.status == "pass" and rv.status == "pass"


def test_kx7_lowz_trips_its_ptc_and_states_it(fleet):
    m = fleet.models["kx-7"]
    fs = protection_path_findings(m, m.mode("lowz"), **CAT_II)
    pt = _of(fs, "PT1", "max_voltage")
    assert pt and "trips after about" in pt[0].message
    cons = [f for f in fs if f.check == "input-consistency"]
    # R1 + PT1 + RL = 1 k + 1 k + 600 ohm = 2.6 kohm as stated
    assert [f.status for f in cons] == ["pass"]


def test_readme_claims_on_the_distribution_board(fleet):
    """What the README says of the demo front ends on the 480 V / 277 V CAT III board:
    the KX-3's varistor (max_ac 300 V, from the demo data) fails in steady state; the KX-7's
    elements all pass in vac."""
    plan = dict(working_voltage=480.0, waveform="ac", source_impedance=0.02,
                impulse_peak=4000.0,  # IEC 61010-2-030 Table 102, CAT III, 300 V row
                generator_impedance=2.0, capacitance=None, safe_voltage=30.0, altitude=120.0,
                duration=30.0)
    kx3 = fleet.models["kx-3"]
    rv1 = [f for f in protection_path_findings(kx3, kx3.mode("vac"), **plan)
           if f.subject.endswith("RV1") and "steady" in f.message]
    assert rv1 and rv1[0].status == "fail" and rv1[0].available_value == 300.0
    assert rv1[0].unit == "V" and rv1[0].basis == "rms" and rv1[0].required_value > 300.0
    kx7 = fleet.models["kx-7"]
    statuses = {f.status for f in protection_path_findings(kx7, kx7.mode("vac"), **plan)}
    assert statuses <= {"pass", "not-run"}


def test_readme_claim_kx7_lowz_discharge(fleet):
    """2 mF at 800 V through the KX-7 in low-Z: the PTC trips early and R1 stays within its
    pulse energy (the check that fails this setup is the mode's 20 J rating, check 9)."""
    kx7 = fleet.models["kx-7"]
    fs = protection_path_findings(kx7, kx7.mode("lowz"), working_voltage=800.0, waveform="dc",
                                  source_impedance=None, impulse_peak=None,
                                  generator_impedance=None, capacitance=2e-3, safe_voltage=50.0,
                                  altitude=40.0, duration=60.0)
    discharge = [f for f in fs if "discharge" in f.message]
    assert any("trips after" in f.message for f in discharge if f.subject.endswith("PT1"))
    r1 = [f for f in discharge if f.subject.endswith("R1")]
    assert r1 and r1[0].status == "pass"
