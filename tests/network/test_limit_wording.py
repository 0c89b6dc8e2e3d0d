"""How an element's stress against its limit is worded: as a ratio of the two, the way the
result's margins are, never as a percentage in the thousands."""

from registry.engine.network.limits import held
from registry.engine.quantity import ENERGY, VOLTAGE


def test_an_overstress_is_stated_as_times_the_limit():
    # 375.6 J into a 3 J varistor: 375.6 / 3 = 125.2 times (arithmetic)
    s = held("RV1", "discharge", "energy", 375.6, 3.0, ENERGY, "energy it absorbs", "energy",
             "datasheet")
    assert s.status == "fail"
    assert "125 times the limit" in s.message
    assert "%" not in s.message


def test_a_stress_within_its_limit_states_the_ratio_of_limit_to_stress():
    # 1.5 kV withstand against 1.2 kV: 1.5 / 1.2 = 1.25 (arithmetic)
    s = held("S1", "impulse", "voltage", 1200.0, 1500.0, VOLTAGE, "peak voltage", "withstand",
             "IEC 60664-1 Table F.2")
    assert s.status == "pass"
    assert "the limit is 1.25 times that" in s.message and "%" not in s.message
