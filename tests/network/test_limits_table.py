"""The per-scenario limits as one table: every element type has its steady-state handler, and
the handlers shared by the scenarios (an open switch, a maximum voltage) are one function each,
worded and held to its table by the scenario."""

from registry.engine.network import limits
from registry.engine.spec import ELEMENT_PARAMS
from registry.standards import clearance

SCENARIOS = ("steady", "impulse", "discharge")


def test_every_element_type_is_held_in_the_steady_state():
    # every element type a front end may hold is stressed by the working voltage
    assert set(limits.HANDLERS) == set(SCENARIOS)
    assert set(limits.HANDLERS["steady"]) == set(ELEMENT_PARAMS)
    for table in limits.HANDLERS.values():
        assert set(table) <= set(ELEMENT_PARAMS)


def test_shared_handlers_are_written_once():
    assert {limits.HANDLERS[s]["switch"] for s in SCENARIOS} == {limits._open_switch}
    assert {limits.HANDLERS[s]["input"] for s in SCENARIOS} == {limits._max_voltage}


def test_an_open_contact_is_held_to_the_table_its_scenario_asks():
    # The same 2 mm gap at sea level: an impulse is held to IEC 60664-1 Table F.2 (case A),
    # the steady state and the discharge to Table F.8 (steady-state voltages).
    gap = {"gap": 2e-3}
    impulse, _, src_i = limits.gap_limit(gap, 0.0, "impulse")
    steady, _, src_s = limits.gap_limit(gap, 0.0, "steady")
    assert impulse == clearance.gap_withstand(2e-3, 0.0) and "Table F.2" in src_i
    assert steady == clearance.gap_steady_withstand(2e-3, 0.0) and "Table F.8" in src_s
