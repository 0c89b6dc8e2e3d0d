"""Builders of an invented lab's models for the engine tests (makers and models are made up)."""

from __future__ import annotations

from datetime import date

from registry.engine.spec import (Circuit, Fleet, Fuse, Mode, ModelSpec, Plan, Rating,
                                  UnitState)

JOB_DAY = date(2026, 6, 1)
DUE = date(2027, 1, 1)


METER_RATINGS = (Rating("III", 600.0),)
LEAD_RATINGS = (Rating("IV", 600.0), Rating("III", 1000.0))


def meter(key="mx-3", ratings=METER_RATINGS, *, amp_fuse=None, lowz=True,
          max_input=1000.0, **kw) -> ModelSpec:
    """A handheld multimeter of the invented maker Quillby Instruments. Its Amps fuse breaks
    50 kA, so leads left in the A socket on the panel plan (480 V / 20 mohm = 24 kA
    prospective) do not make a voltage setup conditional."""
    modes = [Mode("vac", "AC volts", "voltage", "ac", ("V", "COM"), input_resistance=10e6,
                  max_input=max_input),
             Mode("vdc", "DC volts", "voltage", "dc", ("V", "COM"), input_resistance=10e6,
                  max_input=max_input),
             Mode("ohm", "Resistance", "resistance", "both", ("V", "COM"),
                  input_resistance=1e6, max_input=max_input)]
    if lowz:
        modes.append(Mode("lowz", "Low-Z volts", "voltage", "both", ("V", "COM"),
                          input_resistance=2.6e3, max_input=600.0, max_duration=60.0))
    modes.append(Mode("amp", "Amps", "current", "both", ("A", "COM"), max_current=10.0,
                      input_resistance=0.01,
                      fuse=amp_fuse or Fuse(current=12.5, voltage=1000.0, voltage_dc=1000.0,
                                            breaking_capacity=50e3)))
    return ModelSpec(key=key, kind="multimeter", maker="Quillby Instruments",
                     name=f"{key.upper()} multimeter", ratings=tuple(ratings),
                     modes=tuple(modes), connectors=("4mm",), **kw)


def leads(key="tl-4", ratings=LEAD_RATINGS, **kw) -> ModelSpec:
    kw.setdefault("tip_exposure", 2e-3)
    return ModelSpec(key=key, kind="test-leads", maker="Quillby Instruments",
                     ratings=tuple(ratings), connector="4mm", connectors=("tip-2mm",), **kw)


def unit(tag, model, **kw) -> UnitState:
    kw.setdefault("verification_due", DUE)
    kw.setdefault("site", "North bench")
    return UnitState(tag=tag, model=model, **kw)


def fleet_of(models, units) -> Fleet:
    return Fleet(models={m.key: m for m in models}, units=tuple(units))


def panel_plan(**kw) -> Plan:
    """A 480 V / 277 V distribution board, CAT III, 60 Hz."""
    circuit = dict(supply="mains", category="III", waveform="ac", voltage=480.0,
                   voltage_to_earth=277.0, frequency=60.0, source_impedance=0.02)
    circuit.update(kw.pop("circuit", {}))
    kw.setdefault("task", "measure-voltage")
    kw.setdefault("on", JOB_DAY)
    kw.setdefault("site", "North bench")
    kw.setdefault("altitude", 40.0)
    return Plan(circuit=Circuit(**circuit), **kw)
