"""Accessories are chosen where the instrument is kept (they travel to the job together), and a
pairing across sites is flagged: common practice (no source). The demo fleet keeps LD-4 leads
and guarded 2 mm tips at the substation yard (LD-0010, PR-0010) and at the battery lab (LD-0020,
PR-0020); the field station has LD-4 leads (LD-0030) but no guarded 2 mm tips
(seeddata/fleet.yaml)."""

from registry.services.checks import run_check
from registry.demo import demo_fleet_path
from registry.formats.fleet import fleet_from_file
from registry.plans import load_plan
from registry.seeddata import __file__ as seed_init
from pathlib import Path

PLAN = Path(seed_init).parent / "plans" / "mains-panel.yaml"


def _setups():
    result = run_check(load_plan(PLAN), fleet_from_file(demo_fleet_path()))
    return {(s.instrument, s.mode): s for s in result.setups}


def test_accessories_come_from_the_instruments_site():
    s = _setups()[("BL-0001", "vac")]  # a KX-7 kept at the battery lab
    assert s.site == "Battery lab"
    assert s.accessories == ("LD-0020", "PR-0020") and s.cross_site == ()


def test_a_pairing_across_sites_is_flagged():
    s = _setups()[("CR-0001", "vac")]  # the field station's KX-7: its leads, but tips from afar
    assert s.accessories == ("LD-0030", "PR-0010")
    assert s.cross_site == ("PR-0010",)
