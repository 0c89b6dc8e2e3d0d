"""Stored-energy hazard thresholds for capacitors.

Read: Lawrence Berkeley National Laboratory, Electrical Safety Program, "What does hazardous
mean" (electricalsafety.lbl.gov), from its Electrical Safety Manual Tables 2.2.13 (shock),
2.3.3 (arc flash/blast) and 2.3.5 (thermal), row "Capacitors".
Pure: SI floats (V, J, F).
"""

from __future__ import annotations

from dataclasses import dataclass

SOURCE = "LBNL Electrical Safety Manual, capacitor hazard thresholds (Tables 2.2.13, 2.3.3, 2.3.5)"

SHOCK_VOLTAGE = 100.0     # V, at or above          (Table 2.2.13: >= 100 V and >= 10 J)
SHOCK_ENERGY = 10.0       # J, at or above
ARC_VOLTAGE = 100.0       # V, at or above          (Table 2.3.3: >= 100 V and >= 10 kJ)
ARC_ENERGY = 10_000.0     # J, at or above
THERMAL_VOLTAGE = 100.0   # V, below                (Table 2.3.5: < 100 V and > 100 J)
THERMAL_ENERGY = 100.0    # J, above


def stored_energy(capacitance: float, voltage: float) -> float:
    """E = C*V**2/2: energy (J) in ``capacitance`` (F) charged to ``voltage`` (V)."""
    return 0.5 * capacitance * voltage * voltage


def capacitance_for(energy: float, voltage: float) -> float:
    """C = 2E/V**2 (F) for ``energy`` (J) at ``voltage`` (V > 0)."""
    if voltage <= 0:
        raise ValueError("voltage must be positive to find a capacitance from an energy")
    return 2.0 * energy / (voltage * voltage)


@dataclass(frozen=True)
class Hazard:
    kind: str  # shock, arc-flash, thermal
    threshold: str
    source: str


def hazards(voltage: float, energy: float) -> tuple[Hazard, ...]:
    """The hazards a capacitor at ``voltage`` (V) holding ``energy`` (J) presents."""
    out = []
    if voltage >= SHOCK_VOLTAGE and energy >= SHOCK_ENERGY:
        out.append(Hazard("shock", ">= 100 V and >= 10 J", SOURCE))
    if voltage >= ARC_VOLTAGE and energy >= ARC_ENERGY:
        out.append(Hazard("arc-flash", ">= 100 V and >= 10 kJ", SOURCE))
    if voltage < THERMAL_VOLTAGE and energy > THERMAL_ENERGY:
        out.append(Hazard("thermal", "< 100 V and > 100 J", SOURCE))
    return tuple(out)
