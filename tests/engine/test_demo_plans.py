"""The demo plans against the demo fleet, answered as a careful technician would."""

from datetime import date
from pathlib import Path

import pytest

from registry.engine.evaluate import evaluate
from registry.formats.fleet import fleet_from_file
from registry.plans import load_plan
from registry.report import exit_code

ROOT = Path(__file__).resolve().parents[2] / "seeddata"
DAY = date(2026, 12, 2)


@pytest.fixture(scope="module")
def fleet():
    return fleet_from_file(ROOT / "fleet.yaml")


def run(fleet, name):
    return evaluate(load_plan(ROOT / "plans" / f"{name}.yaml", on=DAY), fleet)


def verdict(result, tag, mode):
    return next(s for s in result.setups if s.instrument == tag and s.mode == mode)


def test_mains_panel(fleet):
    r = run(fleet, "mains-panel")
    kx7 = verdict(r, "SY-0005", "vac")  # a KX-7 at the yard
    assert kx7.accessories == ("LD-0010", "PR-0010")
    # Leads left in its A socket put its 17 kA fuse F1 across 480 V / 20 mohm = 24 kA
    # prospective (Ohm's law): foreseeable misuse (IEC 61010-2-033), a caution; and proving
    # dead with a multimeter is a caution too (a purpose-built two-pole tester is preferred;
    # common practice, no source).
    assert kx7.verdict == "conditional"
    cautions = {f.check: f for f in kx7.findings if f.status == "caution"}
    assert set(cautions) == {"misuse", "proving-dead"}
    f = cautions["misuse"]
    assert "F1" in f.message and "24 kA" in f.message
    assert kx7.deciding.check == "misuse"  # the caution with a number decides
    assert verdict(r, "SY-0001", "vac").verdict == "conditional"  # C40 clamp meter
    assert verdict(r, "SY-0007", "vac").verdict == "unsuitable"  # KX-3: CAT III 300 V only
    # the CAT II leads and the bare 19 mm tips are never part of a setup that fits
    for s in r.setups:
        if s.verdict in ("suitable", "conditional"):
            assert "LD-0003" not in s.accessories and "PR-0002" not in s.accessories
    reasons = {e.unit: e.reason for e in r.excluded}
    assert reasons["NB-0003"] == "on-hold" and reasons["NB-0007"] == "verification-overdue"
    assert reasons["LD-0011"] == "on-hold" and reasons["SY-0002"] == "away"
    assert exit_code(r) == 0


def test_service_entrance(fleet):
    r = run(fleet, "service-entrance")
    assert r.derived.transient == 6000.0  # CAT IV, 300 V row
    # the KX-7's 17 kA fuse is short of the 50 kA fault level if the leads are left in its
    # A socket (IEC 61010-2-033 foreseeable misuse): conditional; the C40 has no such socket
    assert verdict(r, "SY-0005", "vac").verdict == "conditional"
    assert verdict(r, "SY-0001", "vac").verdict == "suitable"
    assert verdict(r, "SY-0007", "vac").verdict == "unsuitable"


def test_dc_link(fleet):
    r = run(fleet, "dc-link")
    assert verdict(r, "BL-0001", "vdc").verdict == "conditional"  # low-Z on the same jacks
    assert verdict(r, "BL-0001", "lowz").verdict == "unsuitable"
    assert verdict(r, "NB-0004", "vdc").verdict == "unsuitable"  # KX-3, 600 V
    assert not [s for s in r.setups if s.instrument == "NB-0006"]  # no BNC probe in the lab
    assert any("640 J" in c for c in r.cautions)


def test_dc_link_discharge(fleet):
    r = run(fleet, "dc-link-discharge")
    # the DR-1: 640 W at the start (V0**2/R = 800**2/1000, common practice (no source))
    # against its 400 W rating is a caution
    assert r.setups[0].instrument == "BL-0002" and r.setups[0].verdict == "conditional"
    # the DR-25: R C ln(V0/Vs) = 100e3 * 2e-3 * ln 16 = 554.5 s, longer than the 60 s hold
    assert verdict(r, "BL-0004", "discharge").verdict == "unsuitable"
    assert verdict(r, "BL-0001", "lowz").verdict == "unsuitable"
    assert "BL-0003" in {e.unit for e in r.excluded}


def test_hv_supply_through_the_divider(fleet):
    r = run(fleet, "hv-supply-divider")
    best = verdict(r, "BL-0001", "vdc")
    assert best.accessories == ("BL-0005",)
    assert best.verdict == "suitable"
    # the plan's comment: a 1000:1 divider shows 20 kV / 1000 = 20 V at the meter (read as
    # YAML 1.1, "1000:1" was the base-60 number 60001 and the meter was said to see 333 mV)
    assert any("20 kV down to 20 V at the instrument" in f.message for f in best.findings)
    # its recorded resistances agree with its ratio: no data caution
    assert not [f for f in best.findings if "recorded data" in f.message]
    for s in r.setups:
        if "BL-0005" not in s.accessories:
            assert s.verdict == "unsuitable"  # nothing else takes 20 kV


def test_motor_feeder_current(fleet):
    r = run(fleet, "motor-feeder-current")
    assert verdict(r, "SY-0001", "aac").verdict == "suitable"  # clamp jaw
    flex = [s for s in r.setups if s.accessories == ("CC-0001",) and s.instrument == "NB-0001"]
    assert flex and flex[0].verdict == "suitable"
    assert verdict(r, "NB-0001", "amp").verdict == "unsuitable"  # 10 A input, 60 A load
    kx3 = verdict(r, "NB-0004", "amp")
    assert kx3.verdict == "unsuitable"
    assert any(f.check == "misuse" and f.status == "fail" for f in kx3.findings)


def test_field_station_altitude(fleet):
    r = run(fleet, "field-station-socket")
    assert r.setups and all(s.verdict == "unsuitable" for s in r.setups)
    assert all(any(f.check == "altitude" and f.status == "fail" for f in s.findings)
               for s in r.setups)
    assert exit_code(r) == 1
