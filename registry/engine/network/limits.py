"""Every element's stress in each scenario held against its limit (docs/rules.md, check 10).

One :class:`ElementStress` per element, scenario and limit: what the element sees, what it
may take and where that limit comes from. A missing limit is ``unknown``; an element the
scenario does not stress at all (no current, no voltage: off the mode's path) gets no item.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from ...standards import clearance
from ..findings import CheckName, Status, StatusText, headroom
from ..quantity import CURRENT, ENERGY, POWER, VOLTAGE, format_quantity
from .devices import (I_REF, K_8_20, T2_8_20, impulse_clamp_energy, impulse_resistor_energy)
from .netlist import Netlist
from .scenarios import DischargeResult, ImpulseResult, SteadyResult

# Stresses below these are "not in this mode's path" (gmin-level leakage of the solver).
V_FLOOR = 1e-3  # V
I_FLOOR = 1e-9  # A

SRC_DATASHEET = "the element's datasheet rating (front-end data)"
SRC_VARISTOR = ("varistor datasheet rating; surge energy E = K*Vc*Ip*t2 with K = "
                f"{K_8_20:.3f} for the 8/20 us wave, t2 = 20 us (varistor makers' application "
                "notes)")
SRC_TVS = ("TVS datasheet peak pulse power (commonly rated for a 10/1000 us wave, longer than "
           "the 8/20 us wave here: conservative)")
SRC_RESISTOR_PULSE = ("resistor datasheet pulse energy; impulse energy Vp^2/R times the square "
                      "integral of the 1.2/50 us wave (IEC 60060-1 wave shape)")
SRC_GAP = f"{clearance.SOURCE}, altitude corrected by {clearance.ALTITUDE_SOURCE}"
SRC_STATED_GAP = (f"the switch's stated withstand, altitude corrected by "
                  f"{clearance.ALTITUDE_SOURCE}")
SRC_STEADY_GAP = f"{clearance.STEADY_SOURCE}, altitude corrected by {clearance.ALTITUDE_SOURCE}"
SRC_STEADY_STATED_GAP = (f"the switch's stated impulse withstand read as a gap in "
                         f"{clearance.SOURCE}, then {SRC_STEADY_GAP} (common practice, no "
                         "source)")
SRC_FUSE = "fuse datasheet rating (IEC 60127 / IEC 60269 breaking capacity and rated voltage)"
SRC_PRACTICE = "common practice (no source)"

SCENARIO_TEXT = {"steady": "steady state", "impulse": "impulse", "discharge": "discharge"}


@dataclass(frozen=True)
class ElementStress:
    """One element's stress against one limit in one scenario (SI floats)."""

    element: str | None  # None: about the mode as a whole
    scenario: str  # steady | impulse | discharge | consistency
    quantity: str  # voltage, current, power, energy, breaking capacity, ...
    status: Status | StatusText
    message: str  # the element, what it sees, what it may take
    source: str
    seen: float | None = None
    limit: float | None = None
    required: str = ""  # the text of ``seen``
    available: str = ""  # the text of ``limit``
    check: CheckName = CheckName.PROTECTION_PATH
    unit: str = ""  # of ``seen`` and ``limit``: "V", "A", "W", "J"
    basis: str = ""  # "rms" for an ac steady-state voltage or current

    @property
    def margin(self) -> float | None:
        if self.seen is None or self.limit is None:
            return None
        return headroom(self.limit, self.seen)


def _replace_message(item: ElementStress, message: str) -> ElementStress:
    return dataclasses.replace(item, message=message)


def _q(v, dim):
    return format_quantity(v, dim, 4)


def held(element: str, scenario: str, quantity: str, seen: float, limit: float | None,
         dim, what: str, limit_name: str, source: str, context: str = "",
         suffix: str = "") -> ElementStress:
    """A stress ``seen`` against ``limit`` (None: unknown). ``what``: e.g. "voltage across
    it"; ``limit_name``: the parameter, e.g. "max_voltage"."""
    where = f"{element}, {SCENARIO_TEXT.get(scenario, scenario)}{context}"
    seen_t = _q(seen, dim) + suffix
    basis = suffix.strip()
    if limit is None:
        return ElementStress(element, scenario, quantity, "unknown",
                             f"{where}: {what} {seen_t}; its {limit_name} is not given, so it "
                             "cannot be held against a limit", source, seen, None, seen_t, "",
                             unit=dim.unit, basis=basis)
    lim_t = _q(limit, dim) + suffix
    # A stress within one part per million of its limit meets it: that is rounding in the
    # solve, far below the precision of any datasheet value.
    ok = seen <= limit * (1 + 1e-6)
    m = headroom(limit, seen)
    # Said as a ratio of the two, as the result's margins are: "+12420.8%" reads as noise.
    if not ok:
        verdict = f"exceeds it, {seen / limit:.3g} times the limit" if limit > 0 else "exceeds it"
    elif m == float("inf"):
        verdict = "within it"
    else:
        verdict = f"within it (the limit is {limit / seen:.3g} times that)"
    return ElementStress(element, scenario, quantity, "pass" if ok else "fail",
                         f"{where}: {what} {seen_t} against its {limit_name} of {lim_t}: "
                         f"{verdict}", source, seen, limit, seen_t, lim_t, unit=dim.unit,
                         basis=basis)


def gap_limit(sw, altitude: float, kind: str = "impulse") -> tuple[float | None, str, str]:
    """(withstand V peak, its name, its source) of an open switch, altitude corrected.

    ``kind`` ``impulse``: IEC 60664-1 Table F.2 for a gap, or the stated withstand.
    ``steady`` (the steady state and the discharge: working, temporary or recurring peak
    voltages): IEC 60664-1:2020 Table F.8 (F.7 in the 2007 edition) for a gap; for a switch
    known only by its stated impulse withstand, Table F.8 read for the gap that withstand
    implies in Table F.2 (:func:`~registry.standards.clearance.implied_gap`)."""
    if kind not in ("impulse", "steady"):
        raise ValueError(f"kind must be impulse or steady, not {kind!r}")
    stated, gap = sw.get("withstand"), sw.get("gap")
    if kind == "impulse":
        if stated is not None:
            return (clearance.stated_withstand(stated, altitude),
                    f"stated withstand at {altitude:.0f} m", SRC_STATED_GAP)
        if gap is not None:
            return (clearance.gap_withstand(gap, altitude),
                    f"gap withstand ({gap * 1e3:.3g} mm at {altitude:.0f} m)", SRC_GAP)
        return None, "gap or withstand", SRC_GAP
    if gap is not None:
        return (clearance.gap_steady_withstand(gap, altitude),
                f"steady-state gap withstand ({gap * 1e3:.3g} mm at {altitude:.0f} m)",
                SRC_STEADY_GAP)
    if stated is not None:
        implied = clearance.implied_gap(stated)
        return (clearance.gap_steady_withstand(implied, altitude),
                f"steady-state withstand of the {implied * 1e3:.3g} mm gap its stated "
                f"{stated:.0f} V impulse withstand implies, at {altitude:.0f} m",
                SRC_STEADY_STATED_GAP)
    return None, "gap or withstand", SRC_STEADY_GAP


def _stressed(v: float, i: float) -> bool:
    return abs(v) > V_FLOOR or abs(i) > I_FLOOR


# -- the scenarios as one table of per-element handlers -----------------------------------------
#
# Each scenario gives, per element, what the element sees (:class:`Seen`), and the table
# :data:`HANDLERS` names, per scenario and element type, the function that holds it against its
# limits. A handler shared by scenarios (an open switch, a maximum voltage) is written once and
# worded by the scenario (:class:`Scene`).


@dataclass(frozen=True)
class Scene:
    """One scenario's solve and its words: what every handler of that scenario reads."""

    name: str  # steady | impulse | discharge
    net: Netlist
    result: SteadyResult | ImpulseResult | DischargeResult
    altitude: float
    gap_kind: str  # the withstand an open switch is held to: "impulse" or "steady"
    voltage_words: str  # "voltage across it", "peak voltage across it", ...
    current_words: str = ""
    contact_words: str = "peak voltage across the open contacts"
    suffix: str = ""  # " rms" for an ac steady state
    ac: bool = False
    events: tuple = ()  # what tripped or opened, each with its element and text


@dataclass(frozen=True)
class Seen:
    """What one element sees in a scenario (V, A, J), with the solve state each was worst in
    ("" where the scenario has one state)."""

    voltage: float
    current: float
    peak: float  # the peak voltage across it
    voltage_label: str = ""
    current_label: str = ""
    peak_label: str = ""
    energy: float = 0.0  # discharge: what it absorbs
    power: float = 0.0   # discharge: its peak power


def _ctx(label: str) -> str:
    return f" ({label})" if label else ""


def _story(scene: Scene, e) -> str:
    return "".join(f"; {ev.text}" for ev in scene.events if ev.element == e.id)


def _max_voltage(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    """An input or a PTC: the voltage across it against its max_voltage, tripped or not (a PTC's
    maximum voltage is the most it may have across it at all: an impulse does not get a pass for
    being short; datasheet rating)."""
    item = held(e.id, scene.name, "voltage", seen.voltage, e.get("max_voltage"), VOLTAGE,
                scene.voltage_words, "max_voltage", SRC_DATASHEET, _ctx(seen.voltage_label),
                scene.suffix)
    story = _story(scene, e) if e.type == "ptc" else ""
    return [_replace_message(item, item.message + story) if story else item]


def _ptc(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    return _max_voltage(scene, e, seen) + [
        held(e.id, scene.name, "current", seen.current, e.get("max_current"), CURRENT,
             scene.current_words, "max_current", SRC_DATASHEET, _ctx(seen.current_label),
             scene.suffix)]


def _open_switch(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    """An open switch: the peak voltage across its contacts against the withstand of its gap
    (:func:`gap_limit`, impulse or steady as the scenario asks), altitude corrected."""
    if scene.net.is_closed(e):
        return []
    lim, name, src = gap_limit(e, scene.altitude, scene.gap_kind)
    return [held(e.id, scene.name, "voltage", seen.peak, lim, VOLTAGE, scene.contact_words, name,
                 src, _ctx(seen.peak_label))]


# -- steady

def _steady_varistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    name = "max_ac" if scene.ac else "max_dc"
    return [held(e.id, "steady", "continuous voltage", seen.voltage, e.get(name), VOLTAGE,
                 "continuous voltage across it", name, SRC_DATASHEET, _ctx(seen.voltage_label),
                 scene.suffix)]


def _steady_tvs(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    return [held(e.id, "steady", "continuous voltage", seen.peak, e.get("breakdown_voltage"),
                 VOLTAGE, "peak working voltage across it", "breakdown_voltage",
                 SRC_PRACTICE + ": a TVS must not conduct on the working voltage",
                 _ctx(seen.peak_label))]


def _steady_resistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    res = scene.result
    assert isinstance(res, SteadyResult)
    final = res.final
    out = [held(e.id, "steady", "power", final.heat.power(e.id), e.get("power"), POWER,
                "power in it", "power rating", SRC_DATASHEET, _ctx(final.label))]
    if e.get("max_voltage") is not None:
        out.append(held(e.id, "steady", "voltage", seen.voltage, e.get("max_voltage"), VOLTAGE,
                        "voltage across it", "max_voltage", SRC_DATASHEET,
                        _ctx(seen.voltage_label), scene.suffix))
    # Before a PTC trips the cold current flows for the trip time: a pulse.
    ptcs = {p.id for p in scene.net.of_type("ptc")}
    for ev in res.events:
        if ev.time is not None and ev.cold_powers.get(e.id, 0.0) > 0 and \
                e.id != ev.element and ev.element in ptcs:
            energy = ev.cold_powers[e.id] * ev.time
            if energy > 1e-9:
                out.append(held(e.id, "steady", "pulse energy", energy, e.get("pulse_energy"),
                                ENERGY, f"energy in it until {ev.element} trips "
                                f"({ev.time:.3g} s)", "pulse_energy", SRC_DATASHEET))
    return out


def _steady_fuse(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    res = scene.result
    assert isinstance(res, SteadyResult)
    rms, ih = scene.suffix, seen.current
    trip = next((ev for ev in reversed(res.events) if ev.element == e.id), None)
    if e.get("current") is None:
        return [held(e.id, "steady", "current", ih, None, CURRENT, "current through it",
                     "current rating", SRC_FUSE, "", rms)]
    if trip is None:
        return [ElementStress(e.id, "steady", "current", "pass",
                              f"{e.id}, steady state: carries {_q(ih, CURRENT)}{rms}, "
                              f"below its {_q(e.get('current'), CURRENT)} rating: "
                              "does not operate", SRC_FUSE, ih, e.get("current"),
                              _q(ih, CURRENT), _q(e.get("current"), CURRENT), unit="A")]
    assert trip.current is not None  # steady() gives every fuse it opens a current
    name = "voltage" if scene.ac else "voltage_dc"
    return [held(e.id, "steady", "breaking capacity", trip.current,
                 e.get("breaking_capacity"), CURRENT, "prospective current it must break",
                 "breaking_capacity", SRC_FUSE, "", rms),
            held(e.id, "steady", "voltage", abs(res.final.heat.voltage[e.id]), e.get(name),
                 VOLTAGE, "voltage across it once open", name, SRC_FUSE, "", rms)]


def _steady_gas_tube(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    res = scene.result
    assert isinstance(res, SteadyResult)
    if e.id not in res.final.state.fired:
        return []
    i = abs(res.final.heat.current[e.id])
    return [ElementStress(e.id, "steady", "follow current", "fail",
                          f"{e.id}, steady state: fires on the working voltage and "
                          f"carries {_q(i, CURRENT)}{scene.suffix} of follow current",
                          SRC_PRACTICE + ": a gas tube must not fire on the working "
                          "voltage", i, 0.0, _q(i, CURRENT), "no follow current", unit="A")]


# -- impulse

def _impulse_varistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    v, i = seen.voltage, seen.current
    if i < I_REF:
        return [ElementStress(e.id, "impulse", "current", "pass",
                              f"{e.id}, impulse: {_q(v, VOLTAGE)} across it, "
                              f"{_q(i, CURRENT)}: below 1 mA, it does not conduct",
                              SRC_VARISTOR, i, None, _q(i, CURRENT), unit="A")]
    return [held(e.id, "impulse", "peak current", i, e.get("peak_current"), CURRENT,
                 f"clamps at {_q(v, VOLTAGE)} with a peak current of", "peak_current",
                 SRC_VARISTOR),
            held(e.id, "impulse", "energy", impulse_clamp_energy(v, i), e.get("energy"), ENERGY,
                 f"surge energy (K*Vc*Ip*t2, K = {K_8_20:.3f}, t2 = {T2_8_20 * 1e6:.0f} us)",
                 "energy", SRC_VARISTOR)]


def _impulse_tvs(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    v, i = seen.voltage, seen.current
    return [held(e.id, "impulse", "peak power", v * i, e.get("peak_power"), POWER,
                 f"clamps at {_q(v, VOLTAGE)} and {_q(i, CURRENT)}, a peak power of",
                 "peak_power", SRC_TVS)]


def _impulse_resistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    r = e.get("resistance")
    assert r is not None  # the impulse solve raises NetworkError without it
    v = seen.voltage
    return [held(e.id, "impulse", "pulse energy", impulse_resistor_energy(v, r),
                 e.get("pulse_energy"), ENERGY, f"{_q(v, VOLTAGE)} across it at the peak, an "
                 "energy of", "pulse_energy", SRC_RESISTOR_PULSE)]


# -- discharge

def _discharge_varistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    if seen.current < I_REF:
        return []  # does not conduct: the input/PTC items cover its voltage
    return [held(e.id, "discharge", "peak current", seen.current, e.get("peak_current"),
                 CURRENT, "peak current through it", "peak_current", SRC_DATASHEET),
            held(e.id, "discharge", "energy", seen.energy, e.get("energy"), ENERGY,
                 "energy it absorbs", "energy", SRC_DATASHEET)]


def _discharge_tvs(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    return [held(e.id, "discharge", "peak power", seen.power, e.get("peak_power"), POWER,
                 "peak power in it", "peak_power", SRC_TVS)]


def _discharge_resistor(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    return [held(e.id, "discharge", "pulse energy", seen.energy, e.get("pulse_energy"), ENERGY,
                 "energy it absorbs", "pulse_energy", SRC_DATASHEET)]


def _discharge_fuse(scene: Scene, e, seen: Seen) -> list[ElementStress]:
    res = scene.result
    assert isinstance(res, DischargeResult)
    rated, i = e.get("current"), seen.current
    if rated is not None and i <= rated:
        return []
    return [held(e.id, "discharge", "breaking capacity", i, e.get("breaking_capacity"),
                 CURRENT, "peak discharge current it may have to break", "breaking_capacity",
                 SRC_FUSE),
            held(e.id, "discharge", "voltage", res.v0, e.get("voltage_dc"), VOLTAGE,
                 "dc voltage it may have to break", "voltage_dc", SRC_FUSE)]


Handler = Callable[[Scene, Any, Seen], list[ElementStress]]

# Per scenario, per element type, what holds the element against its limits. A type missing
# from a scenario is not stressed there in a way that has a limit.
HANDLERS: dict[str, dict[str, Handler]] = {
    "steady": {"ptc": _ptc, "input": _max_voltage, "varistor": _steady_varistor,
               "tvs": _steady_tvs, "resistor": _steady_resistor, "fuse": _steady_fuse,
               "switch": _open_switch, "gas-tube": _steady_gas_tube},
    "impulse": {"varistor": _impulse_varistor, "tvs": _impulse_tvs,
                "resistor": _impulse_resistor, "input": _max_voltage, "ptc": _max_voltage,
                "switch": _open_switch},
    "discharge": {"ptc": _ptc, "input": _max_voltage, "varistor": _discharge_varistor,
                  "tvs": _discharge_tvs, "resistor": _discharge_resistor,
                  "fuse": _discharge_fuse, "switch": _open_switch},
}


def _limits(scene: Scene, seen_by: Callable[[str], Seen | None]) -> list[ElementStress]:
    """Every element of the scene's netlist that the scenario stresses (``seen_by`` gives
    ``None`` for one it does not), held by its handler."""
    out: list[ElementStress] = []
    table = HANDLERS[scene.name]
    for e in scene.net.elements:
        seen = seen_by(e.id)
        handler = table.get(e.type)
        if seen is not None and handler is not None:
            out += handler(scene, e, seen)
    return out


def steady_limits(net: Netlist, res: SteadyResult, waveform: str, altitude: float,
                  duration: float) -> list[ElementStress]:
    """The steady state: each element's worst over the solve's states (PTCs cold, tripped;
    fuses open), by heat (rms for ac) and by peak."""
    ac = waveform == "ac"
    scene = Scene("steady", net, res, altitude, "steady", "voltage across it",
                  "current through it", suffix=" rms" if ac else "", ac=ac,
                  events=tuple(res.events))

    def seen_by(id: str) -> Seen | None:
        vh, lv = max((abs(s.heat.voltage[id]), s.label) for s in res.snapshots)
        ih, li = max((abs(s.heat.current[id]), s.label) for s in res.snapshots)
        vp, lvp = max((abs(s.peak.voltage[id]), s.label) for s in res.snapshots)
        if not _stressed(vh, ih) and not _stressed(vp, 0.0):
            return None
        return Seen(vh, ih, vp, lv, li, lvp)

    return _limits(scene, seen_by)


def impulse_limits(net: Netlist, res: ImpulseResult, altitude: float) -> list[ElementStress]:
    """The impulse: each element at the peak of the solved wave."""
    scene = Scene("impulse", net, res, altitude, "impulse", "peak voltage across it")
    sol = res.solution

    def seen_by(id: str) -> Seen | None:
        v, i = abs(sol.voltage[id]), abs(sol.current[id])
        return Seen(v, i, v) if _stressed(v, i) else None

    return _limits(scene, seen_by)


def discharge_limits(net: Netlist, res: DischargeResult, altitude: float) -> list[ElementStress]:
    """The discharge: each element's largest voltage, current and power over the discharge,
    and the energy it absorbs."""
    scene = Scene("discharge", net, res, altitude, "steady", "largest voltage across it",
                  "largest current through it", "largest voltage across the open contacts",
                  events=tuple(res.events))

    def seen_by(id: str) -> Seen | None:
        v, i = res.peak_voltage[id], res.peak_element_current[id]
        if not _stressed(v, i):
            return None
        return Seen(v, i, v, energy=res.energy[id], power=res.peak_power[id])

    return _limits(scene, seen_by)
