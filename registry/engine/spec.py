"""Frozen, validated specs: what the engine knows of a model, a unit and a job plan.

Every quantity is an SI float in its canonical unit (V, A, ohm, F, J, W, s, m, Hz) or ``None``
when the datasheet or the plan does not give it. ``None`` never means zero: a check that needs
a missing instrument value reports ``unknown``, one that needs a missing plan value ``not-run``.

The store builds these from the database and the file formats build them from text; the engine
takes them as they are and touches neither.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import date, datetime

# -- enumerations (the names the files, the database and the CLI share) -----------------------

CATEGORIES = ("II", "III", "IV", "none")
MAINS_CATEGORIES = CATEGORIES[:3]  # a mains circuit has one of these; "none" is not for mains
INSTRUMENT_KINDS = ("multimeter", "clamp-meter", "voltage-tester", "insulation-tester",
                    "oscilloscope", "discharge-tool")
ACCESSORY_KINDS = ("test-leads", "probe", "clip", "hv-divider", "current-clamp")
KINDS = INSTRUMENT_KINDS + ACCESSORY_KINDS
LEAD_KINDS = ("test-leads", "hv-divider", "current-clamp")
TIP_KINDS = ("probe", "clip")
MEASURES = ("voltage", "current", "resistance", "continuity", "capacitance", "diode",
            "frequency")
WAVEFORMS = ("dc", "ac", "both")
ELEMENT_TYPES = ("resistor", "ptc", "varistor", "tvs", "gas-tube", "fuse", "switch", "input")
UNIT_STATUSES = ("in-service", "on-hold", "away", "retired")
EVENT_KINDS = ("overvoltage", "transient", "discharge", "fuse-open", "mechanical", "other")
SYMPTOMS = ("arc", "smell", "heat", "visible-damage", "fuse-open", "wrong-reading", "none")
INSPECTION_RESULTS = ("pass", "repaired", "fail")
TASKS = ("measure-voltage", "verify-absence", "measure-current", "measure-resistance",
         "discharge")
SUPPLIES = ("mains", "isolated")
PLAN_WAVEFORMS = ("ac", "dc")
EVENT_WAVEFORMS = PLAN_WAVEFORMS  # an event's waveform, when it was logged

# Parameters each front-end element type may carry (SPEC §3), all SI floats.
ELEMENT_PARAMS: dict[str, tuple[str, ...]] = {
    "resistor": ("resistance", "power", "pulse_energy", "max_voltage"),
    "ptc": ("resistance", "hold_current", "trip_current", "max_voltage", "max_current",
            "trip_time", "trip_time_current", "tripped_power"),
    "varistor": ("varistor_voltage", "max_dc", "max_ac", "clamp_voltage", "clamp_current",
                 "energy", "peak_current"),
    "tvs": ("breakdown_voltage", "clamp_voltage", "clamp_current", "peak_power"),
    "gas-tube": ("sparkover_dc", "sparkover_impulse", "arc_voltage", "holdover_voltage"),
    "fuse": ("current", "voltage", "voltage_dc", "breaking_capacity", "i2t"),
    "switch": ("gap", "withstand"),
    "input": ("resistance", "max_voltage"),
}

DEFAULT_MAX_ALTITUDE = 2000.0  # m; IEC 61010-1 scope: equipment is rated up to 2000 m
DEFAULT_POLLUTION_DEGREE = 2  # IEC 61010-1 default environment
DEFAULT_DURATION = 60.0  # s, SPEC §4: how long a setup stays connected unless the plan says


class SpecError(ValueError):
    """A spec object built with values that contradict each other or the enumerations."""


def _check_choice(value, choices, name):
    if value not in choices:
        raise SpecError(f"{name} must be one of {', '.join(choices)}, not {value!r}")


def _check_quantity(value, name, *, positive=False):
    if value is None:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise SpecError(f"{name} must be a number in SI units, not {value!r}")
    if not math.isfinite(value) or value < 0 or (positive and value == 0):
        raise SpecError(f"{name} must be a finite {'positive' if positive else 'non-negative'}"
                        f" number, not {value!r}")


# -- model specs -------------------------------------------------------------------------------

@dataclass(frozen=True)
class Fuse:
    current: float | None = None
    voltage: float | None = None
    voltage_dc: float | None = None
    breaking_capacity: float | None = None
    i2t: float | None = None

    def __post_init__(self):
        for name in ("current", "voltage", "voltage_dc", "breaking_capacity", "i2t"):
            _check_quantity(getattr(self, name), f"fuse.{name}")


@dataclass(frozen=True)
class Rating:
    category: str
    voltage: float
    transient: float | None = None  # stated impulse withstand, V peak (needed for 'none')
    max_altitude: float | None = None  # m

    def __post_init__(self):
        _check_choice(self.category, CATEGORIES, "rating.category")
        _check_quantity(self.voltage, "rating.voltage", positive=True)
        _check_quantity(self.transient, "rating.transient")
        _check_quantity(self.max_altitude, "rating.max_altitude")


@dataclass(frozen=True)
class Mode:
    key: str
    label: str
    measures: str
    waveform: str = "both"
    terminals: tuple[str, ...] = ()  # two names, or () for a clamp-jaw mode
    input_resistance: float | None = None  # ohm
    input_capacitance: float | None = None  # F
    max_input: float | None = None  # V, overload rating in this mode
    max_current: float | None = None  # A
    max_duration: float | None = None  # s
    discharge_energy: float | None = None  # J the mode may absorb per discharge
    clamp: bool = False
    fuse: Fuse | None = None
    closes: tuple[str, ...] = ()  # front-end switches closed in this mode

    def __post_init__(self):
        if not self.key:
            raise SpecError("mode.key must not be empty")
        _check_choice(self.measures, MEASURES, "mode.measures")
        _check_choice(self.waveform, WAVEFORMS, "mode.waveform")
        if self.clamp:
            if self.terminals:
                raise SpecError("a clamp mode has no terminals")
        elif len(self.terminals) != 2 or self.terminals[0] == self.terminals[1]:
            raise SpecError("mode.terminals must name two different terminals")
        for name in ("input_resistance", "input_capacitance", "max_input", "max_current",
                     "max_duration", "discharge_energy"):
            _check_quantity(getattr(self, name), f"mode.{name}")


@dataclass(frozen=True)
class Element:
    """One front-end protection element between two nodes; ``params`` holds SI floats."""

    id: str
    type: str
    between: tuple[str, str]
    params: tuple[tuple[str, float], ...] = ()  # sorted (name, value) pairs: hashable

    def __post_init__(self):
        _check_choice(self.type, ELEMENT_TYPES, "element.type")
        if len(self.between) != 2 or self.between[0] == self.between[1]:
            raise SpecError(f"element {self.id}: between must name two different nodes")
        allowed = ELEMENT_PARAMS[self.type]
        for name, value in self.params:
            if name not in allowed:
                raise SpecError(f"element {self.id}: a {self.type} has no parameter {name}")
            _check_quantity(value, f"element {self.id}.{name}")
        object.__setattr__(self, "params", tuple(sorted(self.params)))

    def get(self, name: str) -> float | None:
        for key, value in self.params:
            if key == name:
                return value
        return None

    @classmethod
    def of(cls, id: str, type: str, between, **params) -> "Element":
        return cls(id, type, tuple(between),
                   tuple((k, v) for k, v in params.items() if v is not None))


@dataclass(frozen=True)
class ModelSpec:
    """A model (the type shared by many units), with everything the checks read."""

    key: str
    kind: str
    maker: str = ""
    name: str = ""
    ratings: tuple[Rating, ...] = ()
    modes: tuple[Mode, ...] = ()
    front_end: tuple[Element, ...] = ()
    connectors: tuple[str, ...] = ()
    integrated_leads: bool = False
    max_altitude: float = DEFAULT_MAX_ALTITUDE
    pollution_degree: int = DEFAULT_POLLUTION_DEGREE
    # accessories
    connector: str | None = None
    current_rating: float | None = None  # A
    tip_exposure: float | None = None  # m of exposed metal at a probe tip
    fuse: Fuse | None = None  # fused leads
    attenuation: float | None = None  # ratio, e.g. 1000 for 1000:1
    required_load: float | None = None  # ohm the divider is calibrated into
    output_resistance: float | None = None  # ohm
    min_voltage: float | None = None  # V, bottom of a divider's specified range
    # discharge tools
    resistance: float | None = None  # ohm
    energy: float | None = None  # J per discharge
    power: float | None = None  # W
    max_voltage: float | None = None  # V

    def __post_init__(self):
        if not self.key:
            raise SpecError("model.key must not be empty")
        _check_choice(self.kind, KINDS, "model.kind")
        _check_quantity(self.max_altitude, "model.max_altitude", positive=True)
        if self.pollution_degree not in (1, 2, 3, 4):
            raise SpecError("model.pollution_degree must be 1, 2, 3 or 4")
        for name in ("current_rating", "tip_exposure", "attenuation", "required_load",
                     "output_resistance", "min_voltage", "resistance", "energy", "power",
                     "max_voltage"):
            _check_quantity(getattr(self, name), f"model.{name}")
        if self.attenuation is not None and self.attenuation < 1:
            raise SpecError("model.attenuation is a ratio of at least 1 (1000 for 1000:1)")
        keys = [m.key for m in self.modes]
        if len(set(keys)) != len(keys):
            raise SpecError(f"model {self.key}: mode keys must be unique")
        ids = [e.id for e in self.front_end]
        if len(set(ids)) != len(ids):
            raise SpecError(f"model {self.key}: front-end element ids must be unique")
        switches = {e.id for e in self.front_end if e.type == "switch"}
        for m in self.modes:
            for s in m.closes:
                if s not in switches:
                    raise SpecError(f"model {self.key}: mode {m.key} closes {s}, which is not "
                                    "a switch of its front end")

    @property
    def is_instrument(self) -> bool:
        return self.kind in INSTRUMENT_KINDS

    def mode(self, key: str) -> Mode | None:
        return next((m for m in self.modes if m.key == key), None)


# -- units and their history -------------------------------------------------------------------

@dataclass(frozen=True)
class PastEvent:
    """What the history check needs of one logged event."""

    mode: str | None
    kind: str
    within_rating: bool | None
    occurred_at: datetime | None = None
    clamp_conducted: bool = False
    waveform: str | None = None  # ac or dc; None when not logged

    def __post_init__(self):
        _check_choice(self.kind, EVENT_KINDS, "event.kind")
        if self.waveform is not None:
            _check_choice(self.waveform, EVENT_WAVEFORMS, "event.waveform")


@dataclass(frozen=True)
class UnitState:
    """One physical unit as the engine sees it: where it is, its state, its history."""

    tag: str
    model: str  # model key
    status: str = "in-service"
    site: str | None = None
    verification_due: date | None = None
    open_hold: bool = False
    history: tuple[PastEvent, ...] = ()

    def __post_init__(self):
        _check_choice(self.status, UNIT_STATUSES, "unit.status")


# -- job plans ---------------------------------------------------------------------------------

@dataclass(frozen=True)
class Circuit:
    supply: str
    waveform: str
    voltage: float  # V, rms for ac
    category: str | None = None  # mains only
    voltage_to_earth: float | None = None  # V; None means: the working voltage
    frequency: float | None = None  # Hz, ac only
    transient: float | None = None  # V peak
    source_impedance: float | None = None  # ohm
    prospective_current: float | None = None  # A
    capacitance: float | None = None  # F
    stored_energy: float | None = None  # J
    current: float | None = None  # A, measure-current only

    def __post_init__(self):
        _check_choice(self.supply, SUPPLIES, "circuit.supply")
        _check_choice(self.waveform, PLAN_WAVEFORMS, "circuit.waveform")
        _check_quantity(self.voltage, "circuit.voltage")
        for name in ("voltage_to_earth", "frequency", "transient", "source_impedance",
                     "prospective_current", "capacitance", "stored_energy", "current"):
            _check_quantity(getattr(self, name), f"circuit.{name}")
        if self.supply == "mains":
            if self.category is None:
                raise SpecError("circuit.category: a mains circuit needs a measurement category")
            _check_choice(self.category, MAINS_CATEGORIES, "circuit.category")
        elif self.category is not None:
            raise SpecError("circuit.category applies to mains circuits only")
        if self.waveform == "dc" and self.frequency is not None:
            raise SpecError("circuit.frequency: a dc circuit has no frequency")
        if self.source_impedance is not None and self.prospective_current is not None:
            raise SpecError("circuit: give source_impedance or prospective_current, not both")
        if self.capacitance is not None and self.stored_energy is not None:
            raise SpecError("circuit: give capacitance or stored_energy, not both")

    @property
    def to_earth(self) -> float:
        return self.voltage if self.voltage_to_earth is None else self.voltage_to_earth


@dataclass(frozen=True)
class Plan:
    task: str
    circuit: Circuit
    title: str = ""
    site: str | None = None
    altitude: float = 0.0  # m
    wet: bool = False
    duration: float = DEFAULT_DURATION  # s
    discharge_to: float | None = None  # V; None means the dc hazardous-live level
    on: date | None = None  # the day of the job, for verification dates

    def __post_init__(self):
        _check_choice(self.task, TASKS, "task")
        _check_quantity(self.altitude, "site.altitude")
        _check_quantity(self.duration, "duration", positive=True)
        _check_quantity(self.discharge_to, "discharge_to")
        if self.task == "measure-current" and self.circuit.current is None:
            raise SpecError("circuit.current: a measure-current task needs the current")
        if self.task == "discharge":
            if self.circuit.capacitance is None and self.circuit.stored_energy is None:
                raise SpecError("circuit.capacitance: a discharge task needs the capacitance "
                                "or the stored energy")
        elif self.discharge_to is not None:
            raise SpecError("discharge_to applies to discharge tasks only")


@dataclass(frozen=True)
class Fleet:
    """What a check runs against: the models by key and the units."""

    models: dict[str, ModelSpec] = field(default_factory=dict)
    units: tuple[UnitState, ...] = ()
