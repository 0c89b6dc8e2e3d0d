"""Frozen, validated specs: what the engine knows of a model, a unit and a job plan.

Every quantity is an SI float in its canonical unit (V, A, ohm, F, J, W, s, m, Hz) or ``None``
when the datasheet or the plan does not give it. ``None`` never means zero: a check that needs
a missing instrument value reports ``unknown``, one that needs a missing plan value ``not-run``.

The store builds these from the database and the file formats build them from text; the engine
takes them as they are and touches neither.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from datetime import date, datetime

from .quantity import (CAPACITANCE, CURRENT, ENERGY, FREQUENCY, I2T, LENGTH, POWER, RESISTANCE,
                       TIME, VOLTAGE, Dimension, bound_problem)

# -- enumerations (the names the files, the database and the CLI share) -----------------------

# The one list of measurement categories, lowest first: IEC 61010-1 measurement categories
# CAT II < CAT III < CAT IV. Their order (engine/rules.py: category_rank, categories_at_least),
# the store's filters and the web forms all come from it; "none" is not for mains.
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

# Parameters each front-end element type may carry (the fleet format's ``front_end``), all SI
# floats.
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
# The dimension of each front-end parameter, for parsing, writing back and the bounds.
ELEMENT_PARAM_DIMS: dict[str, Dimension] = {
    "resistance": RESISTANCE, "power": POWER, "pulse_energy": ENERGY,
    "max_voltage": VOLTAGE, "hold_current": CURRENT, "trip_current": CURRENT,
    "max_current": CURRENT, "trip_time": TIME, "trip_time_current": CURRENT,
    "tripped_power": POWER, "varistor_voltage": VOLTAGE, "max_dc": VOLTAGE,
    "max_ac": VOLTAGE, "clamp_voltage": VOLTAGE, "clamp_current": CURRENT,
    "energy": ENERGY, "peak_current": CURRENT, "breakdown_voltage": VOLTAGE,
    "peak_power": POWER, "sparkover_dc": VOLTAGE, "sparkover_impulse": VOLTAGE,
    "arc_voltage": VOLTAGE, "holdover_voltage": VOLTAGE, "current": CURRENT,
    "voltage": VOLTAGE, "voltage_dc": VOLTAGE, "breaking_capacity": CURRENT,
    "i2t": I2T, "gap": LENGTH, "withstand": VOLTAGE,
}

DEFAULT_MAX_ALTITUDE = 2000.0  # m; IEC 61010-1 scope: equipment is rated up to 2000 m
DEFAULT_POLLUTION_DEGREE = 2  # IEC 61010-1 default environment
# s, the plan format's default: how long a setup stays connected unless the plan says
DEFAULT_DURATION = 60.0


class SpecError(ValueError):
    """A spec object built with values that contradict each other or the enumerations.

    ``problems`` holds (field path, message) pairs when the spec names its fields (a plan's
    ``circuit.voltage``); the file formats turn them into field problems as they are.
    """

    def __init__(self, message: str = "", *, problems: tuple[tuple[str, str], ...] = ()):
        self.problems = tuple(problems)
        super().__init__(message or "; ".join(f"{path}: {msg}" for path, msg in self.problems))


def _check_choice(value, choices, name):
    if value not in choices:
        raise SpecError(f"{name} must be one of {', '.join(choices)}, not {value!r}")


def _check_quantity(value, name, *, positive=False, dim: Dimension | str | None = None):
    """A quantity field: ``None``, or a finite non-negative (``positive``: more than zero)
    number within the bound of its field or ``dim`` (engine.quantity.bound_for)."""
    if value is None:
        return
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise SpecError(f"{name} must be a number in SI units, not {value!r}")
    if not math.isfinite(value) or value < 0 or (positive and value == 0):
        raise SpecError(f"{name} must be a finite {'positive' if positive else 'non-negative'}"
                        f" number, not {value!r}")
    problem = bound_problem(value, dim, name) if dim is not None else None
    if problem:
        raise SpecError(f"{name} {value!r} {problem}")


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
            _check_quantity(getattr(self, name), f"fuse.{name}", dim=ELEMENT_PARAM_DIMS[name])


@dataclass(frozen=True)
class Rating:
    category: str
    voltage: float
    transient: float | None = None  # stated impulse withstand, V peak (needed for 'none')
    max_altitude: float | None = None  # m

    def __post_init__(self):
        _check_choice(self.category, CATEGORIES, "rating.category")
        _check_quantity(self.voltage, "rating.voltage", positive=True, dim=VOLTAGE)
        _check_quantity(self.transient, "rating.transient", dim=VOLTAGE)
        _check_quantity(self.max_altitude, "rating.max_altitude", dim=LENGTH)


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
        for name, dim in (("input_resistance", RESISTANCE), ("input_capacitance", CAPACITANCE),
                          ("max_input", VOLTAGE), ("max_current", CURRENT),
                          ("max_duration", TIME), ("discharge_energy", ENERGY)):
            _check_quantity(getattr(self, name), f"mode.{name}", dim=dim)


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
            _check_quantity(value, f"element {self.id}.{name}", dim=ELEMENT_PARAM_DIMS[name])
        object.__setattr__(self, "params", tuple(sorted(self.params)))

    def get(self, name: str) -> float | None:
        for key, value in self.params:
            if key == name:
                return value
        return None

    @classmethod
    def of(cls, id: str, type: str, between, **params) -> Element:
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
        _check_quantity(self.max_altitude, "model.max_altitude", positive=True, dim=LENGTH)
        if self.pollution_degree not in (1, 2, 3, 4):
            raise SpecError("model.pollution_degree must be 1, 2, 3 or 4")
        for name, dim in (("current_rating", CURRENT), ("tip_exposure", LENGTH),
                          ("attenuation", "ratio"), ("required_load", RESISTANCE),
                          ("output_resistance", RESISTANCE), ("min_voltage", VOLTAGE),
                          ("resistance", RESISTANCE), ("energy", ENERGY), ("power", POWER),
                          ("max_voltage", VOLTAGE)):
            _check_quantity(getattr(self, name), f"model.{name}", dim=dim)
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

    def with_key(self, key: str) -> ModelSpec:
        """The same validated model under another key (a copy registered twice): only the key
        is new, so only the key is checked."""
        if not key:
            raise SpecError("model.key must not be empty")
        # what copy.copy makes of it (a new object holding the same fields), without its
        # generic reduce and reconstruct: a lab's copies of its models and the check's
        # stand-in keys make hundreds of these
        out = object.__new__(type(self))
        fields = out.__dict__
        fields.update(self.__dict__)
        fields["key"] = key
        return out


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


class UnitRows(Sequence):
    """A fleet's units kept as rows, as a fleet of many units is loaded: the distinct states
    (model, status, site, verification due, open hold) once each, as unit states checked by
    :class:`UnitState` itself, and per unit its tag, its state and its history. It is a
    sequence of :class:`UnitState` equal to the tuple of the same units; each is made when
    first asked for, so a check, which reads the states and the tags (``cohorts``), makes
    none for the units it does not hand out.

    ``states[i]`` is the state of the units whose ``state_of`` is ``i`` (its tag is the
    first of them and its history empty); ``histories`` holds the history of the units that
    have one, by position.
    """

    __slots__ = ("states", "tags", "state_of", "histories", "_units")

    def __init__(self, states: list[UnitState], tags: list[str], state_of: list[int],
                 histories: dict[int, tuple[PastEvent, ...]]):
        self.states, self.tags, self.state_of = states, tags, state_of
        self.histories = histories
        self._units: tuple[UnitState, ...] | None = None

    @classmethod
    def of(cls, units) -> UnitRows:
        """The rows of a sequence of unit states (already checked): equal to it."""
        if isinstance(units, UnitRows):
            return units
        index: dict[tuple, int] = {}
        states: list[UnitState] = []
        state_of: list[int] = []
        histories: dict[int, tuple[PastEvent, ...]] = {}
        for i, u in enumerate(units):
            k = (u.model, u.status, u.site, u.verification_due, u.open_hold)
            at = index.get(k)
            if at is None:
                at = index[k] = len(states)
                state = object.__new__(UnitState)
                state.__dict__.update(u.__dict__, history=())
                states.append(state)
            if u.history:
                histories[i] = u.history
            state_of.append(at)
        return cls(states, [u.tag for u in units], state_of, histories)

    def __len__(self) -> int:
        return len(self.tags)

    def _unit(self, i: int) -> UnitState:
        # the state's fields, checked when the state was made, with the unit's own tag and
        # history (as UnitState's __init__ would set them, without its per-field setattr)
        out = object.__new__(UnitState)
        d = out.__dict__
        d.update(self.states[self.state_of[i]].__dict__)
        d["tag"] = self.tags[i]
        if i in self.histories:
            d["history"] = self.histories[i]
        return out

    def units(self) -> tuple[UnitState, ...]:
        """Every unit, made once and kept."""
        if self._units is None:
            self._units = tuple(self._unit(i) for i in range(len(self.tags)))
        return self._units

    def __getitem__(self, i):
        if self._units is not None or isinstance(i, slice):
            return self.units()[i]
        return self._unit(range(len(self.tags))[i])

    def __iter__(self):
        return iter(self.units())

    def __eq__(self, other):
        if isinstance(other, (UnitRows, tuple, list)):
            return self.units() == tuple(other)
        return NotImplemented

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        return f"UnitRows({len(self.tags)} units, {len(self.states)} states)"


# -- job plans ---------------------------------------------------------------------------------

# The rules of a job plan: one function each for the circuit and the plan, returning every
# problem as (field path, message). The dataclasses below raise them; the plan format
# (registry/plans.py) reports them with the path as they are, so the two cannot disagree.
# The rules are common practice (no source) unless a comment says otherwise.

# Quantities of a circuit that must be more than zero: a working voltage of 0 V is no job, and
# a zero impedance, frequency, current or capacitance means nothing physical.
CIRCUIT_POSITIVE = ("voltage", "frequency", "transient", "source_impedance",
                    "prospective_current", "capacitance", "stored_energy", "current")
CIRCUIT_QUANTITIES = ("voltage", "voltage_to_earth") + CIRCUIT_POSITIVE[1:]
CIRCUIT_DIMENSIONS = {
    "voltage": VOLTAGE, "voltage_to_earth": VOLTAGE, "frequency": FREQUENCY,
    "transient": VOLTAGE, "source_impedance": RESISTANCE, "prospective_current": CURRENT,
    "capacitance": CAPACITANCE, "stored_energy": ENERGY, "current": CURRENT,
}


def _choice_problem(value, choices, path: str) -> list[tuple[str, str]]:
    if value is None:
        return [(path, f"is missing; give one of {', '.join(choices)}")]
    if value not in choices:
        return [(path, f"'{value}' is not one of {', '.join(choices)}")]
    return []


def _quantity_problem(value, path: str, *, positive: bool,
                      dim: Dimension | None = None) -> list[tuple[str, str]]:
    if value is None:
        return []
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        return [(path, f"must be a finite number in SI units, not {value!r}")]
    if value < 0:
        return [(path, "must not be negative")]
    if positive and value == 0:
        return [(path, "is zero; it must be more than zero")]
    problem = bound_problem(value, dim, path) if dim is not None else None
    if problem:
        return [(path, f"{value!r} {problem}")]
    return []


def circuit_problems(supply, waveform, voltage, category=None, **quantities
                     ) -> list[tuple[str, str]]:
    """Every problem of a circuit's fields, as (path, message): the enumerations, quantities
    that must be more than zero, a category for a mains circuit only (IEC 61010-1
    measurement categories apply to circuits connected to mains), no frequency on dc, and
    one of each pair that says the same thing twice (source impedance or prospective
    current, capacitance or stored energy)."""
    out = _choice_problem(supply, SUPPLIES, "circuit.supply")
    out += _choice_problem(waveform, PLAN_WAVEFORMS, "circuit.waveform")
    values = dict(quantities, voltage=voltage)
    for name in CIRCUIT_QUANTITIES:
        out += _quantity_problem(values.get(name), f"circuit.{name}",
                                 positive=name in CIRCUIT_POSITIVE,
                                 dim=CIRCUIT_DIMENSIONS[name])
    if voltage is None:
        out.append(("circuit.voltage", "is missing; give the highest working voltage between "
                                       "the probed points, such as '480 V'"))
    if supply == "mains":
        if category is None:
            out.append(("circuit.category", "is missing; a mains circuit needs its measurement "
                                            f"category ({', '.join(MAINS_CATEGORIES)})"))
        elif category not in MAINS_CATEGORIES:
            out.append(("circuit.category",
                        f"'{category}' is not one of {', '.join(MAINS_CATEGORIES)}"))
    elif supply == "isolated" and category is not None:
        out.append(("circuit.category", "applies to mains circuits only; an isolated circuit "
                                        "has no measurement category"))
    if waveform == "dc" and values.get("frequency") is not None:
        out.append(("circuit.frequency", "a dc circuit has no frequency"))
    if values.get("source_impedance") is not None and values.get("prospective_current") is not None:
        out.append(("circuit.prospective_current",
                    "give source_impedance or prospective_current, not both"))
    if values.get("capacitance") is not None and values.get("stored_energy") is not None:
        out.append(("circuit.stored_energy", "give capacitance or stored_energy, not both"))
    return out


def plan_problems(task, circuit: Circuit | None, *, altitude=0.0, duration=DEFAULT_DURATION,
                  discharge_to=None) -> list[tuple[str, str]]:
    """Every problem of a plan's own fields, as (path, message), given its circuit (``None``
    when the circuit itself is not valid: the rules that read it are left out): the task, the
    quantities, what a task needs of the circuit (the current to measure, the capacitance to
    discharge) and what applies to one task only."""
    out = _choice_problem(task, TASKS, "task")
    out += _quantity_problem(altitude, "site.altitude", positive=False, dim=LENGTH)
    out += _quantity_problem(duration, "duration", positive=True, dim=TIME)
    out += _quantity_problem(discharge_to, "discharge_to", positive=False, dim=VOLTAGE)
    if task is not None and task != "discharge" and discharge_to is not None:
        out.append(("discharge_to", "applies to discharge tasks only"))
    if circuit is None:
        return out
    if (discharge_to is not None and circuit.voltage is not None
            and discharge_to >= circuit.voltage):
        out.append(("discharge_to", "must be below the circuit's voltage"))
    if task == "measure-current" and circuit.current is None:
        out.append(("circuit.current", "a measure-current task needs the current, such as "
                                       "'40 A'"))
    if task is not None and task != "measure-current" and circuit.current is not None:
        out.append(("circuit.current", "applies to measure-current tasks only"))
    if task == "discharge" and circuit.capacitance is None and circuit.stored_energy is None:
        out.append(("circuit.capacitance", "a discharge task needs the capacitance (or "
                                           "circuit.stored_energy)"))
    return out


def _raise(problems: list[tuple[str, str]]):
    if problems:
        raise SpecError(problems=tuple(problems))


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
        _raise(circuit_problems(self.supply, self.waveform, self.voltage, self.category,
                                **{k: getattr(self, k) for k in CIRCUIT_QUANTITIES[1:]}))

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
        if not isinstance(self.circuit, Circuit):
            raise SpecError(problems=(("circuit", "is missing; give the circuit's supply, "
                                                  "waveform and voltage"),))
        _raise(plan_problems(self.task, self.circuit, altitude=self.altitude,
                             duration=self.duration, discharge_to=self.discharge_to))


@dataclass(frozen=True)
class Fleet:
    """What a check runs against: the models by key and the units."""

    models: dict[str, ModelSpec] = field(default_factory=dict)
    units: Sequence[UnitState] = ()  # a tuple, or the rows a fleet is loaded as (UnitRows)
