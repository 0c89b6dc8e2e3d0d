"""Check 11 on a unit's history (docs/rules.md, check 11; the rules are the project's own: common
practice, no source)."""

from datetime import date, datetime

from registry.engine.history import check_history, exclusion_reason
from registry.engine.spec import PastEvent, UnitState

WHEN = datetime(2026, 5, 1, 10, 0)


def unit(*events, **kw):
    return UnitState("NB-0100", "kx-7", verification_due=date(2027, 5, 1),
                     history=tuple(events), **kw)


def test_event_outside_rating_in_the_same_mode_is_a_caution_after_release():
    u = unit(PastEvent("ohm", "overvoltage", False, WHEN))
    assert [f.status for f in check_history(u, "ohm")] == ["caution"]
    assert check_history(u, "vdc") == []  # another mode's overstress is not this mode's


def test_unsized_stress_stays_a_caution_but_settled_damage_does_not():
    assert check_history(unit(PastEvent("vdc", "transient", None, WHEN)), "vdc")
    assert check_history(unit(PastEvent("vdc", "mechanical", None, WHEN)), "vdc") == []
    assert check_history(unit(PastEvent("vdc", "transient", True, WHEN)), "vdc") == []


def test_three_clamped_transients_wear_the_varistor():
    two = [PastEvent("vac", "transient", True, WHEN, clamp_conducted=True)] * 2
    assert check_history(unit(*two), "vac") == []
    three = check_history(unit(*two, PastEvent("vdc", "transient", True, WHEN, True)), "vac")
    assert [f.message for f in three if "clamped 3 transients" in f.message]


def test_exclusion_order():
    day = date(2026, 12, 2)
    assert exclusion_reason(unit(status="retired", open_hold=True), day) == "retired"
    assert exclusion_reason(unit(status="away"), day) == "away"
    assert exclusion_reason(unit(open_hold=True), day) == "on-hold"
    overdue = UnitState("NB-0101", "kx-7", verification_due=date(2026, 12, 1))
    assert exclusion_reason(overdue, day) == "verification-overdue"
    assert exclusion_reason(unit(), day) is None
