"""What a plan implies before any instrument is looked at: the plan's derived values.

Small functions on SI floats; :func:`derive` gathers them for one plan.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..standards import hazardous_live, impulse, stored_energy as se
from .spec import Plan

SQRT2 = math.sqrt(2.0)


def peak_of(voltage: float, waveform: str) -> float:
    """Peak (V) of a working voltage: sqrt(2)*V for a sinusoidal ac rms value, V for dc.
    Common practice (no source): a plan's ac voltage is the rms of a sine."""
    return voltage * SQRT2 if waveform == "ac" else voltage


def prospective_current(voltage: float, source_impedance: float) -> float:
    """Ipc = V / Zs (A): the current a bolted fault across the probed points would draw.
    Ohm's law; an ideal (zero-impedance) source gives an infinite current."""
    if source_impedance <= 0:
        return math.inf
    return voltage / source_impedance


def source_impedance_of(voltage: float, prospective: float) -> float:
    """Zs = V / Ipc (ohm), when a plan gives the prospective current instead."""
    if prospective <= 0:
        return math.inf
    return voltage / prospective


@dataclass(frozen=True)
class Derived:
    """A plan's derived values, SI floats; ``None`` where the plan does not give enough.

    transient            expected impulse, V peak (mains: the table; isolated: the plan's)
    transient_source     where it comes from
    generator_impedance  ohm, the impulse generator impedance of the standard for the category
    source_impedance     ohm
    prospective_current  A
    peak_voltage         V, peak of the working voltage
    capacitance          F
    energy               J stored in the capacitance at the peak voltage
    hazardous_live       V, the level for the plan's waveform (rms for ac)
    hazardous            the working voltage exceeds it
    safe_level           V, what a discharge must reach (the plan's discharge_to or the dc
                         hazardous-live level)
    """

    transient: float | None
    transient_source: str
    generator_impedance: float | None
    source_impedance: float | None
    prospective_current: float | None
    peak_voltage: float
    capacitance: float | None
    energy: float | None
    hazardous_live: float
    hazardous_live_source: str
    hazardous: bool
    safe_level: float
    safe_level_source: str

    def as_dict(self) -> dict:
        def clean(v):
            return None if isinstance(v, float) and not math.isfinite(v) else v
        return {"transient": self.transient, "transient_source": self.transient_source,
                "generator_impedance": self.generator_impedance,
                "source_impedance": clean(self.source_impedance),
                "prospective_current": clean(self.prospective_current),
                "peak_voltage": self.peak_voltage, "capacitance": self.capacitance,
                "energy": self.energy, "hazardous_live": self.hazardous_live,
                "hazardous_live_source": self.hazardous_live_source,
                "hazardous": self.hazardous, "safe_level": self.safe_level,
                "safe_level_source": self.safe_level_source}


def expected_transient(plan: Plan) -> tuple[float | None, str]:
    """The transient (V peak) the setup must withstand, and its source (docs/rules.md, check 3).

    Mains: the table's value for the category at the voltage to earth; a plan's own higher
    ``transient`` wins (a site survey may know worse), a lower one does not (the standard's
    value is the floor). Isolated: the plan's ``transient`` or ``None``.
    """
    c = plan.circuit
    if c.supply == "mains":
        assert c.category is not None  # Circuit refuses a mains circuit without a category
        table = impulse.expected_impulse(c.category, c.to_earth)
        if table is None:
            if c.transient is not None:
                return c.transient, "plan (circuit.transient); above the table's 1000 V row"
            return None, "above the 1000 V row of " + impulse.SOURCE
        if c.transient is not None and c.transient > table:
            return c.transient, "plan (circuit.transient), above " + impulse.SOURCE
        return table, impulse.SOURCE
    if c.transient is not None:
        return c.transient, "plan (circuit.transient)"
    return None, "the plan gives no transient (circuit.transient)"


def derive(plan: Plan) -> Derived:
    c = plan.circuit
    transient, transient_source = expected_transient(plan)
    gen: float | None
    if c.supply == "mains":
        assert c.category is not None  # Circuit refuses a mains circuit without a category
        gen = impulse.GENERATOR_IMPEDANCE[c.category]
    else:
        # No category, so no generator of the standard: the lowest impedance it uses (2 ohm)
        # is the stiffest, the cautious choice for a stated transient.
        gen = min(impulse.GENERATOR_IMPEDANCE.values()) if transient is not None else None
    zs, ipc = c.source_impedance, c.prospective_current
    if zs is not None:
        ipc = prospective_current(c.voltage, zs)
    elif ipc is not None:
        zs = source_impedance_of(c.voltage, ipc)
    peak = peak_of(c.voltage, c.waveform)
    cap, energy = c.capacitance, c.stored_energy
    if cap is not None:
        energy = se.stored_energy(cap, peak)
    elif energy is not None:
        cap = se.capacitance_for(energy, peak) if peak > 0 else None
    level, level_source = hazardous_live.plan_level(c.waveform, plan.wet)
    if plan.discharge_to is not None:
        safe, safe_source = plan.discharge_to, "plan (discharge_to)"
    else:
        safe, safe_source = hazardous_live.dc_level(plan.wet)
    return Derived(transient=transient, transient_source=transient_source,
                   generator_impedance=gen, source_impedance=zs, prospective_current=ipc,
                   peak_voltage=peak, capacitance=cap, energy=energy, hazardous_live=level,
                   hazardous_live_source=level_source, hazardous=c.voltage > level,
                   safe_level=safe, safe_level_source=safe_source)
